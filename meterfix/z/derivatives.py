"""Derivatives of ln Z in ln p and ln T at constant composition, from an equation of state's own
derivatives at the solved density.

An equation of state gives Z(δ, T) with δ the reduced density; with u = ln δ, s = ln T and
L = ln Z, the pressure is ln p = u + s + L + const. From the six state functions at the point

    Z,  Z_d = δ ∂Z/∂δ,  Z_dd = δ ∂(δ ∂Z/∂δ)/∂δ,  Z_t = T ∂Z/∂T,  Z_tt = T ∂(T ∂Z/∂T)/∂T,
    Z_dt = δ ∂(T ∂Z/∂T)/∂δ      (partial derivatives at constant δ or T)

the derivatives at constant p or T follow by the implicit-function rule (u as a function of ln p
and s): with P_u = 1 + L_u, P_s = 1 + L_s,

    ∂L/∂ln p = L_u / P_u,        ∂L/∂ln T = L_s − L_u P_s / P_u,

and the second derivatives from the same rule once more (``log_derivatives`` below). These are the
sensitivities the GUM budget needs (c_p = 1 − ∂lnZ/∂lnp, c_T = −1 − ∂lnZ/∂lnT) and the second-order
terms of the Monte Carlo's expansion; no finite differences.
"""

from __future__ import annotations

import numpy as np


def log_derivatives(z, z_d, z_dd, z_t, z_tt, z_dt) -> dict:
    """First and second derivatives of ln Z in ln p and ln T from the state functions.

    Parameters
    ----------
    z, z_d, z_dd, z_t, z_tt, z_dt : ndarray [-]   see the module docstring

    Returns
    -------
    dict of ndarray [-]: ``p``, ``t`` (∂lnZ/∂lnp at T, ∂lnZ/∂lnT at p), ``pp``, ``tt``, ``pt``
    """
    with np.errstate(invalid="ignore", divide="ignore"):
        lu = z_d / z
        ls = z_t / z
        luu = z_dd / z - lu * lu
        lss = z_tt / z - ls * ls
        lus = z_dt / z - lu * ls
        pu = 1.0 + lu
        ps = 1.0 + ls
        uq = 1.0 / pu  # ∂u/∂ln p at T
        us = -ps / pu  # ∂u/∂ln T at p
        uqq = -luu * uq**3
        uqs = -(luu * us + lus) * uq * uq
        uss = -((lss + lus * us) * pu - ps * (lus + luu * us)) * uq * uq
        return {
            "p": lu * uq,
            "t": ls + lu * us,
            "pp": luu * uq * uq + lu * uqq,
            "pt": luu * uq * us + lus * uq + lu * uqs,
            "tt": lss + 2.0 * lus * us + luu * us * us + lu * uss,
        }


def log_derivatives_at_solved_density(pressure, temperature, solve, state_functions, chunk: int) -> dict:
    """The derivatives of :func:`log_derivatives` for every point whose density the equation of
    state settles, block by block.

    Parameters
    ----------
    pressure, temperature : ndarray [Pa, K]   absolute pressure and temperature, one shape
    solve : callable (p, T) -> ZResult        the family's Z solve (its ``molar_density`` [mol/m3])
    state_functions : callable (index, T, molar density) -> (z, z_d, z_dd, z_t, z_tt, z_dt)
                                              the family's own derivatives at those points
    chunk : int                               points per block (the family's workspace size)

    Returns
    -------
    dict of ndarray [-]: ``p``, ``t``, ``pp``, ``tt``, ``pt`` (NaN where Z has no result) and ``z``
    """
    p = np.asarray(pressure, float).ravel()
    t = np.asarray(np.broadcast_to(temperature, np.shape(pressure)), float).ravel()
    res = solve(p, t)
    rho = np.asarray(res.molar_density, float).ravel()
    out = {k: np.full(p.size, np.nan) for k in ("p", "t", "pp", "tt", "pt")}
    ok = np.flatnonzero(np.isfinite(np.asarray(res.z, float).ravel()))
    for a in range(0, ok.size, chunk):
        i = ok[a:a + chunk]
        d = log_derivatives(*state_functions(i, t[i], rho[i]))
        for k in out:
            out[k][i] = d[k]
    out = {k: v.reshape(np.shape(pressure)) for k, v in out.items()}
    out["z"] = np.asarray(res.z, float)
    return out
