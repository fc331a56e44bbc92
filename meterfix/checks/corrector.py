"""Site corrector check: which misconfiguration explains the corrector's own corrected volume.

For every interval the ratio of the corrector's corrected volume to ours is modelled in log
space, y = ln(V_corrector / V_ours), as the sum of the effects of one or two causes:

==========================  =============================================  ===================
cause                       model of y                                     parameter
==========================  =============================================  ===================
``ideal-gas``               ln(Zf / Zb)                                    —
``fpv-not-squared``         ½ ln(Zf / Zb)   (Fpv instead of Fpv² = Zb/Zf)  —
``fixed-z``                 ln(Zf / Zb) + θ  (a constant Zb/Zf = e^θ)      Z at line used
``base-pressure``           θ = ln(pb / pb')                               pb' [Pa]
``base-temperature``        θ = ln(Tb' / Tb)                               Tb' [K]
``atmospheric-pressure``    (1 − β) ln(1 + Δa / pf)                        Δa [Pa]
``fixed-temperature``       (1 + γ) (ln Tf − ln T')                        T' [K]
==========================  =============================================  ===================

with β = ∂lnZ/∂lnp and γ = ∂lnZ/∂lnT at line conditions (the corrector computes Z at the
pressure and temperature it believes). Each candidate (the seven single causes and the pairs
that can occur together) is fitted by weighted least squares (weights: our interval volume)
and scored by the Bayesian information criterion n·ln(MSE + σ0²) + k·ln(n), k = parameters +
causes, σ0 = 1e-5 a floor for the corrector's rounding. The best-scoring explanations that beat
"no misconfiguration" and whose month effect exceeds the threshold are the findings.

Notes
-----
Some causes cannot be told apart from the data alone: ``base-pressure`` and
``base-temperature`` both give a constant ratio (the one whose implied value is a common base
condition is ranked first), and ``ideal-gas`` together with a base error has the same shape as
``fixed-z`` (reported as ``fixed-z``). ``size_pct`` of a finding is the month effect of the
fitted model, 100 (Σ V_ours e^f / Σ V_ours − 1), which equals the observed
100 (Σ V_corrector / Σ V_ours − 1) when the model explains the data.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from scipy.optimize import least_squares

from ..z import evaluate_z

#: default threshold of a finding [%]: two independent Z calculations of about 0.1 % each
#: (ISO 12213-2 scope, REFERENCES.md §3), combined in quadrature (0.14 %), rounded up
DEFAULT_THRESHOLD_PCT = 0.15
SIGMA_FLOOR = 1e-5
#: common base conditions (REFERENCES.md §5, common practice) used to rank indistinguishable causes
COMMON_BASE_PRESSURES = (101325.0, 101559.775, 101007.8, 100000.0, 101352.93)
COMMON_BASE_TEMPERATURES = (273.15, 288.15, 288.705556, 293.15)

Z_CAUSES = ("ideal-gas", "fpv-not-squared", "fixed-z")
OTHER_CAUSES = ("base-pressure", "base-temperature", "atmospheric-pressure", "fixed-temperature")


@dataclass
class CorrectorCheck:
    """Result of the corrector check.

    Attributes
    ----------
    findings : list of dict       ranked explanations above the threshold (best first)
    candidates : list of dict     every explanation tried, ranked by score
    intervals : DataFrame         time index; ours, theirs [m3], ratio, used, fitted_ratio,
                                  residual_pct, pressure_line [Pa], temperature_line [K]
    size_pct : float              observed 100 (Σ corrector / Σ ours − 1) over the compared intervals
    threshold_pct : float
    totals : dict
    warnings : list of str
    """

    findings: list
    candidates: list
    intervals: pd.DataFrame
    size_pct: float
    threshold_pct: float
    totals: dict = field(default_factory=dict)
    warnings: list = field(default_factory=list)

    @property
    def best(self):
        """The best explanation (a finding dict) or None."""
        return self.findings[0] if self.findings else None

    def to_summary(self) -> dict:
        return {"findings": list(self.findings), "size_pct": self.size_pct, "threshold_pct": self.threshold_pct,
                "best": None if self.best is None else self.best["cause"], "totals": dict(self.totals),
                "candidates": [{k: c[k] for k in ("cause", "score", "r2", "rms_residual_pct", "size_pct")}
                               for c in self.candidates],
                "warnings": list(self.warnings)}


def _log_derivatives(result, d):
    """β = ∂lnZ/∂lnp and γ = ∂lnZ/∂lnT at line conditions, by central differences [-]."""
    n = len(d)
    beta, gamma = np.zeros(n), np.zeros(n)
    if result.method["name"] == "ideal":
        return beta, gamma
    p = d["pressure_line"].to_numpy(float)
    t = d["temperature_line"].to_numpy(float)
    k = d["analysis"].to_numpy(int)
    h = 1e-4
    for kk in np.unique(k):
        gas = result.analyses[int(kk)].gas
        if gas is None:
            continue
        m = k == kk
        meth = result.method["name"]
        zp = np.asarray(evaluate_z(p[m] * (1 + h), t[m], gas, meth).z, float)
        zm = np.asarray(evaluate_z(p[m] * (1 - h), t[m], gas, meth).z, float)
        tp = np.asarray(evaluate_z(p[m], t[m] * (1 + h), gas, meth).z, float)
        tm = np.asarray(evaluate_z(p[m], t[m] * (1 - h), gas, meth).z, float)
        beta[m] = (np.log(zp) - np.log(zm)) / (np.log1p(h) - np.log1p(-h))
        gamma[m] = (np.log(tp) - np.log(tm)) / (np.log1p(h) - np.log1p(-h))
    return np.nan_to_num(beta), np.nan_to_num(gamma)


def _z_function(result, d):
    """Z at given line states of the intervals d, each with its own analysis in force."""
    k = d["analysis"].to_numpy(int)
    meth = result.method["name"]

    def z_at(p, t):
        z = np.ones(len(k))
        if meth == "ideal":
            return z
        for kk in np.unique(k):
            gas = result.analyses[int(kk)].gas
            if gas is None:
                continue
            m = k == kk
            z[m] = np.asarray(evaluate_z(p[m], t[m], gas, meth).z, float)
        return z

    return z_at


class _Cause:
    """One cause: its model function, parameter count, start value and report."""

    def __init__(self, name, nparam, f, theta0=None, scale=1.0, report=None, exact=None):
        self.name, self.nparam, self.f, self.theta0, self.scale, self.report = name, nparam, f, theta0, scale, report
        #: the model with Z evaluated at the believed state (f is its linearisation in ln Z)
        self.exact = exact


def _causes(ctx, zweight=1.0):
    """The seven causes; ``zweight`` is how much of Z the corrector applies (1, ½ for Fpv, 0 for Z = 1)."""
    L, beta, gamma, pf, lnT = ctx["L"], ctx["beta"], ctx["gamma"], ctx["pf"], ctx["lnT"]
    pb, tb, zb = ctx["pressure_base"], ctx["temperature_base"], ctx["z_base_mean"]
    atm = ctx["atm_mean"]

    atm_j = ctx["atm"]
    known = np.isfinite(atm_j)
    gauge = np.where(known, ctx["pf"] - np.where(known, atm_j, 0.0), np.nan)

    def p_used(th):
        # a fixed atmospheric pressure th[0] where we know the one we used; else an offset th[0]
        return np.where(known, gauge + th[0], ctx["pf"] + th[0]) if ctx["atm_known"] else ctx["pf"] + th[0]

    def atm_f(th):
        return (1.0 - zweight * beta) * np.log(np.maximum(p_used(th) / pf, 1e-9))

    def atm_exact(th):
        pu = np.maximum(p_used(th), 1.0)
        if zweight == 0.0:
            return np.log(pu / pf)
        return np.log(pu / pf) + zweight * (ctx["lnZ"] - np.log(ctx["z_at"](pu, ctx["T"])))

    def atm_report(th):
        if ctx["atm_known"]:
            return {"pressure_atm_used_Pa": float(th[0]),
                    "atmospheric_pressure_offset_Pa": float(th[0] - atm)}
        return {"atmospheric_pressure_offset_Pa": float(th[0])}

    def ft_exact(th):
        if zweight == 0.0:
            return lnT - th[0]
        return lnT - th[0] + zweight * (ctx["lnZ"] - np.log(ctx["z_at"](pf, np.full_like(pf, np.exp(th[0])))))

    return {
        "ideal-gas": _Cause("ideal-gas", 0, lambda th: L, report=lambda th: {"z_line_used": 1.0, "z_base_used": 1.0}),
        "fpv-not-squared": _Cause("fpv-not-squared", 0, lambda th: 0.5 * L,
                                  report=lambda th: {"factor_applied": "Fpv = sqrt(Zb/Zf) instead of Zb/Zf"}),
        "fixed-z": _Cause("fixed-z", 1, lambda th: L + th[0], [0.0], 0.01,
                          report=lambda th: {"factor_z_used": float(np.exp(th[0])),
                                             "z_line_used": float(zb / np.exp(th[0]))}),
        "base-pressure": _Cause("base-pressure", 1, lambda th: np.full_like(L, th[0]), [0.0], 0.01,
                                report=lambda th: {"pressure_base_used_Pa": _base_used(ctx, th[0], "p")}),
        "base-temperature": _Cause("base-temperature", 1, lambda th: np.full_like(L, th[0]), [0.0], 0.01,
                                   report=lambda th: {"temperature_base_used_K": _base_used(ctx, th[0], "t")}),
        "atmospheric-pressure": _Cause("atmospheric-pressure", 1, atm_f, [atm if ctx["atm_known"] else 0.0], 1000.0,
                                       report=atm_report, exact=atm_exact),
        "fixed-temperature": _Cause("fixed-temperature", 1, lambda th: (1.0 + zweight * gamma) * (lnT - th[0]),
                                    [float(np.average(lnT, weights=ctx["w"]))], 0.01,
                                    report=lambda th: {"temperature_line_used_K": float(np.exp(th[0]))}, exact=ft_exact),
    }


def _base_used(ctx, theta, which):
    """The base pressure [Pa] or temperature [K] the corrector used, from the constant log ratio θ.

    The corrector evaluates Zb at its own base: e^θ = (pb/pb')·(Zb'/Zb) or (Tb'/Tb)·(Zb'/Zb);
    solved by fixed-point iteration with the main analysis' Z."""
    pb, tb, zb = ctx["pressure_base"], ctx["temperature_base"], ctx["z_base_main"]
    x = pb * np.exp(-theta) if which == "p" else tb * np.exp(theta)
    if not np.isfinite(x) or not ((1e3 < x < 1e7) if which == "p" else (100.0 < x < 1000.0)):
        return float(x)
    for _ in range(3):
        zx = ctx["z_base_at"](x if which == "p" else pb, tb if which == "p" else x)
        x = pb * zx / zb * np.exp(-theta) if which == "p" else tb * zb / zx * np.exp(theta)
    return float(x)


def _combinations():
    combos = [(c,) for c in Z_CAUSES + OTHER_CAUSES]
    for z in Z_CAUSES:
        for o in OTHER_CAUSES:
            if z == "fixed-z" and (o.startswith("base-") or o == "fixed-temperature"):
                continue  # collinear: a constant Zb/Zf absorbs a constant ratio
            combos.append((z, o))
    for i, a in enumerate(OTHER_CAUSES):
        for b in OTHER_CAUSES[i + 1:]:
            if a.startswith("base-") and (b.startswith("base-") or b == "fixed-temperature"):
                continue  # collinear constants
            combos.append((a, b))
    return combos


def _plausibility_penalty(report: dict) -> float:
    """2 score units when an implied base condition is not a common one (breaks exact ties only)."""
    pen = 0.0
    if "pressure_base_used_Pa" in report:
        x = report["pressure_base_used_Pa"]
        pen += 0.0 if min(abs(x - c) / c for c in COMMON_BASE_PRESSURES) < 2e-4 else 2.0
    if "temperature_base_used_K" in report:
        x = report["temperature_base_used_K"]
        pen += 0.0 if min(abs(x - c) / c for c in COMMON_BASE_TEMPERATURES) < 2e-4 else 2.0
    return pen


def _fit(combo, causes, y, sw, exact=False):
    parts = [causes[c] for c in combo]
    sizes = [p.nparam for p in parts]
    theta0 = sum((list(p.theta0) for p in parts if p.nparam), [])
    scales = sum(([p.scale] for p in parts if p.nparam), [])

    def split(theta):
        out, i = [], 0
        for s in sizes:
            out.append(theta[i:i + s])
            i += s
        return out

    def model(theta):
        return sum(p.f(th) for p, th in zip(parts, split(theta)))

    if theta0:
        sol = least_squares(lambda th: sw * (y - model(th)), np.array(theta0, float), x_scale=np.array(scales),
                            method="lm", xtol=1e-14, ftol=1e-14, gtol=1e-14)
        theta = sol.x
    else:
        theta = np.zeros(0)
    if exact and any(p.exact is not None for p in parts):
        theta = _refine(parts, split, model, theta, np.array(scales), y, sw)
        return theta, split(theta), parts, _exact_model(parts, split(theta))
    return theta, split(theta), parts, model(theta)


def _exact_model(parts, thetas):
    return sum((p.exact if p.exact is not None else p.f)(th) for p, th in zip(parts, thetas))


def _refine(parts, split, model, theta, scales, y, sw, iterations=4):
    """Gauss-Newton on the exact model, with the Jacobian of its linearisation (cheap, close)."""
    theta = np.array(theta, float)
    for _ in range(iterations):
        r = y - _exact_model(parts, split(theta))
        jac = np.empty((len(y), len(theta)))
        f0 = model(theta)
        for i in range(len(theta)):
            t2 = theta.copy()
            t2[i] += 1e-6 * scales[i]
            jac[:, i] = (model(t2) - f0) / (1e-6 * scales[i])
        step, *_ = np.linalg.lstsq(sw[:, None] * jac, sw * r, rcond=None)
        theta = theta + step
        if np.all(np.abs(step) <= 1e-12 * np.maximum(np.abs(theta), scales)):
            break
    return theta


def check_corrector(result, frame: pd.DataFrame, *, threshold_pct=None, pressure_base=None,
                    temperature_base=None) -> CorrectorCheck:
    """Compare the site corrector's corrected volume with ours and name the likely misconfiguration.

    Parameters
    ----------
    result : MonthResult
    frame : DataFrame             the canonical log with ``volume_corrected_site`` [m3 at the
                                  corrector's base], same index as ``result.intervals``
    threshold_pct : float, optional [%]   a finding's month effect must exceed it; default from the
                                  site settings' [uncertainty] key ``corrector_check_pct``, else
                                  DEFAULT_THRESHOLD_PCT
    pressure_base, temperature_base : float, optional [Pa], [K]
                                  the corrector's configured base when it differs from the contract
                                  (default: the contract base)

    Returns
    -------
    CorrectorCheck
    """
    s = result.settings
    if threshold_pct is None:
        threshold_pct = float((s.uncertainty or {}).get("corrector_check_pct", DEFAULT_THRESHOLD_PCT))
    pb = s.pressure_base if pressure_base is None else pressure_base
    tb = s.temperature_base if temperature_base is None else temperature_base
    d = result.intervals
    theirs = frame["volume_corrected_site"].reindex(d.index).to_numpy(float)
    ours = d["volume_base"].to_numpy(float)
    if pressure_base is not None or temperature_base is not None:
        # re-state ours at the corrector's base (same gas) so that a correct corrector gives ratio 1
        zb_c = np.ones(len(d))
        for kk in np.unique(d["analysis"]):
            gas = result.analyses[int(kk)].gas
            m = d["analysis"].to_numpy(int) == kk
            if gas is not None and result.method["name"] != "ideal":
                zb_c[m] = float(np.asarray(evaluate_z(pb, tb, gas, result.method["name"]).z).reshape(-1)[0])
        ours = ours * (s.pressure_base / pb) * (tb / s.temperature_base) * (zb_c / d["z_base"].to_numpy(float))
    est = d["estimated"].to_numpy(bool)
    used = np.isfinite(theirs) & np.isfinite(ours) & (ours > 0) & (theirs > 0) & ~est
    warnings = []
    n = int(used.sum())
    iv = pd.DataFrame({"ours": ours, "theirs": theirs}, index=d.index)
    iv["ratio"] = iv["theirs"] / iv["ours"]
    iv["used"] = used
    iv["pressure_line"] = d["pressure_line"].to_numpy(float)
    iv["temperature_line"] = d["temperature_line"].to_numpy(float)
    iv["fitted_ratio"] = np.nan
    iv["residual_pct"] = np.nan
    if n < 3:
        warnings.append(f"only {n} interval(s) with both corrector and our volume: no check")
        return CorrectorCheck([], [], iv, np.nan, threshold_pct, {"intervals_compared": n}, warnings)
    du = d[used]
    vo = ours[used]
    vt = theirs[used]
    w = vo / vo.sum()
    sw = np.sqrt(w)
    y = np.log(vt / vo)
    zf = du["z_line"].to_numpy(float)
    zb = du["z_base"].to_numpy(float)
    beta, gamma = _log_derivatives(result, du)
    atm = du["pressure_atm"].to_numpy(float)
    ctx = {"L": np.log(zf / zb), "beta": beta, "gamma": gamma, "pf": du["pressure_line"].to_numpy(float),
           "lnT": np.log(du["temperature_line"].to_numpy(float)), "w": w, "pressure_base": pb,
           "temperature_base": tb, "z_base_mean": float(np.average(zb, weights=w)),
           "atm_mean": float(np.average(atm[np.isfinite(atm)], weights=w[np.isfinite(atm)])) if np.isfinite(atm).any()
           else np.nan}
    ctx["atm"] = atm
    ctx["atm_known"] = bool(np.isfinite(atm).any())
    ctx["lnZ"] = np.log(zf)
    ctx["T"] = du["temperature_line"].to_numpy(float)
    ctx["z_at"] = _z_function(result, du)
    main = int(du.groupby("analysis")["volume_base"].sum().idxmax())
    ctx["z_base_main"] = float(result.analyses[main].z_base)
    gas_main = result.analyses[main].gas
    ctx["z_base_at"] = (lambda p_, t_: 1.0) if (gas_main is None or result.method["name"] == "ideal") else (
        lambda p_, t_: float(np.asarray(evaluate_z(p_, t_, gas_main, result.method["name"]).z).reshape(-1)[0]))
    cause_sets = {zw: _causes(ctx, zw) for zw in (1.0, 0.5, 0.0)}
    causes = cause_sets[1.0]
    real_gas = float(np.max(np.abs(ctx["L"]))) > 1e-6
    hv = du["heating_value"].to_numpy(float)
    price = s.price_per_energy
    size_obs = 100.0 * (vt.sum() / vo.sum() - 1.0)
    ss0 = float(np.sum(w * y**2))

    def month_effect(f):
        dv = vo * np.expm1(f)
        e = float(np.nansum(dv * hv)) if np.isfinite(hv).any() else np.nan
        return 100.0 * float(dv.sum()) / vo.sum(), float(dv.sum()), e

    candidates = []
    none_score = n * np.log(float(np.sum(w * y**2)) + SIGMA_FLOOR**2)
    candidates.append({"cause": "none", "causes": [], "score": float(none_score), "r2": 0.0,
                       "rms_residual_pct": 100.0 * np.sqrt(ss0), "size_pct": 0.0, "parameters": {}})
    fitted = {"none": np.zeros(n)}
    def evaluate(combo, exact):
        zw = 0.0 if ("ideal-gas" in combo or "fixed-z" in combo) else (0.5 if "fpv-not-squared" in combo else 1.0)
        theta, thetas, parts, f = _fit(combo, cause_sets[zw], y, sw, exact=exact)
        resid = y - f
        mse = float(np.sum(w * resid**2))
        k = sum(p.nparam for p in parts) + len(parts)
        comps, params, pen = [], {}, 0.0
        for p, th in zip(parts, thetas):
            rep = p.report(th) if p.report else {}
            pen += _plausibility_penalty(rep)
            fi = p.exact(th) if (exact and p.exact is not None) else p.f(th)
            sz, dv, de = month_effect(fi)
            comps.append({"cause": p.name, "size_pct": sz, "volume_impact_m3": dv,
                          "energy_impact_MJ": de / 1e6 if np.isfinite(de) else None,
                          "money_impact": de * price if (price is not None and np.isfinite(de)) else None,
                          "parameters": rep})
            params.update(rep)
        score = n * np.log(mse + SIGMA_FLOOR**2) + k * np.log(n) + pen
        sz, dv, de = month_effect(f)
        name = "+".join(combo)
        fitted[name] = f
        return {
            "cause": name, "causes": comps, "score": float(score),
            "r2": float(1.0 - mse / ss0) if ss0 > 0 else 0.0, "rms_residual_pct": 100.0 * np.sqrt(mse),
            "size_pct": sz, "volume_impact_m3": dv, "energy_impact_MJ": de / 1e6 if np.isfinite(de) else None,
            "money_impact": de * price if (price is not None and np.isfinite(de)) else None,
            "parameters": params, "currency": s.currency, "_combo": combo,
        }

    combos = [c for c in _combinations() if real_gas or not any(x in Z_CAUSES for x in c)]
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        linear = sorted((evaluate(c, False) for c in combos), key=lambda c: c["score"])
    # refit the leading candidates whose model was linearised in ln Z with Z at the believed state
    refit = [c["_combo"] for c in linear[:6] if any(causes[x].exact is not None for x in c["_combo"])]
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        exact = {c: evaluate(c, True) for c in refit}
    candidates += [exact.get(c["_combo"], c) for c in linear]
    candidates.sort(key=lambda c: c["score"])
    for c in candidates:
        c.pop("_combo", None)
    findings = []
    for c in candidates:
        if c["cause"] == "none" or not (c["score"] < none_score and abs(c["size_pct"]) > threshold_pct
                                        and c["r2"] >= 0.5):
            continue
        mine = set(c["cause"].split("+"))
        if any(set(f["cause"].split("+")) <= mine for f in findings):
            continue  # adds a cause to a better explanation without explaining more
        findings.append(dict(c))
        if len(findings) == 5:
            break
    for i, f in enumerate(findings):
        f["rank"] = i + 1
    best = findings[0]["cause"] if findings else "none"
    fr = np.exp(fitted[best])
    iv.loc[used, "fitted_ratio"] = fr
    iv.loc[used, "residual_pct"] = 100.0 * (vt / (vo * fr) - 1.0)
    if findings and findings[0]["r2"] < 0.95:
        warnings.append(f"the best explanation ({best}) leaves {100 * (1 - findings[0]['r2']):.1f} % of the "
                        "deviation unexplained: look at the intervals")
    if (~used & np.isfinite(theirs)).any():
        warnings.append(f"{int((~used & np.isfinite(theirs)).sum())} interval(s) not compared "
                        "(estimated, zero or missing volume)")
    totals = {"intervals_compared": n, "volume_ours_m3": float(vo.sum()), "volume_corrector_m3": float(vt.sum()),
              "volume_difference_m3": float(vt.sum() - vo.sum()),
              "energy_difference_MJ": float(np.nansum((vt - vo) * hv)) / 1e6 if np.isfinite(hv).any() else None}
    if price is not None and totals["energy_difference_MJ"] is not None:
        totals["money_difference"] = totals["energy_difference_MJ"] * 1e6 * price
    return CorrectorCheck(findings, candidates, iv, float(size_obs), float(threshold_pct), totals, warnings)
