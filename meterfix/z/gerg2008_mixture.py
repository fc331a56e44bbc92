"""Composition-dependent part of GERG-2008, computed once per composition and cached.

For one composition the residual Helmholtz energy of GERG-2008 is a fixed sum of terms
``a_k tau^t_k phi_col(delta)`` with ``phi_col = delta^d W_g(delta)``, where the shape factor
``W_g`` is 1 (polynomial terms), ``exp(-delta^c)`` (exponential terms of the pure-substance
equations, c = 1, 2, 3, 5, 6) or ``exp(-eta (delta - epsilon)^2 - beta (delta - gamma))``
(exponential terms of the binary departure functions). This module merges the terms of every
active pure component and every active binary pair that share ``(W_g, d, t)`` and lays them out
as matrices, so that :mod:`meterfix.z.gerg2008` works on 2-D arrays with a few matrix products:

* ``coef[t, col]``: merged coefficient of the term with tau-exponent ``t_exponents[t]`` in
  column ``col`` = (shape factor, delta-exponent d); per point ``b = tau^t @ coef``;
* ``expo``: ``ln phi_col`` as a linear form in ``(ln delta, 1, delta, ..., delta^6)``;
* ``gmat``: polynomial coefficients in delta (powers 0..N_POWERS-1) of ``D^k phi / phi`` for
  k = 1, 2, 3, where ``D = delta d/d(delta)``. Then, at fixed tau,
  ``Z - 1 = sum b phi D phi/phi``, ``dZ/d ln(delta) = sum b phi D^2 phi/phi`` and
  ``d2Z/d ln(delta)^2 = sum b phi D^3 phi/phi``.

References
----------
1. O. Kunz, W. Wagner, "The GERG-2008 wide-range equation of state for natural gases and other
   mixtures: an expansion of GERG-2004", J. Chem. Eng. Data 57 (2012) 3032-3091.
2. AGA Report No. 8 Part 2 (2017), Thermodynamic properties of natural gas and related gases,
   GERG-2008 equation of state; ISO 20765-2:2015.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from numpy.polynomial import polynomial as npoly

from .tables import gerg2008_coefficients as C

#: model gas constant [J/(mol K)]
R_GERG = C.R_GERG
MOLAR_MASS = np.array(C.MOLAR_MASS_G_PER_MOL) / 1000.0  # [kg/mol]
CRITICAL_DENSITY = np.array(C.CRITICAL_DENSITY_MOL_PER_L) * 1000.0  # [mol/m3]
CRITICAL_TEMPERATURE = np.array(C.CRITICAL_TEMPERATURE_K)  # [K]
#: powers of delta in ``ln W`` (delta^0 .. delta^6)
N_EXPO = 7
#: powers of delta in the derivative polynomials (up to (6 delta^6)^3 = delta^18)
N_POWERS = 19


@dataclass(frozen=True, eq=False)
class GergMixture:
    """Everything GERG-2008 needs for one composition (see the module docstring).

    Attributes
    ----------
    fractions : ndarray (21,)          mole fractions [-]
    molar_mass : float                 [kg/mol], the model's molar masses
    t_reducing : float                 reducing temperature T_r [K]
    rho_reducing : float               reducing density rho_r [mol/m3]
    t_exponents : ndarray (n_t,)       distinct tau-exponents of the active terms
    coef : ndarray (n_t, n_col)        merged coefficients a
    coef_tau : ndarray (n_t, 2 n_col)  a t and a t (t - 1), side by side (tau-derivatives)
    expo : ndarray (1 + N_EXPO, n_col) ln(phi) on the basis (ln delta, delta^0 .. delta^6)
    gmat : ndarray (n_col, 3 N_POWERS) polynomials of D phi/phi, D^2 phi/phi, D^3 phi/phi
    virial : ndarray (n_t, 2)          tau-powers -> (b1, b2) of Z = 1 + b1 delta + b2 delta^2 + ...
    ideal_const : float                sum x_i (R*/R) n3_i
    ideal_sinh_coef, ideal_sinh_theta, ideal_cosh_coef, ideal_cosh_theta : ndarray
        x_i (R*/R) n_k and theta_k [K] of the Planck-Einstein terms of the ideal-gas part
    """

    fractions: np.ndarray
    molar_mass: float
    t_reducing: float
    rho_reducing: float
    t_exponents: np.ndarray
    coef: np.ndarray
    coef_tau: np.ndarray
    expo: np.ndarray
    gmat: np.ndarray
    virial: np.ndarray
    ideal_const: float
    ideal_sinh_coef: np.ndarray
    ideal_sinh_theta: np.ndarray
    ideal_cosh_coef: np.ndarray
    ideal_cosh_theta: np.ndarray

    @property
    def n_col(self) -> int:
        return self.coef.shape[1]


def reducing_functions(x: np.ndarray) -> tuple[float, float]:
    """Reducing temperature [K] and density [mol/m3] of GERG-2008 for mole fractions x.

    T_r = sum_i sum_j x_i x_j beta_T,ij gamma_T,ij (x_i + x_j)/(beta_T,ij^2 x_i + x_j) sqrt(T_ci T_cj)
    1/rho_r = sum_i sum_j x_i x_j beta_v,ij gamma_v,ij (x_i + x_j)/(beta_v,ij^2 x_i + x_j)
              (rho_ci^(-1/3) + rho_cj^(-1/3))^3 / 8
    (the i = j terms reduce to x_i^2 T_ci and x_i^2 / rho_ci).
    """
    idx = np.flatnonzero(x > 0)
    xa = x[idx]
    tr = float(np.sum(xa ** 2 * CRITICAL_TEMPERATURE[idx]))
    vr = float(np.sum(xa ** 2 / CRITICAL_DENSITY[idx]))
    for a, i in enumerate(idx):
        for j in idx[a + 1:]:
            bv, gv, bt, gt = C.REDUCING[(int(i), int(j))]
            xi, xj = x[i], x[j]
            vc = 0.125 * (CRITICAL_DENSITY[i] ** (-1.0 / 3.0) + CRITICAL_DENSITY[j] ** (-1.0 / 3.0)) ** 3
            tc = np.sqrt(CRITICAL_TEMPERATURE[i] * CRITICAL_TEMPERATURE[j])
            vr += 2 * xi * xj * bv * gv * (xi + xj) / (bv * bv * xi + xj) * vc
            tr += 2 * xi * xj * bt * gt * (xi + xj) / (bt * bt * xi + xj) * tc
    return tr, 1.0 / vr


def _ln_shape(shape) -> np.ndarray:
    """Coefficients in delta (powers 0..N_EXPO-1) of ln W for a shape factor."""
    e = np.zeros(N_EXPO)
    if shape[0] == "exp":  # W = exp(-delta^c)
        e[shape[1]] = -1.0
    elif shape[0] == "gauss":  # W = exp(-eta (delta - eps)^2 - beta (delta - gam))
        _, eta, eps, beta, gam = shape
        e[0] = -eta * eps * eps + beta * gam
        e[1] = 2 * eta * eps - beta
        e[2] = -eta
    return e


def _d_op(c: np.ndarray) -> np.ndarray:
    """delta d/d(delta) of a polynomial given by its coefficients."""
    return c * np.arange(c.size)


def _derivative_polys(d: int, e: np.ndarray) -> list[np.ndarray]:
    """D phi/phi, D^2 phi/phi, D^3 phi/phi for phi = delta^d exp(E(delta)), D = delta d/d(delta)."""
    g1 = _d_op(e)
    g1[0] += d  # D ln(phi) = d + delta E'
    dg1 = _d_op(g1)
    d2g1 = _d_op(dg1)
    out = [g1, npoly.polyadd(npoly.polymul(g1, g1), dg1),
           npoly.polyadd(npoly.polyadd(npoly.polymul(npoly.polymul(g1, g1), g1), 3.0 * npoly.polymul(g1, dg1)),
                         d2g1)]
    res = []
    for p in out:
        q = np.zeros(N_POWERS)
        q[:p.size] = p[:N_POWERS]
        if p.size > N_POWERS and np.any(p[N_POWERS:] != 0):
            raise AssertionError("derivative polynomial needs more powers of delta")
        res.append(q)
    return res


@lru_cache(maxsize=None)
def _column_shape(shape: tuple, d: int):
    """ln-shape polynomial and its derivative polynomials of one column kind: they depend on the
    column (shape, delta exponent) only, never on the composition, so each is built once."""
    e = _ln_shape(shape)
    polys = np.concatenate(_derivative_polys(d, e))
    e.setflags(write=False)
    polys.setflags(write=False)
    return e, polys


def _build(fractions: np.ndarray) -> GergMixture:
    x = np.asarray(fractions, dtype=float)
    tr, rhor = reducing_functions(x)
    terms: dict[tuple, float] = {}  # (shape, d, t) -> merged coefficient

    def add(shape, d, t, a):
        key = (shape, int(d), float(t))
        terms[key] = terms.get(key, 0.0) + a

    for i in np.flatnonzero(x > 0):
        for n, c, d, t in C.PURE_TERMS[i]:
            add(("poly",) if c == 0 else ("exp", int(c)), d, t, x[i] * n)
    for (i, j), (name, fij) in C.DEPARTURE_PAIRS.items():
        if x[i] > 0 and x[j] > 0:
            xij = x[i] * x[j] * fij
            for n, d, t, eta, eps, beta, gam in C.DEPARTURE_FUNCTIONS[name]:
                if eta == 0 and eps == 0 and beta == 0 and gam == 0:
                    shape = ("poly",)
                else:
                    shape = ("gauss", float(eta), float(eps), float(beta), float(gam))
                add(shape, d, t, xij * n)

    columns = sorted({(k[0], k[1]) for k in terms}, key=repr)
    t_exp = np.array(sorted({k[2] for k in terms}))
    n_t, n_col = len(t_exp), len(columns)
    col_of = {c: k for k, c in enumerate(columns)}
    coef = np.zeros((n_t, n_col))
    for (shape, d, t), a in terms.items():
        coef[np.searchsorted(t_exp, t), col_of[(shape, d)]] += a
    expo = np.zeros((1 + N_EXPO, n_col))
    gmat = np.zeros((n_col, 3 * N_POWERS))
    v1 = np.zeros(n_col)
    v2 = np.zeros(n_col)
    for k, (shape, d) in enumerate(columns):
        e, polys = _column_shape(shape, d)
        expo[0, k] = d
        expo[1:, k] = e
        gmat[k] = polys
        # low-density series: Z - 1 = b1 delta + b2 delta^2 + ...  (W = W0 (1 + E1 delta + ...))
        w0 = np.exp(e[0])
        if d == 1:
            v1[k] = w0
            v2[k] = 2.0 * e[1] * w0
        elif d == 2:
            v2[k] = 2.0 * w0
    virial = coef @ np.stack([v1, v2], axis=1)
    # ideal-gas part (only tau^2 d2/dtau2 is needed: heat capacity, speed of sound)
    rs = C.R_STAR / C.R_GERG
    ideal_const = 0.0
    sinh_c, sinh_t, cosh_c, cosh_t = [], [], [], []
    for i in np.flatnonzero(x > 0):
        n3, n4, n5, n6, n7, th4, th5, th6, th7 = C.IDEAL_GAS[i]
        ideal_const += x[i] * rs * n3
        for n, th, c_list, t_list in ((n4, th4, sinh_c, sinh_t), (n5, th5, cosh_c, cosh_t),
                                      (n6, th6, sinh_c, sinh_t), (n7, th7, cosh_c, cosh_t)):
            if th > 0:
                c_list.append(x[i] * rs * n)
                t_list.append(th)
    arrays = dict(t_exponents=t_exp, coef=coef,
                  coef_tau=np.concatenate([coef * t_exp[:, None], coef * (t_exp * (t_exp - 1))[:, None]], axis=1),
                  expo=expo, gmat=gmat, virial=virial, fractions=x.copy(),
                  ideal_sinh_coef=np.array(sinh_c), ideal_sinh_theta=np.array(sinh_t),
                  ideal_cosh_coef=np.array(cosh_c), ideal_cosh_theta=np.array(cosh_t))
    for a in arrays.values():
        a.setflags(write=False)
    return GergMixture(molar_mass=float(x @ MOLAR_MASS), t_reducing=tr, rho_reducing=rhor,
                       ideal_const=ideal_const, **arrays)


@lru_cache(maxsize=512)
def _cached(key: bytes) -> GergMixture:
    return _build(np.frombuffer(key, dtype=float))


def mixture(fractions) -> GergMixture:
    """The cached :class:`GergMixture` for 21 mole fractions [-] in canonical order."""
    x = np.ascontiguousarray(fractions, dtype=float)
    return _cached(x.tobytes())
