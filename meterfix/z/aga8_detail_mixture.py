"""Composition-dependent part of AGA8 DETAIL, computed once per composition and cached.

The DETAIL equation (AGA Report No. 8 Part 1, 2017; ISO 20765-1) writes the reduced residual
Helmholtz energy as

    alpha_r = a_r / (R T) = B D - K^3 D sum_{n=13}^{18} C*_n T^-u_n
              + sum_{n=13}^{58} C*_n T^-u_n delta^b_n exp(-c_n delta^k_n),   delta = K^3 D,

with D the molar density [mol/L], K^3 the mixture size parameter and B the second virial
coefficient, B = sum_{n=1}^{18} T^-u_n Bs_n. For one composition this is a fixed sum
``sum_col W_col(T) phi_col(delta)`` over 25 columns ``phi = delta^b exp(-delta^k)`` (k = 0 for
no exponential), where every coefficient ``W_col(T) = sum_u coef[u, col] T^-u`` is a combination
of the 26 distinct temperature exponents u. This module computes ``coef`` (and the
temperature-derivative versions) and the ideal-gas heat-capacity terms of one composition.

Columns are laid out in groups of equal k so that the vectorized solver works on slices:
k = 0: b = 1..7; k = 1: b = 3, 8; k = 2: b = 1..9; k = 3: b = 1, 3; k = 4: b = 1..5.

References
----------
1. AGA Report No. 8 Part 1 (2017), Thermodynamic properties of natural gas and related gases,
   DETAIL and GROSS equations of state; ISO 20765-1:2005; ISO 12213-2:2006.
2. K. E. Starling, J. L. Savidge, Compressibility factors of natural gas and other related
   hydrocarbon gases, AGA Transmission Measurement Committee Report No. 8, 2nd ed. (1992).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from .tables import aga8_detail_coefficients as C

#: model gas constant [J/(mol K)]
R_DETAIL = C.R_DETAIL
MOLAR_MASS = np.array(C.MOLAR_MASS_G_PER_MOL) / 1000.0  # [kg/mol]

_A = np.array(C.A)
_B = np.array(C.B)
_K = np.array(C.K)
_U = np.array(C.U)
#: distinct temperature exponents (26)
U_EXPONENTS = np.unique(_U)

#: column layout: (b, k) per column, in groups of equal k
COLUMNS = ([(b, 0) for b in range(1, 8)] + [(3, 1), (8, 1)] + [(b, 2) for b in range(1, 10)]
           + [(1, 3), (3, 3)] + [(b, 4) for b in range(1, 6)])
N_COL = len(COLUMNS)
COL_B = np.array([b for b, _ in COLUMNS], dtype=float)
COL_K = np.array([k for _, k in COLUMNS], dtype=float)
_COL_OF = {c: i for i, c in enumerate(COLUMNS)}


def _pair_matrix(table, fill=1.0):
    m = np.full((C.N_COMPONENTS, C.N_COMPONENTS), fill)
    for (i, j), v in table.items():
        m[i, j] = m[j, i] = v
    np.fill_diagonal(m, 1.0)
    return m


def _static_tables():
    """Composition-independent arrays of the mixing rules (built once at import)."""
    kk = np.array(C.SIZE)
    ee = np.array(C.ENERGY)
    gg = np.array(C.ORIENTATION)
    qq = np.array(C.QUADRUPOLE)
    ff = np.array(C.HIGH_TEMPERATURE)
    ss = np.array(C.DIPOLE)
    ww = np.array(C.ASSOCIATION)
    kij = _pair_matrix(C.BINARY_SIZE)
    uij = _pair_matrix(C.BINARY_CONFORMAL)
    eij_star = _pair_matrix(C.BINARY_ENERGY)
    gij_star = _pair_matrix(C.BINARY_ORIENTATION)
    off = 1.0 - np.eye(C.N_COMPONENTS)  # the binary sums run over i != j (twice each pair i < j)
    k_bin = off * (kij ** 5 - 1.0) * np.outer(kk, kk) ** 2.5
    u_bin = off * (uij ** 5 - 1.0) * np.outer(ee, ee) ** 2.5
    g_bin = off * (gij_star - 1.0) * np.add.outer(gg, gg) / 2.0
    eij = eij_star * np.sqrt(np.outer(ee, ee))
    gij = gij_star * np.add.outer(gg, gg) / 2.0
    # B*_nij E_ij^u_n (K_i K_j)^(3/2) a_n for the 18 second-virial terms
    bnij = np.empty((18, C.N_COMPONENTS, C.N_COMPONENTS))
    for n in range(18):
        g_n, q_n, f_n, s_n, w_n = C.G_FLAG[n], C.Q_FLAG[n], C.F_FLAG[n], C.S_FLAG[n], C.W_FLAG[n]
        bstar = ((gij + 1 - g_n) ** g_n * (np.outer(qq, qq) + 1 - q_n) ** q_n
                 * (np.sqrt(np.outer(ff, ff)) + 1 - f_n) ** f_n * (np.outer(ss, ss) + 1 - s_n) ** s_n
                 * (np.outer(ww, ww) + 1 - w_n) ** w_n)
        bnij[n] = _A[n] * bstar * eij ** _U[n] * np.outer(kk, kk) ** 1.5
    return dict(k25=kk ** 2.5, e25=ee ** 2.5, g=gg, q=qq, f=ff, k_bin=k_bin, u_bin=u_bin, g_bin=g_bin, bnij=bnij)


_S = _static_tables()


@dataclass(frozen=True, eq=False)
class DetailMixture:
    """Everything AGA8 DETAIL needs for one composition.

    Attributes
    ----------
    fractions : ndarray (21,)        mole fractions [-]
    molar_mass : float               [kg/mol], the model's molar masses
    k3 : float                       mixture size parameter K^3 [L/mol]
    energy : float                   mixture energy parameter U [K]
    coef : ndarray (26, 25)          W_col(T) = T^-u @ coef (columns of the module docstring)
    coef_t1 : ndarray (26, 25)       (1 - u) coef: W + T dW/dT
    coef_t2 : ndarray (26, 25)       u (u - 1) coef: T^2 d2(T W)/dT2 / T
    virial : ndarray (26, 2)         T^-u @ virial = (b1, b2) of Z = 1 + b1 delta + b2 delta^2 + ...
    coef_virial_t : ndarray (27, 26) [coef, virial] transposed, for one matrix product per block
    ideal_const : float              sum x_i (n3_i - 1): constant part of cv0 / R
    ideal_sinh_coef, ideal_sinh_theta, ideal_cosh_coef, ideal_cosh_theta : ndarray
        x_i n_k and theta_k [K] of the hyperbolic terms of cv0 / R
    """

    fractions: np.ndarray
    molar_mass: float
    k3: float
    energy: float
    coef: np.ndarray
    coef_t1: np.ndarray
    coef_t2: np.ndarray
    virial: np.ndarray
    coef_virial_t: np.ndarray
    ideal_const: float
    ideal_sinh_coef: np.ndarray
    ideal_sinh_theta: np.ndarray
    ideal_cosh_coef: np.ndarray
    ideal_cosh_theta: np.ndarray


def mixture_parameters(x: np.ndarray):
    """K^3 [L/mol], U [K], G, Q, F and Bs (18) of the DETAIL mixing rules.

    Parameters
    ----------
    x : ndarray (21,) [mol/mol]   mole fractions in canonical order
    """
    k5 = (x @ _S["k25"]) ** 2 + x @ _S["k_bin"] @ x
    u5 = (x @ _S["e25"]) ** 2 + x @ _S["u_bin"] @ x
    g = x @ _S["g"] + x @ _S["g_bin"] @ x
    q = x @ _S["q"]
    f = (x * x) @ _S["f"]
    bs = np.einsum("nij,i,j->n", _S["bnij"], x, x)
    return float(k5 ** 0.6), float(u5 ** 0.2), float(g), float(q), float(f), bs


def _build(fractions: np.ndarray) -> DetailMixture:
    x = np.asarray(fractions, dtype=float)
    k3, u, g, q, f, bs = mixture_parameters(x)
    gf, qf, ff = np.array(C.G_FLAG), np.array(C.Q_FLAG), np.array(C.F_FLAG)
    cstar = _A * (g + 1 - gf) ** gf * (q * q + 1 - qf) ** qf * (f + 1 - ff) ** ff * u ** _U
    coef = np.zeros((U_EXPONENTS.size, N_COL))
    row = np.searchsorted(U_EXPONENTS, _U)
    lin = _COL_OF[(1, 0)]
    for n in range(18):  # B D = (Bs_n / K^3) delta T^-u
        coef[row[n], lin] += bs[n] / k3
    for n in range(12, 18):  # - K^3 D C*_n T^-u = - C*_n delta T^-u
        coef[row[n], lin] -= cstar[n]
    for n in range(12, 58):
        coef[row[n], _COL_OF[(int(_B[n]), int(_K[n]))]] += cstar[n]
    # low-density series: phi g = b delta^b - (b + k) delta^(b + k) + ...; Z - 1 = sum W phi g
    v1 = np.where(COL_B == 1, 1.0, 0.0)
    v2 = np.where(COL_B == 2, 2.0, 0.0) - np.where((COL_B == 1) & (COL_K == 1), 2.0, 0.0)
    ue = U_EXPONENTS[:, None]
    sinh_c, sinh_t, cosh_c, cosh_t = [], [], [], []
    ideal_const = 0.0
    for i in np.flatnonzero(x > 0):
        n3, n4, n5, n6, n7, th4, th5, th6, th7 = C.IDEAL_GAS[i]
        ideal_const += x[i] * (n3 - 1.0)
        for n, th, c_list, t_list in ((n4, th4, sinh_c, sinh_t), (n5, th5, cosh_c, cosh_t),
                                      (n6, th6, sinh_c, sinh_t), (n7, th7, cosh_c, cosh_t)):
            if th > 0:
                c_list.append(x[i] * n)
                t_list.append(th)
    arrays = dict(fractions=x.copy(), coef=coef, coef_t1=coef * (1.0 - ue), coef_t2=coef * (ue * (ue - 1.0)),
                  virial=coef @ np.stack([v1, v2], axis=1),
                  coef_virial_t=np.ascontiguousarray(np.concatenate([coef, coef @ np.stack([v1, v2], axis=1)], axis=1).T),
                  ideal_sinh_coef=np.array(sinh_c), ideal_sinh_theta=np.array(sinh_t),
                  ideal_cosh_coef=np.array(cosh_c), ideal_cosh_theta=np.array(cosh_t))
    for a in arrays.values():
        a.setflags(write=False)
    return DetailMixture(molar_mass=float(x @ MOLAR_MASS), k3=k3, energy=u, ideal_const=ideal_const, **arrays)


@lru_cache(maxsize=512)
def _cached(key: bytes) -> DetailMixture:
    return _build(np.frombuffer(key, dtype=float))


def mixture(fractions) -> DetailMixture:
    """The cached :class:`DetailMixture` for 21 mole fractions [-] in canonical order."""
    x = np.ascontiguousarray(fractions, dtype=float)
    return _cached(x.tobytes())
