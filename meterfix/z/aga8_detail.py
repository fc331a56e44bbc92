"""AGA8 DETAIL: Z, density and speed of sound of natural gases from a 21-component analysis.

The DETAIL characterization equation of state of AGA Report No. 8 Part 1 (2017), the same
equation as ISO 20765-1 and ISO 12213-2. Pure, vectorized numpy: one composition, arrays of
pressure and temperature; the composition-dependent terms come from
:mod:`meterfix.z.aga8_detail_mixture` (cached per composition), the temperature-dependent
coefficients are computed once per distinct temperature, and the density solve iterates all
points together.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from ..gas.components import INDEX
from ..gas.composition import as_composition
from .aga8_detail_mixture import COL_B, COL_K, N_COL, R_DETAIL, U_EXPONENTS, DetailMixture, mixture
from .base import (EXTENDED, NORMAL, OUTSIDE, REASON_NO_CONVERGENCE,
                   REASON_NO_GAS_ROOT, ZResult)
from .blocks import REASON_DTYPE, solve_points
from .compiled import ColumnForm, column_form, solve_fast, use_compiled
from .gas_root import solve_ln_density
from .registry import ZMethod

EDITION = "AGA Report No. 8 Part 1 (2017), DETAIL characterization (= ISO 20765-1, ISO 12213-2)"

#: normal range (p_max [Pa], T_min [K], T_max [K]): AGA8 (1992/1994) region of 0.1 % uncertainty,
#: 17-143 degF and up to 1750 psia (from memory; ISO 12213-2 states 263-338 K, 12 MPa)
NORMAL_RANGE = (1750.0 * 6894.757293168, (17.0 - 32.0) / 1.8 + 273.15, (143.0 - 32.0) / 1.8 + 273.15)
#: extended range: AGA8 (1992/1994) range of application of DETAIL, -200 to 760 degF and up to
#: 40 000 psia, with uncertainty rising from 0.3 % to 1 % away from the normal range (from memory)
EXTENDED_RANGE = (40000.0 * 6894.757293168, (-200.0 - 32.0) / 1.8 + 273.15, (760.0 - 32.0) / 1.8 + 273.15)

#: composition limits [mol/mol] of the normal and the expanded range, AGA8 (1992/1994) table of
#: gas mixture characteristics (from memory). Groups sum their components; a component absent
#: from a range's list must be zero there. The expanded range's "up to the dew point" limits of
#: hexanes+ and water are not checked (no phase-equilibrium calculation is made).
_GROUPS = {
    "methane": ("methane",), "nitrogen": ("nitrogen",), "carbon_dioxide": ("carbon_dioxide",),
    "ethane": ("ethane",), "propane": ("propane",), "butanes": ("isobutane", "n_butane"),
    "pentanes": ("isopentane", "n_pentane"),
    "hexanes_plus": ("n_hexane", "n_heptane", "n_octane", "n_nonane", "n_decane"),
    "helium": ("helium",), "hydrogen": ("hydrogen",), "carbon_monoxide": ("carbon_monoxide",),
    "argon": ("argon",), "oxygen": ("oxygen",), "water": ("water",), "hydrogen_sulfide": ("hydrogen_sulfide",),
}
NORMAL_COMPOSITION = {
    "methane": (0.45, 1.0), "nitrogen": (0.0, 0.50), "carbon_dioxide": (0.0, 0.30), "ethane": (0.0, 0.10),
    "propane": (0.0, 0.035), "butanes": (0.0, 0.015), "pentanes": (0.0, 0.005), "hexanes_plus": (0.0, 0.001),
    "helium": (0.0, 0.002), "hydrogen": (0.0, 0.10), "carbon_monoxide": (0.0, 0.03), "argon": (0.0, 0.0),
    "oxygen": (0.0, 0.0), "water": (0.0, 0.0005), "hydrogen_sulfide": (0.0, 0.0002),
}
EXTENDED_COMPOSITION = {
    "methane": (0.0, 1.0), "nitrogen": (0.0, 1.0), "carbon_dioxide": (0.0, 1.0), "ethane": (0.0, 1.0),
    "propane": (0.0, 0.12), "butanes": (0.0, 0.06), "pentanes": (0.0, 0.04), "hexanes_plus": (0.0, 1.0),
    "helium": (0.0, 0.03), "hydrogen": (0.0, 1.0), "carbon_monoxide": (0.0, 0.03), "argon": (0.0, 0.01),
    "oxygen": (0.0, 0.21), "water": (0.0, 1.0), "hydrogen_sulfide": (0.0, 1.0),
}
#: rounding allowance on the composition limits (analyses are reported to 4-5 decimals)
_LIMIT_SLACK = 1e-9

#: points per block of the vectorized solve (bounds the size of the 2-D work arrays)
CHUNK = 8192
#: upper bound of the reduced density delta = K^3 D searched for a root (liquids are below ~3)
DELTA_MAX = 5.0
#: a Halley step in ln(delta) below this is converged (error after it ~ step^3); a Newton step
#: (where Halley's correction is not trusted) below STEP_TOL_NEWTON (~ step^2)
STEP_TOL_HALLEY = 1e-5
STEP_TOL_NEWTON = 1e-8
MAX_ITER = 80
#: Halley steps of the unguarded first pass (pipeline states converge in two or three)
FAST_STEPS = 4

# moment matrix: h = _MOM.T @ y gives, per point, sums over the columns of y = W phi weighted by
# b (0), b^2 (1), the indicator of k = 1..4 (2-5), b times it (6-9), b^3 (10), b^2 times it (11-14)
_IND = np.stack([(COL_K == k).astype(float) for k in (1, 2, 3, 4)], axis=1)
_MOM = np.concatenate([COL_B[:, None], (COL_B ** 2)[:, None], _IND, COL_B[:, None] * _IND,
                       (COL_B ** 3)[:, None], (COL_B ** 2)[:, None] * _IND], axis=1)
_MOM_T = np.ascontiguousarray(_MOM.T)
_KS = np.array([1.0, 2.0, 3.0, 4.0])[:, None]


class _Workspace:
    """Preallocated work arrays (features x points) for blocks of up to ``n`` points."""

    def __init__(self, n: int):
        self.pw = np.empty((10, n))  # delta^0 .. delta^9
        self.ex = np.empty((4, n))  # exp(-delta^k), k = 1..4
        self.phi = np.empty((N_COL, n))
        self.y = np.empty((N_COL, n))
        self.h = np.empty((_MOM.shape[1], n))


def _basis(ws: _Workspace, delta: np.ndarray) -> np.ndarray:
    """phi_col = delta^b exp(-delta^k) for the 25 columns, shape (25, n)."""
    n = delta.size
    pw, ex, phi = ws.pw[:, :n], ws.ex[:, :n], ws.phi[:, :n]
    pw[0] = 1.0
    pw[1] = delta
    for m in range(2, 10):
        np.multiply(pw[m - 1], delta, out=pw[m])
    np.negative(pw[1:5], out=ex)
    np.exp(ex, out=ex)
    phi[0:7] = pw[1:8]
    np.multiply(pw[3], ex[0], out=phi[7])
    np.multiply(pw[8], ex[0], out=phi[8])
    np.multiply(pw[1:10], ex[1], out=phi[9:18])
    np.multiply(pw[1], ex[2], out=phi[18])
    np.multiply(pw[3], ex[2], out=phi[19])
    np.multiply(pw[1:6], ex[3], out=phi[20:25])
    return phi


def _z_functions(ws: _Workspace, w: np.ndarray, delta: np.ndarray, parts: int):
    """Z - 1, D Z and D^2 Z (first ``parts`` of them) at fixed T, with D = delta d/d(delta).

    ``w`` (25, n) holds the per-point column coefficients W_col(T). For a column
    y = W delta^b exp(-x), x = delta^k: Z - 1 = sum y (b - k x),
    D Z = sum y [(b - k x)^2 - k^2 x],
    D^2 Z = sum y [(b - k x)^3 - 3 k^2 x (b - k x) - k^3 x].
    """
    n = delta.size
    phi = _basis(ws, delta)
    y = ws.y[:, :n]
    np.multiply(w, phi, out=y)
    m = 10 if parts < 3 else 15
    h = ws.h[:m, :n]
    np.matmul(_MOM_T[:m], y, out=h)
    x = ws.pw[1:5, :n]  # delta^1..4, and x_k = delta^k is row k-1
    g = h[2:6]
    hb = h[6:10]
    kx = _KS * x  # k x_k
    zm1 = h[0] - np.einsum("kn,kn->n", kx, g)
    kxg = kx * g
    dz = h[1] - np.einsum("kn,kn->n", kx, 2.0 * hb - kxg + _KS * g)
    if parts < 3:
        return zm1, dz
    hbb = h[11:15]
    d2z = h[10] + np.einsum("kn,kn->n", kx, -3.0 * hbb + 3.0 * kx * hb - 3.0 * _KS * hb
                            - kx * kxg + 3.0 * _KS * kxg - _KS * _KS * g)
    return zm1, dz, d2z


def _initial_delta(virial: np.ndarray, pi: np.ndarray) -> np.ndarray:
    """Start from the low-density series Z = 1 + b1 delta + b2 delta^2 (falls back to ideal gas):
    the root of the quadratic truncation, then two Newton steps on the cubic."""
    b1, b2 = virial[0], virial[1]
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        d = 2.0 * pi / (1.0 + np.sqrt(1.0 + 4.0 * b1 * pi))
        for _ in range(2):
            f = d * (1.0 + d * (b1 + b2 * d)) - pi
            fp = 1.0 + d * (2.0 * b1 + 3.0 * b2 * d)
            d = d - f / fp
        ok = (d > 0.25 * pi) & (d < 4.0 * pi) & (d < DELTA_MAX) & (fp > 0.05)
    return np.where(ok, d, pi)


def _t_powers(t_u: np.ndarray) -> np.ndarray:
    """T^-u for the 26 distinct exponents, shape (26, m)."""
    out = np.multiply.outer(-U_EXPONENTS, np.log(t_u))
    return np.exp(out, out=out)


def _distinct_temperatures(t: np.ndarray):
    """(distinct temperatures, inverse index) where temperatures repeat a lot, else (t, None).

    Sorting costs about as much as the per-point temperature terms, so a sample of the block
    decides first whether the repeats are worth it (logged temperatures often repeat)."""
    sample = t[:256]
    if np.unique(sample).size > 0.25 * sample.size:
        return t, None
    t_u, inv = np.unique(t, return_inverse=True)
    if t_u.size > 0.25 * t.size:
        return t, None
    return t_u, inv


def _fast_solve(ws: _Workspace, w_all: np.ndarray, d0: np.ndarray, lnpi: np.ndarray):
    """Unguarded Halley steps in ln(delta) from the low-density start, for every point.

    From the second step on, a point whose step is below the tolerance at a valid state is done
    (the error of the result is ~ step^3 < 1e-15) and leaves the active set; a point at an
    invalid state (Z <= 0 or dp/drho <= 0) leaves it unconverged. Returns the reduced densities
    and the mask of converged points; the others go to the safeguarded solve.
    """
    n = d0.size
    delta = d0.copy()
    conv_all = np.zeros(n, dtype=bool)
    act = np.arange(n)
    d, w, lp = d0, w_all, lnpi
    for it in range(FAST_STEPS):
        zm1, dz, d2z = _z_functions(ws, w, d, 3)
        z = 1.0 + zm1
        rz = 1.0 / z
        f = np.log(d * z) - lp  # ln(p / p_target)
        f1 = 1.0 + dz * rz  # d f / d ln(delta) = (dp/drho) / (rho R T Z)
        dzr = dz * rz
        corr = 1.0 - 0.5 * f * (d2z * rz - dzr * dzr) / (f1 * f1)
        step = -f / (f1 * corr)
        new = d * np.exp(step)
        if it == 0:
            d = new
            continue
        valid = (z > 0) & (f1 > 0) & (corr > 0.5) & (corr < 2.0)
        conv = valid & (np.abs(step) < STEP_TOL_HALLEY * np.minimum(1.0, f1))
        delta[act] = new
        conv_all[act] = conv
        keep = valid & ~conv
        if not keep.any():
            break
        act, d, lp = act[keep], new[keep], lp[keep]
        w = np.take(w_all, act, axis=1)
    return delta, conv_all


def _safe_solve(ws: _Workspace, w_all: np.ndarray, delta: np.ndarray, lnpi: np.ndarray):
    """Safeguarded solve (:func:`meterfix.z.gas_root.solve_ln_density`): Halley (or Newton)
    steps in ln(delta) kept inside a bracket of the root, bisection where a step leaves it.
    ``delta`` holds the start and receives the roots. Returns the masks (converged, no root in
    the bracket); the rest did not converge."""
    w = [w_all]  # the column coefficients of the active points

    def select(act):
        w[0] = np.take(w_all, act, axis=1)

    return solve_ln_density(lambda d: _z_functions(ws, w[0], d, 3), select, delta, lnpi,
                            DELTA_MAX, MAX_ITER, STEP_TOL_HALLEY, STEP_TOL_NEWTON)


def _solve_block(mix: DetailMixture, ws: _Workspace, p: np.ndarray, t: np.ndarray, sound: bool):
    """Gas-phase root and properties for one block of valid points (p in Pa, t in K)."""
    n = p.size
    t_u, inv = _distinct_temperatures(t)
    tp = _t_powers(t_u)
    wv = mix.coef_virial_t @ tp  # (27, m): the 25 column coefficients, then b1 and b2
    if inv is not None:
        wv = np.take(wv, inv, axis=1)
    w_all, virial = wv[:N_COL], wv[N_COL:]
    pi = mix.k3 * p / (1000.0 * R_DETAIL * t)  # delta of an ideal gas
    lnpi = np.log(pi)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        d0 = _initial_delta(virial, pi)
        delta, ok = _fast_solve(ws, w_all, d0, lnpi)
        rest = np.flatnonzero(~ok)
        reason = np.full(n, "", dtype=REASON_DTYPE)
        if rest.size:
            sub = d0[rest]
            done, failed = _safe_solve(ws, w_all[:, rest], sub, lnpi[rest])
            delta[rest] = sub
            ok[rest] = done
            reason[rest[failed]] = REASON_NO_GAS_ROOT
            reason[rest[~done & ~failed]] = REASON_NO_CONVERGENCE
    _reject_dense_roots(mix, ws, w_all, delta, t, ok, reason)
    z = np.full(n, np.nan)
    snd = np.full(n, np.nan)
    i = np.flatnonzero(ok)
    if i.size and not sound:
        z[i] = pi[i] / delta[i]
    elif i.size:
        if inv is not None:
            ideal = _ideal_cv(mix, t_u)[inv[i]]
            tsel = tp[:, inv[i]]
        else:
            ideal = _ideal_cv(mix, t[i])
            tsel = tp if i.size == n else tp[:, i]
        w_i = w_all if i.size == n else w_all[:, i]
        z[i], snd[i] = _properties(mix, ws, w_i, mix.coef_t1.T @ tsel, mix.coef_t2.T @ tsel, ideal, delta[i], t[i])
        bad = ~np.isfinite(z[i]) | (z[i] <= 0)
        reason[i[bad]] = REASON_NO_CONVERGENCE
        ok[i[bad]] = False
    rho = np.where(ok, delta / mix.k3 * 1000.0, np.nan)
    return np.where(ok, z, np.nan), rho, np.where(ok, snd, np.nan), reason


@lru_cache(maxsize=512)
def _form(mix: DetailMixture) -> ColumnForm:
    """The compiled kernel's column form of one composition: phi = delta^b exp(-delta^k)."""
    col_e = np.zeros((7, N_COL))
    col_e[COL_K.astype(int), np.arange(N_COL)] = np.where(COL_K > 0, -1.0, 0.0)
    return column_form(U_EXPONENTS, mix.coef, COL_B, col_e)


def _solve_block_compiled(mix: DetailMixture, ws: _Workspace, p: np.ndarray, t: np.ndarray):
    """Z only, by the compiled kernel; the points it does not settle, and those where a van der
    Waals loop is possible (see :func:`_reject_dense_roots`), go through :func:`_solve_block`."""
    scale = mix.k3 / (1000.0 * R_DETAIL)
    delta, ok = solve_fast(_form(mix), p, t, scale, 0.0, 0, DELTA_MAX, STEP_TOL_HALLEY)
    z = scale * p / t / delta
    rho = delta / mix.k3 * 1000.0
    redo = np.flatnonzero(~ok | ((t < 1.6 * mix.energy) & (delta > 0.3)))
    if redo.size == 0:
        return z, rho, np.nan, ""  # no speed of sound, no reason: spread by the caller
    reason = np.full(p.size, "", dtype=REASON_DTYPE)
    z[redo], rho[redo], _, reason[redo] = _solve_block(mix, ws, p[redo], t[redo], False)
    return z, rho, np.nan, reason


def _reject_dense_roots(mix: DetailMixture, ws: _Workspace, w_all, delta, t, ok, reason):
    """Mark roots on a liquid-like branch: p(rho) must rise all the way from rho = 0.

    Only roots where a van der Waals loop is possible are checked: below 1.6 times the mixture
    energy parameter U (about 1.25 times a pseudo-critical temperature, since T_c / E_i is
    about 1.25 for the hydrocarbons) and above delta = 0.3 (critical delta is 0.65-1.0).
    """
    cand = np.flatnonzero(ok & (t < 1.6 * mix.energy) & (delta > 0.3))
    if cand.size == 0:
        return
    fr = np.linspace(0.04, 0.96, 24)
    dd = (delta[cand][:, None] * fr).ravel()
    wr = np.repeat(w_all[:, cand], fr.size, axis=1)
    zm1, dz = _z_functions(_Workspace(dd.size), wr, dd, 2)
    slope = (1.0 + zm1 + dz).reshape(cand.size, fr.size)
    bad = cand[~np.all(slope > 0, axis=1)]
    ok[bad] = False
    reason[bad] = REASON_NO_GAS_ROOT


def _ideal_cv(mix: DetailMixture, t: np.ndarray) -> np.ndarray:
    """cv0 / R of the ideal gas: sum x_i [n3 - 1 + sum n (y/sinh y)^2 + sum n (y/cosh y)^2], y = theta/T.

    With u = exp(-y): y / sinh(y) = 2 y u / (1 - u^2), y / cosh(y) = 2 y u / (1 + u^2).
    """
    out = np.full(t.shape, mix.ideal_const)
    for theta, coef, sign in ((mix.ideal_sinh_theta, mix.ideal_sinh_coef, -1.0),
                              (mix.ideal_cosh_theta, mix.ideal_cosh_coef, 1.0)):
        if theta.size == 0:
            continue
        y = np.multiply.outer(theta, 1.0 / t)
        u = np.exp(-y)
        r = 2.0 * y * u / (1.0 + sign * u * u)
        out += coef @ (r * r)
    return out


def _properties(mix: DetailMixture, ws: _Workspace, w, w1, w2, ideal, delta, t):
    """Z and speed of sound [m/s] at the converged reduced density.

    ``w1`` holds the per-point coefficients of alpha + T d(alpha)/dT, ``w2`` those of
    T^2 d2(T alpha)/dT2 / T (see :class:`DetailMixture`), ``ideal`` is cv0 / R.
    """
    n = delta.size
    zm1, dz = _z_functions(ws, w, delta, 2)
    phi = ws.phi[:, :n]
    y = ws.y[:, :n]
    np.multiply(w1, phi, out=y)
    h = ws.h[:6, :n]
    np.matmul(_MOM_T[:6], y, out=h)
    x = ws.pw[1:5, :n]
    atd = h[0] - np.einsum("kn,kn->n", _KS * x, h[2:6])  # D (alpha + T alpha_T)
    att = np.einsum("kn,kn->n", w2, phi)  # T^2 (T alpha)_TT / T
    z = 1.0 + zm1
    slope = z + dz  # (dp/dD) / (R T)
    dpdt = 1.0 + atd  # (dp/dT) / (D R)
    cv = ideal - att
    cp = cv + dpdt * dpdt / slope
    with np.errstate(invalid="ignore", divide="ignore"):
        w2s = cp / cv * slope * R_DETAIL * t / mix.molar_mass
        sound = np.sqrt(np.where((w2s > 0) & (cv > 0), w2s, np.nan))
    return z, sound


def composition_range(fractions) -> int:
    """Range class (0 normal, 1 extended, 2 outside) of a composition by the DETAIL limits.

    Parameters
    ----------
    fractions : ndarray (21,) [mol/mol]   mole fractions in canonical order
    """
    return _composition_range(np.ascontiguousarray(fractions, dtype=float).tobytes())


@lru_cache(maxsize=512)
def _composition_range(key: bytes) -> int:
    x = np.frombuffer(key, dtype=float)
    groups = {g: float(sum(x[INDEX[c]] for c in comps)) for g, comps in _GROUPS.items()}
    for cls, limits in ((NORMAL, NORMAL_COMPOSITION), (EXTENDED, EXTENDED_COMPOSITION)):
        if all(lo - _LIMIT_SLACK <= groups[g] <= hi + _LIMIT_SLACK for g, (lo, hi) in limits.items()):
            return cls
    return OUTSIDE


def range_classes(pressure, temperature, fractions) -> np.ndarray:
    """Range class of every point: the worse of the (p, T) class and the composition class.

    Parameters
    ----------
    pressure : float or ndarray [Pa]
    temperature : float or ndarray [K]
    fractions : ndarray (21,) [mol/mol]
    """
    p = np.asarray(pressure, dtype=float)
    t = np.asarray(temperature, dtype=float)
    out = np.full(np.broadcast(p, t).shape, OUTSIDE, dtype=np.int8)
    for cls, (pm, tl, th) in ((EXTENDED, EXTENDED_RANGE), (NORMAL, NORMAL_RANGE)):
        out[(p <= pm) & (t >= tl) & (t <= th)] = cls
    return np.maximum(out, np.int8(composition_range(fractions)))


def z_aga8_detail(pressure, temperature, composition, *, speed_of_sound: bool = True,
                  workers: int | None = None) -> ZResult:
    """Compressibility factor, density and speed of sound by AGA8 DETAIL.

    Z = 1 + D (d alpha_r / d D)_T,   p = D R T Z,   R = 8.31451 J/(mol K),
    with alpha_r the reduced residual Helmholtz energy of the DETAIL equation (58 terms, 21
    components, the mixing rules of AGA8 Part 1).

    Parameters
    ----------
    pressure : float or ndarray [Pa]
        Absolute pressure.
    temperature : float or ndarray [K]
        Broadcast against ``pressure``.
    composition : Composition or mapping of component name -> mole fraction [-]
        Any of the 21 components.
    speed_of_sound : bool
        Also compute the speed of sound (temperature derivatives and the ideal-gas heat
        capacity). Without it ``ZResult.speed_of_sound`` is None and Z comes straight from the
        final density step.
    workers : int, optional
        Threads for large inputs (blocks of CHUNK points are independent). Default: one per CPU
        core, at most 4, from two blocks up; 1 runs in the caller's thread.

    Returns
    -------
    ZResult
        ``z``, ``molar_density`` [mol/m3], ``speed_of_sound`` [m/s] in the broadcast shape;
        ``molar_mass`` [kg/mol] (the model's own molar masses, a float). A point without a
        gas-phase root gets NaN and reason ``no-gas-root``; one where the solve did not converge
        ``no-convergence``; non-finite or non-positive p or T ``invalid-input``. Other points are
        not affected. ``extra`` holds the mixture size parameter ``k3`` [L/mol] and energy
        parameter ``energy`` [K], and ``composition_range`` (0, 1, 2).

    Notes
    -----
    Range classes (AGA8 1992/1994 edition, from memory): normal range 17-143 degF (264.8-334.8 K),
    p <= 1750 psia (12.07 MPa) with the normal-range composition limits (uncertainty 0.1 %);
    extended range -200 to 760 degF (144.3-677.6 K), p <= 40 000 psia (276 MPa) with the
    expanded-range composition limits (0.3 % to 1 %). A point's class is the worse of its
    (p, T) class and the composition's class. The density solve takes the gas-phase root:
    Halley steps (Newton where Halley's correction is not trusted) in ln(rho) on ln(p), started
    from the low-density series and safeguarded by a bracket with bisection; a root is rejected
    as ``no-gas-root`` if dp/drho does not stay positive from rho = 0 up to it (checked where a
    van der Waals loop is possible). No phase-equilibrium calculation is made: inside the
    two-phase region the root of the gas branch (a supersaturated vapour) is returned, as the
    reference code does. Coefficients: :mod:`meterfix.z.tables.aga8_detail_coefficients`.

    References
    ----------
    1. AGA Report No. 8 Part 1 (2017), DETAIL equation of state; ISO 20765-1:2005; ISO 12213-2:2006.
    2. K. E. Starling, J. L. Savidge, AGA Report No. 8, 2nd ed. (1992).
    """
    comp = as_composition(composition)
    mix = mixture(comp.fractions)
    if not speed_of_sound and use_compiled(np.broadcast(np.asarray(pressure), np.asarray(temperature)).size):
        block = lambda ws, p, t: _solve_block_compiled(mix, ws, p, t)  # noqa: E731
    else:
        block = lambda ws, p, t: _solve_block(mix, ws, p, t, speed_of_sound)  # noqa: E731
    shape, pf, tf, bad, z, rho, w, reason = solve_points(pressure, temperature, _Workspace, block, CHUNK, workers)
    comp_class = composition_range(comp.fractions)
    rng = range_classes(pf, tf, comp.fractions)
    rng[bad] = OUTSIDE
    return ZResult(z.reshape(shape), rng.reshape(shape), reason.reshape(shape),
                   "aga8-detail", EDITION, molar_density=rho.reshape(shape), molar_mass=mix.molar_mass,
                   speed_of_sound=w.reshape(shape) if speed_of_sound else None,
                   extra={"k3": mix.k3, "energy": mix.energy, "composition_range": comp_class})


def z_at_density(molar_density, temperature, composition) -> np.ndarray:
    """Z of DETAIL at a given molar density [mol/m3] and temperature [K] (no density solve).

    Parameters
    ----------
    molar_density, temperature : ndarray [mol/m3, K]   one shape
    composition : Composition or mapping

    Returns
    -------
    ndarray [-]
    """
    mix = mixture(as_composition(composition).fractions)
    rho = np.asarray(molar_density, float).ravel()
    t = np.asarray(np.broadcast_to(temperature, np.shape(molar_density)), float).ravel()
    out = np.empty(rho.size)
    coef = mix.coef_virial_t[:N_COL]
    for a in range(0, rho.size, CHUNK):
        sl = slice(a, a + CHUNK)
        ws = _Workspace(rho[sl].size)
        out[sl] = 1.0 + _z_functions(ws, coef @ _t_powers(t[sl]), rho[sl] * mix.k3 / 1000.0, 2)[0]
    return out.reshape(np.shape(molar_density))


def z_log_derivatives_detail(pressure, temperature, composition) -> dict:
    """∂lnZ/∂lnp, ∂lnZ/∂lnT and the second derivatives by DETAIL's own derivatives at the solved
    density (:mod:`meterfix.z.derivatives`): Z − 1 = Σ W_col(T) f_col(δ) is linear in the column
    coefficients W_col(T) = Σ_n c T^(−u_n), so T ∂Z/∂T and T ∂(T ∂Z/∂T)/∂T are the same sums with
    the coefficients of −u_n T^(−u_n) and u_n² T^(−u_n), and δ ∂/∂δ comes from the same moments.

    Parameters
    ----------
    pressure, temperature : ndarray [Pa, K]   absolute pressure and temperature, one shape
    composition : Composition or mapping

    Returns
    -------
    dict of ndarray [-]: ``p``, ``t``, ``pp``, ``tt``, ``pt`` (NaN where Z has no result) and ``z``
    """
    from .derivatives import log_derivatives_at_solved_density

    comp = as_composition(composition)
    mix = mixture(comp.fractions)
    coef = mix.coef_virial_t[:N_COL]

    def state_functions(i, t, molar_density):
        ws = _Workspace(i.size)
        delta = molar_density * mix.k3 / 1000.0
        tp = _t_powers(t)
        zm1, zd, zdd = _z_functions(ws, coef @ tp, delta, 3)
        zt, zdt = _z_functions(ws, coef @ (-U_EXPONENTS[:, None] * tp), delta, 2)
        ztt = _z_functions(ws, coef @ (U_EXPONENTS[:, None] ** 2 * tp), delta, 2)[0]
        return 1.0 + zm1, zd, zdd, zt, ztt, zdt

    return log_derivatives_at_solved_density(
        pressure, temperature, lambda p, t: z_aga8_detail(p, t, comp, speed_of_sound=False), state_functions, CHUNK)


def _evaluate(pressure, temperature, gas, speed_of_sound=True, workers=None, **_options):
    return z_aga8_detail(pressure, temperature, gas, speed_of_sound=speed_of_sound, workers=workers)


METHODS = [
    ZMethod(
        "aga8-detail", EDITION, _evaluate, gas_input="composition", family="equation of state",
        range_text="normal range 264.8-334.8 K (17-143 degF), p <= 12.07 MPa (1750 psia), pipeline-quality "
                   "composition (methane >= 45 %, N2 <= 50 %, CO2 <= 30 %, ethane <= 10 %, propane <= 3.5 %, "
                   "butanes <= 1.5 %, pentanes <= 0.5 %, C6+ <= 0.1 %, H2 <= 10 %, CO <= 3 %, He <= 0.2 %, "
                   "H2O <= 0.05 %, H2S <= 0.02 %, no O2 or Ar); extended range 144.3-677.6 K, p <= 276 MPa "
                   "(40 000 psia) with the expanded composition limits",
        uncertainty_pct={NORMAL: 0.1, EXTENDED: 0.5},
        uncertainty_source="AGA Report No. 8 (1992/1994; kept in Part 1, 2017): 0.1 % in the normal range; "
                           "0.3 % to 1 % across the extended range, 0.5 % taken as representative (from memory)",
    )
]

__all__ = ["z_aga8_detail", "EDITION", "NORMAL_RANGE", "EXTENDED_RANGE", "NORMAL_COMPOSITION",
           "EXTENDED_COMPOSITION", "composition_range", "range_classes", "METHODS"]
