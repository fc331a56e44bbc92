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
``gauge-as-absolute``       ln((pf − pa) / pf) + ln(Zf / Z(pf − pa))       — (pa when unknown)
``fixed-temperature``       (1 + γ) (ln Tf − ln T')                        T' [K]
==========================  =============================================  ===================

with β = ∂lnZ/∂lnp and γ = ∂lnZ/∂lnT at line conditions (the corrector computes Z at the
pressure and temperature it believes; the leading candidates are refitted with Z evaluated there).
Every parameter is bounded to physical values (meterfix.checks.corrector_models states the
bounds and why); a fit that ends on a bound is tried, not credited.

Robust fit: each interval weighs by its duration, capped at twice the typical interval (a long
interval after a communication gap cannot dominate). Every candidate is first fitted with a
robust loss (soft L1, scale from the median absolute deviation); the intervals the best robust
fit leaves more than 5 robust standard deviations (and 0.5 %) off are outliers, shown and left
out; then every candidate is refitted by weighted least squares on the rest and scored by the
Bayesian information criterion BIC = n·ln(MSE + σ0²) + k·ln(n) (Schwarz 1978; k = parameters +
causes, σ0 = 1e-5 a floor for the corrector's rounding).

Evidence: a candidate is a finding when it beats the reference by ΔBIC >= 10 ("very strong"
evidence on the scale of Kass & Raftery, J. Am. Stat. Assoc. 90 (1995) 773): for base-pressure
and base-temperature "no misconfiguration", for every cause with a shape the better of that and
an unexplained constant ratio (which a pulse or meter factor gives as well). It must also explain at
least half the deviation (R² >= 0.5), has no parameter on its bound, implies a base condition in
use when it gives a constant ratio, and changes the month by at least EVIDENCE_FLOOR_PCT. A
finding whose month effect is below the threshold is still reported, with ``material = False``.
A fixed Zb/Zf equal to 1 (within two standard errors) is the ideal-gas cause, not a second one.

Notes
-----
Some causes cannot be told apart from the data alone: ``base-pressure`` and
``base-temperature`` both give a constant ratio (the one whose implied value is a common base
condition is ranked first), and ``ideal-gas`` together with a base error has the same shape as
``fixed-z`` (reported as ``fixed-z``). ``size_pct`` of a finding is the month effect of the
fitted model, 100 (Σ V_ours e^f / Σ V_ours − 1), which equals the observed
100 (Σ V_corrector / Σ V_ours − 1) when the model explains the data.

References
----------
1. Schwarz, G. (1978), Estimating the dimension of a model, Ann. Statist. 6, 461.
2. Kass, R. E. and Raftery, A. E. (1995), Bayes factors, J. Am. Stat. Assoc. 90, 773.
3. Huber, P. J. (1981), Robust Statistics (M-estimation; the soft-L1 loss, :mod:`meterfix.checks.lsq`).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..z import evaluate_z
from ..z import IDEAL_METHOD
from .corrector_models import (CAUSE_TEXT, COMMON_BASE_PRESSURES, COMMON_BASE_TEMPERATURES, OTHER_CAUSES,  # noqa: F401
                               Z_CAUSES, cause_text, causes as _causes, combinations, device_type, fit, plausibility)

#: default threshold of a material finding [%]: two independent Z calculations of about 0.1 % each
#: (the stated uncertainty of ISO 12213-2 / AGA Report No. 8 DETAIL in its normal range), combined in
#: quadrature (0.14 %), rounded up
DEFAULT_THRESHOLD_PCT = 0.15
#: smallest month effect reported at all [%]: a tenth of the 0.5 % maximum permissible error of a
#: volume conversion device at reference conditions (EN 12405-1 / OIML R 140, from memory)
EVIDENCE_FLOOR_PCT = 0.05
#: ΔBIC a cause must win by over "no misconfiguration" ("very strong", Kass & Raftery 1995)
EVIDENCE_DELTA_BIC = 10.0
SIGMA_FLOOR = 1e-5
#: outliers: residual beyond this many robust standard deviations of the best robust fit, and beyond
#: OUTLIER_FLOOR [-] in ln(ratio): 0.5 %, the maximum permissible error of a volume conversion device at
#: reference conditions (EN 12405-1, from memory); smaller deviations are left to the fit (the robust fit
#: uses the causes' linearised models, which may be off by a little at the extremes)
OUTLIER_SIGMAS = 5.0
OUTLIER_FLOOR = 5e-3
#: an interval weighs by its duration, at most this many typical (median) intervals
DURATION_CAP = 2.0
#: issue 13 case 2: the median ratio corrector/ours a configuration can give. Base conditions in use
#: differ by at most about 6 % (0 vs 25 degC: 9 %), Z of pipeline gas at up to 12 MPa lies between about
#: 0.65 and 1.05 (common practice), an atmospheric setting moves a few percent at the lowest line
#: pressures; outside 0.5-2 (or below what gauge-read-as-absolute gives at this month's pressures) the
#: column is not a corrected volume in the unit its header says, and the check is not run
PLAUSIBLE_RATIO = (0.5, 2.0)
#: m3 → other volume units (NIST SP 811: 1 ft3 = 0.028316846592 m3), to name a likely unit mix-up
_UNIT_FACTORS = {"ft3": 1 / 0.028316846592, "ccf": 1 / 2.8316846592, "Mcf": 1 / 28.316846592,
                 "MMcf": 1 / 28316.846592, "L": 1000.0, "thousand m3": 1e-3}


def _unit_mixup(ratio: float) -> str:
    """A likely unit mix-up for a ratio corrector/ours, or ''."""
    for unit, f in _UNIT_FACTORS.items():
        if abs(ratio / f - 1.0) < 0.15:
            return f"; the ratio is close to m3 → {unit} ({f:.6g}): the column may hold {unit} read as m3"
        if abs(ratio * f - 1.0) < 0.15:
            return f"; the ratio is close to {unit} → m3 ({1 / f:.6g}): the column may hold m3 read as {unit}"
    return ""


@dataclass
class CorrectorCheck:
    """Result of the corrector check.

    Attributes
    ----------
    findings : list of dict       explanations with evidence, best first; ``material`` says whether the
                                  month effect exceeds the threshold
    candidates : list of dict     every explanation tried, ranked by score, with ``credited`` and, when
                                  not credited, ``why_not``
    intervals : DataFrame         time index; ours, theirs [m3], ratio, used, outlier, fitted_ratio,
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
                "candidates": [{k: c.get(k) for k in ("cause", "score", "delta_bic", "r2", "rms_residual_pct",
                                                      "size_pct", "credited", "why_not")}
                               for c in self.candidates],
                "warnings": list(self.warnings)}


def _log_derivatives(result, d):
    """β = ∂lnZ/∂lnp and γ = ∂lnZ/∂lnT at line conditions, by central differences [-]."""
    n = len(d)
    beta, gamma = np.zeros(n), np.zeros(n)
    if result.method["name"] == IDEAL_METHOD:
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
        if meth == IDEAL_METHOD:
            return z
        for kk in np.unique(k):
            gas = result.analyses[int(kk)].gas
            if gas is None:
                continue
            m = k == kk
            z[m] = np.asarray(evaluate_z(p[m], t[m], gas, meth).z, float)
        return z

    return z_at


def _generalises(name: str) -> set:
    """The causes an explanation contains or generalises (a fixed Zb/Zf contains Z = 1, ideal gas)."""
    out = set(name.split("+"))
    if "fixed-z" in out:
        out.add("ideal-gas")
    return out


def _weights(duration, used):
    """Duration weights of the used intervals, each capped at DURATION_CAP typical intervals."""
    d = np.asarray(duration, float)[used]
    d = np.where(np.isfinite(d) & (d > 0), d, np.nan)
    typical = float(np.nanmedian(d)) if np.isfinite(d).any() else 1.0
    w = np.minimum(np.nan_to_num(d, nan=typical), DURATION_CAP * typical)
    return w / w.sum()


def _mad(x):
    x = np.asarray(x, float)
    return 1.4826 * float(np.median(np.abs(x - np.median(x)))) if len(x) else 0.0


def check_corrector(result, frame: pd.DataFrame, *, threshold_pct=None, pressure_base=None,
                    temperature_base=None) -> CorrectorCheck:
    """Compare the site corrector's corrected volume with ours and name the likely misconfiguration.

    The steps of the method (module docstring): the comparison frame of both volumes, the
    plausibility of their median ratio, the context the causes are modelled in, the robust pass
    and its outliers, the weighted least-squares pass on the rest, and crediting the findings.

    Parameters
    ----------
    result : MonthResult
    frame : DataFrame             the canonical log with ``volume_corrected_site`` [m3 at the
                                  corrector's base], same index as ``result.intervals``
    threshold_pct : float, optional [%]   a finding is material above it; default from the site
                                  settings' [uncertainty] key ``corrector_check_pct``, else
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
    pb = s.base_pressure if pressure_base is None else pressure_base
    tb = s.base_temperature if temperature_base is None else temperature_base
    d = result.intervals
    theirs = frame["volume_corrected_site"].reindex(d.index).to_numpy(float)
    ours = _ours_at_corrector_base(result, pb, tb, restate=pressure_base is not None or temperature_base is not None)
    used = _comparable(d, ours, theirs)
    warnings = []
    n_all = int(used.sum())
    iv = _comparison_frame(d, ours, theirs, used)
    if n_all < 3:
        warnings.append(f"only {n_all} interval(s) with both corrector and our volume: no check")
        return CorrectorCheck([], [], iv, np.nan, threshold_pct, {"intervals_compared": n_all}, warnings)
    du = d[used]
    vo = ours[used]
    vt = theirs[used]
    ratio_median = float(np.median(vt / vo))
    lo, hi = _plausible_ratio(du)
    if not lo <= ratio_median <= hi:
        warnings.append(_column_suspect_text(ratio_median, n_all, lo, hi))
        iv["used"] = False
        return CorrectorCheck([], [], iv, float("nan"), threshold_pct,
                              {"intervals_compared": 0, "column_suspect": True, "ratio_median": ratio_median,
                               "plausible_ratio": [lo, hi]}, warnings)
    w_all = _weights(d["duration"].to_numpy(float) if "duration" in d else np.ones(len(d)), used)
    y = np.log(vt / vo)
    ctx = _cause_context(result, du, w_all, pb, tb)
    combos = combinations(float(np.max(np.abs(ctx["L"]))) > 1e-6)
    outlier = _robust_outliers(y, w_all, combos, ctx)
    keep = ~outlier
    iv.loc[iv.index[used][outlier], "outlier"] = True
    ctx["w"] = np.where(keep, w_all, 1e-300)
    hv = du["heating_value"].to_numpy(float)
    lsq = _LeastSquaresPass.on_kept(y, w_all, keep, vo, hv, ctx, s.price, s.currency)
    candidates = lsq.candidates(combos)
    findings = _credit(candidates, threshold_pct)
    best = findings[0]["cause"] if findings else "none"
    _show_fit(iv, used, outlier, np.exp(lsq.fitted[best]), vo, vt)
    size_obs = 100.0 * (vt[keep].sum() / vo[keep].sum() - 1.0)
    warnings += _result_warnings(findings, best, iv.index[used], outlier, size_obs, threshold_pct,
                                 int((~used & np.isfinite(theirs)).sum()))
    totals = _totals(vo, vt, hv, keep, s.price)
    return CorrectorCheck(findings, candidates, iv, float(size_obs), float(threshold_pct), totals, warnings)


# ------------------------------------------------------------------------------- the comparison frame
def _z_base_of(gas, method, p, t) -> float:
    """Z of ``gas`` at one state p [Pa], t [K] by ``method`` [-]."""
    return float(np.asarray(evaluate_z(p, t, gas, method).z).reshape(-1)[0])


def _ours_at_corrector_base(result, pb, tb, *, restate) -> np.ndarray:
    """Our base volume of each interval [m3], restated at the corrector's base pb [Pa], tb [K].

    When the corrector's base is the contract's (``restate`` False) this is ``volume_base``; else
    ours is re-stated at the corrector's base (same gas) so that a correct corrector gives ratio 1.
    """
    s = result.settings
    d = result.intervals
    ours = d["volume_base"].to_numpy(float)
    if restate:
        zb_c = np.ones(len(d))
        for kk in np.unique(d["analysis"]):
            gas = result.analyses[int(kk)].gas
            m = d["analysis"].to_numpy(int) == kk
            if gas is not None and result.method["name"] != IDEAL_METHOD:
                zb_c[m] = _z_base_of(gas, result.method["name"], pb, tb)
        ours = ours * (s.base_pressure / pb) * (tb / s.base_temperature) * (zb_c / d["z_base"].to_numpy(float))
    return ours


def _comparable(d, ours, theirs) -> np.ndarray:
    """Intervals compared [bool]: both volumes finite and positive, and ours not estimated."""
    est = d["estimated"].to_numpy(bool)
    return np.isfinite(theirs) & np.isfinite(ours) & (ours > 0) & (theirs > 0) & ~est


def _comparison_frame(d, ours, theirs, used) -> pd.DataFrame:
    """The per-interval frame of the check: ours, theirs [m3], ratio [-], used, the line state
    pressure_line [Pa], temperature_line [K]; outlier, fitted_ratio and residual_pct to be filled."""
    iv = pd.DataFrame({"ours": ours, "theirs": theirs}, index=d.index)
    iv["ratio"] = iv["theirs"] / iv["ours"]
    iv["used"] = used
    iv["outlier"] = False
    iv["pressure_line"] = d["pressure_line"].to_numpy(float)
    iv["temperature_line"] = d["temperature_line"].to_numpy(float)
    iv["fitted_ratio"] = np.nan
    iv["residual_pct"] = np.nan
    return iv


# ---------------------------------------------------------------------- the plausibility of the ratio
def _plausible_ratio(du) -> tuple[float, float]:
    """The range of median ratio corrector/ours [-] a configuration can give over the compared
    intervals ``du``: PLAUSIBLE_RATIO, its low end widened to what gauge-read-as-absolute gives,
    (pf - pa)/pf, when the atmospheric pressure is known."""
    lo, hi = PLAUSIBLE_RATIO
    atm_u = du["pressure_atm"].to_numpy(float) if "pressure_atm" in du else np.full(len(du), np.nan)
    if np.isfinite(atm_u).any():  # gauge read as absolute reaches (pf - pa)/pf
        pf_u = du["pressure_line"].to_numpy(float)
        g = np.nanmedian((pf_u - atm_u) / pf_u)
        lo = min(lo, 0.9 * float(g)) if np.isfinite(g) else lo
    return lo, hi


def _column_suspect_text(ratio_median, n_all, lo, hi) -> str:
    """The warning when the median ratio [-] is outside what a configuration gives: not a corrected volume."""
    return (f"the site corrected volume is {ratio_median:.4g} times ours (median over {n_all} intervals): no base "
            f"condition, Z or atmospheric setting gives a ratio outside {lo:.2g}-{hi:.2g}, so the column is not a "
            f"corrected volume in the unit its header says{_unit_mixup(ratio_median)}. The corrector check was not "
            "run; check the column and its unit (--column to pick another)")


# ---------------------------------------------------------------------------- the context of the causes
def _cause_context(result, du, w_all, pb, tb) -> dict:
    """What the causes' models of y = ln(V_corrector / V_ours) are built from, over the compared intervals du.

    L = ln(Zf/Zb), β and γ the log-derivatives of Z [-], pf [Pa], lnT, T [K], lnZ, the weights w [-],
    the corrector's base pb [Pa], tb [K], the mean Zb and atmospheric pressure [Pa], z_at(p, t)
    (Z of each interval's gas) and z_base_at(p, t) (Z of the month's main gas, by base volume).
    """
    zf = du["z_line"].to_numpy(float)
    zb = du["z_base"].to_numpy(float)
    beta, gamma = _log_derivatives(result, du)
    atm = du["pressure_atm"].to_numpy(float) if "pressure_atm" in du else np.full(len(du), np.nan)
    fin = np.isfinite(atm)
    ctx = {"L": np.log(zf / zb), "beta": beta, "gamma": gamma, "pf": du["pressure_line"].to_numpy(float),
           "lnT": np.log(du["temperature_line"].to_numpy(float)), "w": w_all, "pressure_base": pb,
           "temperature_base": tb, "z_base_mean": float(np.average(zb, weights=w_all)),
           "atm_mean": float(np.average(atm[fin], weights=w_all[fin])) if fin.any() else np.nan,
           "atm": atm, "atm_known": bool(fin.any()), "lnZ": np.log(zf), "T": du["temperature_line"].to_numpy(float),
           "z_at": _z_function(result, du)}
    main = int(du.groupby("analysis")["volume_base"].sum().idxmax())
    ctx["z_base_main"] = float(result.analyses[main].z_base)
    gas_main = result.analyses[main].gas
    method = result.method["name"]
    ctx["z_base_at"] = (lambda p_, t_: 1.0) if (gas_main is None or method == IDEAL_METHOD) else (
        lambda p_, t_: _z_base_of(gas_main, method, p_, t_))
    return ctx


def _cause_sets(ctx) -> dict:
    """The causes' models for each weight of ln(Zf/Zb) in the corrector's formula (1, ½, 0)."""
    return {zw: _causes(ctx, zw) for zw in (1.0, 0.5, 0.0)}


def _z_weight(combo) -> float:
    """The weight of ln(Zf/Zb) a combination of causes keeps: 0 when the corrector uses no Z of
    its own (ideal gas, a fixed Z, a fixed pressure), ½ for Fpv instead of Fpv², else 1."""
    return 0.0 if ("ideal-gas" in combo or "fixed-z" in combo or "fixed-pressure" in combo) else (
        0.5 if "fpv-not-squared" in combo else 1.0)


# ----------------------------------------------------------------------- the robust pass, its outliers
def _robust_outliers(y, w_all, combos, ctx) -> np.ndarray:
    """Outliers of the compared intervals [bool]: robust fits (soft L1) of every candidate, the
    best one (smallest MAD of residuals) says which intervals are more than OUTLIER_SIGMAS robust
    standard deviations (and OUTLIER_FLOOR) off; none when that would be over a fifth of them.

    y [-] ln(V_corrector / V_ours), w_all [-] duration weights, combos the candidates, ctx their context.
    """
    cause_sets = _cause_sets(ctx)
    s0 = max(_mad(y), SIGMA_FLOOR)
    sw_all = np.sqrt(w_all)
    best_scale, best_resid = _mad(y), y - np.median(y)
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        for c in combos:
            _, _, _, f, _, _ = fit(c, cause_sets[_z_weight(c)], y, sw_all, loss="soft_l1",
                                   f_scale=s0 * float(np.median(sw_all)))
            r = y - f
            sc = _mad(r)
            if np.isfinite(sc) and sc < best_scale:
                best_scale, best_resid = sc, r
    dev = np.abs(best_resid - np.median(best_resid))
    outlier = dev > max(OUTLIER_SIGMAS * max(best_scale, SIGMA_FLOOR), OUTLIER_FLOOR)
    if outlier.sum() > 0.2 * len(y):  # no explanation fits most intervals: reject nothing
        outlier[:] = False
    return outlier


# ---------------------------------------------------------------------------- the least-squares pass
@dataclass
class _LeastSquaresPass:
    """Weighted least squares on the intervals kept, every candidate scored by BIC.

    y [-] ln(V_corrector / V_ours); w [-] weights (0 on outliers, sum 1), sw = √w; n intervals
    kept; vk [m3] our volume kept (0 on outliers); hv [J/m3] heating value; price [currency/J];
    cause_sets the causes' models; ss0 [-] weighted mean square of y; ``fitted`` cause → fitted y;
    none_score, constant_score the references' BIC (set by ``references``).
    """

    y: np.ndarray
    w: np.ndarray
    sw: np.ndarray
    n: int
    vk: np.ndarray
    hv: np.ndarray
    price: object
    currency: object
    cause_sets: dict
    ss0: float
    fitted: dict = field(default_factory=dict)
    none_score: float = np.nan        # BIC of "no misconfiguration", set by references()
    constant_score: float = np.nan    # BIC of a constant ratio, set by references()

    @classmethod
    def on_kept(cls, y, w_all, keep, vo, hv, ctx, price, currency):
        """The pass over the intervals ``keep`` [bool]: weights renormalised, causes rebuilt on ctx."""
        w = np.where(keep, w_all, 0.0)
        w = w / w.sum()
        return cls(y=y, w=w, sw=np.sqrt(w), n=int(keep.sum()), vk=np.where(keep, vo, 0.0), hv=hv, price=price,
                   currency=currency, cause_sets=_cause_sets(ctx), ss0=float(np.sum(w * y**2)))

    def month_effect(self, f):
        """Month effect of a fitted ln-ratio f: [%], volume [m3], energy [J] (nan without heating value)."""
        dv = self.vk * np.expm1(f)
        e = float(np.nansum(dv * self.hv)) if np.isfinite(self.hv).any() else np.nan
        return 100.0 * float(dv.sum()) / self.vk.sum(), float(dv.sum()), e

    def _money(self, de):
        return de * self.price if (self.price is not None and np.isfinite(de)) else None

    def references(self):
        """The two references a cause must beat: no misconfiguration (score n·ln(Σw y² + σ0²)) and
        a constant ratio (a base condition, a pulse or meter factor: the data cannot say which),
        against which a cause with a shape is judged; base-pressure and base-temperature against none."""
        n, w, y, ss0 = self.n, self.w, self.y, self.ss0
        self.none_score = n * np.log(ss0 + SIGMA_FLOOR**2)
        none = {"cause": "none", "description": "no misconfiguration", "causes": [], "score": float(self.none_score),
                "delta_bic": 0.0, "r2": 0.0, "rms_residual_pct": 100.0 * np.sqrt(ss0), "size_pct": 0.0,
                "parameters": {}, "credited": False, "why_not": "the reference: no misconfiguration"}
        self.fitted["none"] = np.zeros(len(y))
        theta_c = float(np.sum(w * y))
        mse_c = float(np.sum(w * (y - theta_c) ** 2))
        self.constant_score = n * np.log(mse_c + SIGMA_FLOOR**2) + 2 * np.log(n)
        constant = {"cause": "constant-ratio", "description": "a constant ratio (a base condition, a pulse "
                    "factor or a meter factor: the data cannot say which)", "causes": [],
                    "score": float(self.constant_score), "delta_bic": float(self.none_score - self.constant_score),
                    "r2": float(1.0 - mse_c / ss0) if ss0 > 0 else 0.0, "rms_residual_pct": 100.0 * np.sqrt(mse_c),
                    "size_pct": 100.0 * float(np.expm1(theta_c)), "parameters": {"ratio": float(np.exp(theta_c))},
                    "credited": False, "why_not": "the reference for causes with a shape: a constant ratio is a base "
                                                  "condition, a pulse factor or a meter factor"}
        self.fitted["constant-ratio"] = np.full(len(y), theta_c)
        return [none, constant]

    def _parts_report(self, parts, thetas, exact):
        """Each cause of a fit with its month effect and parameters; its plausibility penalty and why not."""
        comps, params, pen, why = [], {}, 0.0, []
        for p, th in zip(parts, thetas):
            rep = p.report(th) if p.report else {}
            pp, wy = plausibility(rep)
            pen += pp
            if wy:
                why.append(wy)
            fi = p.exact(th) if (exact and p.exact is not None) else p.f(th)
            sz, dv, de = self.month_effect(fi)
            comps.append({"cause": p.name, "description": CAUSE_TEXT.get(p.name, p.name), "size_pct": sz,
                          "volume_impact_m3": dv, "energy_impact_MJ": de / 1e6 if np.isfinite(de) else None,
                          "money_impact": self._money(de), "parameters": rep})
            params.update(rep)
        return comps, params, pen, why

    def evaluate(self, combo, exact):
        """Fit one candidate (Z at the believed state when ``exact``) and score it by BIC against its reference."""
        y, w, n = self.y, self.w, self.n
        theta, thetas, parts, f, at_bound, jac = fit(combo, self.cause_sets[_z_weight(combo)], y, self.sw, exact=exact)
        resid = y - f
        mse = float(np.sum(w * resid**2))
        k = sum(p.nparam for p in parts) + len(parts)
        se = np.full(len(theta), np.nan)
        if jac is not None and n > k:
            try:
                se = np.sqrt(np.diag(np.linalg.inv(jac.T @ jac)) * mse / (n - k))
            except np.linalg.LinAlgError:
                pass
        comps, params, pen, why = self._parts_report(parts, thetas, exact)
        if at_bound:
            why.append("a parameter ended on its physical bound")
        if "fixed-z" in combo:
            i = sum(p.nparam for p in parts[:combo.index("fixed-z")])
            if abs(theta[i]) <= max(2.0 * (se[i] if np.isfinite(se[i]) else 0.0), 1e-4):
                why.append("the fixed Zb/Zf is 1: that is the ideal-gas cause, not another")
        score = n * np.log(mse + SIGMA_FLOOR**2) + k * np.log(n) + pen
        sz, dv, de = self.month_effect(f)
        name = "+".join(combo)
        self.fitted[name] = f
        constant_shaped = all(c.startswith("base-") for c in combo)
        reference = self.none_score if constant_shaped else min(self.none_score, self.constant_score)
        return {
            "cause": name, "description": cause_text(name), "device_type": device_type(name), "causes": comps,
            "score": float(score),
            "delta_bic": float(reference - score),
            "reference": "none" if reference == self.none_score else "constant-ratio",
            "r2": float(1.0 - mse / self.ss0) if self.ss0 > 0 else 0.0, "rms_residual_pct": 100.0 * np.sqrt(mse),
            "size_pct": sz, "volume_impact_m3": dv, "energy_impact_MJ": de / 1e6 if np.isfinite(de) else None,
            "money_impact": self._money(de),
            "parameters": params, "parameter_standard_errors": [float(x) for x in se],
            "currency": self.currency, "_combo": combo, "_why": why,
        }

    def candidates(self, combos):
        """Every explanation tried, best score first: the references, every combination by the
        linearised models, the leading six refitted with Z at the believed state."""
        out = self.references()
        causes_1 = self.cause_sets[1.0]
        with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
            linear = sorted((self.evaluate(c, False) for c in combos), key=lambda c: c["score"])
            refit = [c["_combo"] for c in linear[:6] if any(causes_1[x].exact is not None for x in c["_combo"])]
            exact = {c: self.evaluate(c, True) for c in refit}
        out += [exact.get(c["_combo"], c) for c in linear]
        out.sort(key=lambda c: c["score"])
        return out


# ------------------------------------------------------------------------------- crediting the findings
def _credit(candidates, threshold_pct) -> list:
    """Mark each candidate credited or not (with why not) and return the findings, material first.

    A finding beats its reference by EVIDENCE_DELTA_BIC, explains half the deviation (R² >= 0.5),
    changes the month by EVIDENCE_FLOOR_PCT [%], adds nothing to a better finding; at most five.
    ``material``: month effect above threshold_pct [%]; ``rank`` from 1.
    """
    findings = []
    for c in candidates:
        c.pop("_combo", None)
        if c["cause"] in ("none", "constant-ratio"):
            continue
        why = c.pop("_why", [])
        if c["delta_bic"] < EVIDENCE_DELTA_BIC:
            ref = "a constant ratio" if c.get("reference") == "constant-ratio" else "no misconfiguration"
            why.append(f"does not beat {ref} decisively (ΔBIC {c['delta_bic']:.1f} < {EVIDENCE_DELTA_BIC:g})")
        if c["r2"] < 0.5:
            why.append(f"explains only {100 * max(c['r2'], 0):.0f} % of the deviation")
        if abs(c["size_pct"]) < EVIDENCE_FLOOR_PCT:
            why.append(f"month effect {c['size_pct']:.3f} % is below {EVIDENCE_FLOOR_PCT} %")
        mine = _generalises(c["cause"])
        if not why and any(set(f["cause"].split("+")) <= mine for f in findings):
            why.append("adds a cause to a better explanation without explaining more")
        c["credited"] = not why and len(findings) < 5
        c["why_not"] = "; ".join(why)
        if c["credited"]:
            f = dict(c)
            f["material"] = bool(abs(c["size_pct"]) > threshold_pct)
            findings.append(f)
    # material findings first, each group best score first
    findings.sort(key=lambda f: (not f["material"], f["score"]))
    for i, f in enumerate(findings):
        f["rank"] = i + 1
    return findings


def _show_fit(iv, used, outlier, fr, vo, vt) -> None:
    """Fill the frame with the best explanation's fitted ratio fr [-] and residual [%]; outliers not used."""
    idx = iv.index[used]
    iv.loc[idx, "fitted_ratio"] = fr
    iv.loc[idx, "residual_pct"] = 100.0 * (vt / (vo * fr) - 1.0)
    iv.loc[idx[outlier], "used"] = False


def _result_warnings(findings, best, idx, outlier, size_obs, threshold_pct, n_not_compared) -> list:
    """What the engineer should look at: outliers left out (first at idx[outlier][0]), a best
    explanation leaving over 5 % unexplained, findings below the threshold [%], a difference
    size_obs [%] nothing explains, and the intervals not compared."""
    warnings = []
    if outlier.any():
        warnings.append(f"{int(outlier.sum())} interval(s) left out as outliers (corrector and our volume disagree "
                        f"beyond {OUTLIER_SIGMAS:g} robust standard deviations of the best fit; e.g. an interval "
                        f"after a communication gap): first at {idx[outlier][0]}")
    if findings and findings[0]["r2"] < 0.95:
        warnings.append(f"the best explanation ({best}) leaves {100 * (1 - findings[0]['r2']):.1f} % of the "
                        "deviation unexplained: look at the intervals")
    immaterial = [f for f in findings if not f["material"]]
    if immaterial:
        warnings.append("evidenced but below the threshold of " + f"{threshold_pct:g} %: "
                        + ", ".join(f"{f['cause']} ({f['size_pct']:+.3f} %)" for f in immaterial))
    if not findings and abs(size_obs) > threshold_pct:
        warnings.append(f"the corrector differs from ours by {size_obs:+.3g} % and no misconfiguration tried "
                        "explains it with plausible settings: check its configuration and pulse factor")
    if n_not_compared:
        warnings.append(f"{n_not_compared} interval(s) not compared "
                        "(estimated, zero, missing volume or outlier)")
    return warnings


def _totals(vo, vt, hv, keep, price) -> dict:
    """Totals over the intervals kept: ours and the corrector's volume [m3], their difference [m3],
    in energy [MJ] (None without heating value) and money (with a price)."""
    totals = {"intervals_compared": int(keep.sum()), "intervals_outlier": int((~keep).sum()),
              "volume_ours_m3": float(vo[keep].sum()), "volume_corrector_m3": float(vt[keep].sum()),
              "volume_difference_m3": float(vt[keep].sum() - vo[keep].sum()),
              "energy_difference_MJ": float(np.nansum((vt[keep] - vo[keep]) * hv[keep])) / 1e6
              if np.isfinite(hv).any() else None}
    if price is not None and totals["energy_difference_MJ"] is not None:
        totals["money_difference"] = totals["energy_difference_MJ"] * 1e6 * price
    return totals
