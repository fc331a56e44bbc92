"""The compiled Z-only kernel against the numpy path, and both against the AGA8 reference code.

Outside source: the AGA8 reference code (NIST's AGA8 DETAIL and GERG-2008 routines, in the
Rust port that the `pyaga8` package wraps), called point by point as its own example does
(DensityDetail / DensityGERG, then the properties routine, which gives Z).
"""

from __future__ import annotations

import numpy as np
import pytest

from _z_reference import five_gases
from meterfix.z import compiled, evaluate_z

METHODS = ("aga8-detail", "gerg-2008")
#: meterfix component names that pyaga8 spells differently
PYAGA8_NAMES = {"n_hexane": "hexane", "n_heptane": "heptane", "n_octane": "octane", "n_nonane": "nonane",
                "n_decane": "decane"}


def _points(n: int, seed: int = 7):
    rng = np.random.default_rng(seed)
    p = rng.uniform(0.02e6, 14e6, n)
    t = rng.uniform(240.0, 360.0, n)
    return p, t


def _z_both(p, t, gas, method, monkeypatch):
    """(numpy path, compiled path) results of the same Z-only call."""
    monkeypatch.setattr(compiled, "MIN_POINTS", 10 ** 12)
    plain = evaluate_z(p, t, gas, method, speed_of_sound=False)
    monkeypatch.setattr(compiled, "MIN_POINTS", 1)
    monkeypatch.setattr(compiled, "MIN_POINTS_COLD", 1)
    fast = evaluate_z(p, t, gas, method, speed_of_sound=False)
    return plain, fast


@pytest.mark.parametrize("method", METHODS)
def test_compiled_kernel_matches_numpy_path(method, monkeypatch):
    pytest.importorskip("numba")
    assert compiled.kernel() is not None
    p, t = _points(3000)
    # points the kernel must hand back: invalid input, liquid-like states, a dense cold gas
    p = np.concatenate([p, [np.nan, -1.0, 5e6, 30e6, 8e6, 1e5]])
    t = np.concatenate([t, [300.0, 300.0, 0.0, 150.0, 200.0, 110.0]])
    for name, gas in five_gases().items():
        plain, fast = _z_both(p, t, gas, method, monkeypatch)
        np.testing.assert_array_equal(np.isnan(plain.z), np.isnan(fast.z), err_msg=name)
        np.testing.assert_array_equal(plain.reason, fast.reason, err_msg=name)
        np.testing.assert_allclose(fast.z, plain.z, rtol=1e-13, atol=0, equal_nan=True, err_msg=name)
        np.testing.assert_allclose(fast.molar_density, plain.molar_density, rtol=1e-13, equal_nan=True)
        np.testing.assert_array_equal(plain.range_class, fast.range_class)


def test_compiled_path_only_for_large_z_only_calls(monkeypatch):
    monkeypatch.setattr(compiled, "MIN_POINTS", 100)
    monkeypatch.setattr(compiled, "MIN_POINTS_COLD", 100)
    calls = []
    real = compiled.solve_fast
    monkeypatch.setattr("meterfix.z.aga8_detail.solve_fast", lambda *a, **k: calls.append(1) or real(*a, **k))
    gas = five_gases()["gulf_coast"]
    p, t = _points(150)
    evaluate_z(p[:50], t[:50], gas, "aga8-detail", speed_of_sound=False)
    evaluate_z(p, t, gas, "aga8-detail")  # speed of sound asked: the numpy path
    assert not calls
    evaluate_z(p, t, gas, "aga8-detail", speed_of_sound=False)
    assert calls or compiled.kernel() is None


def test_first_call_stays_in_numpy_until_the_load_pays(monkeypatch):
    # before the kernel is loaded a call below MIN_POINTS_COLD runs in numpy (no numba import)
    monkeypatch.setattr(compiled, "_KERNEL", [])
    assert not compiled.use_compiled(compiled.MIN_POINTS)
    assert not compiled._KERNEL
    monkeypatch.setattr(compiled, "_KERNEL", [object()])
    assert compiled.use_compiled(compiled.MIN_POINTS)


@pytest.mark.parametrize("method", METHODS)
def test_against_aga8_reference_code(method, monkeypatch):
    """Z of the five AGA8 reference gases at random (p, T) against the AGA8 reference code
    (pyaga8), point by point; both of our paths. The reference code iterates its density to
    about 1e-15, so the agreement is at the last digits."""
    pyaga8 = pytest.importorskip("pyaga8")
    p, t = _points(120, seed=11)
    cls = pyaga8.Detail if method == "aga8-detail" else pyaga8.Gerg2008
    for name, gas in five_gases().items():
        comp = pyaga8.Composition()
        for k, v in gas.items():
            setattr(comp, PYAGA8_NAMES.get(k, k), v)
        ref_state = cls()
        ref_state.set_composition(comp)
        ref = np.empty(p.size)
        for i in range(p.size):
            ref_state.pressure = p[i] / 1000.0  # [kPa]
            ref_state.temperature = t[i]  # [K]
            if method == "gerg-2008":
                ref_state.calc_density(0)  # 0: the gas-phase root from the ideal-gas start
            else:
                ref_state.calc_density()
            ref_state.calc_properties()
            ref[i] = ref_state.z
        plain, fast = _z_both(p, t, gas, method, monkeypatch)
        np.testing.assert_allclose(plain.z, ref, rtol=1e-12, atol=0, err_msg=name)
        np.testing.assert_allclose(fast.z, ref, rtol=1e-12, atol=0, err_msg=name)
