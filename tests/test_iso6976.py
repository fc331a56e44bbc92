"""ISO 6976:2016 against the standard's own worked examples (Annex D), to their printed digits.

Sources of the figures checked here: ISO 6976:2016, Annex D — example 1 (D.2, 15 degC / 15 degC),
example 2 (D.3, gas with water vapour, 60 degF / 60 degF), example 3 (D.4, 11 components with
neopentane; D.4.3 at 15/15 degC and D.4.4 at 25/0 degC, each with the identity correlation matrix
and with the printed full correlation matrix). Compositions, uncertainties, the correlation matrix and
the printed results were read from the reproductions of Annex D in two open-source implementations
(the ISO6976.2016 R package on CRAN and its Python port's test module, which states the figures are
verbatim from Annex D); each check names its clause.
"""

import numpy as np
import pytest

from meterfix.energy import iso6976 as I
from meterfix.errors import CompositionError, SettingsError

T15, T0, T25, T60F = 288.15, 273.15, 298.15, (60.0 - 32.0) / 1.8 + 273.15


def printed(value, figure: str):
    """True when ``value`` rounds to the printed figure at its printed number of decimals."""
    nd = len(figure.split(".")[1]) if "." in figure else 0
    return abs(value - float(figure)) <= 0.5 * 10.0**-nd + 1e-15


EX1 = {"methane": 0.933212, "ethane": 0.025656, "propane": 0.015368, "nitrogen": 0.010350, "carbon_dioxide": 0.015414}
U1 = {"methane": 0.000346, "ethane": 0.000243, "propane": 0.000148, "nitrogen": 0.000195, "carbon_dioxide": 0.000111}
EX2 = {"methane": 0.931819, "ethane": 0.025618, "nitrogen": 0.010335, "carbon_dioxide": 0.015391, "water": 0.016837}
U2 = {"methane": 0.000350, "ethane": 0.000243, "nitrogen": 0.000195, "carbon_dioxide": 0.000111, "water": 0.000162}
EX3 = {"methane": 0.922393, "ethane": 0.025358, "propane": 0.015190, "n_butane": 0.000523, "isobutane": 0.001512,
       "n_pentane": 0.002846, "isopentane": 0.002832, "neopentane": 0.001015, "n_hexane": 0.002865,
       "nitrogen": 0.010230, "carbon_dioxide": 0.015236}
U3 = {"methane": 0.000348, "ethane": 0.000247, "propane": 0.000149, "n_butane": 0.000018, "isobutane": 0.000027,
      "n_pentane": 0.000007, "isopentane": 0.000009, "neopentane": 0.000004, "n_hexane": 0.000008,
      "nitrogen": 0.000195, "carbon_dioxide": 0.000112}
# ISO 6976:2016 D.4.3.2 / D.4.4.2: correlation matrix of example 3, order as EX3
R3 = np.array([
    [1.000000, -0.657246, -0.377458, -0.041205, -0.056924, 0.099228, 0.061961, 0.064295, 0.080202, -0.512347, -0.265664],
    [-0.657246, 1.000000, -0.035617, -0.007450, -0.013720, -0.085690, -0.063295, -0.054908, -0.074061, -0.030668, -0.038371],
    [-0.377458, -0.035617, 1.000000, -0.004442, -0.007810, -0.039877, -0.029677, -0.025538, -0.034574, -0.024994, -0.023925],
    [-0.041205, -0.007450, -0.004442, 1.000000, -0.000824, -0.000592, -0.000551, -0.000372, -0.000567, -0.005703, -0.003373],
    [-0.056924, -0.013720, -0.007810, -0.000824, 1.000000, 0.002803, 0.001827, 0.001811, 0.002303, -0.010740, -0.005392],
    [0.099228, -0.085690, -0.039877, -0.000592, 0.002803, 1.000000, 0.079557, 0.071180, 0.094670, -0.072794, -0.014019],
    [0.061961, -0.063295, -0.029677, -0.000551, 0.001827, 0.079557, 1.000000, 0.051085, 0.067927, -0.053627, -0.010845],
    [0.064295, -0.054908, -0.025538, -0.000372, 0.001811, 0.071180, 0.051085, 1.000000, 0.060788, -0.046653, -0.008952],
    [0.080202, -0.074061, -0.034574, -0.000567, 0.002303, 0.094670, 0.067927, 0.060788, 1.000000, -0.062845, -0.012357],
    [-0.512347, -0.030668, -0.024994, -0.005703, -0.010740, -0.072794, -0.053627, -0.046653, -0.062845, 1.000000, -0.028699],
    [-0.265664, -0.038371, -0.023925, -0.003373, -0.005392, -0.014019, -0.010845, -0.008952, -0.012357, -0.028699, 1.000000]])


def _r3_full():
    idx = [I.tables().index[n] for n in EX3]
    r = np.eye(len(I.tables().names))
    r[np.ix_(idx, idx)] = R3
    return r


def _check(res, figures):
    v, u = res.values, res.standard_uncertainty
    scale = {"molar_mass": 1e3, "gross_heating_value_molar": 1e-3, "net_heating_value_molar": 1e-3,
             "gross_heating_value_mass": 1e-6, "net_heating_value_mass": 1e-6, "gross_heating_value_volumetric": 1e-6,
             "net_heating_value_volumetric": 1e-6, "wobbe_index_gross": 1e-6, "wobbe_index_net": 1e-6}
    bad = []
    for key, (val, unc) in figures.items():
        f = scale.get(key, 1.0)
        if val is not None and not printed(v[key] * f, val):
            bad.append(f"{key} {v[key] * f!r} printed {val}")
        if unc is not None and not printed(u[key] * f, unc):
            bad.append(f"u({key}) {u[key] * f!r} printed {unc}")
    assert not bad, bad


def test_annex_d_example_1_15_15():
    # ISO 6976:2016 D.2 (printed: M, Z, molar, mass and volumetric gross values and their u)
    res = I.properties(EX1, temperature_combustion=T15, temperature_metering=T15, u_x=U1)
    _check(res, {"molar_mass": ("17.3884301", None), "compression_factor": ("0.99776224", None),
                 "gross_heating_value_molar": ("906.1799588", "0.615609872"),
                 "gross_heating_value_mass": ("52.113961", "0.024301"),
                 "gross_heating_value_volumetric": ("38.410611", "0.026267")})


def test_annex_d_example_2_water_vapour_60F():
    # ISO 6976:2016 D.3: metering at 60 degF (288.7056 K in R T/p; the table's 15.55 degC column)
    res = I.properties(EX2, temperature_combustion=T60F, temperature_metering=T60F, u_x=U2)
    _check(res, {"molar_mass": ("16.989170", None), "compression_factor": ("0.9975690", None),
                 "gross_heating_value_molar": ("871.443916", "0.522493911"),
                 "gross_heating_value_mass": ("51.294085", "0.025938"),
                 "gross_heating_value_volumetric": ("36.874304", "0.022289")})


EX3_FIGURES = {
    # clause: (t1, t2, full matrix?) -> printed Hv,G Hv,N D G W,G W,N and their u
    "D.4.3.1": (T15, T15, False, ("39.73351", "0.026917"), ("35.86811", "0.024757"), ("0.76462", "0.000586"),
                ("0.62391", "0.000478"), ("50.30318", "0.021588"), ("45.40954", "0.020151")),
    "D.4.3.2": (T15, T15, True, ("39.73351", "0.016316"), ("35.86811", "0.015305"), ("0.76462", "0.000277"),
                ("0.62391", "0.000226"), ("50.30318", "0.019823"), ("45.40954", "0.018498")),
    "D.4.4.1": (T25, T0, False, ("41.89360", "0.028425"), ("37.85228", "0.026164"), ("0.80701", "0.000619"),
                ("0.62411", "0.000479"), ("53.02930", "0.022783"), ("47.91376", "0.021278")),
    "D.4.4.2": (T25, T0, True, ("41.89360", "0.017241"), ("37.85228", "0.016181"), ("0.80701", "0.000293"),
                ("0.62411", "0.000227"), ("53.02930", "0.020914"), ("47.91376", "0.019528")),
}


@pytest.mark.parametrize("clause", sorted(EX3_FIGURES))
def test_annex_d_example_3(clause):
    # ISO 6976:2016 D.4 (clause named in the parameter): neopentane used exactly
    t1, t2, full, hvg, hvn, d, g, wg, wn = EX3_FIGURES[clause]
    res = I.properties(EX3, temperature_combustion=t1, temperature_metering=t2, u_x=U3,
                       correlation=_r3_full() if full else None)
    _check(res, {"gross_heating_value_volumetric": hvg, "net_heating_value_volumetric": hvn, "density": d,
                 "relative_density": g, "wobbe_index_gross": wg, "wobbe_index_net": wn})


def test_relations_between_the_properties():
    # ISO 6976:2016 clause 9 definitions: Hm = Hc/M, Hv = Hc p/(Z R T), W = Hv/sqrt(d), net < gross
    r = I.properties(EX3, temperature_combustion=T25, temperature_metering=T0)
    v = r.values
    assert v["gross_heating_value_mass"] == pytest.approx(v["gross_heating_value_molar"] / v["molar_mass"], rel=1e-14)
    assert v["wobbe_index_gross"] == pytest.approx(v["gross_heating_value_volumetric"] / v["relative_density"] ** 0.5)
    assert v["gross_heating_value_volumetric"] == pytest.approx(
        v["gross_heating_value_molar"] * 101325.0 / (v["compression_factor"] * 8.3144621 * T0), rel=1e-14)
    assert v["net_heating_value_molar"] < v["gross_heating_value_molar"]
    assert r.standard_uncertainty is None


def test_pure_water_has_no_net_value_and_hydrogen_blends_are_in_scope():
    # ISO 6976:2016: water's gross value is L0 (enthalpy of vaporisation), its net value zero
    w = I.properties({"methane": 0.98, "water": 0.02}, temperature_combustion=T15, temperature_metering=T15)
    m = I.properties({"methane": 1.0}, temperature_combustion=T15, temperature_metering=T15)
    assert w["net_heating_value_molar"] == pytest.approx(0.98 * m["net_heating_value_molar"], rel=1e-12)
    # a 30 % hydrogen blend: Z from the summation factors (hydrogen's factor is negative), in scope
    h = I.properties({"methane": 0.7, "hydrogen": 0.3}, temperature_combustion=T25, temperature_metering=T0)
    assert 0.999 < h["compression_factor"] < 1.0
    assert h["gross_heating_value_molar"] == pytest.approx((0.7 * 890.58 + 0.3 * 285.83) * 1e3)


def test_out_of_scope_inputs_are_refused():
    with pytest.raises(CompositionError, match="below 0.9"):
        I.properties({"n_heptane": 1.0}, temperature_combustion=T15, temperature_metering=T15)
    with pytest.raises(SettingsError, match="not tabulated"):
        I.properties(EX1, temperature_combustion=T15, temperature_metering=T25)
    with pytest.raises(SettingsError, match="outside ISO 6976:2016"):
        I.properties(EX1, temperature_combustion=T15, temperature_metering=T15, pressure_metering=120e3)
    with pytest.raises(SettingsError, match="no uncertainties"):
        I.properties(EX1, temperature_combustion=T15, temperature_metering=T15, edition="1995", u_x=U1)
    with pytest.raises(SettingsError, match="not tabulated in ISO 6976:1995"):
        I.properties(EX1, temperature_combustion=T60F, temperature_metering=T15, edition="1995")


def test_edition_1995_by_hand():
    # hand arithmetic from the 1995 table rows (methane: sqrt(b) 0.0447 at 15 degC, gross 891.56 kJ/mol;
    # R = 8.314510, the 1995 edition's constant, from memory)
    r = I.properties({"methane": 1.0}, temperature_combustion=T15, temperature_metering=T15, edition="1995")
    z = 1 - 0.0447**2
    assert r["compression_factor"] == pytest.approx(z, rel=1e-15)
    assert r["gross_heating_value_volumetric"] == pytest.approx(891.56e3 * 101325.0 / (z * 8.314510 * T15), rel=1e-14)
    assert r["net_heating_value_molar"] == pytest.approx(802.69e3)
    assert r.edition == "ISO 6976:1995"


def test_table_checksums():
    from meterfix.energy.tables import iso6976_1995, iso6976_2016

    assert iso6976_2016.table_checksum() == "4a3b6a51d5559aebb9c868605dd1594d8ac06b01aad91b16d3557d15fbd82f75"
    assert iso6976_1995.table_checksum() == "85712ae5e0eee00abb972d536f9842ab04777e4e203ceafec26ef3c65dba8c38"


def test_every_table_row_is_a_known_component_and_the_gc_list_is_covered():
    from meterfix.energy.tables import iso6976_1995, iso6976_2016
    from meterfix.gas import iso6976_components as C

    assert tuple(iso6976_2016.ROWS) == C.NAMES
    assert set(iso6976_1995.ROWS) <= set(C.NAMES)
    gc = ["methane", "ethane", "propane", "n_butane", "isobutane", "n_pentane", "isopentane", "neopentane", "n_hexane",
          "2_methylpentane", "3_methylpentane", "2_2_dimethylbutane", "2_3_dimethylbutane", "n_heptane", "n_octane",
          "n_nonane", "n_decane", "benzene", "toluene", "ethylene", "propylene", "hydrogen", "carbon_monoxide",
          "hydrogen_sulfide", "oxygen", "argon", "helium", "nitrogen", "carbon_dioxide", "water"]
    assert set(gc) <= set(iso6976_2016.ROWS) and set(gc) <= set(iso6976_1995.ROWS)
    # the molar masses agree with the atoms (ISO 6976:2016 atomic weights C 12.0107, H 1.00794: from memory)
    row = iso6976_2016.ROWS["n_octane"]
    assert row[0] == pytest.approx(8 * 12.0107 + 18 * 1.00794, abs=1e-9)
