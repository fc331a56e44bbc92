"""A compiled point-by-point kernel for the Z-only density solve of AGA8 DETAIL and GERG-2008.

Both equations of state write, for one composition, the residual part as a fixed sum over
columns ``b_col(T) phi_col(delta)`` with ``phi_col = delta^d_col exp(E_s(delta))`` and
``E_s`` a polynomial in delta (0, ``-delta^k``, or the Gaussian-like exponent of a GERG-2008
departure function), and ``b_col(T) = sum_j a_j,col x^e_j`` a sum of powers of a temperature
variable x (DETAIL: x = 1/T; GERG-2008: x = tau = T_r/T). With D = delta d/d(delta) and
g = D ln(phi) = d + D E:

    Z - 1 = sum b phi g,   D Z = sum b phi (g^2 + D^2 E),   D^2 Z = sum b phi (g^3 + 3 g D^2 E + D^3 E).

For every point the kernel computes the coefficients once, starts from the low-density series
Z = 1 + b1 delta + b2 delta^2 and takes the same unguarded Halley steps in ln(delta) on ln(p)
as the numpy path's first pass (a point is done when a step from the second on is below the
tolerance at a valid state). Points it does not settle (an invalid state, no convergence in
FAST_STEPS) are left to the numpy path's safeguarded solve, so the results are the numpy
path's to rounding (about 1e-15 in Z).

The kernel is compiled by numba (``cache=True``: the machine code is kept next to this module,
or in numba's per-user cache directory where that folder is read-only) and used only for large
Z-only calls (:data:`MIN_POINTS`, and :data:`MIN_POINTS_COLD` before it is loaded); numba is
imported on the first such call. Without numba, or
with ``MFX_NO_COMPILED=1`` in the environment, everything runs in numpy.
"""

from __future__ import annotations

import os
import sys
from dataclasses import dataclass

import numpy as np

#: calls with fewer points than this stay in numpy once the kernel is loaded
MIN_POINTS = 65536
#: before the kernel is loaded, calls with fewer points than this stay in numpy: importing numba
#: and loading the cached kernel costs 0.5-1.5 s, while the numpy path does 0.5-1 M points/s, so
#: the first call of a process goes compiled only where that load pays for itself
MIN_POINTS_COLD = 1_000_000
#: first-pass Halley steps (as the numpy path's first pass)
FAST_STEPS = 4

_KERNEL: list = []


@dataclass(frozen=True, eq=False)
class ColumnForm:
    """One composition's equation in the kernel's column form (see the module docstring).

    Attributes
    ----------
    exponents : ndarray (n_t,)      e_j, the powers of the temperature variable
    step : float                    h: every e_j is e_min + q_j + r_j h with integers q_j, r_j
                                    (0 <= r_j h < 1), or 0 where no such h was found
    e_min : float                   floor of the smallest exponent
    q, r : ndarray int64 (n_t,)     the integers above
    nz_row, nz_col : ndarray int64  positions (j, col) of the non-zero coefficients
    nz_val : ndarray                their values a_j,col
    col_d : ndarray int64 (n_col,)  delta exponent of each column; columns sorted by shape
    shape_start : ndarray int64     columns of shape s: shape_start[s] .. shape_start[s + 1] - 1
    term_start, term_m, term_c      E_s = sum of term_c delta^term_m over its terms
                                    term_start[s] .. term_start[s + 1] - 1
    v1, v2 : ndarray (n_col,)       b1 = b @ v1, b2 = b @ v2 of the low-density series
    """

    exponents: np.ndarray
    step: float
    e_min: float
    q: np.ndarray
    r: np.ndarray
    nz_row: np.ndarray
    nz_col: np.ndarray
    nz_val: np.ndarray
    col_d: np.ndarray
    shape_start: np.ndarray
    term_start: np.ndarray
    term_m: np.ndarray
    term_c: np.ndarray
    v1: np.ndarray
    v2: np.ndarray


def column_form(exponents, coef, col_d, col_e) -> ColumnForm:
    """Build a :class:`ColumnForm`.

    Parameters
    ----------
    exponents : ndarray (n_t,)          powers of the temperature variable
    coef : ndarray (n_t, n_col)         coefficients (mostly zero)
    col_d : ndarray (n_col,)            integer delta exponents
    col_e : ndarray (7, n_col)          E coefficients of delta^0..delta^6 for each column
    """
    ex = np.asarray(exponents, dtype=float)
    e_min = float(np.floor(ex.min()))
    step, q, r = 0.0, np.zeros(ex.size, np.int64), np.zeros(ex.size, np.int64)
    for h in (1.0, 0.5, 0.25, 0.125, 0.05, 0.025, 0.0125, 0.01, 0.005):
        k = (ex - e_min) / h
        if np.all(np.abs(k - np.round(k)) < 1e-9):
            k = np.round(k).astype(np.int64)
            per = int(round(1.0 / h))
            step, q, r = h, k // per, k % per
            break
    e = np.ascontiguousarray(np.asarray(col_e, dtype=float).T)
    shapes, col_shape = np.unique(e, axis=0, return_inverse=True)
    order = np.argsort(col_shape.ravel(), kind="stable")  # columns grouped by shape
    e, d = e[order], np.asarray(col_d)[order].astype(np.int64)
    coef = np.asarray(coef, dtype=float)[:, order]
    rows, cols = np.nonzero(coef)
    shape_start = np.searchsorted(col_shape.ravel()[order], np.arange(shapes.shape[0] + 1)).astype(np.int64)
    sm, mm = np.nonzero(shapes)
    term_start = np.searchsorted(sm, np.arange(shapes.shape[0] + 1)).astype(np.int64)
    w0 = np.exp(e[:, 0])
    v1 = np.where(d == 1, w0, 0.0)
    v2 = np.where(d == 1, 2.0 * e[:, 1] * w0, 0.0) + np.where(d == 2, 2.0 * w0, 0.0)
    return ColumnForm(ex, step, e_min, q, r, rows.astype(np.int64), cols.astype(np.int64),
                      np.ascontiguousarray(coef[rows, cols]), d, shape_start, term_start, mm.astype(np.int64),
                      np.ascontiguousarray(shapes[sm, mm]), v1, v2)


def _load():
    """Import the numba kernel; where numba finds no writable cache directory (neither next to
    this module nor in the user's cache folder) the cache goes to a folder in the temporary
    directory."""
    try:
        from . import _numba_kernel
    except ImportError:
        return None
    except RuntimeError:  # numba: "cannot cache function ...: no locator available"
        import tempfile

        import numba.core.config as numba_config

        numba_config.CACHE_DIR = os.path.join(tempfile.gettempdir(), f"meterfix-numba-{getattr(os, 'getuid', lambda: 0)()}")
        sys.modules.pop(__name__.rsplit(".", 1)[0] + "._numba_kernel", None)
        from . import _numba_kernel
    return _numba_kernel.solve


def kernel():
    """The compiled kernel, or None (numba missing or switched off with MFX_NO_COMPILED=1)."""
    if not _KERNEL:
        off = os.environ.get("MFX_NO_COMPILED", "") in ("1", "true", "yes")
        _KERNEL.append(None if off else _load())
    return _KERNEL[0]


def use_compiled(n_points: int) -> bool:
    """Whether a Z-only call of ``n_points`` points goes to the compiled kernel (from
    :data:`MIN_POINTS` points once it is loaded, from :data:`MIN_POINTS_COLD` before)."""
    if n_points < MIN_POINTS or (not _KERNEL and n_points < MIN_POINTS_COLD):
        return False
    return kernel() is not None


def solve_fast(form: ColumnForm, p, t, pi_scale: float, ln_num: float, start: int, delta_max: float,
               tol: float):
    """First-pass density solve of every point by the compiled kernel.

    Parameters
    ----------
    form : ColumnForm
    p : ndarray [Pa], t : ndarray [K]     valid points (finite, > 0)
    pi_scale : float       the ideal-gas reduced density is pi_scale p / t
    ln_num : float         the temperature variable is x = exp(ln_num) / t
    start : int            0: quadratic start with two Newton steps (DETAIL); 1: six guarded
                           Newton steps from the ideal gas (GERG-2008)
    delta_max : float      largest reduced density accepted as a start
    tol : float            Halley step tolerance

    Returns
    -------
    delta : ndarray [-]    reduced densities
    conv : ndarray bool    settled points; the others need the safeguarded solve
    """
    solve = kernel()
    p = np.ascontiguousarray(p, dtype=float)
    t = np.ascontiguousarray(t, dtype=float)
    delta = np.empty(p.size)
    conv = np.zeros(p.size, dtype=np.bool_)
    solve(p, t, float(pi_scale), float(ln_num), form.exponents, float(form.step), float(form.e_min), form.q,
          form.r, form.nz_row, form.nz_col, form.nz_val, form.col_d, form.shape_start, form.term_start, form.term_m,
          form.term_c, form.v1, form.v2, int(start), float(delta_max),
          FAST_STEPS, float(tol), delta, conv)
    return delta, conv
