"""Site corrector check: misconfigurations injected at known sizes into a synthetic month of our own.

The corrector's volumes are computed here from the formula Vb = Vf (pf/pb)(Tb/Tf)(Zb/Zf) with one
setting wrong (common practice: the conversion of AGA Report No. 7 / EN 12405-1), Z from the
same published method the run uses. The check must name the cause, its month size within 10 %
of the injected effect, and recover the wrong setting.
"""

import numpy as np
import pytest

from meterfix.checks.invoice import check_corrector
from meterfix.z import evaluate_z
from synthetic_month import GAS, METHOD, month_frame, run

FRAME = month_frame()
RESULT = run(FRAME)
D = RESULT.intervals
VL, PF, TF, ZF, ZB = (D[c].to_numpy(float) for c in ("volume_line", "pressure_line", "temperature_line", "z_line",
                                                        "z_base"))
PG = FRAME["pressure_gauge"].to_numpy(float)
PB, TB = RESULT.settings.pressure_base, RESULT.settings.temperature_base
OURS = D["volume_base"].to_numpy(float)
# common base conditions (common practice; NIST SP 811 factors): 14.73 psia = 101 559.775 Pa; 0 degC = 273.15 K
P_1473 = 101_559.775


def _z(p, t):
    return np.asarray(evaluate_z(p, t, GAS, METHOD).z, float)


def inject(cause):
    """The corrector's corrected volume [m3] with one misconfiguration, and the wrong value."""
    if cause == "ideal-gas":
        return VL * PF / PB * TB / TF, 1.0
    if cause == "fixed-z":
        return VL * PF / PB * TB / TF * ZB / 0.93, 0.93
    if cause == "base-pressure":
        return VL * PF / P_1473 * TB / TF * ZB / ZF, P_1473
    if cause == "base-temperature":
        zb0 = _z(PB, 273.15)
        return VL * PF / PB * 273.15 / TF * zb0 / ZF, 273.15
    if cause == "atmospheric-pressure":
        p2 = PG + 101_325.0  # sea-level standard atmosphere instead of the logged barometer (~96.5 kPa)
        return VL * p2 / PB * TB / TF * ZB / _z(p2, TF), 101_325.0
    if cause == "fixed-temperature":
        return VL * PF / PB * TB / 288.15 * ZB / _z(PF, np.full_like(PF, 288.15)), 288.15
    if cause == "fpv-not-squared":
        return VL * PF / PB * TB / TF * np.sqrt(ZB / ZF), None
    raise KeyError(cause)


PARAMETER = {"fixed-z": ("z_line_used", 1e-4), "base-pressure": ("pressure_base_used_Pa", 1.0),
             "base-temperature": ("temperature_base_used_K", 0.02), "atmospheric-pressure": ("pressure_atm_used_Pa", 10.0),
             "fixed-temperature": ("temperature_line_used_K", 0.02), "ideal-gas": ("z_line_used", 0.0)}


def _size(theirs):
    return 100.0 * (theirs.sum() / OURS.sum() - 1.0)


@pytest.mark.parametrize("cause", ["ideal-gas", "fixed-z", "base-pressure", "base-temperature", "atmospheric-pressure",
                                   "fixed-temperature", "fpv-not-squared"])
def test_single_misconfiguration_named_with_its_size(cause):
    theirs, wrong = inject(cause)
    # the corrector reports to 0.01 m3 (rounding as a real register would)
    check = check_corrector(RESULT, FRAME.assign(volume_corrected_site=np.round(theirs, 2)))
    injected = _size(theirs)
    assert abs(injected) > 0.15  # each injection is above the default threshold
    best = check.best
    assert best is not None and best["cause"] == cause
    assert best["size_pct"] == pytest.approx(injected, rel=0.10)
    assert best["size_pct"] == pytest.approx(injected, abs=2e-3)  # in fact far closer than 10 %
    assert best["r2"] > 0.999
    if cause in PARAMETER:
        key, tol = PARAMETER[cause]
        assert best["parameters"][key] == pytest.approx(wrong, abs=tol if tol else 1e-12)
    # energy and money impact follow from the volume impact (38.5 MJ/m3, 0.03 EUR/kWh = 0.03/3.6e6 EUR/J)
    assert best["energy_impact_MJ"] == pytest.approx(best["volume_impact_m3"] * 38.5, rel=1e-9)
    assert best["money_impact"] == pytest.approx(best["energy_impact_MJ"] * 1e6 * 0.03 / 3.6e6, rel=1e-9)


def test_two_misconfigurations_at_once():
    # an old corrector: Z = 1 and a fixed sea-level atmospheric pressure
    p2 = PG + 101_325.0
    theirs = VL * p2 / PB * TB / TF
    alone_ideal = _size(VL * PF / PB * TB / TF)
    alone_atm = _size(VL * p2 / PB * TB / TF * ZB / ZF)  # the atmospheric part, first order, real Z
    check = check_corrector(RESULT, FRAME.assign(volume_corrected_site=np.round(theirs, 2)))
    best = check.best
    assert best["cause"] == "ideal-gas+atmospheric-pressure"
    assert best["size_pct"] == pytest.approx(_size(theirs), rel=0.10)
    parts = {c["cause"]: c for c in best["causes"]}
    assert parts["ideal-gas"]["size_pct"] == pytest.approx(alone_ideal, rel=0.10)
    assert parts["atmospheric-pressure"]["size_pct"] == pytest.approx(alone_atm, rel=0.10)
    assert parts["atmospheric-pressure"]["parameters"]["pressure_atm_used_Pa"] == pytest.approx(101_325.0, abs=10.0)


def test_correct_corrector_gives_no_finding():
    rng = np.random.default_rng(11)
    # a correctly configured corrector: our volumes with its own rounding and 0.02 % scatter
    theirs = np.round(OURS * (1 + 2e-4 * rng.standard_normal(len(OURS))), 2)
    check = check_corrector(RESULT, FRAME.assign(volume_corrected_site=theirs))
    assert check.findings == []
    assert abs(check.size_pct) < check.threshold_pct
    s = check.to_summary()
    assert s["findings"] == [] and s["best"] is None
    assert s["candidates"][0]["cause"] in {c["cause"] for c in s["candidates"]}


def test_small_injection_below_threshold_is_not_a_finding():
    # 14.696 vs 14.73 psia is 0.23 %; a 101.33 vs 101.325 kPa base (0.005 %) is below any threshold
    theirs = OURS * 101_325.0 / 101_330.0
    check = check_corrector(RESULT, FRAME.assign(volume_corrected_site=theirs))
    assert check.findings == []


def test_intervals_table_and_summary():
    theirs, _ = inject("ideal-gas")
    check = check_corrector(RESULT, FRAME.assign(volume_corrected_site=theirs))
    iv = check.intervals
    assert {"ours", "theirs", "ratio", "fitted_ratio", "residual_pct"} <= set(iv.columns)
    assert np.allclose(iv["ratio"], ZF / ZB, rtol=1e-12)  # ideal-gas ratio is Zf/Zb exactly
    assert np.nanmax(np.abs(iv["residual_pct"])) < 1e-9
    s = check.to_summary()
    assert s["findings"][0]["cause"] == "ideal-gas" and "size_pct" in s["findings"][0] and "r2" in s["findings"][0]
