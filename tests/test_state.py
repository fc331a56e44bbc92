"""Any two of p, T, v → the third, for every generalized-chart method (meterfix.z.state)."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from meterfix.errors import SettingsError
from meterfix.gas.composition import Composition
from meterfix.gas.gross import GrossCharacterization
from meterfix.z.base import REASON_INVALID_INPUT, REASON_NO_GAS_ROOT
from meterfix.z.correlations import METHODS as CORRELATIONS
from meterfix.z.generalized import METHODS as GENERALIZED
from meterfix.z.ideal_method import METHODS as IDEAL
from meterfix.z.state import solve_state

MINE = {m.name: m for m in GENERALIZED + CORRELATIONS + IDEAL}
GAS = Composition.from_mapping({"methane": 0.92, "ethane": 0.04, "nitrogen": 0.02, "carbon_dioxide": 0.02})


@pytest.mark.parametrize("kw", [
    {},
    {"pressure": 5e6},
    {"pressure": 5e6, "temperature": 300.0, "molar_volume": 4e-4},
])
def test_exactly_two_of_three(kw):
    with pytest.raises(SettingsError, match="give exactly two of --pressure, --temperature, --volume"):
        solve_state(GAS, MINE["lee-kesler"], **kw)


def test_ideal_gas_exact():
    # ideal gas: p v = R T with R from scipy.constants (2019 SI exact)
    from scipy.constants import R

    st_ = solve_state(GAS, MINE["ideal"], pressure=2e6, temperature=300.0)
    assert st_.molar_volume == pytest.approx(R * 300.0 / 2e6, rel=1e-15)
    st_ = solve_state(GAS, MINE["ideal"], pressure=2e6, molar_volume=1e-3)
    assert st_.temperature == pytest.approx(2e6 * 1e-3 / R, rel=1e-12)


@settings(max_examples=25, deadline=None)
@given(method=st.sampled_from(sorted(MINE)), p=st.floats(2e4, 1e7), t=st.floats(250.0, 350.0))
def test_round_trips(method, p, t):
    m = MINE[method]
    a = solve_state(GAS, m, pressure=p, temperature=t)
    assert a.reason == "" and np.isfinite(a.z)
    # p, T -> v -> T
    b = solve_state(GAS, m, pressure=p, molar_volume=a.molar_volume)
    assert b.temperature == pytest.approx(t, rel=1e-9)
    assert b.solved_for == "temperature"
    # T, v -> p
    c = solve_state(GAS, m, temperature=t, molar_volume=a.molar_volume)
    assert c.pressure == pytest.approx(p, rel=1e-9)
    assert c.z == pytest.approx(a.z, rel=1e-9)


def test_vectorized_round_trip_with_bad_rows():
    m = MINE["lee-kesler"]
    p = np.array([1e5, 3e6, 7e6, -1.0, 9e6, np.nan])
    t = np.array([260.0, 280.0, 300.0, 300.0, 340.0, 300.0])
    a = solve_state(GAS, m, pressure=p, temperature=t)
    b = solve_state(GAS, m, pressure=p, molar_volume=a.molar_volume)
    good = np.isfinite(p) & (p > 0)
    assert np.allclose(b.temperature[good], t[good], rtol=1e-9, atol=0)
    assert list(b.reason[~good]) == [REASON_INVALID_INPUT] * 2
    assert np.all(np.isnan(b.temperature[~good]))


def test_pressure_from_coolprop_volume():
    # library: CoolProp 8.0 (Setzmann-Wagner methane): molar volume at 300 K, 5 MPa; Lee–Kesler
    # (0.33 % in Z there, test_generalized) must give back the pressure to about that accuracy
    import CoolProp.CoolProp as CP

    v = 1.0 / CP.PropsSI("Dmolar", "P", 5e6, "T", 300.0, "Methane")
    methane = Composition.from_mapping({"methane": 1.0})
    st_ = solve_state(methane, MINE["lee-kesler"], temperature=300.0, molar_volume=v)
    assert st_.pressure == pytest.approx(5e6, rel=5e-3)
    st_ = solve_state(methane, MINE["lee-kesler"], pressure=5e6, molar_volume=v)
    assert st_.temperature == pytest.approx(300.0, rel=3e-3)


def test_no_gas_phase_solution():
    # library: CoolProp's saturated-vapour molar volume of methane at 150 K; half of it is inside
    # the dome or liquid, so no gas-phase state has that volume at 150 K
    import CoolProp.CoolProp as CP

    methane = Composition.from_mapping({"methane": 1.0})
    v_sat = 1.0 / CP.PropsSI("Dmolar", "T", 150.0, "Q", 1, "Methane")
    for name in ("lee-kesler", "pitzer-virial"):
        st_ = solve_state(methane, MINE[name], temperature=150.0, molar_volume=np.array([2 * v_sat, 0.5 * v_sat]))
        assert np.isfinite(st_.pressure[0]) and st_.reason[0] == ""
        assert np.isnan(st_.pressure[1]) and st_.reason[1] == REASON_NO_GAS_ROOT
        assert np.isnan(st_.z[1])
    # p and v with no gas-phase temperature: 3 MPa and a liquid-like volume (CoolProp: saturated
    # vapour at 3 MPa has v about 3.6e-4 m3/mol)
    st_ = solve_state(methane, MINE["lee-kesler"], pressure=3e6, molar_volume=1e-4)
    assert np.isnan(st_.temperature) and st_.reason == REASON_NO_GAS_ROOT


def test_reduced_properties_by_kay():
    # Kay's rule on the component table (chemicals 1.5.2 constants), v'R = v Pc / (R Tc)
    from scipy.constants import R

    tpc, ppc, _ = GAS.pseudo_critical_kay()
    st_ = solve_state(GAS, MINE["dak"], pressure=np.array([1e6, 6e6]), temperature=290.0)
    assert np.allclose(st_.reduced_temperature, 290.0 / tpc, rtol=1e-12)
    assert np.allclose(st_.reduced_pressure, np.array([1e6, 6e6]) / ppc, rtol=1e-12)
    assert np.allclose(st_.pseudo_reduced_volume, st_.molar_volume * ppc / (R * tpc), rtol=1e-12)
    assert st_.molar_mass == pytest.approx(GAS.molar_mass)


def test_gross_characterization_for_the_correlations():
    gross = GrossCharacterization(relative_density=0.6, x_co2=0.01, x_n2=0.02)
    a = solve_state(gross, MINE["dak"], pressure=5e6, temperature=290.0)
    assert 0.85 < a.z < 0.95  # Standing–Katz chart region Tpr 1.5, Ppr 1.1 (common practice)
    b = solve_state(gross, MINE["dak"], pressure=5e6, molar_volume=a.molar_volume)
    assert b.temperature == pytest.approx(290.0, rel=1e-9)
    with pytest.raises(SettingsError, match="needs a composition"):
        solve_state(gross, MINE["lee-kesler"], pressure=5e6, temperature=290.0)


def test_names_through_the_registry():
    st_ = solve_state("methane=0.95,ethane=0.03,nitrogen=0.02", "lee-kesler", pressure=4e6, temperature=283.15)
    assert st_.method == "lee-kesler" and st_.range_class == 0
    back = solve_state({"methane": 0.95, "ethane": 0.03, "nitrogen": 0.02}, "hy", pressure=4e6,
                       molar_volume=st_.molar_volume)
    assert back.method == "hall-yarborough"
    assert abs(back.temperature - 283.15) < 3.0  # two chart methods agree within about 1 % in Z
