"""Site corrector check: misconfigurations injected at known sizes into a synthetic month of our own.

The corrector's volumes are computed here from the formula Vb = Vf (pf/pb)(Tb/Tf)(Zb/Zf) with one
setting wrong (common practice: the conversion of AGA Report No. 7 / EN 12405-1), Z from the
same published method the run uses. The check must name the cause, its month size within 10 %
of the injected effect, and recover the wrong setting.
"""

import numpy as np
import pandas as pd
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
PB, TB = RESULT.settings.base_pressure, RESULT.settings.base_temperature
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


# --- issue 13: findings rest on evidence -------------------------------------------------------------------------
from meterfix.checks import corrector_models as CM  # noqa: E402
from synthetic_month import supplied_heating_value_only  # noqa: E402


def _credited_within_bounds(check):
    for f in check.findings:
        for part in f["causes"]:
            p = part["parameters"]
            if "pressure_atm_used_Pa" in p:
                assert CM.BOUND_ATM[0] < p["pressure_atm_used_Pa"] < CM.BOUND_ATM[1]
            if "pressure_base_used_Pa" in p:
                assert CM.BOUND_BASE_PRESSURE[0] < p["pressure_base_used_Pa"] < CM.BOUND_BASE_PRESSURE[1]
            if "temperature_base_used_K" in p:
                assert CM.BOUND_BASE_TEMPERATURE[0] < p["temperature_base_used_K"] < CM.BOUND_BASE_TEMPERATURE[1]
            if "temperature_line_used_K" in p:
                assert CM.BOUND_FIXED_TEMPERATURE[0] < p["temperature_line_used_K"] < CM.BOUND_FIXED_TEMPERATURE[1]
            if "z_line_used" in p and part["cause"] == "fixed-z":
                assert CM.BOUND_FIXED_Z[0] < p["z_line_used"] < CM.BOUND_FIXED_Z[1]


def _gauge_as_absolute(pf, pg, tf):
    # the corrector takes the gauge reading as the absolute pressure (and computes Z there)
    return VL * pg / PB * TB / tf * ZB / _z(pg, tf)


def test_gauge_read_as_absolute_is_its_own_cause():
    theirs = _gauge_as_absolute(PF, PG, TF)
    check = check_corrector(RESULT, FRAME.assign(volume_corrected_site=np.round(theirs, 2)))
    best = check.best
    assert best["cause"] == "gauge-as-absolute" and best["material"]
    assert best["size_pct"] == pytest.approx(_size(theirs), abs=2e-3)
    assert best["r2"] > 0.999 and "gauge" in best["description"]
    _credited_within_bounds(check)


def _low_pressure_month(days=7, seed=5):
    # an invented 15-minute month at 27-33 bar(g): a gauge reading taken as absolute is about -3 %
    idx = pd.date_range("2026-03-01 06:00", periods=96 * days, freq="15min", tz="Europe/Berlin").tz_convert("UTC")
    n = len(idx)
    rng = np.random.default_rng(seed)
    t = np.arange(n)
    gauge = 30e5 + 3e5 * np.sin(2 * np.pi * t / (96 * 3)) + 0.3e5 * rng.standard_normal(n)
    atm = 96_500 + 800 * np.sin(2 * np.pi * t / (96 * 5))
    temp = 281.0 + 5.0 * np.sin(2 * np.pi * t / 96) + 0.5 * rng.standard_normal(n)
    return pd.DataFrame({"pressure_gauge": gauge, "pressure_atm": atm, "temperature_line": temp,
                         "volume_line": 80.0 * (1 + 0.2 * rng.random(n)), "duration": 900.0}, index=idx)


def test_gap_interval_cannot_hide_gauge_read_as_absolute():
    f = _low_pressure_month()
    k = 300
    f = f.drop(f.index[k - 2:k])  # two intervals lost in a communication gap
    f.iloc[k - 2, f.columns.get_loc("duration")] = 2700.0  # the next row's meter volume covers 45 minutes
    f.iloc[k - 2, f.columns.get_loc("volume_line")] *= 3.0
    with supplied_heating_value_only():
        from synthetic_month import run as run_month_of

        r = run_month_of(f)
    d = r.intervals
    pf, tf, vl, zb = (d[c].to_numpy(float) for c in ("pressure_line", "temperature_line", "volume_line", "z_base"))
    pg = f["pressure_gauge"].reindex(d.index).to_numpy(float)
    theirs = vl * pg / PB * TB / tf * zb / _z(pg, tf)
    gap = d.index.get_loc(f.index[k - 2])
    theirs[gap] /= 3.0  # the corrector's volume for that row covers its last 15 minutes only
    ours = d["volume_base"].to_numpy(float)
    ok = np.arange(len(d)) != gap
    injected = 100 * (theirs[ok].sum() / ours[ok].sum() - 1)
    assert injected == pytest.approx(-3.0, abs=0.6)
    check = check_corrector(r, f.assign(volume_corrected_site=np.round(theirs, 2)))
    best = check.best
    assert best is not None and best["cause"] == "gauge-as-absolute"
    assert best["size_pct"] == pytest.approx(injected, abs=0.01)
    assert bool(check.intervals["outlier"].iat[gap]) and check.totals["intervals_outlier"] == 1
    assert any("outlier" in w for w in check.warnings)


def test_small_atmospheric_error_reported_below_threshold():
    # a fixed atmospheric pressure 0.33 psi (2275 Pa) above the mean barometer: about 0.1 % of the month
    a_used = float(FRAME["pressure_atm"].mean()) + 0.33 * 6894.757293168361  # NIST SP 811: 1 psi = 6894.757 Pa
    p2 = PG + a_used
    rng = np.random.default_rng(2)
    theirs = np.round(VL * p2 / PB * TB / TF * ZB / _z(p2, TF) * (1 + 1e-4 * rng.standard_normal(len(VL))), 2)
    check = check_corrector(RESULT, FRAME.assign(volume_corrected_site=theirs))
    assert 0.05 < abs(_size(theirs)) < 0.15
    f = check.best
    assert f is not None and f["cause"] == "atmospheric-pressure" and f["material"] is False
    assert f["parameters"]["pressure_atm_used_Pa"] == pytest.approx(a_used, abs=100.0)
    assert f["delta_bic"] > 10
    assert any("below the threshold" in w for w in check.warnings)


def test_ideal_gas_is_not_also_a_fixed_z_of_one():
    theirs, _ = inject("ideal-gas")
    check = check_corrector(RESULT, FRAME.assign(volume_corrected_site=np.round(theirs, 2)))
    causes = [f["cause"] for f in check.findings]
    assert causes[0] == "ideal-gas" and not any("fixed-z" in c for c in causes)
    fz = next(c for c in check.candidates if c["cause"] == "fixed-z")
    assert not fz["credited"] and "ideal-gas" in fz["why_not"]


@pytest.mark.parametrize("factor", [1.006, 0.994])
def test_constant_offset_of_no_base_condition_is_not_explained(factor):
    # a corrector 0.6 % off by a constant: no base condition in use gives it (it would be 100.7 or 101.9 kPa)
    rng = np.random.default_rng(4)
    theirs = np.round(OURS * factor * (1 + 2e-4 * rng.standard_normal(len(OURS))), 2)
    check = check_corrector(RESULT, FRAME.assign(volume_corrected_site=theirs))
    assert check.findings == []
    assert any("no misconfiguration tried explains it" in w for w in check.warnings)
    bp = next(c for c in check.candidates if c["cause"] == "base-pressure")
    assert not bp["credited"] and "no base condition in use" in bp["why_not"]


def test_noise_alone_is_not_explained():
    rng = np.random.default_rng(7)
    for seed in range(3):
        rng = np.random.default_rng(seed)
        theirs = np.round(OURS * (1 + 5e-4 * rng.standard_normal(len(OURS))), 2)
        check = check_corrector(RESULT, FRAME.assign(volume_corrected_site=theirs))
        assert check.findings == [], [(f["cause"], f["delta_bic"]) for f in check.findings]


def test_parameters_bounded_to_physical_values():
    # a gross mismatch (the site column is something else): fits may run to their bounds but nothing is credited
    rng = np.random.default_rng(9)
    theirs = OURS * np.exp(0.3 * rng.standard_normal(len(OURS)))
    check = check_corrector(RESULT, FRAME.assign(volume_corrected_site=theirs))
    assert check.findings == []
    for c in check.candidates:
        p = c.get("parameters", {})
        if "pressure_atm_used_Pa" in p:
            assert CM.BOUND_ATM[0] - 1 <= p["pressure_atm_used_Pa"] <= CM.BOUND_ATM[1] + 1
        if "temperature_base_used_K" in p:
            assert 260.0 <= p["temperature_base_used_K"] <= 310.0
    for cause in ("fixed-z", "base-pressure", "fixed-temperature"):
        theirs, _ = inject(cause)
        _credited_within_bounds(check_corrector(RESULT, FRAME.assign(volume_corrected_site=np.round(theirs, 2))))


@pytest.mark.parametrize("factor,unit", [(1 / 28.316846592, "Mcf"), (35.3146667, "ft3"), (1000.0, "L"), (3.0, "")])
def test_site_column_of_impossible_ratio_is_flagged(factor, unit):
    # issue 13 case 2: a 'corrected volume' column in Mcf read as m3 is 0.0353 times ours: no base condition,
    # Z or atmospheric setting gives that (NIST SP 811: 1 Mcf = 28.316846592 m3)
    theirs = OURS * factor
    check = check_corrector(RESULT, FRAME.assign(volume_corrected_site=theirs))
    assert check.findings == [] and check.totals["column_suspect"]
    assert check.totals["ratio_median"] == pytest.approx(factor, rel=1e-9)
    assert np.isnan(check.size_pct)
    assert "not a corrected volume in the unit its header says" in check.warnings[0]
    if unit:
        assert unit in check.warnings[0]


def test_plausible_ratio_is_checked_not_flagged():
    theirs, _ = inject("ideal-gas")
    check = check_corrector(RESULT, FRAME.assign(volume_corrected_site=theirs))
    assert not check.totals.get("column_suspect") and check.best["cause"] == "ideal-gas"


@pytest.mark.parametrize("loss", ["linear", "soft_l1"])
def test_bounded_least_squares_finds_scipys_minimum(loss):
    # reference: scipy.optimize.least_squares (method "trf", the same loss, scale and bounds) on
    # bounded exponential fits with outliers, some with the optimum on a bound: the same minimiser
    # (a cost no higher, parameters within 1e-6 where the problem is well conditioned)
    from scipy.optimize import least_squares

    from meterfix.checks.lsq import least_squares_bounded

    rng = np.random.default_rng(3)
    t = np.linspace(0.0, 1.0, 300)
    lo, hi = np.array([0.1, -2.0, -0.5]), np.array([5.0, 2.0, 0.5])
    scale = np.array([1.0, 1.0, 0.1])
    for k in range(40):
        a, b, c = rng.uniform(0.5, 2), rng.uniform(-3, 3), rng.uniform(-1, 1)
        y = a * np.exp(b * t) + c + 0.01 * rng.standard_normal(t.size)
        y[rng.integers(0, t.size, 10)] += 3.0 * (k % 3 == 0)

        def f(th):
            return y - (th[0] * np.exp(th[1] * t) + th[2])

        ref = least_squares(f, np.array([1.0, 0.0, 0.0]), bounds=(lo, hi), x_scale=scale, method="trf", loss=loss,
                            f_scale=0.05, xtol=1e-14, ftol=1e-14, gtol=1e-14)
        x, J = least_squares_bounded(f, np.array([1.0, 0.0, 0.0]), (lo, hi), scale, loss=loss, f_scale=0.05)

        def cost(th):
            z = (f(th) / 0.05) ** 2
            return 0.5 * np.sum(f(th) ** 2) if loss == "linear" else np.sum(np.sqrt(1 + z) - 1)

        assert cost(x) <= cost(ref.x) * (1 + 1e-9)
        assert np.all(x >= lo) and np.all(x <= hi)
        cond = np.linalg.cond(J)
        if cond < 1e3:
            np.testing.assert_allclose(x, ref.x, atol=1e-6)

def test_type_t_device_fixed_pressure_is_named_with_its_pressure():
    """A type T conversion device (EN 12405-1: temperature conversion only) with a fixed 40 bar(a) and no Z
    stands where a PTZ device is needed: its output is V (p_fixed/pb)(Tb/T), worked here by the formula."""
    theirs = VL * 40e5 / PB * TB / TF
    check = check_corrector(RESULT, FRAME.assign(volume_corrected_site=np.round(theirs, 2)))
    best = check.best
    assert best is not None and best["cause"] == "fixed-pressure"
    assert best["device_type"] == "T"
    assert best["parameters"]["pressure_line_used_Pa"] == pytest.approx(40e5, rel=1e-4)
    assert best["size_pct"] == pytest.approx(_size(theirs), abs=2e-3)


def test_device_types_of_the_causes():
    from meterfix.checks.corrector_models import device_type

    assert device_type("ideal-gas") == "PT" and device_type("fixed-z") == "PT"
    assert device_type("fixed-pressure") == "T" and device_type("base-pressure") == "PTZ"
    assert device_type("ideal-gas+atmospheric-pressure") == "PT"
