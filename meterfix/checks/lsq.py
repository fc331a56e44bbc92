"""Bounded nonlinear least squares for the corrector check's few-parameter fits.

Minimises ½ Σ ρ(r_i(θ)² / f²) f² over lo ≤ θ ≤ hi, ρ(z) = z (linear loss) or 2(√(1 + z) − 1)
(soft-L1, Huber 1981, in the form of scipy.optimize.least_squares), by Levenberg–Marquardt
(Moré 1978: steps (JᵀJ + λ D²) s = −Jᵀr with D the inverse of the parameters' scales) on the
iteratively reweighted residuals √ρ'(z) r (the minimiser of the robust cost is a fixed point of
that reweighting), each step projected into the box and variables held at a bound while the
gradient pushes outwards; forward-difference Jacobian with scipy's default step (√ε max(1, |θ|),
turned inward at a bound).

Why not scipy: the check fits one to four parameters on a month of intervals, where importing
scipy.optimize costs more (about 0.3 s) than every fit of a month together. The same minimiser
as scipy.optimize.least_squares (method "trf") is tested on the check's own problems and on
bounded random ones (tests/test_corrector_check.py).

References: J. J. Moré (1978), The Levenberg–Marquardt algorithm: implementation and theory,
in Numerical Analysis (G. A. Watson, ed.), Springer, vol. 630, pp. 105-116, doi:10.1007/BFb0067700; P. J. Huber (1981), Robust Statistics.
"""

from __future__ import annotations

import numpy as np

_EPS = np.finfo(float).eps


def _jacobian(fun, x, r0, lo, hi):
    h = np.sqrt(_EPS) * np.maximum(1.0, np.abs(x))
    h = np.where(x + h > hi, -h, h)  # inward at the upper bound
    J = np.empty((r0.size, x.size))
    for i in range(x.size):
        xi = x.copy()
        xi[i] += h[i]
        J[:, i] = (fun(xi) - r0) / h[i]
    return J


def least_squares_bounded(fun, x0, bounds, x_scale=None, loss: str = "linear", f_scale: float = 1.0,
                          xtol: float = 1e-14, ftol: float = 1e-14, max_iter: int = 200):
    """Minimise the (robust) sum of squares of ``fun(θ)`` within ``bounds``.

    Parameters
    ----------
    fun : callable θ -> ndarray (m,)    residuals
    x0 : ndarray (n,)                   start, inside the bounds
    bounds : (lo, hi) ndarrays (n,)
    x_scale : ndarray (n,), optional    characteristic size of each parameter
    loss : str                          ``linear`` or ``soft_l1``
    f_scale : float                     residual size at which soft-L1 turns from square to linear

    Returns
    -------
    (θ, J)   the minimiser and the Jacobian of ``fun`` there (m, n)
    """
    lo, hi = (np.asarray(b, float) for b in bounds)
    x = np.clip(np.asarray(x0, float), lo, hi)
    scale = np.ones_like(x) if x_scale is None else np.asarray(x_scale, float)
    d2 = 1.0 / scale**2

    def weights(r):
        if loss == "linear":
            return np.ones_like(r)
        return (1.0 + (r / f_scale) ** 2) ** -0.25  # √ρ'(z), ρ'(z) = (1 + z)^(-1/2)

    def cost(r):
        if loss == "linear":
            return 0.5 * float(r @ r)
        z = (r / f_scale) ** 2
        return float(np.sum(np.sqrt(1.0 + z) - 1.0)) * f_scale**2

    r = fun(x)
    c = cost(r)
    lam = 1e-3
    for _ in range(max_iter):
        J = _jacobian(fun, x, r, lo, hi)
        w = weights(r)
        Jw = J * w[:, None]
        rw = r * w
        g = Jw.T @ rw
        # a variable on a bound with the gradient pushing out of the box is held there
        free = ~(((x <= lo) & (g > 0)) | ((x >= hi) & (g < 0)))
        if not free.any():
            break
        A = Jw[:, free].T @ Jw[:, free]
        improved = False
        for _ in range(30):
            try:
                s_free = np.linalg.solve(A + lam * np.diag(d2[free] * max(np.max(np.diag(A) / d2[free]), 1e-300)),
                                         -g[free])
            except np.linalg.LinAlgError:
                lam *= 10.0
                continue
            s = np.zeros_like(x)
            s[free] = s_free
            xn = np.clip(x + s, lo, hi)
            rn = fun(xn)
            cn = cost(rn)
            if np.isfinite(cn) and cn <= c:
                improved = True
                step = xn - x
                small_step = np.all(np.abs(step) <= xtol * (np.abs(x) + xtol * scale))
                small_cost = c - cn <= ftol * max(c, 1e-300)
                x, r, c = xn, rn, cn
                lam = max(lam / 3.0, 1e-12)
                break
            lam *= 4.0
        if not improved or small_step or small_cost:
            break
    return x, _jacobian(fun, x, r, lo, hi)
