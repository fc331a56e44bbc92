"""Monte Carlo propagation (JCGM 101:2008) of the month's base volume and energy.

Each trial draws every input from its stated distribution (normal, rectangular or triangular, scaled
to the input's standard uncertainty) and evaluates the measurement equation of every interval,

    V_b,i = V_f,i (1 + e_meter) · (p_i + Δp) / p_b · T_b / (T_i + ΔT) · Z_b (1 + e_Zb) / (Z_f,i(p, T, x) (1 + e_Z))

with the relative deviations multiplied exactly (not linearised). Z's response to the drawn
pressure and temperature is its second-order expansion in ln p and ln T at each interval (the
derivatives the GUM budget computes through the chosen Z method); its response to the drawn
composition is first order (the budget's renormalised-composition derivatives). A drawn volume is not
allowed below zero.

Correlation across intervals: a systematic input is drawn once per trial and shared by every interval
(an analysis-bound input set as random: once per analysis); a random input is drawn for every
interval and trial. So as never to hold draws × intervals in memory, trials run in chunks of about
2^20 values. For random inputs, the intervals holding the largest random variances (up to
``explicit_max``) are drawn explicitly; the rest of the random part is drawn as one normal per trial
with the summed variance (central limit theorem over many small independent terms); the largest
share of one interval in that remainder is reported.

Coverage interval: probabilistically symmetric, p = 95 %, from the sorted results (JCGM 101 §7.7);
the shortest interval (§7.7.2) is reported too. Validation of the GUM result (JCGM 101 §8): the GUM
interval y ± k_p·u(y) with k_p = 1.96 (normal output, p = 95 %) agrees when both endpoint
differences are within the numerical tolerance δ = ½·10^l, u(y) = c·10^l with c an integer of
``n_dig`` digits (§7.9.2). Numerical stability of the endpoints: h = 10 blocks, 2 s ≤ δ (§7.9.4).
"""

from __future__ import annotations

import math

import numpy as np

#: p = 95 % coverage factor of a normal output (GUM G.1.3) used in the JCGM 101 §8 comparison
K_95 = 1.959963984540054

_PRESSURE_KINDS = ("pressure", "atmospheric")
_TEMPERATURE_KINDS = ("temperature",)
_METER_KINDS = ("meter", "meter_below_qt", "estimated")
_Z_KINDS = ("z", "z_outside")


def _draw(rng, distribution: str, shape):
    """Draws of unit variance from the named distribution."""
    if distribution == "rectangular":
        return rng.uniform(-math.sqrt(3.0), math.sqrt(3.0), size=shape)
    if distribution == "triangular":
        return rng.triangular(-math.sqrt(6.0), 0.0, math.sqrt(6.0), size=shape)
    return rng.standard_normal(shape)


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


def coverage_interval(sorted_values: np.ndarray, p: float = 0.95):
    """Probabilistically symmetric coverage interval from sorted draws (JCGM 101 §7.7.1)."""
    M = sorted_values.size
    q = int(p * M + 0.5)
    r = (M - q) // 2 if (M - q) % 2 == 0 else (M - q + 1) // 2
    r = max(r, 1)
    return float(sorted_values[r - 1]), float(sorted_values[min(r + q, M) - 1])


def shortest_interval(sorted_values: np.ndarray, p: float = 0.95):
    """Shortest coverage interval from sorted draws (JCGM 101 §7.7.2)."""
    M = sorted_values.size
    q = int(p * M + 0.5)
    if q >= M:
        return float(sorted_values[0]), float(sorted_values[-1])
    widths = sorted_values[q:] - sorted_values[: M - q]
    r = int(np.argmin(widths))
    return float(sorted_values[r]), float(sorted_values[r + q])


def _per_analysis(model, u_row):
    """Value of a per-interval array at each analysis (constant within an analysis), 0 where unused."""
    A = model.n_analyses
    out = np.zeros(A)
    for a in range(A):
        sel = np.flatnonzero(model.analysis == a)
        if sel.size:
            out[a] = u_row[sel[0]]
    return out


def monte_carlo(model, *, gum_u_volume: float, gum_u_energy: float | None = None, draws: int = 100_000,
                seed: int = 2026, progress=None, coverage: float = 0.95, n_dig: int = 2,
                explicit_max: int = 256, chunk_elements: int = 2**20, blocks: int = 10) -> dict:
    """Monte Carlo of the month total, and the JCGM 101 §8 validation of the GUM result.

    Parameters
    ----------
    model : IntervalModel          from :func:`meterfix.engine.uncertainty_budget.build_model`
    gum_u_volume : float [-]       GUM relative standard uncertainty of the month base volume
    gum_u_energy : float [-], optional
    draws : int                    number of trials M
    seed : int                     seed of numpy's default generator (PCG64)
    progress : callable(done, total), optional   called after each chunk of trials
    coverage : float [-]           coverage probability p
    n_dig : int                    significant digits of u(y) for the numerical tolerance
    explicit_max : int             intervals whose random inputs are drawn one by one
    chunk_elements : int           trials × intervals held at once
    blocks : int                   blocks for the numerical-stability check

    Returns
    -------
    dict   see :class:`meterfix.engine.uncertainty.MonthUncertainty` ``monte_carlo``
    """
    draws = int(draws)
    if draws < 100:
        from ..errors import SettingsError

        raise SettingsError(f"Monte Carlo draws {draws} are too few", hint="use at least 10^4 (default 10^5)")
    rng = np.random.default_rng(seed)
    n = model.volume.size
    A = model.n_analyses
    V = model.volume
    En = model.energy
    has_e = En is not None
    W = np.zeros((n, 2 * A))
    W[np.arange(n), model.analysis] = V
    if has_e:
        W[np.arange(n), A + model.analysis] = En

    a1, b1 = model.dlnz_dlnp, model.dlnz_dlnt
    a2, b2, ab = model.d2lnz_dlnp2, model.d2lnz_dlnt2, model.d2lnz_dlnpdlnt

    # ---- sort the terms into the ways they enter the model ----------------------------------
    per_interval = []  # (kind, coefficient (n,), term, row) ; coefficient = relative deviation per unit draw
    analysis_level = []  # (kind, u per analysis (A,), term, row)
    comp = None
    for t in model.terms:
        if t.key in _PRESSURE_KINDS or t.key in _TEMPERATURE_KINDS or t.key in _METER_KINDS or t.key in _Z_KINDS:
            for r in range(t.u.shape[0]):
                coef = t.u[r].copy()
                if t.key == "atmospheric":
                    with np.errstate(invalid="ignore", divide="ignore"):
                        coef = np.where(t.applies, t.u[r] * model.pressure_atm / model.pressure, 0.0)
                if np.any(coef != 0):
                    per_interval.append((t.key, coef, t, r))
        elif t.key in ("base_z", "heating_value"):
            for r in range(t.u.shape[0]):
                ua = _per_analysis(model, t.u[r])
                if np.any(ua != 0):
                    analysis_level.append((t.key, ua, t, r))
        elif t.key == "composition":
            if t.spec.standard > 0 and model.comp_line is not None:
                comp = t

    # independent (random) per-interval terms: explicit intervals and the aggregated remainder
    indep = [x for x in per_interval if x[2].mode == "independent"]
    corr = [x for x in per_interval if x[2].mode != "independent"]
    var_v = np.zeros(n)
    var_e = np.zeros(n)
    cov_ve = np.zeros(n)
    for kind, coef, t, r in indep:
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
    rest_max_share = float(np.max(V[rest] ** 2 * var_v[rest]) / s_v) if rest.size and s_v > 0 else 0.0
    rv_total = float(np.sum(V**2 * var_v))

    K = max(1, min(draws, chunk_elements // max(n, 1)))
    vol = np.empty(draws)
    ene = np.empty(draws) if has_e else None
    done = 0
    need_pt = any(k in _PRESSURE_KINDS or k in _TEMPERATURE_KINDS for k, *_ in per_interval)
    while done < draws:
        k = min(K, draws - done)
        pr = np.ones((k, n)) if need_pt else None
        tr = np.ones((k, n)) if need_pt else None
        fac = np.ones((k, n))  # meter, estimated and Z-method factors
        for kind, coef, t, r in corr + indep:
            if t.mode == "independent":
                cols = explicit
                if cols.size == 0:
                    continue
                xi = _draw(rng, t.spec.distribution, (k, cols.size))
                dev = coef[cols] * xi
            else:
                cols = None
                xi = _draw(rng, t.spec.distribution, (k, 1))
                dev = coef * xi
            if kind in _PRESSURE_KINDS:
                target, op = pr, "add"
            elif kind in _TEMPERATURE_KINDS:
                target, op = tr, "add"
            else:
                target, op = fac, ("div" if kind in _Z_KINDS else "mul")
            if op == "add":
                if cols is None:
                    target += dev
                else:
                    target[:, cols] += dev
            else:
                f = np.maximum(1.0 + dev, 0.0) if op == "mul" else 1.0 / np.maximum(1.0 + dev, 1e-12)
                if cols is None:
                    target *= f
                else:
                    target[:, cols] *= f
        if need_pt:
            d = np.log(np.maximum(pr, 1e-12))
            tau = np.log(np.maximum(tr, 1e-12))
            lnz = a1 * d + b1 * tau + 0.5 * (a2 * d * d + 2.0 * ab * d * tau + b2 * tau * tau)
            fac *= pr / tr * np.exp(-lnz)
        fv = np.ones((k, A))
        fe = np.ones((k, A))
        if comp is not None:
            xi = _draw(rng, comp.spec.distribution, (k, model.comp_line.shape[0])) * comp.spec.standard
            fac *= np.exp(-(xi @ model.comp_line))
            hv_comp = model.hv_from_composition
            fv *= np.exp(xi @ model.comp_base)
            fe *= np.exp(xi @ np.where(hv_comp[None, :], model.comp_hm, model.comp_base))
        for kind, ua, t, r in analysis_level:
            f = np.maximum(1.0 + _draw(rng, t.spec.distribution, (k, 1)) * ua[None, :], 0.0)
            if kind == "base_z":
                fv *= f
                fe *= np.where(model.hv_from_composition[None, :], 1.0, f)
            else:
                fe *= f
        S = fac @ W
        vol[done:done + k] = np.sum(fv * S[:, :A], axis=1)
        if has_e:
            ene[done:done + k] = np.sum(fe * S[:, A:], axis=1)
        if s_v > 0:
            z1 = rng.standard_normal(k)
            vol[done:done + k] += math.sqrt(s_v) * z1
            if has_e:
                rho = s_ve / math.sqrt(s_v * s_e) if s_e > 0 else 0.0
                z2 = rho * z1 + math.sqrt(max(1.0 - rho * rho, 0.0)) * rng.standard_normal(k)
                ene[done:done + k] += math.sqrt(s_e) * z2
        done += k
        if progress is not None:
            progress(done, draws)

    out = _summarise(vol, float(np.sum(V)), gum_u_volume, coverage, n_dig, blocks, "m3")
    out.update({
        "draws": draws, "seed": int(seed), "generator": "numpy PCG64 (default_rng)",
        "coverage_probability": coverage, "n_dig": n_dig, "k_p": K_95,
        "random_explicit_intervals": int(explicit.size),
        "random_aggregated_intervals": int(rest.size),
        "random_aggregated_variance_share_pct": 100.0 * s_v / rv_total if rv_total > 0 else 0.0,
        "random_aggregated_max_interval_share_pct": 100.0 * rest_max_share,
        "model": "measurement equation per interval, deviations multiplied exactly; Z by its second-order "
                 "expansion in ln p, ln T and first-order in composition",
    })
    if has_e and gum_u_energy is not None:
        out["energy"] = _summarise(ene, float(np.sum(En)), gum_u_energy, coverage, n_dig, blocks, "J")
    else:
        out["energy"] = None
    return out


def _summarise(values, y, u_rel, p, n_dig, blocks, unit):
    s = np.sort(values)
    lo, hi = coverage_interval(s, p)
    slo, shi = shortest_interval(s, p)
    u = u_rel * y
    Up = K_95 * u
    delta = numerical_tolerance(u, n_dig)
    d_low = abs(y - Up - lo)
    d_high = abs(y + Up - hi)
    h = max(2, min(blocks, values.size // 1000))
    ends = np.array([coverage_interval(np.sort(b), p) for b in np.array_split(values, h)])
    s_end = np.std(ends, axis=0, ddof=1) / math.sqrt(h)
    return {
        "estimate": y, "unit": unit, "mean": float(np.mean(values)), "standard_deviation": float(np.std(values, ddof=1)),
        "standard_uncertainty_pct": 100.0 * float(np.std(values, ddof=1)) / y if y else None,
        "coverage_interval": [lo, hi], "shortest_interval": [slo, shi],
        "expanded_pct": 100.0 * (hi - lo) / 2.0 / y if y else None,
        "shortest_expanded_pct": 100.0 * (shi - slo) / 2.0 / y if y else None,
        "gum_interval": [y - Up, y + Up], "d_low": d_low, "d_high": d_high,
        "tolerance": delta, "tolerance_pct": 100.0 * delta / y if y else None,
        "gum_agrees": bool(d_low <= delta and d_high <= delta),
        "endpoint_standard_error": [float(s_end[0]), float(s_end[1])],
        "numerically_stable": bool(2.0 * float(np.max(s_end)) <= delta),
    }
