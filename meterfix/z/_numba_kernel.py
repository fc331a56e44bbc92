"""The numba-compiled density solve of :mod:`meterfix.z.compiled` (imported only on demand).

``cache=True``: the machine code is stored next to this module, or in numba's per-user cache
directory where this folder is not writable, so only the first run on a machine compiles.
"""

from __future__ import annotations

import numba
import numpy as np


@numba.njit(cache=True, nogil=True, error_model="numpy")
def powers(tab, x):
    """tab[k] = x^k by binary splitting (a few roundings at most, not k)."""
    tab[0] = 1.0
    if tab.size > 1:
        tab[1] = x
    for k in range(2, tab.size):
        tab[k] = tab[k >> 1] * tab[k - (k >> 1)]


@numba.njit(cache=True, nogil=True, error_model="numpy")
def solve(p, t, pi_scale, ln_num, exps, h_step, e_min, q, r, nz_row, nz_col, nz_val, col_d, shape_start,
          term_start, term_m, term_c, v1, v2, start, delta_max, fast_steps, tol, out_delta, out_conv):
    """Reduced density of every point (p [Pa], t [K]) into ``out_delta``, settled ones marked in
    ``out_conv``; the arguments are those of :func:`meterfix.z.compiled.solve_fast` and the
    fields of :class:`meterfix.z.compiled.ColumnForm` (columns sorted by shape)."""
    n_t = exps.size
    n_col = col_d.size
    n_s = shape_start.size - 1
    max_pow = 3
    for c in range(n_col):
        max_pow = max(max_pow, col_d[c])
    for k in range(term_m.size):
        max_pow = max(max_pow, term_m[k])
    tp = np.empty(n_t)
    tab_q = np.empty(q.max() + 1 if n_t else 1)
    tab_r = np.empty(r.max() + 1 if n_t else 1)
    b = np.empty(n_col)
    y1 = np.empty(n_col)
    y2 = np.empty(n_col)
    y3 = np.empty(n_col)
    pw = np.empty(max_pow + 1)
    for i in range(p.size):
        lx = ln_num - np.log(t[i])
        if h_step > 0.0:  # x^e = x^e_min x^q (x^h)^r from three exponentials
            powers(tab_q, np.exp(lx))
            powers(tab_r, np.exp(h_step * lx))
            base = np.exp(e_min * lx)
            for j in range(n_t):
                tp[j] = base * tab_q[q[j]] * tab_r[r[j]]
        else:
            for j in range(n_t):
                tp[j] = np.exp(exps[j] * lx)
        for c in range(n_col):
            b[c] = 0.0
        for nz in range(nz_val.size):
            b[nz_col[nz]] += nz_val[nz] * tp[nz_row[nz]]
        b1 = 0.0
        b2 = 0.0
        for c in range(n_col):
            b1 += b[c] * v1[c]
            b2 += b[c] * v2[c]
            dc = col_d[c]
            y1[c] = b[c] * dc
            y2[c] = y1[c] * dc
            y3[c] = y2[c] * dc
        pi = pi_scale * p[i] / t[i]
        lp = np.log(pi)
        # the start: the low-density series Z = 1 + b1 delta + b2 delta^2
        if start == 0:  # root of the quadratic truncation, two Newton steps on the cubic
            d = 2.0 * pi / (1.0 + np.sqrt(1.0 + 4.0 * b1 * pi))
            fp = 1.0
            for _ in range(2):
                f = d * (1.0 + d * (b1 + b2 * d)) - pi
                fp = 1.0 + d * (2.0 * b1 + 3.0 * b2 * d)
                d = d - f / fp
            if not ((d > 0.25 * pi) and (d < 4.0 * pi) and (d < delta_max) and (fp > 0.05)):
                d = pi
        else:  # six guarded Newton steps on the cubic from the ideal gas
            d = pi
            for _ in range(6):
                f = d * (1.0 + d * (b1 + b2 * d)) - pi
                fp = 1.0 + d * (2.0 * b1 + 3.0 * b2 * d)
                d = d - f / fp if fp > 0.05 else np.nan
            if not (np.isfinite(d) and (d > 0.25 * pi) and (d < 4.0 * pi) and (d < delta_max)):
                d = pi
        conv = False
        new = d
        for it in range(fast_steps):
            pw[0] = 1.0
            for m in range(1, max_pow + 1):
                pw[m] = pw[m - 1] * d
            h0 = 0.0
            h1 = 0.0
            h2 = 0.0
            for s in range(n_s):
                # column sums of b delta^d (1, d, d^2, d^3) over the columns of this shape
                p0 = 0.0
                p1 = 0.0
                p2 = 0.0
                p3 = 0.0
                for c in range(shape_start[s], shape_start[s + 1]):
                    pd = pw[col_d[c]]
                    p0 += b[c] * pd
                    p1 += y1[c] * pd
                    p2 += y2[c] * pd
                    p3 += y3[c] * pd
                # the shape exp(E): E and D E, D^2 E, D^3 E
                ee = 0.0
                a1 = 0.0
                a2 = 0.0
                a3 = 0.0
                for k in range(term_start[s], term_start[s + 1]):
                    m = term_m[k]
                    term = term_c[k] * pw[m]
                    ee += term
                    term *= m
                    a1 += term
                    term *= m
                    a2 += term
                    a3 += term * m
                w = np.exp(ee) if term_start[s + 1] > term_start[s] else 1.0
                a11 = a1 * a1 + a2
                h0 += w * (p1 + a1 * p0)
                h1 += w * (p2 + 2.0 * a1 * p1 + a11 * p0)
                h2 += w * (p3 + 3.0 * a1 * p2 + 3.0 * a11 * p1 + (a1 * a1 * a1 + 3.0 * a1 * a2 + a3) * p0)
            z = 1.0 + h0
            rz = 1.0 / z
            f = np.log(d * z) - lp
            f1 = 1.0 + h1 * rz
            dzr = h1 * rz
            corr = 1.0 - 0.5 * f * (h2 * rz - dzr * dzr) / (f1 * f1)
            step = -f / (f1 * corr)
            new = d * np.exp(step)
            if it == 0:
                d = new
                continue
            if not ((z > 0.0) and (f1 > 0.0) and (corr > 0.5) and (corr < 2.0)):
                break
            if abs(step) < tol * min(1.0, f1):
                conv = True
                break
            d = new
        out_delta[i] = new
        out_conv[i] = conv
