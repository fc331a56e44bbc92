"""Heating value against the AGA8 reference code's published figures (AGA8 reference code, NIST usnistgov/AGA8 test files)."""

import pytest

from meterfix.energy import gross_molar_heating_value, heating_value
from meterfix.errors import SettingsError
from meterfix.gas import Composition

REF_GAS = Composition.from_mapping({
    "methane": 0.77824, "nitrogen": 0.02, "carbon_dioxide": 0.06, "ethane": 0.08, "propane": 0.03,
    "isobutane": 0.0015, "n_butane": 0.003, "isopentane": 0.0005, "n_pentane": 0.00165, "n_hexane": 0.00215,
    "n_heptane": 0.00088, "n_octane": 0.00024, "n_nonane": 0.00015, "n_decane": 0.00009, "hydrogen": 0.004,
    "oxygen": 0.005, "carbon_monoxide": 0.002, "water": 0.0001, "hydrogen_sulfide": 0.0025, "helium": 0.007,
    "argon": 0.001})


def test_mixture_molar_gross_heating_value():
    # published: AGA8 reference code Gross_test_01: 924.359178 kJ/mol for this gas at 25 degC
    assert gross_molar_heating_value(REF_GAS.fractions) / 1e3 == pytest.approx(924.359178, abs=1e-6)


def test_hand_arithmetic_for_a_simple_gas():
    # hand arithmetic from the component values of AGA8 reference code, NIST usnistgov/AGA8 test files: 0.9*890.63 + 0.1*1560.69
    g = Composition.from_mapping({"methane": 0.9, "ethane": 0.1})
    assert gross_molar_heating_value(g.fractions) == pytest.approx((0.9 * 890.63 + 0.1 * 1560.69) * 1e3)


def test_volumetric_value_at_the_reference_state():
    # published: 41.37676728724603 MJ/m3 at 273.15 K / 101.325 kPa (AGA8 reference code, Gross_test_01,
    # using the GROSS method's own Z and R = 8.31451). Here Z comes from GERG-2008 and R is exact; at 1 atm
    # the two Z differ by about 1e-5 and the two R by 5e-6, hence 5e-5.
    r = heating_value(REF_GAS, temperature_metering=273.15, pressure_metering=101325.0, method="gerg-2008")
    assert r.gross_volumetric_real / 1e6 == pytest.approx(41.37676728724603, rel=5e-5)
    assert r.gross_volumetric_ideal < r.gross_volumetric_real


def test_combustion_reference_outside_0_to_30_degC_is_refused():
    with pytest.raises(SettingsError, match="outside 0-30 degC"):
        gross_molar_heating_value(REF_GAS.fractions, 313.15)


# ISO 6976:1995, Table 3: ideal molar gross calorific values [kJ/mol] at combustion references
# 0, 15 and 20 degC (from memory; the 25 degC column equals the AGA8 reference code's values above).
ISO6976_1995 = {
    "methane": (892.92, 891.56, 891.09),
    "ethane": (1564.35, 1562.14, 1561.41),
    "propane": (2224.03, 2221.10, 2220.13),
    "hydrogen": (286.63, 286.15, 285.99),
    "carbon_monoxide": (282.80, 282.91, 282.95),
    "water": (45.064, 44.434, 44.224),
}


@pytest.mark.parametrize("name", sorted(ISO6976_1995))
@pytest.mark.parametrize("col, t1", [(0, 273.15), (1, 288.15), (2, 293.15)])
def test_other_combustion_references_match_the_iso_6976_table(name, col, t1):
    # Kirchhoff's law from the 25 degC values with Poling et al. (2001) heat capacities; the printed
    # table (from memory) is matched within 0.01 %
    from meterfix.energy import component_heating_values
    from meterfix.gas.components import INDEX

    got = component_heating_values(t1)[INDEX[name]] / 1e3
    assert got == pytest.approx(ISO6976_1995[name][col], rel=1e-4)


def test_heat_capacity_integral_against_chemicals():
    # library: chemicals.heat_capacity.Poling_integral (same published polynomial) for the integral we use
    from chemicals.heat_capacity import Cp_data_Poling, Poling_integral

    from meterfix.constants import R
    from meterfix.gas.heat_capacity import cp_integral

    row = Cp_data_Poling.loc["74-82-8"]  # methane
    ref = Poling_integral(298.15, row.a0, row.a1, row.a2, row.a3, row.a4) - \
        Poling_integral(273.15, row.a0, row.a1, row.a2, row.a3, row.a4)
    assert cp_integral("methane", 273.15, 298.15) == pytest.approx(ref * R / 8.314462618, rel=1e-6)


def test_relative_density_and_wobbe_index_by_hand():
    # d = (M / M_air)(Z_air / Z) and W = Hv / sqrt(d) (ISO 6976 definitions); Z of air by GERG-2008
    # agrees with ISO 6976:1995's printed Z_air = 0.99958 at 15 degC, 101.325 kPa (from memory) to 2e-5
    from meterfix.energy import AIR, MOLAR_MASS_AIR, relative_density, wobbe_index
    from meterfix.z import compressibility

    z_air = compressibility(101325.0, 288.15, AIR, method="gerg-2008")
    assert z_air == pytest.approx(0.99958, abs=2e-5)
    g = Composition.from_mapping({"methane": 0.95, "ethane": 0.03, "nitrogen": 0.02})
    z = compressibility(101325.0, 288.15, g, method="gerg-2008")
    d = relative_density(g, temperature_metering=288.15, pressure_metering=101325.0)
    assert d == pytest.approx(g.molar_mass / MOLAR_MASS_AIR * z_air / z, rel=1e-12)
    # a lean pipeline gas: d about 0.58 (common practice: 0.55-0.70 for pipeline gas)
    assert 0.55 < d < 0.62
    hv = heating_value(g, temperature_combustion=288.15, temperature_metering=288.15).gross_volumetric_real
    w = wobbe_index(hv, d)
    assert w == pytest.approx(hv / d ** 0.5)
    # pipeline gas Wobbe index about 48-53 MJ/m3 (common practice, e.g. EN 16726 H-gas band)
    assert 48e6 < w < 53e6
