"""Site settings: TOML file + options, the option wins; presets; errors name the setting."""

import pytest

from meterfix.engine.settings import BASE_PRESETS, build_settings
from meterfix.errors import SettingsError


def _site(tmp_path, text):
    p = tmp_path / "site.toml"
    p.write_text(text, encoding="utf-8")
    return p


def test_presets_match_references():
    # REFERENCES.md §5 (published conversions): 14.73 psia = 101 559.775 Pa, 60 degF = 288.705 556 K
    s = build_settings(None, {"base": "us-14.73-60f"})
    assert s.pressure_base == pytest.approx(101559.775, abs=1e-3)
    assert s.temperature_base == pytest.approx(288.705556, abs=1e-6)
    s = build_settings(None, {"base": "iso-15c"})
    assert (s.pressure_base, s.temperature_base) == (101325.0, 288.15)
    assert set(BASE_PRESETS) >= {"us-14.73-60f", "iso-15c", "normal-0c"}


def test_option_wins_over_site_file(tmp_path):
    p = _site(tmp_path, 'base_pressure = "14.73 psia"\nbase_temperature = "60 degF"\ntimezone = "America/Chicago"\n'
                        'gas_day_start = "09:00"\n[uncertainty]\nmeter = "1 %"\n')
    s = build_settings(p, {"base_pressure": "14.65 psia"})
    assert s.pressure_base == pytest.approx(14.65 * 6894.757293168361)
    assert s.timezone == "America/Chicago" and s.gas_day_start_hour == 9
    assert s.uncertainty == {"meter": "1 %"}
    assert s.sources["base_pressure"] == "option" and s.sources["timezone"] == "site file"


@pytest.mark.parametrize("opts,needle", [
    ({"base": "mars"}, "unknown base preset"),
    ({"base": "iso-15c", "timezone": "Mars/Olympus"}, "unknown time zone"),
    ({"base": "iso-15c", "method": "magic"}, "unknown Z method"),
    ({"base_pressure": "10 psig", "base_temperature": "60 degF"}, "absolute"),
    ({"base_pressure": "3 bar(a)", "base_temperature": "60 degF"}, "plausible"),
    ({"base": "iso-15c", "gas_day_start": "25:00"}, "between"),
    ({"base": "iso-15c", "substitution": "magic"}, "substitution"),
    ({"base": "iso-15c", "ideal_gas_threshold": "lots"}, "not a number"),
])
def test_bad_settings(opts, needle):
    with pytest.raises(SettingsError, match=needle):
        build_settings(None, opts)


def test_unknown_key_in_site_file(tmp_path):
    p = _site(tmp_path, 'base = "iso-15c"\nbase_presure = "1 bar(a)"\n')
    with pytest.raises(SettingsError, match="unknown setting") as e:
        build_settings(p, {})
    assert str(p) in str(e.value)


def test_invalid_toml(tmp_path):
    p = _site(tmp_path, 'base = "iso-15c\n')
    with pytest.raises(SettingsError, match="not valid TOML"):
        build_settings(p, {})
