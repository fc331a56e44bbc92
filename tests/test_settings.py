"""Site settings: TOML file + options, the option wins; presets; errors name the setting."""

from pathlib import Path

import pytest

from meterfix.engine.settings import BASE_PRESETS, build_settings
from meterfix.errors import SettingsError


def _site(tmp_path, text):
    p = tmp_path / "site.toml"
    p.write_text(text, encoding="utf-8")
    return p


def test_presets_match_references():
    # NIST SP 811 appendix B conversions: 14.73 psia = 101 559.775 Pa, 60 degF = 288.705 556 K
    s = build_settings(None, {"base": "us-14.73-60f"})
    assert s.base_pressure == pytest.approx(101559.775, abs=1e-3)
    assert s.base_temperature == pytest.approx(288.705556, abs=1e-6)
    s = build_settings(None, {"base": "iso-15c"})
    assert (s.base_pressure, s.base_temperature) == (101325.0, 288.15)
    assert set(BASE_PRESETS) >= {"14.73psia-60F", "101.325kPa-15C", "101.325kPa-0C"}
    assert build_settings(None, {"base": "normal-0c"}).base == "101.325kPa-0C"  # earlier names accepted


def test_option_wins_over_site_file(tmp_path):
    p = _site(tmp_path, 'base_pressure = "14.73 psia"\nbase_temperature = "60 degF"\ntimezone = "America/Chicago"\n'
                        'gas_day_start = "09:00"\n[uncertainty]\nmeter = "1 %"\n')
    s = build_settings(p, {"base_pressure": "14.65 psia"})
    assert s.base_pressure == pytest.approx(14.65 * 6894.757293168361)
    assert s.timezone == "America/Chicago" and s.gas_day_start == 9
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


# --- issue 13 case 14: every numeric setting is finite and in range, or refused ----------------------------------
@pytest.mark.parametrize("opts,needle", [
    ({"gas_day_start": "inf"}, "not a time of day"),
    ({"gas_day_start": "nan"}, "not a time of day"),
    ({"gas_day_start": "6.5"}, "only whole hours"),
    ({"gas_day_start": "06:30"}, "only whole hours"),
    ({"gas_day_start": "24"}, "between"),
    ({"fail_on": "nan"}, "not a finite number"),
    ({"fail_on": float("nan")}, "not a finite number"),
    ({"fail_on": "inf"}, "not a finite number"),
    ({"fail_on": "-1"}, "outside the range"),
    ({"ideal_gas_threshold": "1e400"}, "not a finite number"),
    ({"ideal_gas_threshold": "150"}, "outside the range"),
    ({"invoice_tolerance": "-0.5"}, "outside the range"),
    ({"max_gap_intervals": "3.7"}, "not a whole number"),
    ({"max_gap_intervals": True}, "not a number"),
    ({"register_digits": "40"}, "outside the range"),
    ({"register_digits": "0"}, "outside the range"),
    ({"elevation": "1e400 m"}, "outside the plausible range"),
    ({"elevation": "20000 m"}, "outside the plausible range"),
    ({"atmospheric_pressure": "14.7 psig"}, "absolute"),
    ({"atmospheric_pressure": "654 kPa"}, "outside the plausible range"),
    ({"heating_value": "0.001 MJ/m3"}, "outside the plausible range"),
    ({"combustion_temperature": "40 degC"}, "outside the plausible range"),
    ({"price": "-3 USD/MMBtu"}, "finite price"),
    ({"price": "1e400 USD/MMBtu"}, "finite price"),
    ({"invoice_base": "mars"}, "unknown base preset"),
    ({"invoice_base_pressure": "3 bar(a)"}, "plausible base condition"),
    ({"invoice_base_temperature": "100 degC"}, "plausible base condition"),
])
def test_numeric_settings_finite_and_in_range(opts, needle):
    with pytest.raises(SettingsError, match=needle) as e:
        build_settings(None, {"base": "iso-15c", **opts})
    name = next(iter(opts))
    assert name in str(e.value)  # the message names the setting


def test_whole_hours_and_ranges_accepted():
    s = build_settings(None, {"base": "iso-15c", "gas_day_start": "9", "fail_on": "0", "max_gap_intervals": "4",
                              "register_digits": 8, "elevation": "-20 m"})
    assert (s.gas_day_start, s.fail_on, s.max_gap_intervals, s.register_digits) == (9, 0.0, 4, 8)
    assert isinstance(s.max_gap_intervals, int) and s.elevation == -20.0
    assert build_settings(None, {"base": "iso-15c", "gas_day_start": 6.0}).gas_day_start == 6


def test_invoice_base_settings(tmp_path):
    # 14.73 psia = 101 559.775 Pa, 60 degF = 288.705 556 K (NIST SP 811 appendix B factors)
    s = build_settings(None, {"base": "iso-15c", "invoice_base": "us-14.73-60f"})
    assert s.invoice_base_pressure == pytest.approx(101559.775, abs=1e-3)
    assert s.invoice_base_temperature == pytest.approx(288.705556, abs=1e-6)
    p = _site(tmp_path, 'base = "iso-15c"\ninvoice_base_pressure = "101.325 kPa"\ninvoice_base_temperature = "0 degC"\n')
    s = build_settings(p, {})
    assert (s.invoice_base_pressure, s.invoice_base_temperature) == (101325.0, 273.15)


@pytest.mark.parametrize("args,needle", [
    (["--gas-day-start", "inf"], "gas_day_start"),
    (["--gas-day-start", "6.5"], "whole hours"),
    (["--fail-on", "nan"], "fail_on"),
    (["--ideal-gas-threshold", "inf"], "ideal_gas_threshold"),
    (["--invoice-tolerance", "nan"], "invoice_tolerance"),
])
def test_cli_refuses_non_finite_settings(tmp_path, args, needle):
    from typer.testing import CliRunner

    from meterfix.cli import app

    log = Path(__file__).resolve().parents[1] / "fixtures" / "logs" / "fv_m1_part1.csv"
    r = CliRunner().invoke(app, ["correct", str(log), "--base", "iso-15c", "--gas", "methane=1",
                                 "--out", str(tmp_path / "o"), *args])
    assert r.exit_code == 2, r.output
    assert needle in r.output and "Traceback" not in r.output
    assert not (tmp_path / "o").exists()


def test_blank_template_month_refused_with_the_fix(tmp_path):
    # issue 13 case 17: `meterfix template DIR`, then a month with its site file untouched
    from typer.testing import CliRunner

    from meterfix.cli import app

    r = CliRunner().invoke(app, ["template", str(tmp_path / "t")])
    assert r.exit_code == 0, r.output
    log = Path(__file__).resolve().parents[1] / "fixtures" / "logs" / "fv_m1_part1.csv"
    r = CliRunner().invoke(app, ["correct", str(log), "--site", str(tmp_path / "t" / "site.toml"),
                                 "--gas", "methane=1", "--out", str(tmp_path / "o")])
    assert r.exit_code == 2, r.output
    assert "no contract base pressure" in r.output and "--base" in r.output
    # with the base conditions written in, the same file runs
    site = tmp_path / "t" / "site.toml"
    site.write_text(site.read_text(encoding="utf-8") + '\nbase = "iso-15c"\nelevation = "240 m"\n', encoding="utf-8")
    r = CliRunner().invoke(app, ["correct", str(log), "--site", str(site), "--gas", "methane=1",
                                 "--out", str(tmp_path / "o"), "--quiet"])
    assert r.exit_code == 0, r.output


@pytest.mark.parametrize("value", ["nan", "inf", "-1", "lots", True])
def test_check_percentages_finite(value):
    with pytest.raises(SettingsError, match="corrector_check_pct"):
        build_settings(None, {"base": "iso-15c", "uncertainty": {"corrector_check_pct": value}})
    with pytest.raises(SettingsError, match="invoice_meter_pct"):
        build_settings(None, {"base": "iso-15c", "uncertainty": {"invoice_meter_pct": value}})


# --- issue 20: one table of settings ---------------------------------------------------------------------
def test_readme_settings_list_is_the_table():
    from meterfix.engine.settings_table import README_BEGIN, README_END, readme_table

    text = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    block = text.split(README_BEGIN, 1)[1].split(README_END, 1)[0].strip()
    assert block == readme_table(), "README settings list is stale: paste readme_table() between its markers"


def test_every_setting_is_a_site_key_and_an_option_of_the_same_name(tmp_path):
    """Each top-level setting read from the site file and given as its option lands on the same field."""
    from typer.main import get_command

    from meterfix.cli import app
    from meterfix.engine.settings_table import SETTINGS, options_for

    cmd = get_command(app).commands["correct"]
    opts = {o for p in cmd.params for o in p.opts}
    for s in options_for("correct"):
        assert s.option_name in opts, f"{s.option_name} is not an option of correct"
        if not s.table and s.kind != "mapping":
            assert s.option_name == "--" + s.name.replace("_", "-")
    fleet = get_command(app).commands["fleet"]
    fopts = {o for p in fleet.params for o in p.opts}
    assert {s.option_name for s in options_for("fleet")} <= fopts
    # the site key and the option set the same field, the option winning
    for s in SETTINGS:
        if s.table or s.kind in ("mapping", "list") or s.example is None:
            continue
        ex = s.example
        toml = f'base = "101.325kPa-15C"\n{s.name} = {ex!r}\n'.replace("'", '"') if s.name != "base" else f'base = "{ex}"\n'
        toml = toml.replace("True", "true").replace("False", "false")
        site = tmp_path / f"{s.name}.toml"
        site.write_text(toml, encoding="utf-8")
        from_file = build_settings(site, {})
        from_option = build_settings(None, {"base": "101.325kPa-15C", s.param: ex})
        assert getattr(from_file, s.name) == getattr(from_option, s.name), s.name
        assert from_file.sources[s.name] == "site file" and from_option.sources[s.name] == "option"


def test_correct_help_comes_from_the_table():
    from typer.testing import CliRunner

    from meterfix.cli import app
    from meterfix.engine.settings_table import options_for

    r = CliRunner().invoke(app, ["correct", "--help"], env={"COLUMNS": "200"})
    assert r.exit_code == 0
    for s in options_for("correct"):
        assert s.option_name in r.output, s.option_name


def test_correct_site_reads_the_files_table(tmp_path):
    """`correct --site` takes the logs and the gas of the site file's [files] table, relative to it."""
    import shutil

    from typer.testing import CliRunner

    from meterfix.cli import app

    log = Path(__file__).resolve().parents[1] / "fixtures" / "logs" / "fv_m1_part1.csv"
    (tmp_path / "m" / "logs").mkdir(parents=True)
    shutil.copy(log, tmp_path / "m" / "logs" / log.name)
    (tmp_path / "m" / "site.toml").write_text(
        'base = "101.325kPa-0C"\nelevation = "240 m"\ntimezone = "Europe/Berlin"\n'
        'gas = "methane=0.95,ethane=0.03,nitrogen=0.02"\n[files]\nlogs = ["logs/*.csv"]\n', encoding="utf-8")
    r = CliRunner().invoke(app, ["correct", "--site", str(tmp_path / "m" / "site.toml"), "--out", str(tmp_path / "o"),
                                 "--quiet", "--json", str(tmp_path / "s.json")])
    assert r.exit_code == 0, r.output
    import json

    summary = json.loads((tmp_path / "s.json").read_text())
    assert [i["file"] for i in summary["inputs"] if i["role"] == "log"] == [log.name]
