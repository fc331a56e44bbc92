"""Vectorized, safeguarded search for the gas-phase (lowest-density) root of p(rho) = p_target.

The generalized-chart methods (Lee–Kesler, Dranchuk–Abou-Kassem, Hall–Yarborough) are
pressure-explicit in a reduced density. For a given reduced temperature the isotherm
p(rho) rises from 0 at rho = 0; below the critical temperature it has a van der Waals loop
(a local maximum, the vapour spinodal, then a minimum and the liquid branch). The gas-phase
root is the first crossing of p_target on the rising vapour branch, before any local maximum.
Where p_target lies above that maximum there is no gas-phase root and the point gets NaN.

All points are solved together: a geometric march in density brackets the root (or finds the
local maximum first), then Newton steps safeguarded by bisection refine it. No Python loop over
points, no scipy call per point.

The Helmholtz-energy equations of state (AGA8 DETAIL, GERG-2008) start from the low-density
series instead and use :func:`solve_ln_density`: Halley steps in ln(delta) on ln(p), kept inside
a bracket with bisection (:func:`halley_bracket_step`).
"""

from __future__ import annotations

from typing import Callable

import numpy as np

from .base import REASON_NO_CONVERGENCE, REASON_NO_GAS_ROOT


def gas_root_density(pressure_of_density: Callable, target, rho_start, rho_max,
                     factor: float = 1.25, max_march: int = 80, max_iter: int = 100,
                     rtol: float = 1e-14):
    """Lowest-density root of ``p(rho) = target`` on the rising (vapour) branch, for many points.

    Parameters
    ----------
    pressure_of_density : callable
        ``pressure_of_density(rho) -> (p, dp_drho)`` on arrays of the points' shape; the
        model's parameters (reduced temperature, ...) are bound inside it. Units are the
        model's reduced units.
    target : ndarray [-]            the reduced pressure to reach, > 0
    rho_start : ndarray [-]         first trial density of the march, > 0 (about half the
                                    ideal-gas density is a good start)
    rho_max : float [-]             densities above this are not gas: the march stops there
    factor : float                  growth of the trial density per march step
    max_march, max_iter : int       step limits of the march and the refinement
    rtol : float                    relative step size at which the refinement stops

    Returns
    -------
    rho : ndarray [-]       the root; NaN where no gas-phase root exists or it did not converge
    reason : ndarray of str ``''``, ``'no-gas-root'`` or ``'no-convergence'``

    Notes
    -----
    The march multiplies the density by ``factor`` while p < target and dp/drho > 0. A sign
    change of dp/drho means a local maximum was passed; it is located by bisection on the
    derivative and the point has a gas root only if the maximum reaches the target.
    """
    target = np.asarray(target, dtype=float)
    shape = target.shape
    lo = np.zeros(shape)
    x0 = np.broadcast_to(np.asarray(rho_start, dtype=float), shape).copy()
    x = x0.copy()
    hi = np.full(shape, np.nan)
    marching = np.ones(shape, dtype=bool)
    loop = np.zeros(shape, dtype=bool)  # passed a local maximum inside [lo, x]
    none = np.zeros(shape, dtype=bool)  # no gas root

    # 1. march up in density until p >= target (bracket) or the slope turns (loop)
    for _ in range(max_march):
        if not marching.any():
            break
        p, dp = pressure_of_density(x)
        with np.errstate(invalid="ignore"):
            crossed = marching & (p >= target)
            turned = marching & ~crossed & ~(dp > 0)
        hi = np.where(crossed, x, hi)
        loop |= turned
        marching &= ~(crossed | turned)
        lo = np.where(marching, x, lo)
        x = np.where(marching, np.minimum(x * factor, rho_max), x)
        at_cap = marching & (lo >= rho_max)
        none |= at_cap
        marching &= ~at_cap
    none |= marching  # march limit reached without a bracket

    # 2. where a maximum was passed, find it (bisection on dp/drho) and compare with the target
    if loop.any():
        a = lo.copy()
        b = x.copy()
        for _ in range(200):
            m = 0.5 * (a + b)
            _, dp = pressure_of_density(m)
            rising = dp > 0
            a = np.where(loop & rising, m, a)
            b = np.where(loop & ~rising, m, b)
            if np.all(~loop | (b - a <= 1e-15 * b)):
                break
        p_max, _ = pressure_of_density(a)
        reach = loop & (p_max >= target)
        hi = np.where(reach, a, hi)
        none |= loop & ~reach

    # 3. safeguarded Newton inside [lo, hi] where p(lo) < target <= p(hi)
    active = np.isfinite(hi) & ~none
    hi = np.where(active, hi, x0)  # inactive points sit at a harmless valid density
    lo = np.where(active, lo, 0.0)
    x = hi.copy()
    converged = ~active
    for _ in range(max_iter):
        p, dp = pressure_of_density(x)
        f = p - target
        below = f < 0
        lo = np.where(active & below, x, lo)
        hi = np.where(active & ~below, x, hi)
        with np.errstate(divide="ignore", invalid="ignore"):
            xn = x - f / dp
        bad = ~np.isfinite(xn) | (xn <= lo) | (xn >= hi) | ~(dp > 0)
        xn = np.where(bad, 0.5 * (lo + hi), xn)
        step_small = np.abs(xn - x) <= rtol * np.abs(x)
        exact = f == 0
        done_now = active & ~converged & (step_small | exact | (hi - lo <= rtol * hi))
        x = np.where(active & ~converged & ~exact, xn, x)
        converged |= done_now
        if converged.all():
            break
    rho = np.where(active & converged, x, np.nan)
    reason = np.full(shape, "", dtype=object)
    reason[none] = REASON_NO_GAS_ROOT
    reason[active & ~converged] = REASON_NO_CONVERGENCE
    return rho, reason.astype(str)


def halley_bracket_step(d, lo, hi, zm1, dz, d2z, lnpi, tol_halley: float, tol_newton: float):
    """One safeguarded Halley (or Newton) update of the reduced density, in ln(delta), on ln(p).

    Used by the Helmholtz-energy equations of state (AGA8 DETAIL, GERG-2008), where the pressure
    is p = rho R T Z and Z is known with its derivatives at fixed temperature. The function
    solved is f = ln(delta Z) - ln(pi) = ln(p / p_target), with D = d/d ln(delta).

    Parameters
    ----------
    d : ndarray [-]              current reduced density of each point, > 0
    lo, hi : ndarray [-]         bracket of the root, lo < hi (lo may be 0)
    zm1, dz, d2z : ndarray [-]   Z - 1, D Z and D^2 Z at ``d``
    lnpi : ndarray [-]           ln of the ideal-gas reduced density of the target pressure
    tol_halley, tol_newton : float [-]
        a Halley step in ln(delta) below ``tol_halley`` (error after it ~ step^3), or a Newton
        step (taken where Halley's correction is not trusted) below ``tol_newton`` (~ step^2),
        times min(1, df/d ln(delta)), is converged

    Returns
    -------
    new : ndarray [-]       the next reduced density (the bracket midpoint where the step left
                            the bracket or the state at ``d`` is invalid: Z <= 0, dp/drho <= 0)
    lo, hi : ndarray [-]    the bracket narrowed by the sign of f at ``d``
    conv : ndarray of bool  converged: ``new`` is the root
    collapsed : ndarray of bool  not converged and the bracket shrank to nothing (no root in it)
    """
    z = 1.0 + zm1
    s = z + dz  # (dp/drho)_T / (R T)
    good = np.isfinite(s) & np.isfinite(d2z) & (z > 0) & (s > 0)
    f = np.where(good, np.log(np.where(good, d * z, 1.0)) - lnpi, 0.0)  # ln(p / p_target)
    f1 = s / z  # d f / d ln(delta)
    f2 = d2z / z - (dz / z) ** 2
    newton = np.where(good, -f / f1, 0.0)
    corr = 1.0 - 0.5 * f * f2 / (f1 * f1)
    halley = (corr > 0.5) & (corr < 2.0)
    step = np.where(halley, newton / corr, newton)
    hi = np.where(~good | (f > 0), np.minimum(hi, d), hi)
    lo = np.where(good & (f < 0), np.maximum(lo, d), lo)
    new = d * np.exp(step)
    tol = np.where(halley, tol_halley, tol_newton) * np.minimum(1.0, f1)
    # a converged step may round onto a bracket end: accept it there too
    conv = good & (np.abs(step) < tol) & (new >= lo) & (new <= hi)
    bisect = ~conv & (~good | ~(new > lo) | ~(new < hi))
    new = np.where(bisect, 0.5 * (lo + hi), new)
    collapsed = ~conv & (hi - lo < 1e-13 * hi)
    return new, lo, hi, conv, collapsed


def solve_ln_density(evaluate: Callable, select: Callable, delta, lnpi, delta_max: float,
                     max_iter: int, tol_halley: float, tol_newton: float):
    """Gas-phase reduced density of many points by :func:`halley_bracket_step` iterations.

    Every point starts at ``delta`` with the bracket [0, delta_max]; a point leaves the active
    set once it has converged or its bracket has collapsed, and only the active points are
    evaluated.

    Parameters
    ----------
    evaluate : callable
        ``evaluate(d) -> (Z - 1, D Z, D^2 Z)`` at the reduced densities ``d`` of the active
        points, in the order of the last ``select`` (all points before the first one).
    select : callable
        ``select(act)`` is called when the active set shrinks: ``act`` holds the indices (into
        ``delta``) of the points still active, so that ``evaluate`` can take their coefficients.
    delta : ndarray [-]     start densities, > 0; receives the results in place
    lnpi : ndarray [-]      ln of the ideal-gas reduced density of each point's pressure
    delta_max : float [-]   upper end of the starting bracket
    max_iter : int          iteration limit
    tol_halley, tol_newton : float [-]   see :func:`halley_bracket_step`

    Returns
    -------
    done : ndarray of bool     converged
    failed : ndarray of bool   no root in the bracket (no gas-phase root); points neither done
                               nor failed did not converge within ``max_iter``
    """
    n = delta.size
    act = np.arange(n)
    d, lo, hi = delta.copy(), np.zeros(n), np.full(n, delta_max)
    done = np.zeros(n, dtype=bool)
    failed = np.zeros(n, dtype=bool)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        for _ in range(max_iter):
            if act.size == 0:
                break
            zm1, dz, d2z = evaluate(d)
            new, lo, hi, conv, collapsed = halley_bracket_step(d, lo, hi, zm1, dz, d2z, lnpi,
                                                               tol_halley, tol_newton)
            delta[act] = new
            done[act[conv]] = True
            failed[act[collapsed]] = True
            keep = ~(conv | collapsed)
            if not keep.all():
                act, d, lo, hi, lnpi = act[keep], new[keep], lo[keep], hi[keep], lnpi[keep]
                select(act)
            else:
                d = new
    return done, failed
