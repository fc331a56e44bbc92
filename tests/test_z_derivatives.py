"""ln Z derivatives in ln p and ln T from the equations of state's own derivatives.

Outside sources: the AGA8 reference code (NIST's DETAIL and GERG-2008 routines in the Rust port
that `pyaga8` wraps), whose properties routine returns dP/dD, d2P/dD2, dP/dT and d2P/dTdD at the
solved density; and central differences of ln Z through the same Z method (a check of the
algebra, independent of the closed form).
"""

from __future__ import annotations

import numpy as np
import pytest

from _z_reference import five_gases
from meterfix.uncertainty.budget import z_log_derivatives
from meterfix.z.aga8_detail import z_log_derivatives_detail
from meterfix.z.gerg2008 import z_log_derivatives_gerg

PYAGA8_NAMES = {"n_hexane": "hexane", "n_heptane": "heptane", "n_octane": "octane", "n_nonane": "nonane",
                "n_decane": "decane"}
ANALYTIC = {"aga8-detail": z_log_derivatives_detail, "gerg-2008": z_log_derivatives_gerg}


def _points(n, seed=3):
    rng = np.random.default_rng(seed)
    return rng.uniform(0.1e6, 14e6, n), rng.uniform(250.0, 350.0, n)


@pytest.mark.parametrize("method", ANALYTIC)
def test_against_central_differences(method):
    # central differences of step h carry an error of order h^2 times the third derivative (at
    # h = 1e-4 about 1e-7 of the first derivatives near 14 MPa and 250 K) and a roundoff of about
    # 1e-16 / h^2 = 1e-8 in the second; the closed form has neither
    p, t = _points(200)
    for name, gas in five_gases().items():
        a = ANALYTIC[method](p, t, gas)
        c = z_log_derivatives(p, t, gas, method, step=1e-4, analytic=False)
        for k, tol in (("p", 1e-7), ("t", 1e-6), ("pp", 1e-5), ("tt", 1e-5), ("pt", 1e-5)):
            np.testing.assert_allclose(a[k], c[k], rtol=tol, atol=tol, err_msg=f"{name} {k}")


@pytest.mark.parametrize("method", ANALYTIC)
def test_against_aga8_reference_code(method):
    """Z = p / (D R T): ∂lnZ/∂lnp|T = 1 − p/(D ∂p/∂D), ∂lnZ/∂lnT|p = −1 + T ∂p/∂T / (D ∂p/∂D),
    ∂²lnZ/∂lnp²|T = −(g − g²(1 + D p_DD/p_D)) with g = p/(D p_D), from the reference code's own
    derivatives at its solved density (kPa, mol/l: the units cancel)."""
    pyaga8 = pytest.importorskip("pyaga8")
    p, t = _points(60, seed=9)
    cls = pyaga8.Detail if method == "aga8-detail" else pyaga8.Gerg2008
    for name, gas in five_gases().items():
        comp = pyaga8.Composition()
        for k, v in gas.items():
            setattr(comp, PYAGA8_NAMES.get(k, k), v)
        ref = cls()
        ref.set_composition(comp)
        want = {"p": np.empty(p.size), "t": np.empty(p.size), "pp": np.empty(p.size)}
        for i in range(p.size):
            ref.pressure = p[i] / 1000.0
            ref.temperature = t[i]
            ref.calc_density(0) if method == "gerg-2008" else ref.calc_density()
            ref.calc_properties()
            d, pd, pdd, pt = ref.d, ref.dp_dd, ref.d2p_dd2, ref.dp_dt
            g = ref.pressure / (d * pd)
            want["p"][i] = 1.0 - g
            want["t"][i] = -1.0 + t[i] * pt / (d * pd)
            want["pp"][i] = -(g - g * g * (1.0 + d * pdd / pd))
        got = ANALYTIC[method](p, t, gas)
        for k in want:
            np.testing.assert_allclose(got[k], want[k], rtol=1e-11, atol=1e-13, err_msg=f"{name} {k}")


def test_budget_uses_the_closed_form():
    from meterfix.gas import Composition

    gas = Composition.from_mapping({"methane": 0.93, "ethane": 0.035, "propane": 0.008, "nitrogen": 0.015,
                                    "carbon_dioxide": 0.012})
    p, t = _points(50)
    for method in ANALYTIC:
        a = z_log_derivatives(p, t, gas, method)
        b = ANALYTIC[method](p, t, gas)
        for k in ("p", "t", "pp", "tt", "pt"):
            np.testing.assert_array_equal(a[k], b[k])


@pytest.mark.parametrize("method", ANALYTIC)
def test_z_at_the_solved_density_is_z(method):
    # Z(ρ, T) at the density the solve found gives back the solve's Z (p = ρ R T Z, the same
    # equation read the other way); the composition sensitivities use it without a new solve
    from meterfix.z import evaluate_z
    from meterfix.z.aga8_detail import z_at_density as detail_at
    from meterfix.z.gerg2008 import z_at_density as gerg_at

    at = detail_at if method == "aga8-detail" else gerg_at
    p, t = _points(300, seed=4)
    for name, gas in five_gases().items():
        r = evaluate_z(p, t, gas, method, speed_of_sound=False)
        np.testing.assert_allclose(at(r.molar_density, t, gas), r.z, rtol=1e-13, err_msg=name)


def test_composition_sensitivity_at_density_equals_the_solved_one():
    # (∂ln Z/∂ε)_ρ / (∂ln p/∂ln ρ)_T against central differences of Z solved at (p, T) for the
    # perturbed compositions: the two difference schemes agree to their O(h^2) (h = 1e-2)
    from meterfix.cli.demo import demo_month
    from meterfix.engine.pipeline import run_month
    from meterfix.engine.settings import build_settings
    from meterfix.uncertainty import composition as C
    from meterfix.uncertainty.budget import build_model
    from meterfix.uncertainty.inputs import parse_uncertainty_settings

    frame, analyses = demo_month()
    for method in ANALYTIC:
        s = build_settings(None, {"base": "normal-0c", "timezone": "Europe/Berlin", "gas_day_start": "06:00",
                                  "elevation": "240 m", "method": method})
        r = run_month(frame, analyses, s)
        fast = build_model(r, parse_uncertainty_settings({}))
        saved = dict(C._AT_DENSITY)
        C._AT_DENSITY.clear()
        try:
            solved = build_model(r, parse_uncertainty_settings({}))
        finally:
            C._AT_DENSITY.update(saved)
        scale = np.max(np.abs(solved.comp_line))
        assert np.max(np.abs(fast.comp_line - solved.comp_line)) <= 1e-5 * scale
        np.testing.assert_allclose(fast.comp_base, solved.comp_base, rtol=1e-5, atol=1e-10)
