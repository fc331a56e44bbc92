"""Attribution of an invoice difference to the invoice's likely assumptions (sequential waterfall).

Start: our volume at our base conditions (real gas, measured atmospheric pressure, the analysis'
heating value). End: the volume (and energy) as billed, at the invoice's own base. In between,
our recomputation takes on the invoice's assumptions one at a time, each on top of the previous
ones, in this order:

1. ``base pressure`` — our volume re-stated at the invoice's base pressure (real gas);
2. ``base temperature`` — and at its base temperature: after these two steps our figure stands
   at the invoice's base, so every later step compares like with like. Energy does not change
   in these two steps (the same gas, the heating value re-stated at the same base);
3. ``ideal gas`` — Z = 1 at line and base conditions;
4. ``fixed atmospheric pressure`` — gauge + a fixed atmospheric pressure (default 101 325 Pa)
   instead of the one we used (skipped when the log was absolute);
5. ``heating value`` — the invoice's heating value instead of the analysis' (energy only);
6. ``estimated intervals`` — the remaining difference up to the volume (energy) of the
   intervals we estimated: substituted values may be billed differently. This step is a bound,
   not a recomputation;
7. ``unexplained`` — the rest.

Steps 1–2 are facts stated by the invoice and are always applied. Steps 3–5 are hypotheses: one
is applied only where it brings our figure closer to the billed one (volume for 3–4, energy for
5); otherwise it is listed with 0 and ``applied = False``. Because each step is the difference
of two consecutive recomputations and the last is the rest, the steps add up to the total
difference exactly (up to floating-point rounding).
"""

from __future__ import annotations

import datetime as _dt

import numpy as np
import pandas as pd

from ..z import evaluate_z

STEP_ORDER = ("base pressure", "base temperature", "ideal gas", "fixed atmospheric pressure", "heating value",
              "estimated intervals", "unexplained")


def _z(result, k, pressure, temperature):
    """Z of analysis k at points [-] (1 for the ideal method or without a gas)."""
    gas = result.analyses[k].gas
    if gas is None or result.method["name"] == "ideal":
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
    p_o, t_o = s.pressure_base, s.temperature_base
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
    days = (end - start).days + 1 if isinstance(end, _dt.date) else np.nan
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
    p_o, t_o = s.pressure_base, s.temperature_base
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


def attribute_difference(result, invoice: pd.DataFrame, chunks, *, assumed_pressure_atm=101325.0) -> pd.DataFrame:
    """The sequential waterfall over all billing periods (see the module docstring for the order).

    Parameters
    ----------
    result : MonthResult
    invoice : DataFrame           read_invoice output
    chunks : list of dict         period_arrays() of each invoice row
    assumed_pressure_atm : float [Pa]   the fixed atmospheric pressure tried in step 4

    Returns
    -------
    DataFrame with columns step, kind, applied, volume_m3, energy_MJ, cumulative_volume_m3,
    cumulative_energy_MJ, parameter
    """
    per = [_steps_for_period(result, a, assumed_pressure_atm) for a in chunks]
    tot = lambda key: float(sum(p[key] for p in per))  # noqa: E731
    v_billed = float(sum(a["volume_billed"] for a in chunks))
    e_billed_parts = [a["energy_billed"] for a in chunks]
    e_billed = float(np.sum(e_billed_parts)) if all(np.isfinite(e_billed_parts)) else np.nan
    has_hv = [np.isfinite(a["heating_value_invoice"]) for a in chunks]

    rows = []
    v_cur, e_cur = tot("S0"), tot("E0")
    rows.append(("ours", "start", True, v_cur, e_cur, "our base, real gas, our heating value"))

    def add(step, applied, v_new, e_new, parameter=""):
        nonlocal v_cur, e_cur
        rows.append((step, "step", applied, v_new - v_cur, e_new - e_cur, parameter))
        v_cur, e_cur = v_new, e_new

    pis = sorted({a["pressure_base_invoice"] for a in chunks})
    tis = sorted({a["temperature_base_invoice"] for a in chunks})
    add("base pressure", True, tot("S1"), e_cur, "invoice base pressure " + ", ".join(f"{x:.6g} Pa" for x in pis))
    add("base temperature", True, tot("S2"), e_cur,
        "invoice base temperature " + ", ".join(f"{x:.6g} K" for x in tis))

    def closer(v_new):
        return abs(v_billed - v_new) < abs(v_billed - v_cur)

    ideal = closer(tot("S3i"))
    if ideal:
        add("ideal gas", True, tot("S3i"), tot("E3i"), "Z = 1 at line and base conditions")
    else:
        add("ideal gas", False, v_cur, e_cur, "Z = 1 at line and base conditions: not indicated")
    key_v, key_e, arr = ("S4i", "E4i", "V4i") if ideal else ("S4r", "E4r", "V4r")
    any_atm = any(np.isfinite(a["frame"]["pressure_atm"].to_numpy(float)).any() for a in chunks if a["n"])
    atm_param = f"fixed {assumed_pressure_atm:.6g} Pa"
    if any_atm and closer(tot(key_v)):
        add("fixed atmospheric pressure", True, tot(key_v), tot(key_e), atm_param)
        vol_key = arr
    else:
        add("fixed atmospheric pressure", False, v_cur, e_cur,
            atm_param + (": not indicated" if any_atm else ": log pressure was absolute"))
        vol_key = "V3i" if ideal else "V2"
    # heating value: energy only
    if all(has_hv) and chunks:
        e_hv = float(sum(np.sum(p[vol_key]) * a["heating_value_invoice"] for p, a in zip(per, chunks) if a["n"]))
        if np.isfinite(e_billed) and abs(e_billed - e_hv) < abs(e_billed - e_cur):
            add("heating value", True, v_cur, e_hv, "the invoice's heating value")
            hv_used = [np.full(a["n"], a["heating_value_invoice"]) for a in chunks]
        else:
            add("heating value", False, v_cur, e_cur, "the invoice's heating value: not indicated")
            hv_used = [p.get("hv_i", np.zeros(0)) for p in per]
    else:
        add("heating value", False, v_cur, e_cur, "the invoice gives no heating value")
        hv_used = [p.get("hv_i", np.zeros(0)) for p in per]
    # estimated intervals: bounded by their own volume and energy
    v_est = float(sum(np.sum(p[vol_key][p["est"]]) for p in per if "est" in p))
    e_est = float(sum(np.nansum(p[vol_key][p["est"]] * h[p["est"]]) for p, h in zip(per, hv_used) if "est" in p))
    if v_est > 0 and abs(v_billed - v_cur) <= v_est:
        # the rest is no larger than the volume we estimated: a different estimate by the supplier
        # for the same intervals explains it
        de = float(np.clip(e_billed - e_cur, -e_est, e_est)) if np.isfinite(e_billed) else 0.0
        add("estimated intervals", True, v_billed, e_cur + de,
            f"the supplier's estimate for our {v_est:.6g} m3 of estimated intervals")
    elif v_est > 0:
        # a rest larger than all estimated volume is not a matter of estimating: claim nothing
        add("estimated intervals", False, v_cur, e_cur,
            f"not indicated: the rest exceeds the {v_est:.6g} m3 of estimated intervals")
    else:
        add("estimated intervals", False, v_cur, e_cur, "no estimated intervals")
    rows.append(("unexplained", "step", True, v_billed - v_cur, e_billed - e_cur, "the rest"))
    rows.append(("invoice", "end", True, v_billed, e_billed, "as billed, at the invoice's base"))
    out = pd.DataFrame(rows, columns=["step", "kind", "applied", "volume_m3", "energy_J", "parameter"])
    start_v, start_e = out["volume_m3"].iat[0], out["energy_J"].iat[0]
    is_step = out["kind"] == "step"
    cum_v = start_v + out["volume_m3"].where(is_step, 0.0).cumsum()
    cum_e = start_e + out["energy_J"].where(is_step, 0.0).cumsum()
    out["cumulative_volume_m3"] = cum_v
    out["cumulative_energy_MJ"] = cum_e / 1e6
    out["energy_MJ"] = out["energy_J"] / 1e6
    out.loc[out["kind"] == "end", "cumulative_volume_m3"] = v_billed
    out.loc[out["kind"] == "end", "cumulative_energy_MJ"] = e_billed / 1e6
    return out[["step", "kind", "applied", "volume_m3", "energy_MJ", "cumulative_volume_m3", "cumulative_energy_MJ",
                "parameter"]]
