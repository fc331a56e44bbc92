"""Attribution of an invoice difference to the invoice's likely assumptions (sequential waterfall).

Start: our volume at our base conditions (real gas, measured atmospheric pressure, the analysis'
heating value). End: the volume (and energy) as billed, at the invoice's own base. In between,
our recomputation takes on the invoice's assumptions one at a time, each on top of the previous
ones, in this order:

1. ``base pressure`` — our volume re-stated at the invoice's base pressure (real gas);
2. ``base temperature`` — and at its base temperature: after these two steps our figure stands
   at the invoice's base, so every later step compares like with like. These two are
   **restatements** (status ``restatement``), not causes: the invoice states its base. Energy
   does not change in them (the same gas, the heating value re-stated at the same base);
3. ``ideal gas`` — Z = 1 at line and base conditions (no parameter);
4. ``fixed atmospheric pressure`` — gauge + 101 325 Pa, the sea-level standard atmosphere
   (ISO 2533 / U.S. Standard Atmosphere 1976), instead of the one we used (skipped when the log was
   absolute). The parameter is fixed, not fitted: fitting a value would "explain" any difference;
5. ``heating value`` — the invoice's own stated heating value instead of the analysis' (energy only);
6. ``estimated intervals`` — the remaining difference up to the volume (energy) of the intervals
   we estimated: the supplier may have estimated them differently. A bound, not a recomputation;
7. ``not explained`` — the rest (status ``rest``).

Steps 3–6 are hypotheses. One is **credited** (status ``credited``, applied) only with evidence:

- monthly figures: the difference before it lies outside the combined expanded uncertainty U
  (there is something to explain), the difference after it lies within U (it explains it), and its
  own effect exceeds U (it is resolvable from noise); or
- daily figures (at least DAILY_MIN_PERIODS billing periods): it fits the per-period differences
  decisively better than no cause, ΔBIC = m·ln(RSS_none / RSS_hypothesis) >= 10 with one constant
  level fitted in both (Schwarz 1978; "very strong" on the scale of Kass & Raftery, J. Am. Stat.
  Assoc. 90 (1995) 773). A fit decisively worse (ΔBIC <= -10) rejects it.

Otherwise it is listed as **tried** (status ``tried``, 0, not applied) with the reason. So a
plain over-billing stays in ``not explained``: no hypothesis with a fixed, physical assumption
reproduces a constant factor. U is the combined expanded uncertainty of the comparison (ours and
the billing meter's, meterfix.checks.invoice.combined_uncertainty_pct); when the month ran
without its uncertainty, FALLBACK_UNCERTAINTY_PCT stands in and the parameter text says so.
Because each step is the difference of two consecutive recomputations and the last is the rest,
the steps add up to the total difference exactly (up to floating-point rounding).
"""

from __future__ import annotations

import datetime as _dt

import numpy as np
import pandas as pd

from ..z import evaluate_z
from ..z import IDEAL_METHOD

#: billing periods from which the per-period (daily) criterion applies
DAILY_MIN_PERIODS = 7
#: ΔBIC of decisive evidence (Kass & Raftery 1995: > 10 "very strong")
EVIDENCE_DELTA_BIC = 10.0
#: stands in for U when the month ran without its uncertainty [%]: the stated uncertainty of the
#: Z methods in their normal range (AGA Report No. 8 / ISO 12213-2, 0.1 %)
FALLBACK_UNCERTAINTY_PCT = 0.1

STEP_ORDER = ("base pressure", "base temperature", "ideal gas", "fixed atmospheric pressure", "heating value",
              "estimated intervals", "not explained")


def _z(result, k, pressure, temperature):
    """Z of analysis k at points [-] (1 for the ideal method or without a gas)."""
    gas = result.analyses[k].gas
    if gas is None or result.method["name"] == IDEAL_METHOD:
        return np.ones(np.broadcast(np.asarray(pressure), np.asarray(temperature)).shape)
    return np.asarray(evaluate_z(pressure, temperature, gas, result.method["name"]).z, float)


def period_arrays(result, inv) -> dict:
    """The intervals of one billing period and the per-interval quantities the comparison needs.

    Parameters
    ----------
    result : MonthResult
    inv : Series                one invoice row (SI, as read_invoice returns it)

    Returns
    -------
    dict of arrays [SI] and period sums
    """
    df = result.intervals
    s = result.settings
    start, end = inv["period_start"], inv["period_end"]
    gd = df["gas_day"]
    sel = np.array([(d is not None) and (start <= d <= end) for d in gd], dtype=bool)
    d = df[sel]
    ok = np.isfinite(d["volume_base"].to_numpy(float))
    d = d[ok]
    n = int(len(d))
    p_o, t_o = s.base_pressure, s.base_temperature
    p_i, t_i = float(inv["pressure_base"]), float(inv["temperature_base"])
    k = d["analysis"].to_numpy(int)
    z_o = d["z_base"].to_numpy(float)
    z_i = np.ones(n)
    z_pi_to = np.ones(n)
    for kk in np.unique(k):
        m = k == kk
        z_i[m] = float(_z(result, int(kk), p_i, t_i).reshape(-1)[0])
        z_pi_to[m] = float(_z(result, int(kk), p_i, t_o).reshape(-1)[0])
    conv = (p_i / p_o) * (t_o / t_i) * (z_o / z_i)  # m3 at their base → m3 at ours, per interval's gas
    vb = d["volume_base"].to_numpy(float)
    v_theirs_base = vb / conv
    share = v_theirs_base / v_theirs_base.sum() if n and v_theirs_base.sum() > 0 else np.full(n, 1.0 / max(n, 1))
    conversion = float(np.sum(share * conv)) if n else (p_i / p_o) * (t_o / t_i)
    hours = float(np.nansum(d["duration"])) / 3600.0
    days = _period_hours(start, end, s) / 24.0 if isinstance(end, _dt.date) else np.nan
    v_billed = float(inv["volume_billed"])
    hv_inv = float(inv["heating_value"]) if np.isfinite(inv["heating_value"]) else (
        float(inv["energy_billed"]) / v_billed if np.isfinite(inv["energy_billed"]) and v_billed else np.nan)
    e_billed = float(inv["energy_billed"]) if np.isfinite(inv["energy_billed"]) else v_billed * hv_inv
    return {
        "n": n, "frame": d, "pressure_base_invoice": p_i, "temperature_base_invoice": t_i,
        "z_invoice_base": z_i, "z_pi_to": z_pi_to, "z_o": z_o, "conv": conv, "conversion": conversion,
        "volume_ours": float(vb.sum()), "energy_ours": float(np.nansum(d["energy"])) if n else 0.0,
        "volume_billed": v_billed, "energy_billed": e_billed, "heating_value_invoice": hv_inv,
        "coverage_pct": 100.0 * hours / (24.0 * days) if days and np.isfinite(days) else np.nan,
    }


def _period_hours(start, end, s) -> float:
    """Hours of the gas days start..end (inclusive) on the site's clock: 23 or 25 on a day with a
    clock change (IANA tz database rules), so that a fully logged period covers exactly 100 %."""
    import pandas as pd

    def begin(day):
        t = pd.Timestamp(_dt.datetime(day.year, day.month, day.day, int(s.gas_day_start)))
        return t.tz_localize(s.timezone, ambiguous=True, nonexistent="shift_forward")

    return (begin(end + _dt.timedelta(days=1)) - begin(start)).total_seconds() / 3600.0


def _steps_for_period(result, a, assumed_pressure_atm):
    """Candidate recomputations of one period (sums over its intervals) [m3, J]."""
    d = a["frame"]
    s = result.settings
    if a["n"] == 0:
        z = {"S0": 0.0, "E0": 0.0}
        for key in ("S1", "S2", "S3r", "S3i", "S4r", "S4i"):
            z[key] = 0.0
        for key in ("E3i", "E4r", "E4i", "E5r", "E5i", "Vest_r", "Vest_i", "Eest"):
            z[key] = 0.0
        return z
    t_o = s.base_temperature
    p_i, t_i = a["pressure_base_invoice"], a["temperature_base_invoice"]
    vf = d["volume_line"].to_numpy(float)
    pf = d["pressure_line"].to_numpy(float)
    tf = d["temperature_line"].to_numpy(float)
    zf = d["z_line"].to_numpy(float)
    atm = d["pressure_atm"].to_numpy(float)
    est = d["estimated"].to_numpy(bool)
    hv_o = d["heating_value"].to_numpy(float)
    hv_i = hv_o * a["conv"]  # our heating value re-stated per m3 at the invoice's base
    k = d["analysis"].to_numpy(int)
    out = {"S0": float(d["volume_base"].sum()), "E0": float(np.nansum(d["energy"]))}
    v1 = vf * pf / p_i * (t_o / tf) * (a["z_pi_to"] / zf)
    v2 = vf * pf / p_i * (t_i / tf) * (a["z_invoice_base"] / zf)
    v3i = vf * pf / p_i * (t_i / tf)
    out["S1"], out["S2"] = float(v1.sum()), float(v2.sum())
    out["S3r"], out["S3i"] = out["S2"], float(v3i.sum())
    out["E3i"] = float(np.nansum(v3i * hv_i))
    # fixed atmospheric pressure: gauge + fixed value where we used another one
    has_atm = np.isfinite(atm)
    pf4 = np.where(has_atm, pf - np.where(has_atm, atm, 0.0) + assumed_pressure_atm, pf)
    zf4 = zf.copy()
    if has_atm.any():
        for kk in np.unique(k):
            m = (k == kk) & has_atm
            if m.any():
                zf4[m] = _z(result, int(kk), pf4[m], tf[m])
    v4r = vf * pf4 / p_i * (t_i / tf) * (a["z_invoice_base"] / zf4)
    v4i = vf * pf4 / p_i * (t_i / tf)
    out["S4r"], out["S4i"] = float(v4r.sum()), float(v4i.sum())
    out["E4r"], out["E4i"] = float(np.nansum(v4r * hv_i)), float(np.nansum(v4i * hv_i))
    out["V2"], out["V3i"], out["V4r"], out["V4i"] = v2, v3i, v4r, v4i
    out["hv_i"], out["est"] = hv_i, est
    return out


def _rel(a, b):
    return 100.0 * (a - b) / b if b else np.nan


def evidence(cur, new, billed, u_pct):
    """Is a hypothesis credited? (credited, reason); per-period arrays of the figure before and after
    it and as billed (volume or energy), U [%] (see the module docstring)."""
    cur, new, billed = (np.asarray(x, float) for x in (cur, new, billed))
    ok = np.isfinite(cur) & np.isfinite(new) & np.isfinite(billed) & (cur > 0) & (new > 0)
    if not ok.any():
        return False, "no figures to compare"
    before = _rel(billed[ok].sum(), cur[ok].sum())
    after = _rel(billed[ok].sum(), new[ok].sum())
    effect = _rel(new[ok].sum(), cur[ok].sum())
    if not abs(effect) > 0:
        return False, "changes nothing here"
    m = int(ok.sum())
    if m >= DAILY_MIN_PERIODS:
        rb = billed[ok] / cur[ok] - 1.0
        ra = billed[ok] / new[ok] - 1.0
        rss_b = float(np.sum((rb - rb.mean()) ** 2)) + 1e-18
        rss_a = float(np.sum((ra - ra.mean()) ** 2)) + 1e-18
        dbic = m * np.log(rss_b / rss_a)
        if dbic >= EVIDENCE_DELTA_BIC:
            return True, f"fits the {m} periods decisively better than no cause (ΔBIC {dbic:.0f})"
        if dbic <= -EVIDENCE_DELTA_BIC:
            return False, f"fits the {m} periods decisively worse than no cause (ΔBIC {dbic:.0f})"
    if abs(before) <= u_pct:
        return False, f"the difference {before:+.3g} % is within the combined uncertainty ±{u_pct:.3g} %: nothing to explain"
    if abs(effect) <= u_pct:
        return False, f"its effect {effect:+.3g} % is within the combined uncertainty ±{u_pct:.3g} %"
    if abs(after) > u_pct:
        return False, f"leaves {after:+.3g} % (outside ±{u_pct:.3g} %): it does not explain the difference"
    return True, f"explains the difference: {before:+.3g} % → {after:+.3g} % (within ±{u_pct:.3g} %)"


def attribute_difference(result, invoice: pd.DataFrame, chunks, *, assumed_pressure_atm=101325.0,
                         uncertainty_pct=None) -> pd.DataFrame:
    """The sequential waterfall over all billing periods (see the module docstring for the order and
    the evidence a hypothesis needs).

    Parameters
    ----------
    result : MonthResult
    invoice : DataFrame           read_invoice output
    chunks : list of dict         period_arrays() of each invoice row
    assumed_pressure_atm : float [Pa]   the fixed atmospheric pressure tried in step 4
    uncertainty_pct : float, optional [%]   combined expanded uncertainty of the comparison (U);
                                  None: FALLBACK_UNCERTAINTY_PCT, said in the parameter text

    Returns
    -------
    DataFrame with columns step, kind, status (start, restatement, credited, tried, rest, end),
    applied, volume_m3, energy_MJ, cumulative_volume_m3, cumulative_energy_MJ, parameter, evidence
    """
    per = [_steps_for_period(result, a, assumed_pressure_atm) for a in chunks]
    tot = lambda key: float(sum(p[key] for p in per))  # noqa: E731
    each = lambda key: np.array([p[key] for p in per], float)  # noqa: E731
    v_billed_p = np.array([a["volume_billed"] for a in chunks], float)
    e_billed_p = np.array([a["energy_billed"] for a in chunks], float)
    v_billed = float(v_billed_p.sum())
    e_billed = float(np.sum(e_billed_p)) if np.all(np.isfinite(e_billed_p)) else np.nan
    has_hv = [np.isfinite(a["heating_value_invoice"]) for a in chunks]
    u = float(uncertainty_pct) if uncertainty_pct is not None and np.isfinite(uncertainty_pct) else None
    u_used = u if u is not None else FALLBACK_UNCERTAINTY_PCT
    u_note = "" if u is not None else f" (U = {FALLBACK_UNCERTAINTY_PCT} %: the month ran without its uncertainty)"

    rows = []
    v_cur, e_cur = tot("S0"), tot("E0")
    cur_v, cur_e = each("S0"), each("E0")
    rows.append(("ours", "start", "start", True, v_cur, e_cur, "our base, real gas, our heating value", ""))

    def add(step, status, v_new, e_new, parameter="", why="", v_p=None, e_p=None):
        nonlocal v_cur, e_cur, cur_v, cur_e
        applied = status != "tried"
        rows.append((step, "step", status, applied, v_new - v_cur, e_new - e_cur, parameter, why))
        v_cur, e_cur = v_new, e_new
        if v_p is not None:
            cur_v = v_p
        if e_p is not None:
            cur_e = e_p

    pis = sorted({a["pressure_base_invoice"] for a in chunks})
    tis = sorted({a["temperature_base_invoice"] for a in chunks})
    add("base pressure", "restatement", tot("S1"), e_cur,
        "invoice base pressure " + ", ".join(f"{x:.6g} Pa" for x in pis), "stated by the invoice", each("S1"))
    add("base temperature", "restatement", tot("S2"), e_cur,
        "invoice base temperature " + ", ".join(f"{x:.6g} K" for x in tis), "stated by the invoice", each("S2"))

    def tried(step, parameter, why):
        add(step, "tried", v_cur, e_cur, parameter, why + u_note)

    ok, why = evidence(cur_v, each("S3i"), v_billed_p, u_used)
    ideal = ok
    if ok:
        add("ideal gas", "credited", tot("S3i"), tot("E3i"), "Z = 1 at line and base conditions", why + u_note,
            each("S3i"), each("E3i"))
    else:
        tried("ideal gas", "Z = 1 at line and base conditions", why)
    key_v, key_e, arr = ("S4i", "E4i", "V4i") if ideal else ("S4r", "E4r", "V4r")
    any_atm = any(np.isfinite(a["frame"]["pressure_atm"].to_numpy(float)).any() for a in chunks if a["n"])
    atm_param = f"fixed {assumed_pressure_atm:.6g} Pa (sea-level standard atmosphere)"
    vol_key = "V3i" if ideal else "V2"
    if any_atm:
        ok, why = evidence(cur_v, each(key_v), v_billed_p, u_used)
        if ok:
            add("fixed atmospheric pressure", "credited", tot(key_v), tot(key_e), atm_param, why + u_note,
                each(key_v), each(key_e))
            vol_key = arr
        else:
            tried("fixed atmospheric pressure", atm_param, why)
    else:
        tried("fixed atmospheric pressure", atm_param, "the log pressure was absolute")
    # heating value: energy only
    if all(has_hv) and chunks and np.isfinite(e_billed):
        e_hv_p = np.array([np.sum(p[vol_key]) * a["heating_value_invoice"] if a["n"] else 0.0
                           for p, a in zip(per, chunks)])
        ok, why = evidence(cur_e, e_hv_p, e_billed_p, u_used)
        if ok:
            add("heating value", "credited", v_cur, float(e_hv_p.sum()), "the invoice's heating value", why + u_note,
                e_p=e_hv_p)
            hv_used = [np.full(a["n"], a["heating_value_invoice"]) for a in chunks]
        else:
            tried("heating value", "the invoice's heating value", why)
            hv_used = [p.get("hv_i", np.zeros(0)) for p in per]
    else:
        tried("heating value", "", "the invoice gives no heating value" if not all(has_hv) else "no billed energy")
        hv_used = [p.get("hv_i", np.zeros(0)) for p in per]
    # estimated intervals: bounded by their own volume and energy
    v_est = float(sum(np.sum(p[vol_key][p["est"]]) for p in per if "est" in p))
    e_est = float(sum(np.nansum(p[vol_key][p["est"]] * h[p["est"]]) for p, h in zip(per, hv_used) if "est" in p))
    rest_pct = _rel(v_billed, v_cur)
    est_param = f"the supplier's estimate for our {v_est:.6g} m3 of estimated intervals"
    if v_est > 0 and abs(v_billed - v_cur) <= v_est and abs(rest_pct) > u_used:
        # the rest is no larger than the volume we estimated: a different estimate by the supplier
        # for the same intervals explains it
        de = float(np.clip(e_billed - e_cur, -e_est, e_est)) if np.isfinite(e_billed) else 0.0
        add("estimated intervals", "credited", v_billed, e_cur + de, est_param,
            f"the rest {rest_pct:+.3g} % is no more than the estimated volume" + u_note)
    elif v_est > 0:
        tried("estimated intervals", est_param,
              f"the rest {rest_pct:+.3g} % is within ±{u_used:.3g} %: nothing to explain" if abs(rest_pct) <= u_used
              else f"the rest exceeds the {v_est:.6g} m3 of estimated intervals")
    else:
        tried("estimated intervals", "", "no estimated intervals")
    rows.append(("not explained", "step", "rest", True, v_billed - v_cur, e_billed - e_cur, "the rest",
                 f"{_rel(v_billed, v_cur):+.3g} % of volume against ±{u_used:.3g} %" + u_note))
    rows.append(("invoice", "end", "end", True, v_billed, e_billed, "as billed, at the invoice's base", ""))
    out = pd.DataFrame(rows, columns=["step", "kind", "status", "applied", "volume_m3", "energy_J", "parameter",
                                      "evidence"])
    start_v, start_e = out["volume_m3"].iat[0], out["energy_J"].iat[0]
    is_step = out["kind"] == "step"
    cum_v = start_v + out["volume_m3"].where(is_step, 0.0).cumsum()
    cum_e = start_e + out["energy_J"].where(is_step, 0.0).cumsum()
    out["cumulative_volume_m3"] = cum_v
    out["cumulative_energy_MJ"] = cum_e / 1e6
    out["energy_MJ"] = out["energy_J"] / 1e6
    out.loc[out["kind"] == "end", "cumulative_volume_m3"] = v_billed
    out.loc[out["kind"] == "end", "cumulative_energy_MJ"] = e_billed / 1e6
    return out[["step", "kind", "status", "applied", "volume_m3", "energy_MJ", "cumulative_volume_m3",
                "cumulative_energy_MJ", "parameter", "evidence"]]
