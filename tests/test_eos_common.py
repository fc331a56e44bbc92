"""Checks every equation of state must pass (AGA8 DETAIL and GERG-2008 alike): the low-pressure
limit, smoothness in p and T, and a point with no gas root failing alone with its reason.

Method-specific checks (reference tables, range classes, scalar fuzz) stay in test_aga8_detail.py
and test_gerg2008.py.
"""

from __future__ import annotations

import numpy as np
import pytest

from meterfix.z.aga8_detail import z_aga8_detail
from meterfix.z.gerg2008 import z_gerg2008

from _z_reference import five_gas_compositions as five_gases

EOS = pytest.mark.parametrize("z_eos", [z_aga8_detail, z_gerg2008], ids=["aga8-detail", "gerg-2008"])


@EOS
def test_z_tends_to_one_at_low_pressure(z_eos):
    # common practice (textbook fact): Z -> 1 as p -> 0, and Z - 1 = B p / (R T) + O(p^2)
    gas = five_gases()["amarillo"]
    p = np.array([1.0, 10.0, 100.0, 1000.0])
    res = z_eos(p, 280.0, gas)
    assert np.all(np.abs(res.z - 1.0) < 1e-4 * p / 1000.0 + 1e-12)
    slope = (res.z - 1.0) / p
    assert slope[0] == pytest.approx(slope[2], rel=1e-3)
    assert slope[0] < 0  # attractive forces dominate at 280 K
    # ideal-gas speed of sound limit is finite and positive
    assert np.all(res.speed_of_sound > 300)


@EOS
def test_smooth_in_pressure_and_temperature(z_eos):
    gas = five_gases()["gulf_coast"]
    p = np.linspace(0.1e6, 35e6, 3001)
    z = z_eos(p, 300.0, gas).z
    d2 = np.diff(z, 2)
    assert np.all(np.isfinite(z))
    assert np.max(np.abs(d2)) < 1e-6 and np.max(np.abs(np.diff(d2))) < 1e-8
    t = np.linspace(250.0, 450.0, 2001)
    zt = z_eos(10e6, t, gas).z
    assert np.all(np.diff(zt) > 0)  # Z rises with T at 10 MPa over this range
    assert np.max(np.abs(np.diff(zt, 3))) < 1e-8


@EOS
def test_no_gas_root_is_nan_with_reason_and_others_unaffected(z_eos):
    # propane at 300 K, 5 MPa is a compressed liquid (vapour pressure about 1 MPa; library:
    # CoolProp): no gas root there.
    CP = pytest.importorskip("CoolProp.CoolProp")
    assert CP.PropsSI("P", "T", 300.0, "Q", 1, "Propane") < 1.1e6
    propane = {"propane": 1.0}
    p = np.array([0.5e6, 5e6, 0.8e6])
    res = z_eos(p, 300.0, propane)
    assert res.reason.tolist() == ["", "no-gas-root", ""]
    assert np.isnan(res.z[1]) and np.isnan(res.molar_density[1]) and np.isnan(res.speed_of_sound[1])
    alone = z_eos(np.array([0.5e6, 0.8e6]), 300.0, propane)
    np.testing.assert_array_equal(res.z[[0, 2]], alone.z)
    # the same with a temperature per point (no shared-temperature shortcut)
    res_t = z_eos(p, np.array([300.0, 300.2, 300.4]), propane)
    assert res_t.reason.tolist() == ["", "no-gas-root", ""] and np.all(np.isfinite(res_t.speed_of_sound[[0, 2]]))
