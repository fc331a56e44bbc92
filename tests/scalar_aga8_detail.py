"""A plain scalar AGA8 DETAIL, written term by term from the published equations.

Only for the tests: it fuzzes the vectorized ``meterfix.z.aga8_detail`` (same coefficient tables,
independent arithmetic and density solver). Equations of AGA Report No. 8 Part 1 (DETAIL
characterization; ISO 20765-1), in the report's units (density D in mol/L, R = 8.31451):

* mixture size K^5 = (sum x_i K_i^(5/2))^2 + 2 sum_{i<j} x_i x_j (K_ij^5 - 1) (K_i K_j)^(5/2);
  energy U^5 likewise with E_i, U_ij; G = sum x_i G_i + 2 sum_{i<j} x_i x_j (G*_ij - 1)(G_i + G_j)/2;
  Q = sum x_i Q_i; F = sum x_i^2 F_i;
* second virial B = sum_n a_n T^(-u_n) sum_ij x_i x_j E_ij^(u_n) (K_i K_j)^(3/2) B*_nij for n <= 18,
  B*_nij = (G_ij + 1 - g_n)^g_n (Q_i Q_j + 1 - q_n)^q_n (F_i^(1/2) F_j^(1/2) + 1 - f_n)^f_n
           (S_i S_j + 1 - s_n)^s_n (W_i W_j + 1 - w_n)^w_n, E_ij = E*_ij (E_i E_j)^(1/2),
  G_ij = G*_ij (G_i + G_j) / 2;
* C*_n = a_n (G + 1 - g_n)^g_n (Q^2 + 1 - q_n)^q_n (F + 1 - f_n)^f_n U^u_n;
* Z = 1 + B D - K^3 D sum_{n=13}^{18} C*_n T^(-u_n)
      + sum_{n=13}^{58} C*_n T^(-u_n) (b_n - c_n k_n (K^3 D)^k_n) (K^3 D)^b_n exp(-c_n (K^3 D)^k_n);
* speed of sound from the Helmholtz-energy derivatives and the ideal-gas heat capacity.
"""

from __future__ import annotations

import math

from meterfix.z.tables import aga8_detail_coefficients as C

R = C.R_DETAIL
NC = C.N_COMPONENTS


def molar_mass(x):
    """Molar mass [kg/mol] with the model's molar masses."""
    return sum(xi * m for xi, m in zip(x, C.MOLAR_MASS_G_PER_MOL)) / 1000.0


def _binary(table, i, j):
    if i == j:
        return 1.0
    return table.get((min(i, j), max(i, j)), 1.0)


def mixture_parameters(x):
    """(K^3 [L/mol], U [K], G, Q, F, Bs) with Bs[n] = the T-independent part of B's term n."""
    k_sum = sum(x[i] * C.SIZE[i] ** 2.5 for i in range(NC))
    u_sum = sum(x[i] * C.ENERGY[i] ** 2.5 for i in range(NC))
    k5 = k_sum ** 2
    u5 = u_sum ** 2
    g = sum(x[i] * C.ORIENTATION[i] for i in range(NC))
    q = sum(x[i] * C.QUADRUPOLE[i] for i in range(NC))
    f = sum(x[i] ** 2 * C.HIGH_TEMPERATURE[i] for i in range(NC))
    for i in range(NC):
        for j in range(i + 1, NC):
            if x[i] == 0 or x[j] == 0:
                continue
            k5 += 2 * x[i] * x[j] * (_binary(C.BINARY_SIZE, i, j) ** 5 - 1) * (C.SIZE[i] * C.SIZE[j]) ** 2.5
            u5 += 2 * x[i] * x[j] * (_binary(C.BINARY_CONFORMAL, i, j) ** 5 - 1) * (C.ENERGY[i] * C.ENERGY[j]) ** 2.5
            g += 2 * x[i] * x[j] * (_binary(C.BINARY_ORIENTATION, i, j) - 1) * (C.ORIENTATION[i] + C.ORIENTATION[j]) / 2
    bs = [0.0] * 18
    for n in range(18):
        gn, qn, fn, sn, wn = C.G_FLAG[n], C.Q_FLAG[n], C.F_FLAG[n], C.S_FLAG[n], C.W_FLAG[n]
        total = 0.0
        for i in range(NC):
            if x[i] == 0:
                continue
            for j in range(NC):
                if x[j] == 0:
                    continue
                eij = _binary(C.BINARY_ENERGY, i, j) * math.sqrt(C.ENERGY[i] * C.ENERGY[j])
                gij = _binary(C.BINARY_ORIENTATION, i, j) * (C.ORIENTATION[i] + C.ORIENTATION[j]) / 2
                bstar = ((gij + 1 - gn) ** gn * (C.QUADRUPOLE[i] * C.QUADRUPOLE[j] + 1 - qn) ** qn
                         * (math.sqrt(C.HIGH_TEMPERATURE[i] * C.HIGH_TEMPERATURE[j]) + 1 - fn) ** fn
                         * (C.DIPOLE[i] * C.DIPOLE[j] + 1 - sn) ** sn
                         * (C.ASSOCIATION[i] * C.ASSOCIATION[j] + 1 - wn) ** wn)
                total += x[i] * x[j] * bstar * eij ** C.U[n] * (C.SIZE[i] * C.SIZE[j]) ** 1.5
        bs[n] = C.A[n] * total
    return k5 ** 0.6, u5 ** 0.2, g, q, f, bs


def cstar(params):
    """C*_n (n = 13..58; zero below) from the mixture parameters."""
    k3, u, g, q, f, _ = params
    out = [0.0] * 58
    for n in range(12, 58):
        gn, qn, fn = C.G_FLAG[n], C.Q_FLAG[n], C.F_FLAG[n]
        out[n] = C.A[n] * (g + 1 - gn) ** gn * (q * q + 1 - qn) ** qn * (f + 1 - fn) ** fn * u ** C.U[n]
    return out


def helmholtz_terms(t, d, x, params=None):
    """Residual Helmholtz energy a_r / (R T) as a list of (value, b, c, k, u, is_virial) terms,
    so that the derivatives can be taken term by term. d in mol/L."""
    params = params if params is not None else mixture_parameters(x)
    k3, u, g, q, f, bs = params
    cs = cstar(params)
    dr = k3 * d
    terms = []
    for n in range(18):  # B D T^-u (linear in D)
        terms.append((bs[n] * d * t ** (-C.U[n]), 1, 0, 0, C.U[n]))
    for n in range(12, 18):  # - K^3 D C*_n T^-u
        terms.append((-cs[n] * dr * t ** (-C.U[n]), 1, 0, 0, C.U[n]))
    for n in range(12, 58):
        b, c, k = C.B[n], C.C[n], C.K[n]
        terms.append((cs[n] * t ** (-C.U[n]) * dr ** b * math.exp(-c * dr ** k), b, c, k, C.U[n]))
    return terms, dr


def derivatives(t, d, x, params=None):
    """(alpha, D alpha_D, D^2 alpha_DD, alpha + T alpha_T, D (alpha + T alpha_T)_D, T^2 (T alpha)_TT / T)
    of alpha = a_r / (R T); D = d/d(ln D) operator written out."""
    terms, dr = helmholtz_terms(t, d, x, params)
    a = a1 = a2 = at = atd = att = 0.0
    for v, b, c, k, u in terms:
        ck = c * k * dr ** k if c else 0.0
        g1 = b - ck  # D phi / phi
        g2 = g1 * (g1 - 1) - (c * k * k * dr ** k if c else 0.0)  # D^2 phi'' / phi
        a += v
        a1 += v * g1
        a2 += v * g2
        at += v * (1 - u)
        atd += v * (1 - u) * g1
        att += v * u * (u - 1)
    return a, a1, a2, at, atd, att


def pressure(d, t, x, params=None):
    """Pressure [kPa] and dP/dD [kPa/(mol/L)] at density d [mol/L]."""
    _, a1, a2, _, _, _ = derivatives(t, d, x, params)
    rt = R * t
    return d * rt * (1 + a1), rt * (1 + 2 * a1 + a2)


def density(p_kpa, t, x):
    """Gas-phase density [mol/L]: march up from zero density to a bracket, then Newton with
    bisection. Returns NaN where p(D) stops rising before reaching the target (no gas root)."""
    params = mixture_parameters(x)
    d_ideal = p_kpa / (R * t)
    lo, hi = 0.0, None
    d = 0.5 * d_ideal
    for _ in range(400):
        pp, dp = pressure(d, t, x, params)
        if not dp > 0:
            return math.nan
        if pp >= p_kpa:
            hi = d
            break
        lo = d
        d *= 1.05
        if d > 60.0:
            return math.nan
    if hi is None:
        return math.nan
    d = hi
    for _ in range(200):
        pp, dp = pressure(d, t, x, params)
        f = pp - p_kpa
        if f < 0:
            lo = d
        else:
            hi = d
        dn = d - f / dp if dp > 0 else 0.5 * (lo + hi)
        if not (lo < dn < hi):
            dn = 0.5 * (lo + hi)
        if abs(dn - d) <= 1e-15 * d or hi - lo <= 1e-15 * hi:
            return dn
        d = dn
    return d


def ideal_cv(t, x):
    """Ideal-gas isochoric heat capacity / R."""
    total = 0.0
    for i in range(NC):
        if x[i] == 0:
            continue
        n3, n4, n5, n6, n7, th4, th5, th6, th7 = C.IDEAL_GAS[i]
        s = n3 - 1.0
        for n, th, hyper in ((n4, th4, math.sinh), (n5, th5, math.cosh), (n6, th6, math.sinh), (n7, th7, math.cosh)):
            if th > 0:
                y = th / t
                s += n * (y / hyper(y)) ** 2
        total += x[i] * s
    return total


def properties(p_pa, t, x):
    """{'z', 'rho' [mol/m3], 'w' [m/s], 'cv' [J/(mol K)]} at p [Pa], T [K]; NaN where there is
    no gas root (w also NaN where the equation gives no real speed of sound)."""
    d = density(p_pa / 1000.0, t, x)
    if not math.isfinite(d):
        return {"z": math.nan, "rho": math.nan, "w": math.nan, "cv": math.nan}
    a, a1, a2, at, atd, att = derivatives(t, d, x, mixture_parameters(x))
    z = 1 + a1
    slope = 1 + 2 * a1 + a2  # (dP/dD) / (R T)
    dpdt = 1 + atd  # (dP/dT) / (D R)
    cv = ideal_cv(t, x) - att
    cp = cv + dpdt ** 2 / slope
    w2 = cp / cv * slope * R * t / molar_mass(x)
    w = math.sqrt(w2) if w2 > 0 and cv > 0 else math.nan
    return {"z": z, "rho": d * 1000.0, "w": w, "cv": cv * R}
