"""Console summary: the user's display units, no more digits than the uncertainty supports
(JCGM 100:2008, GUM §7.2.6: the uncertainty to two significant digits, the result to the same place)."""

from types import SimpleNamespace

import pytest

from meterfix.cli.console import _num, print_summary
from synthetic_month import month_frame, month_settings, run


@pytest.mark.parametrize("v,u,text", [
    (35_893_411.04, 385_000.0, "35,890,000"),   # U = 390 000 (two digits): round to 10 000
    (35_893_411.04, 1_200.0, "35,893,400"),
    (1.3047, 1.47, "1.3"),
    (-9.0943, 0.1, "-9.09"),
    (0.12345, 0.0123, "0.123"),
    (123.456, None, "123.456"),                 # no uncertainty: six significant digits
])
def test_digits_follow_the_uncertainty(v, u, text):
    assert _num(v, u) == text


def test_console_uses_display_units_and_rounds(capsys):
    r = run(month_frame(days=3), settings=month_settings())
    r.settings.display_units = {"volume": "Mcf", "energy": "MWh", "pressure": "psi", "temperature": "degF"}
    r.uncertainty = SimpleNamespace(expanded_pct=1.0, expanded_energy_pct=1.0)
    print_summary(r, {})
    out = capsys.readouterr().out
    assert "Mcf" in out and "MWh" in out and "°F" in out and "psi" in out
    assert " m3" not in out.split("outputs:")[0]
    # base volume in Mcf (1 Mcf = 28.316846592 m3, NIST SP 811), rounded to the 1 % uncertainty (two digits)
    v = r.totals["base_volume_m3"] / 28.316846592
    line = next(ln for ln in out.splitlines() if ln.startswith("  base volume  "))
    shown = float(line.split()[2].replace(",", ""))
    place = 10 ** (len(str(int(0.01 * v))) - 2)
    assert shown == pytest.approx(round(v / place) * place)
    assert "not an approved conversion device" in out


def test_console_speaks_the_vocabulary_and_a_us_base_in_us_units(capsys):
    """Issue 20: one name per quantity on the console; a US base (14.73 psia, 60 degF) is shown in psia,
    degF, Mcf and MMBtu unless [display_units] says otherwise; the flagged count is broken down."""
    r = run(month_frame(days=3), settings=month_settings(base="14.73psia-60F"))
    print_summary(r, {})
    out = capsys.readouterr().out
    assert "14.73 psia, 60 °F" in out and "Mcf at base" in out
    assert "base volume, ideal gas (Z = 1)" in out and "ideal-gas error" in out
    assert "flagged " in out and "(flagged:" not in out
    r.settings.display_units = {"volume": "m3"}
    print_summary(r, {})
    out = capsys.readouterr().out
    assert "m3 at base" in out and "psia" in out
