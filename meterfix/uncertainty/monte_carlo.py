"""Monte Carlo propagation (JCGM 101:2008) of the month's base volume and energy.

Each trial draws every input from its stated distribution (normal, rectangular or triangular, scaled
to the input's standard uncertainty) and evaluates the measurement equation of every interval,

    V_b,i = V_f,i (1 + e_meter) · p_i (1 + e_p) / p_b · T_b / (T_i (1 + e_T))
            · Z_b (1 + e_Zb) / (Z_f,i(p, T, x) (1 + e_Z))

with the relative deviations multiplied exactly (not linearised). Z's response to the drawn pressure
and temperature is its second-order expansion in ln p and ln T at each interval (the derivatives the
GUM budget computes through the chosen Z method); its response to the drawn composition is first
order (the budget's renormalised-composition derivatives), and so is the molar heating value's. A
drawn volume is not allowed below zero.

Correlation across intervals: a systematic input is drawn once per trial and shared by every interval
(an analysis-bound input set as random: once per analysis); a random input is drawn for every
interval and trial. For random inputs, the intervals holding the largest random variances (up to
``explicit_max``) are drawn one by one; the rest of the random part is drawn as one normal per trial
with the summed variance (central limit theorem over many small independent terms); the largest
share of one interval in that remainder is reported.

The intervals' sums once, then a few operations per trial: a systematic input is one draw shared
by every interval, so a trial's month total is Σ_i V_i g(θ_i; draws), a sum over the intervals of
one function of the trial's draws and of each interval's coefficients θ_i (its pressure and
temperature figures, the ln Z derivatives, the composition rows). Each set of intervals sharing the
analysis and the step-valued coefficients (meter flow range, Z range class, estimated) becomes a
few columns: its volume-weighted mean θ̄ and the points θ̄ ± √(λ_k/W) q_k along the eigenvectors of
the weighted second moments M = Σ V_i (θ_i − θ̄)(θ_i − θ̄)ᵀ, with weights that reproduce W = Σ V_i,
the zero first moment and M exactly (moment matching, as the unscented transform). The sum is then
exact to second order in the spread of the coefficients; the remainder is third order, below
B³/6 of the set's total with B the largest scaled deviation of one interval (a set above 1e-8 is
split into quantile bins of ln p and ln T). On the demo month two sets become 10 columns, within
1e-10 of the per-interval sum (tests/test_uncertainty.py checks 1e-8). The energy gets the same
points with its own weights. The first trials (at least 8, up to 1000, about 2^15 interval
values) are evaluated per interval too (``evaluation.max_relative_difference``); above δ/20 the
run falls back to the per-interval evaluation, in slices of about 2^18 values.

Coverage interval: probabilistically symmetric, p = 95 %, from the sorted results (JCGM 101 §7.7.1);
the shortest interval (§7.7.2) is reported too. Validation of the GUM result (JCGM 101 §8): the GUM
interval y ± k_p·u(y) with k_p = 1.96 (normal output, p = 95 %) agrees when both endpoint
differences are within the numerical tolerance δ (§7.9.2). The digits n_dig of u are the month's
(:func:`month_tolerance`): two where u, rounded to one digit, leads with 1, else one, on u in
percent of the month's total as it is quoted; δ is then between u/40 and about u/4. Adaptive
procedure (§7.9.4): stages of M = ``draws`` trials (default 10^4 = max(J, 10^4), J = 100/(1 − p) =
2000) until, for the mean, standard deviation and both endpoints of the base volume and of the
energy, twice the standard deviation of their average over the h stages is within each one's δ; at
least two stages, at most ``max_draws`` trials (default 2·10^5; an ordinary month stops at 2 to 5
stages). A fixed M (``max_draws`` = ``draws``) reports its stability from 10 blocks of its trials.
A verdict every time: when the trials run out before the results are stable, the endpoint
differences are judged with their standard errors s (agrees when d + 2s ≤ δ at both ends, differs
when d − 2s > δ at one); only in between is it "not decided", and the text says what was compared
(both intervals, the differences, δ and n_dig) and how many trials would decide it.

The trials' sums run with BLAS held to one thread (the caller, :func:`month_uncertainty`), so
the same seed gives the same bits in any process.
"""

from __future__ import annotations

import math

import numpy as np

#: trials drawn together (a stage of the adaptive procedure)
BLOCK = 10_000
#: the grouping check evaluates every interval on min(BLOCK, max(CHECK_MIN, CHECK_ELEMENTS / n)) trials
CHECK_ELEMENTS = 2**15
CHECK_MIN = 8
#: the adaptive procedure stops here at the latest (20 stages of 10^4 trials) unless told otherwise
MAX_DRAWS = 200_000
#: p = 95 % coverage factor of a normal output (GUM G.1.3) used in the JCGM 101 §8 comparison
K_95 = 1.959963984540054

_PRESSURE_KINDS = ("pressure", "atmospheric")
_TEMPERATURE_KINDS = ("temperature",)
_METER_KINDS = ("meter", "meter_below_qt", "estimated", "discharge_coefficient", "expansibility", "differential_pressure",
                "bore_diameter", "pipe_diameter", "coriolis_mass", "calibration")
_Z_KINDS = ("z", "z_outside")
_Z1 = ("a1", "b1", "a2", "b2", "ab")


def _draw(rng, distribution: str, shape):
    """Draws of unit variance from the named distribution."""
    if distribution == "rectangular":
        return rng.uniform(-math.sqrt(3.0), math.sqrt(3.0), size=shape)
    if distribution == "triangular":
        return rng.triangular(-math.sqrt(6.0), 0.0, math.sqrt(6.0), size=shape)
    return rng.standard_normal(shape)


def month_tolerance(u: float) -> tuple[int, float]:
    """Digits and numerical tolerance of a month's standard uncertainty ``u`` (in percent of the total,
    or any relative or absolute unit): JCGM 101 §7.9.2 leaves n_dig to the user; a month uses two
    digits when u, rounded to one, leads with 1 (0.14 %, 0.0099 → 0.010), else one (0.5 %), and
    δ = ½·10^l with l the place of the last digit kept.

    Why: a month's figure is read and quoted as an expanded uncertainty of one or two digits
    (GUM 7.2.6: at most two); a second digit carries information only where the first is 1 (the
    step from 0.1 to 0.2 is 100 %, from 0.5 to 0.6 is 20 %), common practice in quoting
    uncertainties. δ is then between u/40 and about u/4: the Monte Carlo settles the 95 % interval
    to the last digit quoted within about 5·10^4 trials (an endpoint's standard error falls as about
    2.7 u/√M for a normal output), where two digits throughout would take up to 10^6 (δ = u/200
    when u leads with 99).

    Returns
    -------
    (n_dig, δ) [-, unit of u]
    """
    if not (u > 0 and math.isfinite(u)):
        return 1, 0.0
    ell = math.floor(math.log10(u))
    lead = math.floor(u / 10.0**ell + 0.5)
    if lead >= 10:  # 9.5 and up: 1 in the next decade
        ell, lead = ell + 1, 1
    n_dig = 2 if lead == 1 else 1
    return n_dig, 0.5 * 10.0 ** (ell - (n_dig - 1))


def numerical_tolerance(u: float, n_dig: int = 2) -> float:
    """JCGM 101 §7.9.2: δ = ½·10^l where u = c·10^l, c an integer of ``n_dig`` digits.

    Parameters
    ----------
    u : float [same unit as the result]   standard uncertainty
    n_dig : int                           significant digits regarded as meaningful in u

    Returns
    -------
    float [same unit]
    """
    if not (u > 0 and math.isfinite(u)):
        return 0.0
    ell = math.floor(math.log10(u)) - (n_dig - 1)
    if round(u / 10.0**ell) >= 10**n_dig:  # e.g. 9.96 → 10 at two digits
        ell += 1
    return 0.5 * 10.0**ell


def _tolerance(u_rel: float, n_dig):
    """(n_dig, relative δ): the month's rule (:func:`month_tolerance`) unless n_dig is given."""
    return month_tolerance(u_rel) if not n_dig else (int(n_dig), numerical_tolerance(u_rel, int(n_dig)))


def coverage_interval(sorted_values: np.ndarray, p: float = 0.95):
    """Probabilistically symmetric coverage interval from sorted draws (JCGM 101 §7.7.1).

    Parameters
    ----------
    sorted_values : ndarray [unit of the result]   model values, ascending
    p : float [-]                                  coverage probability

    Returns
    -------
    (low, high) [unit of the result]
    """
    M = sorted_values.size
    q = int(p * M + 0.5)
    r = (M - q) // 2 if (M - q) % 2 == 0 else (M - q + 1) // 2
    r = max(r, 1)
    return float(sorted_values[r - 1]), float(sorted_values[min(r + q, M) - 1])


def shortest_interval(sorted_values: np.ndarray, p: float = 0.95):
    """Shortest coverage interval from sorted draws (JCGM 101 §7.7.2).

    Parameters
    ----------
    sorted_values : ndarray [unit of the result]   model values, ascending
    p : float [-]                                  coverage probability

    Returns
    -------
    (low, high) [unit of the result]
    """
    M = sorted_values.size
    q = int(p * M + 0.5)
    if q >= M:
        return float(sorted_values[0]), float(sorted_values[-1])
    widths = sorted_values[q:] - sorted_values[: M - q]
    r = int(np.argmin(widths))
    return float(sorted_values[r]), float(sorted_values[r + q])


def _per_analysis(model, u_row):
    """Value of a per-interval array at each analysis (constant within an analysis), 0 where unused."""
    out = np.zeros(model.n_analyses)
    for a in range(model.n_analyses):
        sel = np.flatnonzero(model.analysis == a)
        if sel.size:
            out[a] = u_row[sel[0]]
    return out


class _Columns:
    """What the model needs per column: an interval, or a group of intervals at mean coefficients."""

    def __init__(self, weights, analysis, z1, coefs, comp_line, explicit_pos):
        self.weights = weights            # (C, 2A): base volume by analysis, then energy by analysis
        self.analysis = analysis          # (C,)
        self.z1 = z1                      # dict of (C,) arrays: a1, b1, a2, b2, ab
        self.coefs = coefs                # list of (C,) arrays, one per per-interval entry
        self.comp_line = comp_line        # (R, C) or None
        self.explicit_pos = explicit_pos  # positions of the explicitly drawn random intervals
        self.sets = 0                     # sets of intervals grouped into columns (0: one column per interval)


def _interval_columns(model, entries, explicit, A):
    n = model.volume.size
    W = np.zeros((n, 2 * A))
    W[np.arange(n), model.analysis] = model.volume
    if model.energy is not None:
        W[np.arange(n), A + model.analysis] = model.energy
    z1 = {"a1": model.dlnz_dlnp, "b1": model.dlnz_dlnt, "a2": model.d2lnz_dlnp2, "b2": model.d2lnz_dlnt2,
          "ab": model.d2lnz_dlnpdlnt}
    return _Columns(W, model.analysis, z1, [e[1] for e in entries], model.comp_line, explicit)


def _theta(model, entries, full):
    """Per-interval coefficients of the model as one matrix (n, q): the entries' coefficients, the
    five ln Z derivatives, the composition rows."""
    parts = list(full.coefs) + [full.z1[k] for k in _Z1] + (list(model.comp_line) if model.comp_line is not None
                                                             else [])
    return np.column_stack(parts) if parts else np.zeros((model.volume.size, 0))


def _theta_scale(model, entries, theta, comp):
    """Bound of |∂ ln V / ∂θ_k| over the trials (draws within ±6 standard deviations), per column of θ:
    it makes the coefficients comparable for the reduction's error bound and its rank cut."""
    E = len(entries)
    s = np.zeros(theta.shape[1])
    one_p = 1.0 + np.max(np.abs(1.0 - theta[:, E]), initial=0.0) if theta.shape[0] else 1.0
    one_t = 1.0 + np.max(np.abs(1.0 + theta[:, E + 1]), initial=0.0) if theta.shape[0] else 1.0
    sd = st = 0.0
    for j, (kind, coef, term, _) in enumerate(entries):
        if term.mode == "independent":
            continue  # drawn per interval: only the explicit single columns use it
        c = 6.0 * float(np.max(np.abs(coef), initial=0.0))
        if kind in _PRESSURE_KINDS:
            sd += c
            s[j] = 6.0 * one_p
        elif kind in _TEMPERATURE_KINDS:
            st += c
            s[j] = 6.0 * one_t
        else:
            s[j] = 6.0 / max(1.0 - c, 1e-3)
    s[E:E + 5] = [sd, st, sd * sd, st * st, sd * st]
    if comp is not None:
        s[E + 5:] = 6.0 * comp.spec.standard
    return s


def _sigma_points(theta, w, scale, rank_cut):
    """Points and weights reproducing the weighted mean and second moments of the rows of ``theta``.

    Σ_i w_i g(θ_i) = W g(θ̄) + ½ tr(M ∇²g) + O(third moments), with W = Σ w_i, θ̄ the weighted mean and
    M = Σ w_i (θ_i − θ̄)(θ_i − θ̄)ᵀ = Σ_k λ_k q_k q_kᵀ: the points θ̄ ± sqrt(λ_k / W) q_k with weight W/2
    each and θ̄ with W (1 − r) reproduce W, the (zero) first moment and M exactly, so the weighted
    sum of any function quadratic in θ exactly (the unscented transform's moment matching). Directions
    whose scaled variance λ_k / W is below ``rank_cut`` are left out (their share is below it).
    """
    W = float(np.sum(w))
    mean = (w @ theta) / W
    safe = np.where(scale > 0, scale, 1.0)
    D = (theta - mean) * np.where(scale > 0, scale, 0.0)
    lam, Q = np.linalg.eigh(D.T @ (w[:, None] * D))
    keep = lam / W > rank_cut
    pts = [mean]
    wts = [W * (1.0 - 2 * 0.5 * int(keep.sum()))]
    for k in np.flatnonzero(keep):
        step = math.sqrt(lam[k] / W) * Q[:, k] / safe
        pts += [mean + step, mean - step]
        wts += [0.5 * W, 0.5 * W]
    return np.array(pts), np.array(wts)


def _codes(values):
    """Codes 0..k-1 of the distinct values of an array and the distinct values (sorted)."""
    uniq, codes = np.unique(values, return_inverse=True)
    return codes.reshape(-1), uniq


def _reduced_columns(model, entries, explicit, A, comp, bound: float = 1e-8, max_bins: int = 32):
    """Interval sums once: each set of intervals sharing the analysis and the step-valued coefficients
    (meter flow range, Z range class, estimated) becomes a few columns at moment-matched points of
    its coefficients (:func:`_sigma_points`), the volume- (and energy-) weighted sums of the intervals
    reproduced to second order in the spread of the coefficients. The remainder is third order: with
    B the largest scaled deviation of one interval's coefficients from its set's mean (``scale`` bounds
    ∂ ln V/∂θ over draws within ±6 standard deviations), it is below B³/6 of the set's total; a set
    above ``bound`` is split into quantile bins of ln p and ln T (2, 4, ... ``max_bins``) until each
    part is within it, or kept as single intervals. Explicit random intervals stay single columns."""
    n = model.volume.size
    full = _interval_columns(model, entries, explicit, A)
    theta = _theta(model, entries, full)
    scale = _theta_scale(model, entries, theta, comp)
    keep = np.ones(n, bool)
    keep[explicit] = False
    keep &= model.volume != 0
    discrete = [e[1] for e in entries if e[0] in _METER_KINDS + _Z_KINDS and e[2].mode != "independent"]
    key = np.zeros(n, np.int64)
    for col in [model.analysis, np.sign(model.volume)] + discrete:  # one code per distinct row of them
        codes, uniq = _codes(col)
        key = _codes(key * (len(uniq) + 1) + codes)[0]  # recoded to 0..k-1 at each step
    E = model.energy
    rank_cut = 1e-3 * bound
    pts, wv, we, an = [], [], [], []
    singles = []
    sets_ = 0

    def emit(idx):
        nonlocal sets_
        sets_ += 1
        a = int(model.analysis[idx[0]])
        th = theta[idx]
        w = model.volume[idx]
        P, wt = _sigma_points(th, w, scale, rank_cut)
        pts.append(P)
        wv.append(wt)
        if E is None:
            we.append(np.zeros_like(wt))
            an.append(np.full(wt.size, a))
            return
        e = E[idx]
        ratio = e / w
        if np.max(np.abs(ratio - ratio[0])) <= 1e-13 * abs(ratio[0]):
            we.append(wt * float(np.sum(e) / np.sum(w)))
            an.append(np.full(wt.size, a))
            return
        Pe, wte = _sigma_points(th, e, scale, rank_cut)  # energy weights of their own
        pts.append(Pe)
        wv.append(np.zeros_like(wte))
        we.append(np.zeros_like(wt))
        we.append(wte)
        an.append(np.full(wt.size, a))
        an.append(np.full(wte.size, a))

    def within(idx):
        th = theta[idx]
        w = model.volume[idx]
        mean = (w @ th) / np.sum(w)
        B = float(np.max(np.sum(np.abs((th - mean) * scale), axis=1)))
        return B**3 / 6.0 * math.exp(B) <= bound

    for k in np.unique(key):
        idx = np.flatnonzero((key == k) & keep)
        if not idx.size:
            continue
        todo = [idx]
        bins = 1
        while todo:
            nxt = []
            for part in todo:
                if part.size == 1 or within(part):
                    emit(part) if part.size > 1 else singles.append(part[0])
                elif bins * 2 > max_bins:
                    singles.extend(part.tolist())
                else:
                    nxt.append(part)
            if not nxt:
                break
            bins *= 2
            todo = []
            for part in nxt:
                bp = np.argsort(np.argsort(model.pressure[part], kind="stable"), kind="stable") * 2 // part.size
                bt = np.argsort(np.argsort(model.temperature[part], kind="stable"), kind="stable") * 2 // part.size
                for code in np.unique(bp * 2 + bt):
                    todo.append(part[(bp * 2 + bt) == code])
    singles = np.array(sorted(singles), int)
    P = np.vstack(pts) if pts else np.zeros((0, theta.shape[1]))
    wv = np.concatenate(wv) if wv else np.zeros(0)
    we = np.concatenate(we) if we else np.zeros(0)
    an = np.concatenate(an).astype(int) if an else np.zeros(0, int)
    # single intervals (explicit random ones last, so that their positions are known)
    tail = np.concatenate([singles, explicit]).astype(int)
    P = np.vstack([P, theta[tail]])
    G = wv.size
    C = P.shape[0]
    W = np.zeros((C, 2 * A))
    W[np.arange(G), an] = wv
    W[G + np.arange(tail.size), model.analysis[tail]] = model.volume[tail]
    if E is not None:
        W[np.arange(G), A + an] = we
        W[G + np.arange(tail.size), A + model.analysis[tail]] = E[tail]
    cols = _from_theta(P, W, np.concatenate([an, model.analysis[tail]]), len(entries),
                       C - explicit.size + np.arange(explicit.size), model.comp_line is not None)
    cols.sets = sets_
    return cols


def _from_theta(P, W, analysis, n_entries, explicit_pos, has_comp):
    coefs = [P[:, j] for j in range(n_entries)]
    z1 = {k: P[:, n_entries + m] for m, k in enumerate(_Z1)}
    comp = P[:, n_entries + 5:].T.copy() if has_comp else None
    return _Columns(W, analysis, z1, coefs, comp, explicit_pos)


def _evaluate(cols, entries, dr, K):
    """Per-column volume factor of K trials, (K, C) or (K, 1) when nothing varies by column: the
    measurement equation's relative change."""
    C = cols.weights.shape[0]
    x = np.zeros((K, 1))
    y = np.zeros((K, 1))
    fac = np.ones((K, 1))
    any_pt = False
    for j, (kind, _, term, _) in enumerate(entries):
        coef = cols.coefs[j]
        pos = None
        if term.mode == "independent":
            pos = cols.explicit_pos
            if not pos.size:
                continue
            dev = coef[pos] * dr["ind"][j]
        elif coef.size and np.all(coef == coef[0]):
            dev = coef[0] * dr["corr"][j]  # (K, 1): the same relative deviation in every column
        else:
            dev = coef * dr["corr"][j]
        pt = kind in _PRESSURE_KINDS or kind in _TEMPERATURE_KINDS
        if pt:
            any_pt = True
            f = dev
        elif kind in _METER_KINDS:
            f = np.maximum(1.0 + dev, 0.0)
        else:
            f = 1.0 / np.maximum(1.0 + dev, 1e-12)
        target = (x if kind in _PRESSURE_KINDS else y) if pt else fac
        if pos is not None or (f.shape[1] > 1 and target.shape[1] == 1):
            target = np.broadcast_to(target, (K, C)).copy()
        if pos is None:
            target = target + f if pt else target * f
        elif pt:
            target[:, pos] += f
        else:
            target[:, pos] *= f
        if pt and kind in _PRESSURE_KINDS:
            x = target
        elif pt:
            y = target
        else:
            fac = target
    lnf = None
    if any_pt:
        d = np.log1p(np.maximum(x, -1.0 + 1e-12))
        t = np.log1p(np.maximum(y, -1.0 + 1e-12))
        z1 = cols.z1
        lnf = (1.0 - z1["a1"]) * d - (1.0 + z1["b1"]) * t - 0.5 * (z1["a2"] * d * d + 2.0 * z1["ab"] * d * t
                                                                   + z1["b2"] * t * t)
    if dr.get("comp") is not None and cols.comp_line is not None:
        c = -(dr["comp"] @ cols.comp_line)
        lnf = c if lnf is None else lnf + c
    if lnf is not None:
        fac = fac * np.exp(lnf)
    return np.broadcast_to(fac, (K, C))


def _totals(cols, fac, fv, fe, A):
    S = fac @ cols.weights
    v = np.sum(fv * S[:, :A], axis=1)
    e = np.sum(fe * S[:, A:], axis=1)
    return v, e


def monte_carlo(model, *, gum_u_volume: float, gum_u_energy: float | None = None, draws: int = 10_000,
                max_draws: int | None = None, seed: int = 2026, progress=None, coverage: float = 0.95,
                n_dig: int | None = None, explicit_max: int = 64, chunk_elements: int = 2**18,
                blocks: int = 10, grouping: bool = True) -> dict:
    """Monte Carlo of the month total, and the JCGM 101 §8 validation of the GUM result.

    The steps of the module docstring, in order: the terms sorted into the ways they enter the
    model, the random inputs split into explicit intervals and an aggregated remainder, the
    columns the trials are evaluated on (the intervals' sums, checked against every interval on
    the first trials), the adaptive stages of trials (JCGM 101 §7.9.4), the summary.

    Parameters
    ----------
    model : IntervalModel          from :func:`meterfix.uncertainty.budget.build_model`
    gum_u_volume : float [-]       GUM relative standard uncertainty of the month base volume
    gum_u_energy : float [-], optional
    draws : int                    trials M of each stage (JCGM 101 §7.9.4: 10^4)
    max_draws : int, optional      continue in stages of ``draws`` until the results are numerically
                                   stable to the tolerance (JCGM 101 §7.9.4), up to this many trials
                                   (default MAX_DRAWS = 2·10^5; equal to ``draws`` for a fixed M)
    seed : int                     seed of numpy's default generator (PCG64)
    progress : callable(done, total), optional   called after each chunk of trials
    coverage : float [-]           coverage probability p
    n_dig : int, optional          significant digits of u(y) for the numerical tolerance (default:
                                   :func:`month_tolerance`, for the volume and the energy each)
    explicit_max : int             intervals whose random inputs are drawn one by one
    chunk_elements : int           trials × columns held at once
    blocks : int                   blocks for the numerical-stability check
    grouping : bool                evaluate the interval sums (:func:`_reduced_columns`, checked
                                   against every interval on the first trials); False: every
                                   interval in every trial

    Returns
    -------
    dict   see :class:`meterfix.uncertainty.MonthUncertainty` ``monte_carlo``
    """
    draws = int(draws)
    max_draws = max(MAX_DRAWS, draws) if max_draws is None else max(int(max_draws), draws)
    if draws < 1000:
        from ..errors import SettingsError

        raise SettingsError(f"Monte Carlo draws {draws} are too few", hint="use at least 10^4 (default 10^5)")
    rng = np.random.default_rng(seed)
    n = model.volume.size
    A = model.n_analyses
    has_e = model.energy is not None
    y_v = float(np.sum(model.volume))
    y_e = float(np.sum(model.energy)) if has_e else 0.0
    # the digits are those of u as a month quotes it, in percent of the month's total
    dig_v, tol_v = _tolerance(gum_u_volume, n_dig)
    dig_e, tol_e = _tolerance(gum_u_energy or 0.0, n_dig)
    delta_v = abs(y_v) * tol_v
    delta_e = abs(y_e) * tol_e if has_e and gum_u_energy else 0.0

    entries, analysis_level, comp = _sort_terms(model)
    rnd = _RandomSplit.of(model, entries, explicit_max)
    exact_cols = _interval_columns(model, entries, rnd.explicit, A)
    grouped_cols = _reduced_columns(model, entries, rnd.explicit, A, comp) if grouping else None
    use = grouped_cols is not None and grouped_cols.weights.shape[0] < n
    cols = grouped_cols if use else exact_cols
    trials = _Trials(model, rng, entries, analysis_level, comp, rnd, chunk_elements)
    cols, check = _check_grouping(trials, cols, grouped_cols, exact_cols, use, draws, y_v, delta_v, delta_e)
    vol, ene, stages, e_stages, done = _adaptive_stages(trials, cols, draws, max_draws, coverage, delta_v,
                                                         delta_e, progress)

    spread = _stage_spread(stages) if len(stages) >= 2 else None
    out = _summarise(vol[:done], y_v, gum_u_volume, coverage, n_dig, blocks, "m3", spread, done)
    out.update({
        "draws": int(done), "first_stage_draws": draws, "stage_draws": draws, "stages": len(stages),
        "max_draws": int(max_draws), "seed": int(seed),
        "generator": "numpy PCG64 (default_rng)", "coverage_probability": coverage, "n_dig": dig_v, "k_p": K_95,
        "evaluation": check,
        "random_explicit_intervals": int(rnd.explicit.size),
        "random_aggregated_intervals": int(rnd.rest.size),
        "random_aggregated_variance_share_pct": 100.0 * rnd.s_v / rnd.total if rnd.total > 0 else 0.0,
        "random_aggregated_max_interval_share_pct": 100.0 * rnd.max_share,
        "model": "measurement equation per interval, relative deviations multiplied exactly; Z by its "
                 "second-order expansion in ln p and ln T, first order in composition; evaluated on the "
                 "intervals' sums (moment-matched points, within 1e-8 of the per-interval sum)",
    })
    if has_e and gum_u_energy is not None:
        out["energy"] = _summarise(ene[:done], y_e, gum_u_energy, coverage, n_dig, blocks, "J",
                                   _stage_spread(e_stages) if len(e_stages) >= 2 else None, done)
        out["energy"]["n_dig"] = dig_e
    else:
        out["energy"] = None
    return out


def _sort_terms(model):
    """The budget's terms sorted into the ways they enter the model.

    Returns (entries, analysis_level, comp): entries, (kind, coefficient (n,) [-], term, row) the
    relative deviation of an interval's quantity per unit draw (pressure, temperature, meter and Z
    inputs); analysis_level, (kind, u per analysis (A,) [-], term) for the base Z and the heating
    value; comp, the composition term (or None).
    """
    entries = []
    analysis_level = []
    comp = None
    for t in model.terms:
        if t.key in _PRESSURE_KINDS + _TEMPERATURE_KINDS + _METER_KINDS + _Z_KINDS:
            for r in range(t.u.shape[0]):
                # meter and Z inputs enter with their own sensitivity (1 and -1 for a volume meter; an
                # orifice's bore 2/(1 - beta^4), its Z at line -1/2)
                coef = t.u[r] * np.abs(t.c_volume[r]) if t.key in _METER_KINDS + _Z_KINDS else t.u[r].copy()
                if t.key == "atmospheric":
                    with np.errstate(invalid="ignore", divide="ignore"):
                        coef = np.where(t.applies, t.u[r] * model.pressure_atm / model.pressure, 0.0)
                if np.any(coef != 0):
                    entries.append((t.key, coef, t, r))
        elif t.key in ("base_z", "heating_value"):
            for r in range(t.u.shape[0]):
                ua = _per_analysis(model, t.u[r])
                if np.any(ua != 0):
                    analysis_level.append((t.key, ua, t))
        elif t.key == "composition" and t.spec.standard > 0 and model.comp_line is not None:
            comp = t
    return entries, analysis_level, comp


class _RandomSplit:
    """The random (independent) inputs: the intervals drawn one by one and the aggregated remainder.

    explicit, rest : int arrays   intervals drawn explicitly (the ``explicit_max`` largest random
                                  variances V_i² u_i²) and the rest, drawn as one normal per trial
    s_v, s_e, s_ve : float        the remainder's variance of the base volume [m6], of the energy
                                  [J²] and their covariance [m3 J]
    max_share : float [-]         the largest share of one interval in s_v
    total : float [m6]            the random variance of the base volume over every interval
    """

    def __init__(self, explicit, rest, s_v, s_e, s_ve, max_share, total):
        self.explicit, self.rest = explicit, rest
        self.s_v, self.s_e, self.s_ve = s_v, s_e, s_ve
        self.max_share, self.total = max_share, total

    @classmethod
    def of(cls, model, entries, explicit_max):
        """The split of the model's independent entries, up to ``explicit_max`` explicit intervals."""
        V, En = model.volume, model.energy
        has_e = En is not None
        n = V.size
        var_v, var_e, cov_ve = np.zeros(n), np.zeros(n), np.zeros(n)
        for kind, coef, t, r in entries:
            if t.mode != "independent":
                continue
            cv = t.c_volume[r] * t.u[r]
            var_v += cv**2
            if has_e:
                ce = t.c_energy[r] * t.u[r]
                var_e += ce**2
                cov_ve += cv * ce
        with_random = np.flatnonzero(var_v > 0)
        if with_random.size <= explicit_max:
            explicit = with_random
        else:
            order = np.argsort(-(V[with_random] ** 2) * var_v[with_random], kind="stable")
            explicit = np.sort(with_random[order[:explicit_max]])
        rest = np.setdiff1d(with_random, explicit)
        s_v = float(np.sum(V[rest] ** 2 * var_v[rest]))
        s_e = float(np.sum(En[rest] ** 2 * var_e[rest])) if has_e else 0.0
        s_ve = float(np.sum(V[rest] * En[rest] * cov_ve[rest])) if has_e else 0.0
        max_share = float(np.max(V[rest] ** 2 * var_v[rest]) / s_v) if rest.size and s_v > 0 else 0.0
        return cls(explicit, rest, s_v, s_e, s_ve, max_share, float(np.sum(V**2 * var_v)))


class _Trials:
    """Drawing and evaluating blocks of trials, all from one generator (the order of the draws is
    the same whatever the evaluation, so the same seed gives the same trials)."""

    def __init__(self, model, rng, entries, analysis_level, comp, rnd: _RandomSplit, chunk_elements: int):
        self.model, self.rng = model, rng
        self.entries, self.analysis_level, self.comp = entries, analysis_level, comp
        self.rnd = rnd
        self.chunk_elements = chunk_elements
        self.A = model.n_analyses
        self.has_e = model.energy is not None

    def draw(self, k):
        """The draws of k trials: per-entry deviations (shared or per explicit interval), the
        composition's, the analysis-level factors of volume fv and energy fe (k, A) [-], and two
        standard normals for the aggregated remainder (None without one)."""
        rng, model, explicit = self.rng, self.model, self.rnd.explicit
        dr = {"corr": {}, "ind": {}, "comp": None}
        for j, (kind, coef, t, r) in enumerate(self.entries):
            if t.mode == "independent":
                if explicit.size:
                    dr["ind"][j] = _draw(rng, t.spec.distribution, (k, explicit.size))
            else:
                dr["corr"][j] = _draw(rng, t.spec.distribution, (k, 1))
        if self.comp is not None:
            dr["comp"] = _draw(rng, self.comp.spec.distribution, (k, model.comp_line.shape[0])) * self.comp.spec.standard
        fv = np.ones((k, self.A))
        fe = np.ones((k, self.A))
        if dr["comp"] is not None:
            fv *= np.exp(dr["comp"] @ model.comp_base)
            fe *= np.exp(dr["comp"] @ np.where(model.hv_from_composition[:, None].T, model.comp_hm, model.comp_base))
        for kind, ua, t in self.analysis_level:
            f = np.maximum(1.0 + _draw(rng, t.spec.distribution, (k, 1)) * ua[None, :], 0.0)
            if kind == "base_z":
                fv *= f
                fe *= np.where(model.hv_from_composition[None, :], 1.0, f)
            else:
                fe *= f
        z = rng.standard_normal((k, 2)) if self.rnd.s_v > 0 else None
        return dr, fv, fe, z

    @staticmethod
    def _rows(dr, sl):
        return {"corr": {j: v[sl] for j, v in dr["corr"].items()}, "ind": {j: v[sl] for j, v in dr["ind"].items()},
                "comp": None if dr["comp"] is None else dr["comp"][sl]}

    def evaluate_block(self, dr, fv, fe, k, cols_):
        """Totals of a block of k drawn trials [m3], [J], evaluated in slices of at most chunk_elements values."""
        step = max(1, self.chunk_elements // max(cols_.weights.shape[0], 1))
        v = np.empty(k)
        e = np.empty(k)
        for a0 in range(0, k, step):
            sl = slice(a0, min(k, a0 + step))
            m = sl.stop - sl.start
            v[sl], e[sl] = _totals(cols_, _evaluate(cols_, self.entries, self._rows(dr, sl), m), fv[sl], fe[sl],
                                   self.A)
        return v, e

    def run(self, k, cols_):
        """Month base volume [m3] and energy [J] of k new trials, the aggregated remainder added
        (its volume and energy parts correlated as their covariance says)."""
        s_v, s_e, s_ve = self.rnd.s_v, self.rnd.s_e, self.rnd.s_ve
        dr, fv, fe, z = self.draw(k)
        v, e = self.evaluate_block(dr, fv, fe, k, cols_)
        if z is not None:
            v = v + math.sqrt(s_v) * z[:, 0]
            if self.has_e and s_e > 0:
                rho = s_ve / math.sqrt(s_v * s_e)
                e = e + math.sqrt(s_e) * (rho * z[:, 0] + math.sqrt(max(1.0 - rho * rho, 0.0)) * z[:, 1])
        return v, e


def _check_grouping(trials: _Trials, cols, grouped_cols, exact_cols, grouped: bool, draws, y_v, delta_v, delta_e):
    """The intervals' sums checked against the per-interval model on the first trials.

    The per-interval evaluation costs trials x intervals: on long logs fewer trials are checked (at
    least CHECK_MIN), so that the check stays near CHECK_ELEMENTS values. A difference above δ/20
    (delta_v [m3], delta_e [J]) falls back to the per-interval columns. The generator is put back,
    so the trials that follow are the same either way. Returns (columns to use, the check's record).
    """
    n = trials.model.volume.size
    mode = "interval sums" if grouped else "per interval"
    check = {"mode": mode, "columns": int(cols.weights.shape[0]), "sets": int(cols.sets),
             "checked_trials": 0, "max_relative_difference": 0.0}
    if mode == "interval sums":
        rng = trials.rng
        k0 = min(draws, 1000, max(CHECK_MIN, CHECK_ELEMENTS // max(n, 1)))
        state = rng.bit_generator.state
        dr, fv, fe, _ = trials.draw(k0)
        vg, eg = trials.evaluate_block(dr, fv, fe, k0, grouped_cols)
        vx, ex = trials.evaluate_block(dr, fv, fe, k0, exact_cols)
        diff_v = float(np.max(np.abs(vg - vx)))
        diff_e = float(np.max(np.abs(eg - ex))) if trials.has_e else 0.0
        check.update(checked_trials=k0, max_relative_difference=diff_v / y_v if y_v else 0.0)
        if diff_v > delta_v / 20 or (trials.has_e and delta_e and diff_e > delta_e / 20):
            cols, mode = exact_cols, "per interval"
            check.update(mode=mode, columns=n)
        rng.bit_generator.state = state
    return cols, check


def _adaptive_stages(trials: _Trials, cols, draws, max_draws, coverage, delta_v, delta_e, progress):
    """The adaptive procedure of JCGM 101 §7.9.4: stages of ``draws`` trials until the month base
    volume and energy are each stable to their tolerance delta_v [m3], delta_e [J], at most max_draws.

    Returns (volume trials [m3], energy trials [J] or None, each stage's (mean, standard deviation,
    low, high) for the volume and the energy, trials done).
    """
    K = min(draws, BLOCK)  # trials drawn together: the same trials whatever the evaluation
    has_e = trials.has_e
    vol = np.empty(max_draws)
    ene = np.empty(max_draws) if has_e else None
    stages = []
    e_stages = []
    done = 0
    while True:
        start, target = done, min(max_draws, done + draws)
        while done < target:
            k = min(K, target - done)
            v, e = trials.run(k, cols)
            vol[done:done + k] = v
            if has_e:
                ene[done:done + k] = e
            done += k
            if progress is not None:
                progress(done, target)
        if done - start == draws:
            stages.append(_stage_statistics(vol[start:done], coverage))
            if has_e:
                e_stages.append(_stage_statistics(ene[start:done], coverage))
        # the month base volume and energy decide, each at its own tolerance
        stable = _stages_stable(stages, delta_v) and (not has_e or _stages_stable(e_stages, delta_e))
        if stable or done >= max_draws:
            break
    return vol, ene, stages, e_stages, done


def _block_spread(values, p, blocks):
    """Standard deviations of the averages of mean, standard deviation and the two endpoints over h
    blocks (JCGM 101 §7.9.4)."""
    h = max(2, min(blocks, values.size // 1000))
    stats = []
    for b in np.array_split(values, h):
        sb = np.sort(b)
        lo, hi = coverage_interval(sb, p)
        stats.append((np.mean(b), np.std(b, ddof=1), lo, hi))
    return np.std(np.array(stats), axis=0, ddof=1) / math.sqrt(h)


def _stage_statistics(values, p):
    """(mean, standard deviation, low end, high end) of one stage's trials (JCGM 101 §7.9.4 d)."""
    lo, hi = coverage_interval(np.sort(values), p)
    return float(np.mean(values)), float(np.std(values, ddof=1)), lo, hi


def _stage_spread(stages):
    """Standard deviations of the averages of the stage statistics, s / sqrt(h) (JCGM 101 §7.9.4 f)."""
    a = np.array(stages)
    return np.std(a, axis=0, ddof=1) / math.sqrt(a.shape[0])


def _stages_stable(stages, delta) -> bool:
    """JCGM 101 §7.9.4 h: twice each standard deviation of the averages within the tolerance
    (at least two stages)."""
    if not delta:
        return True
    if len(stages) < 2:
        return False
    return bool(2.0 * float(np.max(_stage_spread(stages))) <= delta)


def _summarise(values, y, u_rel, p, n_dig, blocks, unit, spread=None, draws=None):
    """Coverage intervals, the JCGM 101 §8 comparison with the GUM interval, and the numerical
    stability: from the adaptive stages' statistics (``spread``, §7.9.4) when there were two or
    more, else from ``blocks`` blocks of the trials.

    The verdict: when the results are numerically stable (twice every standard error within δ),
    §8.1: agrees when both endpoint differences are within δ, else differs. When they are not (the
    trials ran out first), the endpoint differences are judged with their standard errors s:
    agrees when d + 2 s ≤ δ at both ends, differs when d − 2 s > δ at either; only in between is it
    not decided, and the text then says what was compared and how many trials would decide it.
    """
    s = np.sort(values)
    lo, hi = coverage_interval(s, p)
    slo, shi = shortest_interval(s, p)
    u = u_rel * y
    Up = K_95 * u
    n_dig, delta = _tolerance(u_rel, n_dig)
    delta *= abs(y)  # the digits of u in percent of the total
    d_low = abs(y - Up - lo)
    d_high = abs(y + Up - hi)
    if spread is None:
        spread = _block_spread(values, p, blocks)
    sd = float(np.std(values, ddof=1))
    se = [float(spread[2]), float(spread[3])]
    stable = bool(2.0 * float(np.max(spread)) <= delta)
    if stable:
        agrees = bool(d_low <= delta and d_high <= delta)
        verdict = "agrees" if agrees else "differs"
    elif d_low + 2 * se[0] <= delta and d_high + 2 * se[1] <= delta:
        agrees, verdict = True, "agrees (the endpoints' standard errors included)"
    elif d_low - 2 * se[0] > delta or d_high - 2 * se[1] > delta:
        agrees, verdict = False, "differs (the endpoints' standard errors included)"
    else:
        agrees = None
        M = int(draws or values.size)
        need = int(math.ceil(M * (2.0 * float(np.max(spread)) / delta) ** 2 / 10_000.0) * 10_000) if delta else M
        verdict = (f"not decided: the GUM interval [{y - Up:.6g}, {y + Up:.6g}] {unit} and the Monte Carlo 95 % "
                   f"interval [{lo:.6g}, {hi:.6g}] {unit} differ by {d_low:.3g} and {d_high:.3g} {unit} at the "
                   f"ends, against the tolerance {delta:.3g} {unit} (n_dig = {n_dig}, JCGM 101 §7.9.2); after {M} "
                   f"trials the ends are known to ±{2 * max(se):.3g} {unit}: about {need} trials would decide it "
                   f"(max draws), or one significant digit (n_dig = 1) a wider tolerance")
    return {
        "estimate": y, "unit": unit, "mean": float(np.mean(values)), "standard_deviation": sd,
        "standard_uncertainty_pct": 100.0 * sd / y if y else None,
        "coverage_interval": [lo, hi], "shortest_interval": [slo, shi],
        "expanded_pct": 100.0 * (hi - lo) / 2.0 / y if y else None,
        "shortest_expanded_pct": 100.0 * (shi - slo) / 2.0 / y if y else None,
        "gum_interval": [y - Up, y + Up], "d_low": d_low, "d_high": d_high,
        "tolerance": delta, "tolerance_pct": 100.0 * delta / y if y else None,
        "gum_agrees": agrees,
        "validation": verdict,
        "endpoint_standard_error": se,
        "numerically_stable": stable,
    }
