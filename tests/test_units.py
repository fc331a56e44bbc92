"""Unit conversions against NIST Special Publication 811 (2008), appendix B."""

import numpy as np
import pytest

from meterfix.errors import UnitError
from meterfix.units import parse_pressure, parse_quantity, parse_temperature, parse_unit, to_absolute


@pytest.mark.parametrize("text,expected", [
    ("14.73 psia", 14.73 * 6894.757293168361),   # NIST SP 811: psi = 6.894 757 293 168 E+03 Pa
    ("101.325 kPa", 101325.0),
    ("1 bar(a)", 1e5),                            # NIST SP 811: bar = 1.0 E+05 Pa (exact)
    ("1 atm", 101325.0),                          # NIST SP 811: atm, standard = 1.013 25 E+05 Pa (exact)
    ("1 kgf/cm2", 98066.5),                       # NIST SP 811: kgf/cm2 = 9.806 65 E+04 Pa (exact)
    ("1 mmHg", 133.322387415),                    # NIST SP 811: mmHg, conventional = 1.333 224 E+02 Pa
    ("100 inH2O", 100 * 249.08891),               # conventional inch of water: 1000 kg/m3 g_n 0.0254 m
    ("2.5 MPa", 2.5e6),
    ("25 mbar", 2500.0),
])
def test_absolute_pressures(text, expected):
    assert parse_pressure(text) == pytest.approx(expected, rel=1e-9)


@pytest.mark.parametrize("text", ["50 psig", "50 psi(g)", "50 psi g", "3.447378646584 barg",
                                  "3.447378646584 bar(g)", "344.7378646584 kPag", "344.7378646584 kPa(g)"])
def test_gauge_needs_atmospheric_and_adds_it(text):
    with pytest.raises(UnitError, match="atmospheric"):
        parse_pressure(text)
    # 50 psi = 344.7378646584 kPa (NIST SP 811 factor above)
    assert parse_pressure(text, atmospheric=101325.0) == pytest.approx(344737.8646584 + 101325.0, rel=1e-9)


def test_unmarked_pressure_policy():
    u = parse_unit("kPa", "pressure")
    assert u.reference is None
    with pytest.raises(UnitError, match="gauge or absolute"):
        to_absolute(100.0, u, unmarked="error")
    assert to_absolute(np.array([1.0, 2.0]), u) == pytest.approx([1e3, 2e3])


@pytest.mark.parametrize("text,kelvin", [
    ("60 degF", 288.705555555556),   # NIST SP 811: T/K = (t/degF + 459.67)/1.8
    ("60 °F", 288.705555555556),
    ("15 degC", 288.15),             # T/K = t/degC + 273.15
    ("15 °C", 288.15),
    ("519.67 degR", 288.705555555556),
    ("288.15 K", 288.15),
])
def test_temperatures(text, kelvin):
    assert parse_temperature(text) == pytest.approx(kelvin, rel=1e-12)


def test_below_absolute_zero_is_an_error():
    with pytest.raises(UnitError, match="absolute zero"):
        parse_temperature("-300 degC")


@pytest.mark.parametrize("text,kind,si", [
    ("1 ft3", "volume", 0.028316846592),       # NIST SP 811: ft3 = 2.831 685 E-02 m3 (exact 0.3048^3)
    ("1 Mcf", "volume", 28.316846592),
    ("1 MMcf", "volume", 28316.846592),
    ("1 L", "volume", 1e-3),
    ("1 m3/h", "flow", 1 / 3600),
    ("24 Mcfd", "flow", 24 * 28.316846592 / 86400),
    ("1 scfh", "flow", 0.028316846592 / 3600),
    ("1 Btu", "energy", 1055.05585262),         # NIST SP 811: Btu_IT = 1.055 056 E+03 J
    ("1 MMBtu", "energy", 1.05505585262e9),
    ("1 therm", "energy", 1.05505585262e8),     # 100 000 Btu_IT (gas-trade therm, common practice)
    ("1 Dth", "energy", 1.05505585262e9),       # dekatherm = 10 therm = 1 MMBtu (common practice)
    ("1 kWh", "energy", 3.6e6),                 # NIST SP 811: kWh = 3.6 E+06 J (exact)
    ("1 Btu/ft3", "heating_value", 1055.05585262 / 0.028316846592),
    ("38.5 MJ/m3", "heating_value", 38.5e6),
    ("5000 ft", "length", 1524.0),
])
def test_other_kinds(text, kind, si):
    assert parse_quantity(text, kind).value == pytest.approx(si, rel=1e-12)


def test_base_volume_units_carry_their_basis():
    assert parse_unit("scf", "volume").basis == "base"
    assert parse_unit("Sm3", "volume").basis == "base"
    assert parse_unit("ft3", "volume").basis is None


def test_unknown_unit_lists_accepted():
    with pytest.raises(UnitError) as e:
        parse_quantity("12 furlongs", "pressure")
    assert "psia" in str(e.value) and "kPa" in str(e.value)


def test_decimal_comma():
    assert parse_pressure("1,5 bar(a)") == pytest.approx(1.5e5)


def test_missing_unit():
    with pytest.raises(UnitError, match="unit"):
        parse_quantity("14.73", "pressure")
