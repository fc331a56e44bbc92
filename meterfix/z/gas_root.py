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
