"""Orifice plates (ISO 5167-2:2003) against outside implementations.

Outside sources, named beside each check:
- `fluids` 1.3 (Caleb Bell, ChEDL): differential_pressure_meter_solver ('ISO 5167 orifice'),
  C_Reader_Harris_Gallagher, orifice_expansibility, and the values its own test suite uses;
- `pvtlib` (metering.differential_pressure_flowmeters): a second, independent implementation of
  ISO 5167-2 (its C iteration stops at |dC| < 1e-10, hence 1e-9 there);
- the AGA8 reference code (`pyaga8`, DETAIL) for the density, speed of sound and isentropic
  exponent at the same P and T.
"""

from __future__ import annotations

import numpy as np
import pytest

from meterfix.meters import orifice_iso5167 as O
from meterfix.meters.density import gas_state

#: an invented natural gas (mole fractions)
GAS = {"methane": 0.9, "ethane": 0.05, "propane": 0.01, "nitrogen": 0.02, "carbon_dioxide": 0.015,
       "n_butane": 0.005}
FLUIDS_TAPS = {"corner": "corner", "flange": "flange", "d-d2": "D and D/2"}
PVTLIB_TAPS = {"corner": "corner", "flange": "flange", "d-d2": "D"}


def _pyaga8_state(p, t):
    """Density [kg/m3], speed of sound [m/s], kappa [-] of GAS at each (p, T), point by point (pyaga8)."""
    pyaga8 = pytest.importorskip("pyaga8")
    ref = pyaga8.Detail()
    comp = pyaga8.Composition()
    for k, v in GAS.items():
        setattr(comp, k, v)
    ref.set_composition(comp)
    ref.calc_molar_mass()
    out = np.empty((3, len(p)))
    for i in range(len(p)):
        ref.pressure = p[i] / 1000.0
        ref.temperature = t[i]
        ref.calc_density()
        ref.calc_properties()
        out[:, i] = ref.d * ref.mm, ref.w, ref.kappa  # mol/l x g/mol = kg/m3
    return out


def _month(n=240, seed=3):
    rng = np.random.default_rng(seed)
    p1 = rng.uniform(2.0e6, 7.0e6, n)
    t = rng.uniform(275.0, 305.0, n)
    dp = rng.uniform(200.0, 40000.0, n)
    return p1, t, dp


def test_expansibility_value_of_fluids_tests():
    # fluids' tests: orifice_expansibility(D=0.0739, Do=0.0222, P1=1E5, P2=9.9E4, k=1.4) = 0.9974739057343425,
    # "tested against a value in the standard" (ISO 5167-2:2003)
    eps = O.expansibility_iso5167_2_2003(0.0222 / 0.0739, 1e3, 1e5, 1.4)
    assert eps == pytest.approx(0.9974739057343425, rel=1e-14)


def test_discharge_coefficient_value_of_fluids_tests():
    # fluids' tests: C_Reader_Harris_Gallagher(D=0.07391, Do=0.0222, rho=1.1645909036,
    # mu=0.0000185861753095, m=0.124431876, taps='corner') = 0.6000085121444034
    d_pipe, rho, mu, m = 0.07391, 1.1645909036, 0.0000185861753095, 0.124431876
    re = 4 * m / (np.pi * mu * d_pipe)
    c = O.discharge_coefficient_rhg_iso5167_2_2003(0.0222 / d_pipe, d_pipe, re, "corner")
    assert c == pytest.approx(0.6000085121444034, rel=1e-13)
    assert rho > 0


@pytest.mark.parametrize("taps", O.TAPS)
@pytest.mark.parametrize("pipe", [(0.10226, 0.0508), (0.0627, 0.0310), (0.3048, 0.2000)])
def test_c_and_expansibility_against_fluids(taps, pipe):
    fm = pytest.importorskip("fluids.flow_meter")
    d_pipe, d_bore = pipe
    rho, mu = 40.0, 1.2e-5
    for m in (0.05, 0.8, 5.0, 30.0):
        re = 4 * m / (np.pi * mu * d_pipe)
        ours = O.discharge_coefficient_rhg_iso5167_2_2003(d_bore / d_pipe, d_pipe, re, taps)
        ref = fm.C_Reader_Harris_Gallagher(D=d_pipe, Do=d_bore, rho=rho, mu=mu, m=m, taps=FLUIDS_TAPS[taps])
        assert ours == pytest.approx(ref, rel=1e-13)
    for p1, dp, k in ((5e6, 25e3, 1.31), (1e5, 1e3, 1.4), (2e6, 4e5, 1.25)):
        ours = O.expansibility_iso5167_2_2003(d_bore / d_pipe, dp, p1, k)
        ref = fm.orifice_expansibility(D=d_pipe, Do=d_bore, P1=p1, P2=p1 - dp, k=k)
        assert ours == pytest.approx(ref, rel=1e-14)


@pytest.mark.parametrize("taps", O.TAPS)
def test_interval_mass_against_fluids_with_pyaga8_density(taps):
    """Each interval's mass, qm x duration, against fluids' solver with the density, speed of sound
    and isentropic exponent of the AGA8 reference code (pyaga8) at the same P and T: 1e-9."""
    fm = pytest.importorskip("fluids.flow_meter")
    p1, t, dp = _month()
    duration = np.full(p1.size, 3600.0)
    d_pipe = O.diameter_at_temperature(0.10226, 11.6e-6, t, 293.15)
    d_bore = O.diameter_at_temperature(0.0508, 16.0e-6, t, 293.15)
    mu = 1.1e-5
    st = gas_state(p1, t, GAS, "aga8-detail", speed_of_sound=True)
    flow = O.mass_flow_iso5167_2_2003(dp, st.density, p1, d_pipe, d_bore, mu, st.isentropic_exponent, taps)
    assert flow.converged.all()
    rho_ref, w_ref, kappa_ref = _pyaga8_state(p1, t)
    np.testing.assert_allclose(st.density, rho_ref, rtol=1e-12)
    np.testing.assert_allclose(st.speed_of_sound, w_ref, rtol=1e-11)
    np.testing.assert_allclose(st.isentropic_exponent, kappa_ref, rtol=1e-10)
    ref = np.array([fm.differential_pressure_meter_solver(
        D=d_pipe[i], D2=d_bore[i], P1=p1[i], P2=p1[i] - dp[i], rho=rho_ref[i], mu=mu, k=kappa_ref[i],
        meter_type="ISO 5167 orifice", taps=FLUIDS_TAPS[taps]) for i in range(p1.size)])
    np.testing.assert_allclose(flow.mass_flow * duration, ref * duration, rtol=1e-9)


@pytest.mark.parametrize("taps", O.TAPS)
def test_mass_flow_against_pvtlib(taps):
    """pvtlib's calculate_flow_orifice (its own Reader-Harris/Gallagher and iteration; dp in mbar,
    result in kg/h) with pvtlib's calculate_expansibility_orifice (p1 in bara, dp in mbar)."""
    dpm = pytest.importorskip("pvtlib.metering.differential_pressure_flowmeters")
    p1, t, dp = _month(60, seed=5)
    d_pipe, d_bore, mu = 0.2027, 0.1100, 1.15e-5
    st = gas_state(p1, t, GAS, "aga8-detail", speed_of_sound=True)
    flow = O.mass_flow_iso5167_2_2003(dp, st.density, p1, d_pipe, d_bore, mu, st.isentropic_exponent, taps)
    for i in range(p1.size):
        eps = dpm.calculate_expansibility_orifice(P1=p1[i] / 1e5, dP=dp[i] / 100.0, beta=d_bore / d_pipe,
                                                  kappa=st.isentropic_exponent[i])
        assert flow.expansibility[i] == pytest.approx(eps, rel=1e-13)
        r = dpm.calculate_flow_orifice(D=d_pipe, d=d_bore, dP=dp[i] / 100.0, rho1=st.density[i], mu=mu,
                                       epsilon=eps, tapping=PVTLIB_TAPS[taps])
        assert flow.mass_flow[i] * 3600.0 == pytest.approx(r["MassFlow"], rel=1e-9)
        assert flow.discharge_coefficient[i] == pytest.approx(r["C"], rel=1e-9)


def test_iteration_is_vectorised_and_keeps_shapes():
    flow = O.mass_flow_iso5167_2_2003(np.array([[1e4, 2e4], [0.0, -5.0]]), 30.0, 4e6, 0.1, 0.05, 1.1e-5, 1.3)
    assert flow.mass_flow.shape == (2, 2)
    assert flow.mass_flow[1, 0] == 0.0 and flow.mass_flow[1, 1] == 0.0  # no flow at dp <= 0
    scalar = O.mass_flow_iso5167_2_2003(1e4, 30.0, 4e6, 0.1, 0.05, 1.1e-5, 1.3)
    assert float(scalar.mass_flow) == flow.mass_flow[0, 0]


def test_row_limits_flag_reynolds_pressure_ratio_and_negative_dp():
    dp = np.array([1e4, 0.05, 3e5, -50.0])
    p1 = np.array([4e6, 4e6, 1e6, 4e6])
    flow = O.mass_flow_iso5167_2_2003(dp, 30.0, p1, 0.1, 0.07, 1.1e-5, 1.3, "corner")
    lim = O.orifice_row_limits(flow, dp, p1, "corner")
    # beta 0.7 > 0.56: Re_D >= 16000 beta^2 = 7840 (ISO 5167-2:2003, 5.3.1)
    assert lim["orifice_reynolds"].tolist() == [False, True, False, False]
    assert lim["orifice_pressure_ratio"].tolist() == [False, False, True, False]  # p2/p1 = 0.7 < 0.75
    assert lim["negative_differential_pressure"].tolist() == [False, False, False, True]
    assert O.reynolds_limit_iso5167_2_2003(0.5, 0.3, "flange") == pytest.approx(max(5000, 170 * 0.25 * 300))


@pytest.mark.parametrize("pipe,bore,words", [
    (0.1, 0.12, "not smaller than the pipe"), (0.1, 0.08, "beta = d/D = 0.8000"), (0.1, 0.009, "beta"),
    (0.04, 0.02, "50 mm <= D"), (1.2, 0.6, "D <= 1000 mm"), (0.06, 0.012, "d >= 12.5 mm")])
def test_geometry_outside_the_standard_is_named(pipe, bore, words):
    msg = O.geometry_problem_iso5167_2_2003(pipe, bore)
    assert msg is not None and words in msg
    assert O.geometry_problem_iso5167_2_2003(0.10226, 0.0508) is None


def test_uncertainty_of_c_and_epsilon():
    # ISO 5167-2:2003, 5.3.3.1 and 5.3.3.2 (from memory of the text), worked by hand
    assert O.discharge_coefficient_uncertainty_iso5167_2_2003(0.5, 0.1, 1e6) == pytest.approx(0.5)
    assert O.discharge_coefficient_uncertainty_iso5167_2_2003(0.15, 0.1, 1e6) == pytest.approx(0.55)
    assert O.discharge_coefficient_uncertainty_iso5167_2_2003(0.7, 0.1, 1e6) == pytest.approx(1.667 * 0.7 - 0.5)
    assert O.discharge_coefficient_uncertainty_iso5167_2_2003(0.7, 0.1, 9000) == pytest.approx(1.667 * 0.7)
    assert O.expansibility_uncertainty_iso5167_2_2003(2e4, 4e6, 1.3) == pytest.approx(3.5 * 2e4 / (1.3 * 4e6))


def test_viscosity_correlation_near_coolprop_methane():
    """Lee-Gonzalez-Eakin (1966) against CoolProp's methane viscosity: the correlation's stated 2-4 %."""
    cp = pytest.importorskip("CoolProp.CoolProp")
    from meterfix.meters.viscosity import viscosity_lee_gonzalez_eakin_1966

    for p, t in ((1e5, 288.15), (5e6, 288.15), (7e6, 300.0)):
        rho = cp.PropsSI("D", "P", p, "T", t, "Methane")
        ref = cp.PropsSI("V", "P", p, "T", t, "Methane")
        assert viscosity_lee_gonzalez_eakin_1966(t, rho, 0.016043) == pytest.approx(ref, rel=0.04)
