"""Which meter? The daily UFG fitted to "meter m reads b high from gas day d" against "no meter".

Models of the daily UFG y_d [m3], weighted by its random standard uncertainty σ_d (w_d = 1/σ_d²):

* no meter:   y_d = L                                  (a constant daily loss L; 1 parameter)
* meter m from onset k:  y_d = L + β · g_d,  g_d = s_m V_m,d · [d ≥ k]      (L, β, k: 3 parameters)

A meter reading b high shows V' = (1 + b) V, so its error in the UFG is s_m V'·b/(1 + b): β =
b/(1 + b), b = β/(1 − β), with s_m = +1 for a receipt and −1 for a delivery or own use. b is
bounded to ±MAX_BIAS (a larger error is not a plausible meter drift: it is tried, not credited);
the onset k runs over every gas day (k = first day: the error was there all month). Each (m, k)
is a weighted least-squares line solved in closed form from cumulative sums, all meters and onsets
at once. Evidence by the Bayesian information criterion with the scale estimated from the
residuals (Schwarz 1978): BIC = n ln(RSS/n) + penalty, ΔBIC = BIC(no meter) − BIC(meter m). The
bias costs ln n; the meter and the onset are choices among M meters and K onsets and cost
2 ln M + 2 ln K (a uniform prior over them: a search over many meters must not find one by
chance). A meter
is credited only with ΔBIC ≥ 10 ("very strong", Kass & Raftery 1995), as the invoice attribution,
when no other meter fits within 10 of it (else the data cannot tell them apart), and when its
error is not a constant loss in disguise: with the error there all month and the meter's daily
flow nearly constant (less than MIN_SHAPE of its variation left after a constant), the fit cannot
tell it from a loss, and says so.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: the largest meter error searched [-] (±10 %)
MAX_BIAS = 0.10
#: ΔBIC of decisive evidence (Kass & Raftery 1995: > 10 "very strong")
EVIDENCE_DELTA_BIC = 10.0
#: fewest gas days for the search
MIN_DAYS = 7
#: a regressor whose weighted variance is below this fraction of its mean square is a constant
MIN_SHAPE = 1e-3


@dataclass
class Finding:
    """One meter's best fit.

    Attributes
    ----------
    meter : str
    role : str
    bias_pct : float [%]          b: how much the meter reads high (negative: low)
    from_gas_day : str            onset (ISO date)
    delta_bic : float [-]         BIC(no meter) − BIC(this meter)
    credited : bool
    evidence : str                why credited or not, in words
    effect_m3 : float [m3]        what the error put into the month's UFG (s_m β Σ g)
    at_bound : bool               the fit wanted more than ±MAX_BIAS
    bias_expanded_uncertainty_pct : float [%]   U (k = 2) of b at that onset: the least-squares
                                  standard error of β with the scale from the residuals, RSS/(n − 3)
                                  (L, β and the onset fitted), through db/dβ = 1/(1 − β)²
    """

    meter: str
    role: str
    bias_pct: float
    from_gas_day: str
    delta_bic: float
    credited: bool
    evidence: str
    effect_m3: float
    at_bound: bool = False
    bias_expanded_uncertainty_pct: float = float("nan")

    def to_dict(self) -> dict:
        return {"meter": self.meter, "role": self.role, "bias_pct": self.bias_pct, "from_gas_day": self.from_gas_day,
                "delta_bic": self.delta_bic, "credited": self.credited, "evidence": self.evidence,
                "effect_m3": self.effect_m3, "at_bound": self.at_bound,
                "bias_expanded_uncertainty_pct": self.bias_expanded_uncertainty_pct}


def _rev_cumsum(a):
    return np.flip(np.cumsum(np.flip(a, axis=-1), axis=-1), axis=-1)


def search(ufg, sigma, volumes, signs, names, roles, gas_days) -> tuple[list, str]:
    """Fit every meter and onset; returns (findings sorted best first, summary text).

    Parameters
    ----------
    ufg : array (D,) [m3]          daily UFG
    sigma : array (D,) [m3]        its random standard uncertainty (weights); non-positive or NaN: equal weights
    volumes : array (M, D) [m3]    each meter's daily base volume as measured
    signs : array (M,) [-]         +1 receipt, −1 delivery / own use
    names, roles : list of str (M,)
    gas_days : list of str (D,)

    Returns
    -------
    (list of Finding, str)
    """
    y = np.asarray(ufg, float)
    X = np.nan_to_num(np.asarray(volumes, float)).reshape(len(names), y.size)
    D = y.size
    ok = np.isfinite(y)
    if D < MIN_DAYS or ok.sum() < MIN_DAYS or not len(names):
        return [], f"not searched: {int(ok.sum())} gas days with a UFG (at least {MIN_DAYS} needed)"
    sig = np.asarray(sigma, float)
    w = np.where(ok & np.isfinite(sig) & (sig > 0), 1.0 / np.where(sig > 0, sig, 1.0) ** 2, 0.0)
    if not np.any(w > 0) or np.any((w == 0) & ok):
        w = ok.astype(float)
    w = w / w[ok].mean()
    yw = np.where(ok, y, 0.0)
    n = int(ok.sum())
    Sw, Sy, Syy = w.sum(), (w * yw).sum(), (w * yw * yw).sum()
    rss0 = Syy - Sy * Sy / Sw
    G = (np.asarray(signs, float)[:, None] * X) * ok        # (M, D) g for onset at day 0
    Sg = _rev_cumsum(w * G)                                 # (M, K=D) sums over d >= k
    Sgg = _rev_cumsum(w * G * G)
    Sgy = _rev_cumsum(w * G * yw)
    det = Sw * Sgg - Sg * Sg
    with np.errstate(invalid="ignore", divide="ignore"):
        beta = np.where(det > 0, (Sw * Sgy - Sg * Sy) / det, 0.0)
    # β = b/(1+b): b = −10 % → β = −0.1/0.9; b = +10 % → β = 0.1/1.1
    lo, hi = -MAX_BIAS / (1.0 - MAX_BIAS), MAX_BIAS / (1.0 + MAX_BIAS)
    at_bound = (beta < lo) | (beta > hi)
    beta = np.clip(beta, lo, hi)
    L = (Sy - beta * Sg) / Sw
    rss = Syy - 2 * L * Sy - 2 * beta * Sgy + L * L * Sw + 2 * L * beta * Sg + beta * beta * Sgg
    rss = np.maximum(rss, 1e-300)
    tiny = 1e-12 * max(rss0, 1e-300)
    penalty = np.log(n) + 2.0 * np.log(D) + 2.0 * np.log(max(len(names), 1))
    dbic = n * np.log((max(rss0, 0.0) + tiny) / (rss + tiny)) - penalty
    dbic = np.where(det > 0, dbic, -np.inf)
    best_k = np.argmax(dbic, axis=1)
    rows = np.arange(len(names))
    best = dbic[rows, best_k]
    order = np.argsort(-best)
    findings = []
    for rank, i in enumerate(order):
        k = int(best_k[i])
        b_ = float(beta[i, k])
        bias = b_ / (1.0 - b_)
        g = G[i] * (np.arange(D) >= k)
        effect = float(b_ * g.sum())
        # constant-loss check: with the error there all month, a nearly constant flow is a constant
        wm = (w * g).sum() / Sw
        shape = ((w * (g - wm) ** 2).sum() / Sw) / max((w * g * g).sum() / Sw, 1e-300)
        runner = next((float(best[j]) for j in order if j != i), -np.inf)
        dbic_i = float(best[i])
        if not np.isfinite(dbic_i):
            why, credited = "its flow is zero on the searched days: nothing to fit", False
        elif k == 0 and shape < MIN_SHAPE:
            why, credited = ("its daily flow barely varies: an error there all month cannot be told from a constant "
                             "loss"), False
        elif dbic_i < EVIDENCE_DELTA_BIC:
            why, credited = (f"fits the {n} gas days not decisively better than no meter (ΔBIC {dbic_i:.0f}, "
                             f"{EVIDENCE_DELTA_BIC:.0f} needed)"), False
        elif at_bound[i, k]:
            why, credited = (f"would need more than ±{100 * MAX_BIAS:.0f} % (not a plausible meter error)"), False
        elif rank == 0 and runner > dbic_i - EVIDENCE_DELTA_BIC:
            other = names[order[1]]
            why, credited = (f"fits decisively better than no meter (ΔBIC {dbic_i:.0f}) but {other} fits about as "
                             f"well (ΔBIC {runner:.0f}): the data cannot tell them apart"), False
        elif rank == 0:
            why, credited = (f"fits the {n} gas days decisively better than no meter (ΔBIC {dbic_i:.0f}) and "
                             f"better than any other meter (next {runner:.0f})"), True
        else:
            why, credited = f"fits less well than {names[order[0]]} (ΔBIC {dbic_i:.0f})", False
        # var(β) = s² Sw / det with the scale s² = RSS / (n − 3) (a weighted line through L and β)
        u_beta = float(np.sqrt(max(rss[i, k], 0.0) / max(n - 3, 1) * Sw / det[i, k])) if det[i, k] > 0 else np.nan
        u_bias = u_beta / (1.0 - b_) ** 2
        findings.append(Finding(meter=names[i], role=roles[i], bias_pct=100.0 * bias, from_gas_day=gas_days[k],
                                delta_bic=dbic_i if np.isfinite(dbic_i) else float("nan"), credited=credited,
                                evidence=why, effect_m3=effect, at_bound=bool(at_bound[i, k]),
                                bias_expanded_uncertainty_pct=200.0 * u_bias))
    # meters whose flow barely varies over the month: a steady error in them is a constant loss
    wm0 = (w[None, :] * G).sum(axis=1) / Sw
    shape0 = ((w[None, :] * (G - wm0[:, None]) ** 2).sum(axis=1) / Sw) / np.maximum(
        (w[None, :] * G * G).sum(axis=1) / Sw, 1e-300)
    steady = [names[i] for i in range(len(names)) if shape0[i] < MIN_SHAPE and np.any(G[i] != 0)]
    credited = [f for f in findings if f.credited]
    if credited:
        f = credited[0]
        u = f.bias_expanded_uncertainty_pct
        text = (f"{f.meter} reads {f.bias_pct:+.2f} %" + (f" ± {u:.2f} % (k = 2)" if np.isfinite(u) else "")
                + f" from gas day {f.from_gas_day} "
                f"(ΔBIC {f.delta_bic:.0f} against no meter)")
    else:
        text = f"no meter credited: {len(findings)} tried, none explains the daily UFG decisively better than a constant loss"
        if steady:
            text += (f"; the flow of {', '.join(steady[:5])}{' and others' if len(steady) > 5 else ''} barely varies, "
                     "so an error there all month cannot be told from a constant loss")
    return findings, text
