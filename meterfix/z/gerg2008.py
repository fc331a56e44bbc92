"""GERG-2008 equation of state: Z, density and speed of sound for natural gases (AGA8 Part 2).

The 21-component wide-range equation of Kunz & Wagner (2012), adopted as AGA Report No. 8
Part 2 (2017) and ISO 20765-2. Pure, vectorized numpy: one composition, arrays of pressure and
temperature; the composition-dependent terms come from :mod:`meterfix.z.gerg2008_mixture`
(cached per composition) and the density solve iterates all points together.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from ..gas.composition import as_composition
from .base import (EXTENDED, NORMAL, OUTSIDE, REASON_NO_CONVERGENCE,
                   REASON_NO_GAS_ROOT, ZResult, range_by_box)
from .blocks import REASON_DTYPE, solve_points
from .compiled import ColumnForm, column_form, solve_fast, use_compiled
from .gas_root import solve_ln_density
from .gerg2008_mixture import N_EXPO, N_POWERS, R_GERG, GergMixture, mixture
from .registry import ZMethod

EDITION = "GERG-2008 (Kunz & Wagner 2012; AGA8 Part 2 2017, ISO 20765-2)"

#: normal range (p_max [Pa], T_min [K], T_max [K]); Kunz & Wagner 2012 (from memory)
NORMAL_RANGE = (35.0e6, 90.0, 450.0)
#: extended range; Kunz & Wagner 2012 (from memory)
EXTENDED_RANGE = (70.0e6, 60.0, 700.0)

#: points per block of the vectorized solve (bounds the size of the 2-D work arrays)
CHUNK = 8192
#: upper bound of the reduced density searched for a root (liquid densities are below ~3)
DELTA_MAX = 5.0
#: a Halley step in ln(delta) below this is converged (the error after it is ~ step^3);
#: a Newton step (used where Halley's correction is not trusted) below STEP_TOL_NEWTON (~ step^2)
STEP_TOL_HALLEY = 1e-5
STEP_TOL_NEWTON = 1e-8
MAX_ITER = 80
_NP = N_POWERS


class _Workspace:
    """Preallocated 2-D work arrays for blocks of up to ``n`` points (reused, no page churn)."""

    def __init__(self, mix: GergMixture, n: int):
        nc, nt = mix.n_col, mix.t_exponents.size
        self.n = n
        self.basis = np.empty((n, 1 + _NP))  # ln(delta), delta^0 .. delta^18
        self.phi = np.empty((n, nc))
        self.y = np.empty((n, nc))
        self.h = np.empty((n, 3 * _NP))
        self.h2 = np.empty((n, 2 * _NP))
        self.h1 = np.empty((n, _NP))
        self.taup = np.empty((n, nt))
        self.b = np.empty((n, nc))
        self.bsub = np.empty((n, nc))
        self.btau = np.empty((n, 2 * nc))
        ni = max(mix.ideal_sinh_theta.size, mix.ideal_cosh_theta.size, 1)
        self.i1 = np.empty((n, ni))
        self.i2 = np.empty((n, ni))


def _z_functions(mix: GergMixture, ws: _Workspace, b: np.ndarray, delta: np.ndarray, parts: int):
    """Z - 1, dZ/d ln(delta) and d2Z/d ln(delta)^2 at fixed tau (first ``parts`` of them).

    ``b`` holds the per-point coefficients ``tau^t @ coef`` of the columns. Leaves
    ``phi = delta^d W_g`` and the powers of delta in the workspace for the caller.
    """
    k = delta.size
    bas = ws.basis[:k]
    np.log(delta, out=bas[:, 0])
    bas[:, 1] = 1.0
    bas[:, 2] = delta
    for m in range(3, 1 + _NP):
        np.multiply(bas[:, m - 1], delta, out=bas[:, m])
    phi = ws.phi[:k]
    np.matmul(bas[:, :1 + N_EXPO], mix.expo, out=phi)
    np.exp(phi, out=phi)
    y = ws.y[:k]
    np.multiply(b, phi, out=y)
    h = {1: ws.h1, 2: ws.h2, 3: ws.h}[parts][:k]
    np.matmul(y, mix.gmat[:, :parts * _NP], out=h)
    pw = bas[:, 1:]
    return [np.einsum("ij,ij->i", h[:, m * _NP:(m + 1) * _NP], pw) for m in range(parts)]


def _initial_delta(virial: np.ndarray, pi: np.ndarray) -> np.ndarray:
    """Start from the low-density series Z = 1 + b1 delta + b2 delta^2 (falls back to ideal gas)."""
    b1, b2 = virial[:, 0], virial[:, 1]
    d = pi.copy()
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        for _ in range(6):
            f = d * (1.0 + d * (b1 + b2 * d)) - pi
            fp = 1.0 + d * (2.0 * b1 + 3.0 * b2 * d)
            d = d - f / np.where(fp > 0.05, fp, np.nan)
        ok = np.isfinite(d) & (d > 0.25 * pi) & (d < 4.0 * pi) & (d < DELTA_MAX)
    return np.where(ok, d, pi)


def _solve_block(mix: GergMixture, ws: _Workspace, p: np.ndarray, t: np.ndarray, sound: bool = True):
    """Gas-phase root and properties for one block of valid points.

    Without ``sound`` no evaluation follows the last solver step: Z = p / (rho R T) at the final
    density (the error of the last Halley step is of the order of its cube, < 1e-15).
    """
    n = p.size
    tau = mix.t_reducing / t
    # everything that depends on T alone is computed once per distinct temperature (logged
    # temperatures repeat a lot), then spread to the points
    t_u, inv = np.unique(t, return_inverse=True)
    spread = t_u.size <= 0.75 * n
    if not spread:
        t_u, inv = t, None
    m = t_u.size
    taup = ws.taup[:m]
    np.multiply.outer(np.log(mix.t_reducing / t_u), mix.t_exponents, out=taup)
    np.exp(taup, out=taup)
    b = ws.b[:n]
    if spread:
        np.matmul(taup, mix.coef, out=ws.bsub[:m])
        np.take(ws.bsub[:m], inv, axis=0, out=b)
        virial = (taup @ mix.virial)[inv]
    else:
        np.matmul(taup, mix.coef, out=b)
        virial = taup @ mix.virial
    pi = p / (mix.rho_reducing * R_GERG * t)  # delta of an ideal gas
    delta = _initial_delta(virial, pi)
    done, failed = _safe_solve(mix, ws, b, delta, np.log(pi))
    reason = np.full(n, "", dtype=REASON_DTYPE)
    reason[failed] = REASON_NO_GAS_ROOT
    reason[~done & ~failed] = REASON_NO_CONVERGENCE
    ok = done
    _reject_dense_roots(mix, b, delta, tau, ok, reason)
    z = np.full(n, np.nan)
    w = np.full(n, np.nan)
    i = np.flatnonzero(ok)
    if i.size and not sound:
        z[i] = pi[i] / delta[i]
    elif i.size:
        if spread:
            btau = (taup @ mix.coef_tau)[inv[i]]
            ideal = _ideal_tt(mix, ws, t_u)[inv[i]]
        elif i.size == n:
            btau = ws.btau[:n]
            np.matmul(taup, mix.coef_tau, out=btau)
            ideal = _ideal_tt(mix, ws, t)
        else:
            btau = taup[i] @ mix.coef_tau
            ideal = _ideal_tt(mix, ws, t[i])
        if i.size == n:
            z, w = _properties(mix, ws, btau, ideal, b, delta, t)
        else:
            z[i], w[i] = _properties(mix, ws, btau, ideal, b[i], delta[i], t[i])
        bad = ~np.isfinite(z[i]) | (z[i] <= 0)
        reason[i[bad]] = REASON_NO_CONVERGENCE
        ok[i[bad]] = False
    rho = np.where(ok, delta * mix.rho_reducing, np.nan)
    return np.where(ok, z, np.nan), rho, np.where(ok, w, np.nan), reason


@lru_cache(maxsize=512)
def _form(mix: GergMixture) -> ColumnForm:
    """The compiled kernel's column form of one composition."""
    return column_form(mix.t_exponents, mix.coef, mix.expo[0], mix.expo[1:])


def _solve_block_compiled(mix: GergMixture, ws: _Workspace, p: np.ndarray, t: np.ndarray):
    """Z only, by the compiled kernel; the points it does not settle, and those where a van der
    Waals loop is possible (see :func:`_reject_dense_roots`), go through :func:`_solve_block`."""
    scale = 1.0 / (mix.rho_reducing * R_GERG)
    delta, ok = solve_fast(_form(mix), p, t, scale, np.log(mix.t_reducing), 1, DELTA_MAX, STEP_TOL_HALLEY)
    z = scale * p / t / delta
    rho = delta * mix.rho_reducing
    redo = np.flatnonzero(~ok | ((mix.t_reducing / t > 0.8) & (delta > 0.3)))
    if redo.size == 0:
        return z, rho, np.nan, ""  # no speed of sound, no reason: spread by the caller
    reason = np.full(p.size, "", dtype=REASON_DTYPE)
    z[redo], rho[redo], _, reason[redo] = _solve_block(mix, ws, p[redo], t[redo], False)
    return z, rho, np.nan, reason


def _safe_solve(mix: GergMixture, ws: _Workspace, b: np.ndarray, delta: np.ndarray, lnpi: np.ndarray):
    """Safeguarded solve (:func:`meterfix.z.gas_root.solve_ln_density`): Halley (or Newton)
    steps in ln(delta) kept inside a bracket of the root, bisection where a step leaves it.
    ``delta`` holds the start and receives the roots. Returns the masks (converged, no root in
    the bracket); the rest did not converge."""
    bb = [b]  # the column coefficients of the active points, packed at the front of ws.bsub

    def select(act):
        bb[0] = ws.bsub[:act.size]
        np.take(b, act, axis=0, out=bb[0])

    return solve_ln_density(lambda d: _z_functions(mix, ws, bb[0], d, 3), select, delta, lnpi,
                            DELTA_MAX, MAX_ITER, STEP_TOL_HALLEY, STEP_TOL_NEWTON)


def _reject_dense_roots(mix, b, delta, tau, ok, reason):
    """Mark roots on a liquid-like branch: p(rho) must rise all the way from rho = 0.

    Only roots where a van der Waals loop is possible are checked (below 1.25 T_r and above
    delta = 0.3): the pressure slope is sampled at 24 densities between 0 and the root.
    """
    cand = np.flatnonzero(ok & (tau > 0.8) & (delta > 0.3))
    if cand.size == 0:
        return
    fr = np.linspace(0.04, 0.96, 24)
    dd = (delta[cand][:, None] * fr).ravel()
    bb = np.repeat(b[cand], fr.size, axis=0)
    zm1, zu = _z_functions(mix, _Workspace(mix, dd.size), bb, dd, 2)
    slope = (1.0 + zm1 + zu).reshape(cand.size, fr.size)
    bad = cand[~np.all(slope > 0, axis=1)]
    ok[bad] = False
    reason[bad] = REASON_NO_GAS_ROOT


def _ideal_tt(mix: GergMixture, ws: _Workspace, t: np.ndarray) -> np.ndarray:
    """tau^2 d2(alpha_0)/dtau^2 of the ideal-gas part (independent of the reducing temperature).

    -[sum x_i n3_i + sum n_k (y_k / sinh y_k)^2 + sum n_k (y_k / cosh y_k)^2] R*/R, y_k = theta_k / T,
    with y/sinh(y) = 2 y u / (1 - u^2) and y/cosh(y) = 2 y u / (1 + u^2), u = exp(-y).
    """
    out = np.full(t.shape, -mix.ideal_const)
    rt = 1.0 / t
    for theta, coef, sign in ((mix.ideal_sinh_theta, mix.ideal_sinh_coef, -1.0),
                              (mix.ideal_cosh_theta, mix.ideal_cosh_coef, 1.0)):
        if theta.size == 0:
            continue
        y = ws.i1[:t.size, :theta.size]
        u = ws.i2[:t.size, :theta.size]
        np.multiply.outer(rt, theta, out=y)
        np.negative(y, out=u)
        np.exp(u, out=u)
        np.multiply(y, u, out=y)  # y u
        np.multiply(u, u, out=u)
        if sign < 0:
            np.subtract(1.0, u, out=u)
        else:
            np.add(1.0, u, out=u)
        np.divide(y, u, out=y)
        np.multiply(y, y, out=y)
        out -= y @ (4.0 * coef)
    return out


def _properties(mix: GergMixture, ws: _Workspace, bt, ideal, b, delta, t):
    """Z and speed of sound [m/s] at the converged reduced density.

    ``bt`` holds the per-point tau-derivative coefficients ``tau^t @ coef_tau``, ``ideal`` the
    ideal-gas tau^2 d2(alpha_0)/dtau^2.
    """
    k = delta.size
    zm1, zu = _z_functions(mix, ws, b, delta, 2)
    nc = mix.n_col
    phi = ws.phi[:k]
    y = ws.y[:k]
    np.multiply(bt[:, :nc], phi, out=y)
    h = ws.h1[:k]
    np.matmul(y, mix.gmat[:, :_NP], out=h)
    a11 = np.einsum("ij,ij->i", h, ws.basis[:k, 1:])  # tau delta d2(ar)/dtau ddelta
    a20 = np.einsum("ij,ij->i", bt[:, nc:], phi)  # tau^2 d2(ar)/dtau2
    z = 1.0 + zm1
    slope = z + zu
    cv = -(ideal + a20)  # c_v / R
    cp = cv + (z - a11) ** 2 / slope  # c_p / R
    with np.errstate(invalid="ignore", divide="ignore"):
        w2 = cp / cv * slope * R_GERG * t / mix.molar_mass
        sound = np.sqrt(np.where((w2 > 0) & (cv > 0), w2, np.nan))
    return z, sound


def z_gerg2008(pressure, temperature, composition, *, speed_of_sound: bool = True,
               workers: int | None = None) -> ZResult:
    """Compressibility factor, density and speed of sound by GERG-2008.

    Z = 1 + delta (d alpha_r / d delta)_tau,   p = rho R T Z,   R = 8.314472 J/(mol K),
    with alpha_r the residual Helmholtz energy of the mixture (pure-substance terms plus binary
    departure functions) in the reduced variables delta = rho / rho_r(x), tau = T_r(x) / T.

    Parameters
    ----------
    pressure : float or ndarray [Pa]
        Absolute pressure.
    temperature : float or ndarray [K]
        Broadcast against ``pressure``.
    composition : Composition or mapping of component name -> mole fraction [-]
        Any of the 21 components.
    speed_of_sound : bool
        Also compute the speed of sound (needs the tau-derivatives and the ideal-gas part, about
        40 % of the time). Without it ``ZResult.speed_of_sound`` is None.
    workers : int, optional
        Threads for large inputs (blocks of points are independent). Default: one per CPU
        core, at most 4, from two blocks (2 x CHUNK points) up; 1 runs in the caller's
        thread. While the points are solved the BLAS library is held to one thread (each).

    Returns
    -------
    ZResult
        ``z``, ``molar_density`` [mol/m3], ``speed_of_sound`` [m/s] in the broadcast shape;
        ``molar_mass`` [kg/mol] (the model's own molar masses, a float). A point without a
        gas-phase root gets NaN and reason ``no-gas-root``; one where the solve did not converge
        ``no-convergence``; non-finite or non-positive p or T ``invalid-input``. Other points are
        not affected. ``extra`` holds the reducing temperature ``t_reducing`` [K] and density
        ``rho_reducing`` [mol/m3].

    Notes
    -----
    Range classes (Kunz & Wagner, J. Chem. Eng. Data 57 (2012) 3032, from memory): normal range 90-450 K
    and p <= 35 MPa (gas-phase density uncertainty about 0.1 %), extended range 60-700 K and
    p <= 70 MPa. GERG-2008 covers the full composition range of its 21 components, so no
    per-component limits are applied (GERG-2008 is stated for the whole composition range of
    its components; from memory). The density solve takes the gas-phase root: Halley steps
    (Newton where Halley's correction is not trusted) in ln(rho) on ln(p), started from the
    low-density series Z = 1 + b1 delta + b2 delta^2 and safeguarded by a bracket with bisection;
    a root is rejected as ``no-gas-root`` if dp/drho does not stay positive from rho = 0 up to it
    (checked where a van der Waals loop is possible). No phase-equilibrium calculation is made:
    inside the two-phase region the root of the gas branch (a supersaturated vapour) is
    returned, as the reference code does. Coefficients are those of the published tables (see
    :mod:`meterfix.z.tables.gerg2008_coefficients`).

    References
    ----------
    1. O. Kunz, W. Wagner, J. Chem. Eng. Data 57 (2012) 3032-3091, doi:10.1021/je300655b.
    2. AGA Report No. 8 Part 2 (2017); ISO 20765-2:2015.
    """
    comp = as_composition(composition)
    mix = mixture(comp.fractions)
    if not speed_of_sound and use_compiled(np.broadcast(np.asarray(pressure), np.asarray(temperature)).size):
        block = lambda ws, p, t: _solve_block_compiled(mix, ws, p, t)  # noqa: E731
    else:
        block = lambda ws, p, t: _solve_block(mix, ws, p, t, speed_of_sound)  # noqa: E731
    shape, pf, tf, bad, z, rho, w, reason = solve_points(
        pressure, temperature, lambda n: _Workspace(mix, n), block, CHUNK, workers)
    rng = range_by_box(pf, tf, NORMAL_RANGE, EXTENDED_RANGE)
    rng[bad] = OUTSIDE
    return ZResult(z.reshape(shape), rng.reshape(shape), reason.reshape(shape),
                   "gerg-2008", EDITION, molar_density=rho.reshape(shape), molar_mass=mix.molar_mass,
                   speed_of_sound=w.reshape(shape) if speed_of_sound else None,
                   extra={"t_reducing": mix.t_reducing, "rho_reducing": mix.rho_reducing})


def z_at_density(molar_density, temperature, composition) -> np.ndarray:
    """Z of GERG-2008 at a given molar density [mol/m3] and temperature [K] (no density solve).

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
    for a in range(0, rho.size, CHUNK):
        sl = slice(a, a + CHUNK)
        ws = _Workspace(mix, rho[sl].size)
        out[sl] = 1.0 + _z_functions(mix, ws, _tau_sums(mix, t[sl], mix.coef), rho[sl] / mix.rho_reducing, 1)[0]
    return out.reshape(np.shape(molar_density))


def _tau_sums(mix: GergMixture, t: np.ndarray, coef: np.ndarray) -> np.ndarray:
    """Σ_t coef τ^t at each point, computed once per distinct temperature (logged ones repeat)."""
    t_u, inv = np.unique(t, return_inverse=True)
    taup = np.exp(np.multiply.outer(np.log(mix.t_reducing / t_u), mix.t_exponents))
    return (taup @ coef)[inv.reshape(-1)]


def z_log_derivatives_gerg(pressure, temperature, composition) -> dict:
    """∂lnZ/∂lnp, ∂lnZ/∂lnT and the second derivatives by GERG-2008's own derivatives at the solved
    density (:mod:`meterfix.z.derivatives`): Z − 1 = δ ∂α^r/∂δ is linear in the column coefficients
    b_col(τ) = Σ_t c τ^t with τ = T_r/T, so T ∂Z/∂T = −τ ∂Z/∂τ and T ∂(T ∂Z/∂T)/∂T are the same sums with
    the coefficients of −t τ^t and t² τ^t; δ ∂/∂δ comes from the same moments (Kunz and Wagner 2012,
    Table B4, the derivatives of the residual part).

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
    te = mix.t_exponents
    coef3 = np.concatenate([mix.coef, -te[:, None] * mix.coef, te[:, None] ** 2 * mix.coef], axis=1)
    nc = mix.n_col

    def state_functions(i, t, molar_density):
        ws = _Workspace(mix, i.size)
        delta = molar_density / mix.rho_reducing
        b3 = _tau_sums(mix, t, coef3)
        zm1, zd, zdd = (v.copy() for v in _z_functions(mix, ws, np.ascontiguousarray(b3[:, :nc]), delta, 3))
        zt, zdt = (v.copy() for v in _z_functions(mix, ws, np.ascontiguousarray(b3[:, nc:2 * nc]), delta, 2))
        ztt = _z_functions(mix, ws, np.ascontiguousarray(b3[:, 2 * nc:]), delta, 1)[0].copy()
        return 1.0 + zm1, zd, zdd, zt, ztt, zdt

    return log_derivatives_at_solved_density(
        pressure, temperature, lambda p, t: z_gerg2008(p, t, comp, speed_of_sound=False), state_functions, CHUNK)


def _evaluate(pressure, temperature, gas, speed_of_sound=True, workers=None, **_options):
    return z_gerg2008(pressure, temperature, gas, speed_of_sound=speed_of_sound, workers=workers)


METHODS = [
    ZMethod(
        "gerg-2008", EDITION, _evaluate, gas_input="composition", family="equation of state",
        range_text="normal range 90-450 K, p <= 35 MPa; extended range 60-700 K, p <= 70 MPa; "
                   "21 components, full composition range",
        uncertainty_pct={NORMAL: 0.1, EXTENDED: 0.5},
        uncertainty_source="Kunz & Wagner, J. Chem. Eng. Data 57 (2012) 3032: gas-phase density "
                           "about 0.1 % in the normal range; 0.5 % taken for the extended range "
                           "(from memory)",
    )
]

__all__ = ["z_gerg2008", "EDITION", "NORMAL_RANGE", "EXTENDED_RANGE", "METHODS"]
