"""Uncertainty of the month: GUM budget and Monte Carlo, against outside calculations.

Invented scenario for the synthetic months: meter "Alder Brook M7", hourly, a lean pipeline gas.
"""

import json
import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings as hsettings, strategies as st

from meterfix.engine.pipeline import run_month
from meterfix.engine.settings import build_settings
from meterfix.uncertainty import month_uncertainty, parse_uncertainty, parse_uncertainty_settings
from meterfix.uncertainty.budget import budget_frame, build_model, combined_relative
from meterfix.uncertainty.monte_carlo import coverage_interval, numerical_tolerance
from meterfix.errors import SettingsError
from meterfix.gas import Composition

GAS = Composition.from_mapping({"methane": 0.9300, "ethane": 0.0350, "propane": 0.0080, "nitrogen": 0.0150,
                                "carbon_dioxide": 0.0120})
COOLPROP_NAMES = "Methane&Ethane&Propane&Nitrogen&CarbonDioxide"
COOLPROP_X = [0.93, 0.035, 0.008, 0.015, 0.012]
ALL_ZERO = {"meter": "0", "pressure": "0", "temperature": "0", "atmospheric": "0", "z": "0", "base_z": "0",
            "composition": "0", "heating_value": "0", "estimated": "0"}


def _frame(n=24, p=40e5, t=283.15, v=1000.0, seed=11, spread=True):
    idx = pd.date_range("2026-03-02 01:00", periods=n, freq="h", tz="UTC")
    rng = np.random.default_rng(seed)
    k = 1.0 if spread else 0.0
    return pd.DataFrame({
        "pressure_line": p * (1 + k * 0.05 * rng.standard_normal(n)),
        "temperature_line": t + k * 3.0 * rng.standard_normal(n),
        "volume_line": v * (1 + k * 0.2 * rng.random(n)),
        "duration": 3600.0,
    }, index=idx)


def _run(frame, unc, method="gerg-2008", **kw):
    opts = {"base": "iso-15c", "method": method, "uncertainty": unc, "gas_day_start": "00:00"}
    opts.update(kw)
    return run_month(frame, [(None, GAS)], build_settings(None, opts))


def _row(budget, key):
    r = budget[budget["setting"] == key]
    assert len(r) == 1, f"no budget row {key}"
    return r.iloc[0]


# ---------------------------------------------------------------------------------------------
# settings strings
def test_parse_expanded_mpe_units_and_classes():
    # a value is expanded at k = 2 unless marked; an MPE is a rectangular half-width: u = a/sqrt(3)
    # (GUM 4.3.7, JCGM 100:2008)
    s = parse_uncertainty("meter", "1 %")
    assert (s.standard, s.distribution, s.coverage_factor, s.correlation) == (0.005, "normal", 2.0, "systematic")
    s = parse_uncertainty("meter", "mpe 1 %")
    assert s.standard == pytest.approx(0.01 / math.sqrt(3)) and s.distribution == "rectangular" and s.mpe
    s = parse_uncertainty("pressure", "2 kPa")
    assert not s.relative and s.standard == pytest.approx(1000.0)
    # a temperature difference of 0.9 degF is 0.5 K (NIST SP 811: 1 degF = 5/9 K as an interval)
    assert parse_uncertainty("temperature", "0.9 degF").standard == pytest.approx(0.25)
    s = parse_uncertainty("temperature", "0.3 K k=1 random type A")
    assert (s.standard, s.correlation, s.type) == (0.3, "random", "A")
    assert parse_uncertainty("pressure", "0.5 % triangular").standard == pytest.approx(0.005 / math.sqrt(6))
    assert parse_uncertainty("z", "0").standard == 0.0
    assert parse_uncertainty("z", 0).standard == 0.0
    assert parse_uncertainty("heating_value", "0.1 MJ/m3").standard == pytest.approx(5e4)
    # the estimated-interval input is random by default
    assert parse_uncertainty("estimated", "10 %").correlation == "random"


@pytest.mark.parametrize("key,text,needle", [
    ("meter", "2 kPa", "percentage"),
    ("meter", "1", "neither percent nor unit"),
    ("meter", 1.5, "bare number"),
    ("pressure", "mpe 1 % k=2", "coverage factor"),
    ("pressure", "abc", "no number"),
    ("pressure", "-1 %", "zero or positive"),
    ("temperature", "0.5 furlong", "unknown temperature unit"),
    ("temperature", "0.5 K random systematic", "both random and systematic"),
    ("z", "0.1 % normal rectangular", "two distributions"),
])
def test_parse_errors_name_the_setting(key, text, needle):
    with pytest.raises(SettingsError, match=needle) as exc:
        parse_uncertainty(key, text)
    assert f"'{key}'" in exc.value.message and exc.value.hint


def test_settings_table_keys():
    p = parse_uncertainty_settings({"meter_qt": "65 m3/h", "meter_qmax": "650 m3/h", "invoice_meter_pct": 1.0,
                                    "pressure": "0.1 %"})
    assert p.meter_qt == pytest.approx(65 / 3600) and p.meter_qmax == pytest.approx(650 / 3600)
    assert p.left_to_other_steps == {"invoice_meter_pct": 1.0}
    assert set(p.given) == {"pressure"}
    with pytest.raises(SettingsError, match="unknown uncertainty setting 'meters'") as exc:
        parse_uncertainty_settings({"meters": "1 %"})
    assert "meter" in exc.value.hint
    with pytest.raises(SettingsError, match="Qt must be below Qmax"):
        parse_uncertainty_settings({"meter_qt": "650 m3/h", "meter_qmax": "65 m3/h"})
    with pytest.raises(SettingsError, match="meter_qt"):
        parse_uncertainty_settings({"meter_qt": "65 parsecs"})


def test_bad_setting_reaches_the_month_run_as_settings_error():
    r = _run(_frame(n=4), {"pressure": "0.25 %%"}, method="ideal")
    with pytest.raises(SettingsError, match="'pressure'"):
        month_uncertainty(r, draws=2000, max_draws=2000)


# ---------------------------------------------------------------------------------------------
# closed forms solved by hand
def test_ideal_gas_rectangular_inputs_by_hand():
    # Ideal method: Vb = Vf (p/pb)(Tb/T), relative sensitivities 1, 1, -1 (analytic). All inputs
    # rectangular and systematic, constant p and T, so the month's relative variance is
    #   u_rel^2 = (a_meter/sqrt3)^2 + (a_p/sqrt3)^2 + (a_T/(sqrt3 T))^2          (GUM 5.1.2, 4.3.7)
    # and the energy's adds (a_H/sqrt3)^2 for a supplied heating value.
    T = 288.15
    f = _frame(n=48, p=30e5, t=T, spread=False)
    unc = dict(ALL_ZERO, meter="mpe 1 %", pressure="mpe 0.3 %", temperature="mpe 0.6 K", heating_value="mpe 0.5 %")
    r = _run(f, unc, method="ideal", heating_value="38 MJ/m3")
    u = month_uncertainty(r, draws=20_000, max_draws=20_000)
    u_rel = math.sqrt((0.01 / math.sqrt(3)) ** 2 + (0.003 / math.sqrt(3)) ** 2 + (0.6 / (math.sqrt(3) * T)) ** 2)
    assert u.expanded_pct == pytest.approx(2 * 100 * u_rel, rel=1e-9)
    u_e = math.sqrt(u_rel**2 + (0.005 / math.sqrt(3)) ** 2)
    assert u.expanded_energy_pct == pytest.approx(2 * 100 * u_e, rel=1e-9)
    b = u.budget
    assert _row(b, "meter")["contribution_pct"] == pytest.approx(100 * 0.01 / math.sqrt(3), rel=1e-12)
    assert _row(b, "temperature")["sensitivity"] == pytest.approx(-1.0)
    assert b["share_pct"].sum() == pytest.approx(100.0)
    # systematic inputs only: every gas day has the month's relative uncertainty
    assert np.allclose(u.gas_days["expanded_pct"], u.expanded_pct, rtol=1e-9)
    assert np.allclose(u.intervals["u_volume_base_pct"], 100 * u_rel, rtol=1e-9)


def test_meter_by_flow_range_by_hand():
    # Class 1.0 defaults (common practice, from memory): 1 % (k = 2) from Qt to Qmax, 2 % below Qt;
    # two independent systematic rows: u^2 = (w_rated * 0.5 %)^2 + (w_low * 1 %)^2, w = volume share.
    f = _frame(n=10, spread=False)
    f["volume_line"] = [100.0] * 6 + [20.0] * 4  # m3 per hour; Qt 50 m3/h splits them
    unc = {k: v for k, v in ALL_ZERO.items() if k != "meter"}
    unc.update(meter_qt="50 m3/h", meter_qmax="500 m3/h")
    r = _run(f, unc, method="ideal")
    u = month_uncertainty(r, draws=2000, max_draws=2000)
    w_rated, w_low = 600 / 680, 80 / 680
    assert u.expanded_pct == pytest.approx(200 * math.hypot(w_rated * 0.005, w_low * 0.01), rel=1e-9)
    low = _row(u.budget, "meter_below_qt")
    assert low["is_default"] and low["value"] == pytest.approx(80.0) and "below Qt" in low["input"]


def test_estimated_intervals_random_by_hand():
    # estimated intervals (default 10 %, k = 2, random): u(V) = sqrt(sum (V_i * 5 %)^2) over them
    f = _frame(n=24, spread=False)
    f["flag_estimated"] = False
    f.iloc[3:9, f.columns.get_loc("flag_estimated")] = True
    unc = {k: v for k, v in ALL_ZERO.items() if k != "estimated"}
    r = _run(f, unc, method="ideal")
    u = month_uncertainty(r, draws=20_000, max_draws=20_000)
    vb = r.intervals["volume_base"].to_numpy()
    expected = math.sqrt(np.sum((vb[3:9] * 0.05) ** 2)) / vb.sum()
    assert u.expanded_pct == pytest.approx(200 * expected, rel=1e-9)
    row = _row(u.budget, "estimated")
    assert row["is_default"] and row["correlation"] == "random"
    # six independent normal terms: the Monte Carlo draws them one by one and agrees with GUM
    assert u.monte_carlo["random_explicit_intervals"] == 6
    assert u.monte_carlo["standard_uncertainty_pct"] == pytest.approx(100 * expected, rel=0.03)


def test_atmospheric_pressure_for_gauge_logs_by_hand():
    # gauge log, fixed atmospheric pressure: default 2 kPa (k = 2) (common practice, from memory);
    # ideal method: relative contribution u_atm / p_abs
    f = _frame(n=12, p=5e5, spread=False).rename(columns={"pressure_line": "pressure_gauge"})
    unc = {k: v for k, v in ALL_ZERO.items() if k != "atmospheric"}
    r = _run(f, unc, method="ideal", atmospheric_pressure="98 kPa")
    u = month_uncertainty(r, draws=2000, max_draws=2000)
    row = _row(u.budget, "atmospheric")
    assert row["is_default"] and "kPa" in row["uncertainty"]
    assert u.expanded_pct == pytest.approx(200 * 1000.0 / (5e5 + 98e3), rel=1e-9)
    # a logged barometer: its own default, 0.2 kPa (k = 2) (common practice, from memory)
    fb = f.assign(pressure_atm=98e3)
    rb = _run(fb, unc, method="ideal")
    ub = month_uncertainty(rb, draws=2000, max_draws=2000)
    assert _row(ub.budget, "atmospheric")["uncertainty"] == "0.2 kPa"
    assert ub.expanded_pct == pytest.approx(200 * 100.0 / (5e5 + 98e3), rel=1e-9)
    # an absolute log has no atmospheric row
    r2 = _run(_frame(n=12), {}, method="ideal")
    assert "atmospheric" not in set(month_uncertainty(r2, draws=2000, max_draws=2000).budget["setting"])


# ---------------------------------------------------------------------------------------------
# linear propagation against the `uncertainties` library
def test_linear_propagation_against_uncertainties_library():
    # Library: `uncertainties` (linear error propagation with correlation bookkeeping). Z at line and
    # base from CoolProp's GERG-2008-type mixture model (library), linearised in p and T with its
    # own central differences; the tool's sensitivities come from GERG-2008 through its own code.
    unc_lib = pytest.importorskip("uncertainties")
    CP = pytest.importorskip("CoolProp.CoolProp")
    ufloat = unc_lib.ufloat
    AS = CP.AbstractState("HEOS", COOLPROP_NAMES)
    AS.set_mole_fractions(COOLPROP_X)
    AS.specify_phase(CP.iphase_gas)

    def zcp(p, t):
        AS.update(CP.PT_INPUTS, p, t)
        return AS.compressibility_factor()

    f = _frame(n=5, seed=4)
    unc = dict(ALL_ZERO, meter="1 %", pressure="0.2 % random", temperature="0.4 K", z="0.1 %", base_z="0.05 %")
    r = _run(f, unc)
    u = month_uncertainty(r, draws=2000, max_draws=2000)

    pb, tb = 101325.0, 288.15
    e_meter = ufloat(0.0, 0.005)  # systematic: one variable shared by all intervals
    e_t = ufloat(0.0, 0.2)  # K, systematic
    e_z = ufloat(0.0, 0.0005)
    e_zb = ufloat(0.0, 0.00025)
    zb = zcp(pb, tb) * (1 + e_zb)
    total = 0.0
    per_interval = []
    for p0, t0, vf in zip(f.pressure_line, f.temperature_line, f.volume_line):
        e_p = ufloat(0.0, 0.001)  # random: a new variable for every interval
        p, t = p0 * (1 + e_p), t0 + e_t
        h = 1e-4
        dzdp = (zcp(p0 * (1 + h), t0) - zcp(p0 * (1 - h), t0)) / (2 * h * p0)
        dzdt = (zcp(p0, t0 * (1 + h)) - zcp(p0, t0 * (1 - h))) / (2 * h * t0)
        zf = (zcp(p0, t0) + dzdp * (p - p0) + dzdt * (t - t0)) * (1 + e_z)
        vb = vf * (1 + e_meter) * (p / pb) * (tb / t) * (zb / zf)
        per_interval.append(vb.std_dev / vb.nominal_value)
        total = total + vb
    assert u.expanded_pct / 2 == pytest.approx(100 * total.std_dev / total.nominal_value, rel=2e-3)
    assert np.allclose(u.intervals["u_volume_base_pct"], 100 * np.array(per_interval), rtol=2e-3)


def test_composition_sensitivity_against_coolprop_and_sum_to_one():
    # Each mole fraction perturbed by a factor exp(eps) and the analysis renormalised; the volume
    # responds through Zb/Zf. Checked against the same perturbation evaluated with CoolProp's
    # mixture model (library). Renormalisation: scaling every fraction alike changes nothing, so
    # the sensitivities to all components sum to zero (ISO 6976: fractions sum to 1).
    CP = pytest.importorskip("CoolProp.CoolProp")
    AS = CP.AbstractState("HEOS", COOLPROP_NAMES)
    AS.specify_phase(CP.iphase_gas)
    f = _frame(n=3, seed=5)
    unc = dict(ALL_ZERO, composition="2 %")
    r = _run(f, unc, heating_value=None)
    from meterfix.uncertainty.inputs import parse_uncertainty_settings as pus

    model = build_model(r, pus(unc))
    term = model.term("composition")
    assert np.allclose(term.c_volume.sum(axis=0), 0.0, atol=1e-7)
    assert np.allclose(term.c_energy.sum(axis=0), 0.0, atol=1e-7)

    x = np.array(COOLPROP_X)

    def lnz(xx, p, t):
        AS.set_mole_fractions(list(xx / xx.sum()))
        AS.update(CP.PT_INPUTS, p, t)
        return math.log(AS.compressibility_factor())

    vb = r.intervals["volume_base"].to_numpy()
    h = 1e-2
    var = 0.0
    for j in range(5):
        xp, xm = x.copy(), x.copy()
        xp[j] *= math.exp(h)
        xm[j] *= math.exp(-h)
        s = 0.0
        for i, (p, t) in enumerate(zip(f.pressure_line, f.temperature_line)):
            d = ((lnz(xp, 101325.0, 288.15) - lnz(xm, 101325.0, 288.15))
                 - (lnz(xp, p, t) - lnz(xm, p, t))) / (2 * h)
            s += vb[i] * d * 0.01
        var += s**2
    expected = 100 * math.sqrt(var) / vb.sum()
    got = _row(budget_frame(model), "composition")["contribution_pct"]
    assert got == pytest.approx(expected, rel=0.02)


# ---------------------------------------------------------------------------------------------
# Monte Carlo (JCGM 101)
def test_monte_carlo_agrees_with_gum_on_the_demo_month():
    from meterfix.cli.demo import demo_month

    frame, analyses = demo_month()
    s = build_settings(None, {"base": "normal-0c", "timezone": "Europe/Berlin", "gas_day_start": "06:00",
                              "elevation": "240 m", "method": "gerg-2008"})
    r = run_month(frame, analyses, s)
    calls = []
    # 2e4 trials resolve the endpoints to about 0.02 u: enough for n_dig = 1 (JCGM 101 §7.9.2 allows
    # 1 or 2); the tool's default, 1e5 trials and more in stages, works at n_dig = 2
    u = month_uncertainty(r, draws=20_000, max_draws=20_000, n_dig=1,
                          progress=lambda d, t: calls.append((d, t)))
    mc = u.monte_carlo
    assert mc["draws"] == 20_000 and calls[-1] == (20_000, 20_000)
    assert all(a[0] < b[0] for a, b in zip(calls, calls[1:]))
    # JCGM 101 §8: both endpoint differences within the numerical tolerance delta
    y = r.totals["base_volume_m3"]
    # the digits are those of u as the month quotes it, in percent of the total
    assert mc["tolerance"] == pytest.approx(y * numerical_tolerance(u.expanded_pct / 200, 1), rel=1e-12)
    assert mc["numerically_stable"]
    assert mc["d_low"] <= mc["tolerance"] and mc["d_high"] <= mc["tolerance"]
    # the standard deviation of M normal-ish draws scatters by about 1/sqrt(2M) = 0.5 %
    assert mc["standard_uncertainty_pct"] == pytest.approx(u.expanded_pct / 2, rel=0.02)
    # energy from the same trials: heating value from the analysis, Z_b cancels, composition enters
    # through Z_f and the molar heating value
    assert mc["energy"]["standard_uncertainty_pct"] == pytest.approx(u.expanded_energy_pct / 2, rel=0.02)
    assert _row(u.energy_budget, "base_z")["contribution_pct"] == 0.0
    assert mc["gum_agrees"] is True and mc["validation"] == "agrees"
    assert mc["coverage_interval_m3"][0] < y < mc["coverage_interval_m3"][1]
    assert abs(mc["expanded_pct"] - 1.96 / 2 * u.expanded_pct) <= mc["tolerance_pct"]
    # the grouped evaluation was checked against every interval on the first trials
    assert mc["evaluation"]["max_relative_difference"] < 1e-6
    # every default the tool assumed is listed as one
    b = u.budget
    assert b.loc[b["setting"].isin(["meter", "pressure", "temperature", "z", "base_z", "composition"]),
                 "is_default"].all()
    assert (b["source"].str.len() > 10).all()


def test_monte_carlo_rectangular_output_shows_gum_too_wide():
    # One rectangular input dominating: V = V0 (1 + e), e ~ U(-a, a) with a = 2 %. The exact 95 %
    # probabilistically symmetric interval has half-width 0.95 a (property of the uniform
    # distribution); the GUM interval 1.96 a/sqrt3 = 2.26 % is too wide, and the JCGM 101 §8
    # validation must say so.
    r = _run(_frame(n=24), dict(ALL_ZERO, meter="mpe 2 %"), method="ideal")
    u = month_uncertainty(r, draws=20_000, max_draws=20_000)
    assert u.monte_carlo["expanded_pct"] == pytest.approx(0.95 * 2.0, abs=0.02)
    assert u.expanded_pct == pytest.approx(2 * 2.0 / math.sqrt(3), rel=1e-12)
    assert u.monte_carlo["gum_agrees"] is False
    assert any("Monte Carlo" in n for n in u.notes)


def test_monte_carlo_random_inputs_on_many_intervals():
    # pressure random on 300 intervals: 64 drawn one by one, the rest as one normal per trial; the
    # Monte Carlo standard deviation matches the GUM combined uncertainty (normal inputs, linear
    # enough) within its sampling error (~1/sqrt(2M) = 0.5 % relative at M = 2e4)
    f = _frame(n=300)
    r = _run(f, dict(ALL_ZERO, pressure="1 % random", temperature="0.5 K"))
    u = month_uncertainty(r, draws=20_000, max_draws=20_000)
    mc = u.monte_carlo
    assert mc["random_explicit_intervals"] == 64 and mc["random_aggregated_intervals"] == 236
    assert mc["standard_uncertainty_pct"] == pytest.approx(u.expanded_pct / 2, rel=0.02)


def _demo_model(method="gerg-2008", unc=None):
    from meterfix.cli.demo import demo_month

    frame, analyses = demo_month()
    s = build_settings(None, {"base": "normal-0c", "timezone": "Europe/Berlin", "gas_day_start": "06:00",
                              "elevation": "240 m", "method": method, "uncertainty": unc or {}})
    r = run_month(frame, analyses, s)
    model = build_model(r, parse_uncertainty_settings(s.uncertainty))
    return model, float(combined_relative(model)), float(combined_relative(model, energy=True))


@pytest.mark.parametrize("unc", [
    {},  # the defaults: relative pressure, absolute temperature, composition through Z
    # absolute figures (coefficients that vary from interval to interval), a random input
    {"pressure": "2 kPa", "temperature": "0.3 K random", "meter": "mpe 1 %", "composition": "3 % triangular"},
])
def test_interval_sums_equal_the_per_interval_evaluation(unc):
    # The reduced evaluation (each set of intervals as a few moment-matched columns) against every
    # interval in every trial, the same draws (same seed): the stated tolerance of the reduction is
    # 1e-8 of the month total (its a-priori bound; third order in the coefficients' spread), far
    # inside the JCGM 101 numerical tolerance (about 1e-5 of the total here)
    from meterfix.uncertainty.monte_carlo import monte_carlo

    model, u, ue = _demo_model(unc=unc)
    kw = dict(gum_u_volume=u, gum_u_energy=ue, draws=10_000, max_draws=10_000)
    red = monte_carlo(model, **kw)
    full = monte_carlo(model, grouping=False, **kw)
    assert red["evaluation"]["mode"] == "interval sums" and full["evaluation"]["mode"] == "per interval"
    assert red["evaluation"]["columns"] - red["random_explicit_intervals"] < model.volume.size / 10
    y = float(np.sum(model.volume))
    assert red["evaluation"]["max_relative_difference"] < 1e-8
    for key in ("coverage_interval", "shortest_interval"):
        assert np.max(np.abs(np.subtract(red[key], full[key]))) <= 1e-8 * y
    assert abs(red["mean"] - full["mean"]) <= 1e-8 * y
    assert red["standard_deviation"] == pytest.approx(full["standard_deviation"], rel=1e-6)
    ye = float(np.sum(model.energy))
    assert np.max(np.abs(np.subtract(red["energy"]["coverage_interval"], full["energy"]["coverage_interval"]))) \
        <= 1e-8 * ye
    assert red["validation"] == full["validation"]


def test_month_digits_and_a_verdict_every_time():
    from meterfix.uncertainty.monte_carlo import _summarise, month_tolerance

    # two digits where u (rounded to one) leads with 1, else one: δ stays between u/40 and about u/4
    assert [month_tolerance(u)[0] for u in (0.0014, 0.00149, 0.0015, 0.0025, 0.0094, 0.0096)] == [2, 2, 1, 1, 1, 2]
    assert month_tolerance(0.0014)[1] == numerical_tolerance(0.0014, 2)  # JCGM 101 §7.9.2 at n_dig = 2
    assert month_tolerance(0.0049)[1] == numerical_tolerance(0.0049, 1)
    assert month_tolerance(0.0099)[1] == pytest.approx(0.0005)  # quoted 0.010: δ = 0.0005
    for u in (0.0010, 0.0014, 0.00149, 0.00151, 0.0049, 0.0094, 0.0099):
        d = month_tolerance(u)[1]
        assert u / 40 <= d <= 0.34 * u
    # The default adaptive procedure decides on the demo month within 2e5 trials, volume and energy
    model, u, ue = _demo_model()
    from meterfix.uncertainty.monte_carlo import monte_carlo

    mc = monte_carlo(model, gum_u_volume=u, gum_u_energy=ue)
    assert mc["draws"] <= 200_000 and mc["numerically_stable"]
    assert mc["gum_agrees"] is True and mc["energy"]["gum_agrees"] is True
    # Too few trials for the tolerance: judged with the endpoints' standard errors, and where even
    # that cannot decide, the text says what was compared and what to change
    rng = np.random.default_rng(5)
    y, ur = 1000.0, 0.01
    vals = y + ur * y * rng.standard_normal(2000)
    out = _summarise(vals, y, ur, 0.95, 2, 10, "m3")
    assert not out["numerically_stable"]
    if out["gum_agrees"] is None:
        for frag in ("GUM interval", "Monte Carlo 95 % interval", "tolerance", "trials would decide"):
            assert frag in out["validation"]
    # far off: differs although the trials are few (a rectangular output against a normal GUM interval)
    vals = y + ur * y * math.sqrt(3) * rng.uniform(-1, 1, 2000)
    out = _summarise(vals, y, ur, 0.95, 2, 10, "m3")
    assert out["gum_agrees"] is False and out["validation"].startswith("differs")


def test_coverage_interval_indices_and_tolerance():
    # JCGM 101 §7.7.1: q = pM, r = (M - q)/2; y_low = y_(r), y_high = y_(r+q) (1-based)
    vals = np.arange(1.0, 1001.0)
    assert coverage_interval(vals, 0.95) == (25.0, 975.0)
    # JCGM 101 §7.9.2 rule: u = c·10^l with c an integer of n_dig digits, delta = ½·10^l. Worked by
    # hand: u = 0.35 → c = 35, l = -2 → 0.005; one digit: c = 4, l = -1 → 0.05; u = 0.0996 rounds
    # to 0.10 = 10·10^-2 at two digits → 0.005
    assert numerical_tolerance(0.35, 2) == pytest.approx(0.005)
    assert numerical_tolerance(0.35, 1) == pytest.approx(0.05)
    assert numerical_tolerance(0.0996, 2) == pytest.approx(0.005)


# ---------------------------------------------------------------------------------------------
# random components average down, systematic ones do not
def _budget(volumes):
    n = len(volumes)
    idx = pd.date_range("2026-03-02 01:00", periods=n, freq="h", tz="UTC")
    f = pd.DataFrame({"pressure_line": 20e5, "temperature_line": 285.0, "volume_line": volumes,
                      "duration": 3600.0}, index=idx)
    unc = dict(ALL_ZERO, meter="1 %", pressure="0.5 % random")
    r = _run(f, unc, method="ideal")
    model = build_model(r, parse_uncertainty_settings(unc))
    b = budget_frame(model)
    return _row(b, "pressure")["contribution_pct"], _row(b, "meter")["contribution_pct"], model


@hsettings(max_examples=25, deadline=None)
@given(st.lists(st.floats(1.0, 1000.0), min_size=2, max_size=30), st.floats(0.05, 1.0), st.integers(2, 4))
def test_random_components_shrink_systematic_do_not(volumes, frac, k):
    rnd, sysm, _ = _budget(volumes)
    # adding an interval no larger than the mean never increases the random part (Cauchy-Schwarz)
    rnd2, sys2, _ = _budget(volumes + [frac * float(np.mean(volumes))])
    assert rnd2 <= rnd * (1 + 1e-12)
    assert sys2 == pytest.approx(sysm, rel=1e-12) and sysm == pytest.approx(0.5, rel=1e-12)
    # the same month k times over: the random part falls as 1/sqrt(k), the systematic part stays
    rnd3, sys3, _ = _budget(volumes * k)
    assert rnd3 == pytest.approx(rnd / math.sqrt(k), rel=1e-9)
    assert sys3 == pytest.approx(sysm, rel=1e-12)


def test_gas_day_and_month_by_hand():
    _, _, model = _budget([100.0] * 72)
    days = np.repeat(np.arange(3), 24)
    u_days = combined_relative(model, groups=days)
    u_month = combined_relative(model)
    # systematic 0.5 % everywhere; random 0.25 % per interval averages over 24 vs 72 intervals
    assert np.allclose(u_days, math.hypot(0.005, 0.0025 / math.sqrt(24)))
    assert u_month == pytest.approx(math.hypot(0.005, 0.0025 / math.sqrt(72)))


def test_zero_settings_are_not_defaults():
    r = _run(_frame(n=6), dict(ALL_ZERO))
    u = month_uncertainty(r, draws=2000, max_draws=2000)
    assert u.expanded_pct == 0.0
    assert not u.budget["is_default"].any()


# ---------------------------------------------------------------------------------------------
def test_demo_json_carries_the_uncertainty(tmp_path):
    from typer.testing import CliRunner

    from meterfix.cli import app

    res = CliRunner().invoke(app, ["demo", str(tmp_path / "out")])
    assert res.exit_code == 0, res.output
    d = json.loads(next((tmp_path / "out").glob("*_summary.json")).read_text())
    assert 0.5 < d["totals"]["expanded_uncertainty_pct"] < 3.0
    unc = d["uncertainty"]
    assert isinstance(unc["budget"], list) and {"input", "share_pct", "is_default"} <= set(unc["budget"][0])
    assert unc["monte_carlo_expanded_pct"] is not None
    assert len(unc["gas_days"]) == 31


def _log_csv(path, n=48):
    idx = pd.date_range("2026-10-20 01:00", periods=n, freq="h")
    rng = np.random.default_rng(8)
    pd.DataFrame({"Interval end": idx.strftime("%Y-%m-%d %H:%M"),
                  "Line pressure [bar(g)]": [f"{x:.6f}" for x in 32.0 + rng.standard_normal(n)],
                  "Line temperature [degC]": [f"{x:.4f}" for x in 9.0 + rng.standard_normal(n)],
                  "Uncorrected volume [m3]": [f"{x:.3f}" for x in 700.0 + 50 * rng.standard_normal(n)]}
                 ).to_csv(path, index=False)


CLI_ARGS = ["--gas", "methane=0.93,ethane=0.035,propane=0.008,nitrogen=0.015,carbon_dioxide=0.012",
            "--base", "normal-0c", "--atmospheric-pressure", "100.9 kPa", "--quiet"]


def test_cli_options_set_the_inputs_and_bad_ones_exit_2(tmp_path):
    pytest.importorskip("meterfix.readers.logs")
    from typer.testing import CliRunner

    from meterfix.cli import app

    log = tmp_path / "log.csv"
    _log_csv(log)
    res = CliRunner().invoke(app, ["correct", str(log), *CLI_ARGS, "--meter-uncertainty", "mpe 1 %",
                                   "--z-uncertainty", "0", "--out", str(tmp_path / "a")])
    assert res.exit_code == 0, res.output
    d = json.loads(next((tmp_path / "a").glob("*_summary.json")).read_text())
    rows = {r["setting"]: r for r in d["uncertainty"]["budget"]}
    assert rows["meter"]["is_default"] is False and rows["meter"]["distribution"] == "rectangular"
    assert rows["meter"]["contribution_pct"] == pytest.approx(100 * 0.01 / math.sqrt(3))
    assert rows["z"]["contribution_pct"] == 0.0 and rows["atmospheric"]["is_default"] is True
    res = CliRunner().invoke(app, ["correct", str(log), *CLI_ARGS, "--pressure-uncertainty", "abc",
                                   "--out", str(tmp_path / "b")])
    assert res.exit_code == 2 and "'pressure'" in res.output


def test_site_file_uncertainty_table(tmp_path):
    site = tmp_path / "site.toml"
    site.write_text('base = "iso-15c"\nmethod = "ideal"\n[uncertainty]\nmeter = "mpe 1.5 %"\n'
                    'temperature = "0.3 K k=1"\ninvoice_meter_pct = 1.0\n', encoding="utf-8")
    s = build_settings(site)
    r = run_month(_frame(n=6, spread=False), [(None, GAS)], s)
    u = month_uncertainty(r, draws=2000, max_draws=2000)
    assert _row(u.budget, "meter")["standard_uncertainty_pct"] == pytest.approx(1.5 / math.sqrt(3))
    assert _row(u.budget, "temperature")["standard_uncertainty_pct"] == pytest.approx(100 * 0.3 / 283.15)
