"""A plain scalar GERG-2008, written term by term from the published equations.

Only for the tests: it fuzzes the vectorized ``meterfix.z.gerg2008`` (same coefficient tables,
independent arithmetic and density solver). Equations of Kunz & Wagner, J. Chem. Eng. Data 57
(2012) 3032, as adopted by AGA Report No. 8 Part 2 (2017):

* reduced variables delta = rho / rho_r(x), tau = T_r(x) / T with the quadratic mixing rules of
  the reducing functions;
* alpha_r = sum_i x_i alpha_r,oi(delta, tau) + sum_i sum_j>i x_i x_j F_ij alpha_r,ij(delta, tau);
* Z = 1 + delta d(alpha_r)/d(delta); p = rho R T Z;
* speed of sound from w^2 = (c_p / c_v) (dp/drho)_T / M, c_v from the ideal-gas part.
"""

from __future__ import annotations

import math

from meterfix.z.tables import gerg2008_coefficients as C

R = C.R_GERG


def molar_mass(x):
    """Molar mass [kg/mol] with the model's molar masses."""
    return sum(xi * m for xi, m in zip(x, C.MOLAR_MASS_G_PER_MOL)) / 1000.0


def reducing(x):
    """Reducing temperature [K] and reducing density [mol/m3]."""
    rhoc = [d * 1000.0 for d in C.CRITICAL_DENSITY_MOL_PER_L]
    tc = C.CRITICAL_TEMPERATURE_K
    n = len(x)
    v = 0.0
    t = 0.0
    for i in range(n):
        if x[i] <= 0:
            continue
        v += x[i] ** 2 / rhoc[i]
        t += x[i] ** 2 * tc[i]
        for j in range(i + 1, n):
            if x[j] <= 0:
                continue
            bv, gv, bt, gt = C.REDUCING[(i, j)]
            vcij = 0.125 * (rhoc[i] ** (-1.0 / 3.0) + rhoc[j] ** (-1.0 / 3.0)) ** 3
            tcij = math.sqrt(tc[i] * tc[j])
            v += 2 * x[i] * x[j] * bv * gv * (x[i] + x[j]) / (bv ** 2 * x[i] + x[j]) * vcij
            t += 2 * x[i] * x[j] * bt * gt * (x[i] + x[j]) / (bt ** 2 * x[i] + x[j]) * tcij
    return t, 1.0 / v


def alpha_r(delta, tau, x):
    """Residual Helmholtz energy derivatives.

    Returns (a, d*a_d, d^2*a_dd, t*a_t, t^2*a_tt, t*d*a_td) with d = delta, t = tau.
    """
    out = [0.0] * 6

    def add(f, dfd, dfdd, t):
        # f: term value, dfd = delta*df/ddelta, dfdd = delta^2*d2f/ddelta2, tau-exponent t
        out[0] += f
        out[1] += dfd
        out[2] += dfdd
        out[3] += t * f
        out[4] += t * (t - 1) * f
        out[5] += t * dfd

    for i, xi in enumerate(x):
        if xi <= 0:
            continue
        for n, c, d, t in C.PURE_TERMS[i]:
            if c == 0:
                f = xi * n * delta ** d * tau ** t
                add(f, d * f, d * (d - 1) * f, t)
            else:
                u = delta ** c
                f = xi * n * delta ** d * tau ** t * math.exp(-u)
                g = d - c * u
                add(f, g * f, (g * (g - 1) - c * c * u) * f, t)
    for (i, j), (name, fij) in C.DEPARTURE_PAIRS.items():
        if x[i] <= 0 or x[j] <= 0:
            continue
        for n, d, t, eta, eps, beta, gam in C.DEPARTURE_FUNCTIONS[name]:
            if eta == 0 and eps == 0 and beta == 0 and gam == 0:
                f = x[i] * x[j] * fij * n * delta ** d * tau ** t
                add(f, d * f, d * (d - 1) * f, t)
            else:
                f = x[i] * x[j] * fij * n * delta ** d * tau ** t * math.exp(
                    -eta * (delta - eps) ** 2 - beta * (delta - gam))
                h = d - 2 * eta * delta * (delta - eps) - beta * delta  # delta * d ln f / d delta
                add(f, h * f, (h * h - d - 2 * eta * delta ** 2) * f, t)
    return out


def alpha0_tt(temperature, x):
    """tau^2 d2(alpha_0)/d(tau)^2 of the ideal-gas part (any reducing temperature)."""
    rs = C.R_STAR / C.R_GERG
    s = 0.0
    for i, xi in enumerate(x):
        if xi <= 0:
            continue
        n3, n4, n5, n6, n7, th4, th5, th6, th7 = C.IDEAL_GAS[i]
        term = n3
        for n, th, kind in ((n4, th4, "sinh"), (n5, th5, "cosh"), (n6, th6, "sinh"), (n7, th7, "cosh")):
            if th > 0:
                y = th / temperature
                if kind == "sinh":
                    term += n * (y / math.sinh(y)) ** 2
                else:
                    term += n * (y / math.cosh(y)) ** 2
        s += xi * rs * term
    return -s


def pressure(rho, temperature, x):
    """Pressure [Pa] and Z at density rho [mol/m3]."""
    tr, rhor = reducing(x)
    ar = alpha_r(rho / rhor, tr / temperature, x)
    z = 1 + ar[1]
    return rho * R * temperature * z, z


def density(p, temperature, x, max_iter=200):
    """Gas-phase molar density [mol/m3] at p [Pa], T [K]: Newton on p(rho), bisection fallback.

    Returns NaN when no gas root is found.
    """
    tr, rhor = reducing(x)
    tau = tr / temperature

    def p_and_slope(rho):
        ar = alpha_r(rho / rhor, tau, x)
        return rho * R * temperature * (1 + ar[1]), R * temperature * (1 + 2 * ar[1] + ar[2])

    rho = p / (R * temperature)
    lo, hi = 0.0, 6.0 * rhor
    for _ in range(max_iter):
        pp, slope = p_and_slope(rho)
        good = math.isfinite(pp) and pp > 0 and slope > 0
        if good:
            new = rho - (pp - p) / slope
            if abs(new - rho) <= 1e-13 * rho and lo <= new <= hi:
                return new if _on_gas_branch(p_and_slope, new) else math.nan
        if not good or pp > p:
            hi = min(hi, rho)
        else:
            lo = max(lo, rho)
        if not good or not (lo < new < hi):
            new = 0.5 * (lo + hi)
        if hi - lo < 1e-15 * hi:
            return math.nan
        rho = new
    return math.nan


def _on_gas_branch(p_and_slope, rho, n=200):
    """True if dp/drho > 0 all the way from 0 to rho (no van der Waals loop on the way)."""
    return all(p_and_slope(rho * k / n)[1] > 0 for k in range(1, n))


def properties(p, temperature, x):
    """Z, molar density [mol/m3], molar mass [kg/mol] and speed of sound [m/s] at p [Pa], T [K]."""
    rho = density(p, temperature, x)
    mm = molar_mass(x)
    if not math.isfinite(rho):
        return dict(z=math.nan, rho=math.nan, molar_mass=mm, w=math.nan)
    tr, rhor = reducing(x)
    a, ad, add, at, att, atd = alpha_r(rho / rhor, tr / temperature, x)
    z = 1 + ad
    cv = -R * (alpha0_tt(temperature, x) + att)
    dpdrho = R * temperature * (1 + 2 * ad + add)
    cp = cv + R * (1 + ad - atd) ** 2 / (1 + 2 * ad + add)
    w = math.sqrt(cp / cv * dpdrho / mm)
    return dict(z=z, rho=rho, molar_mass=mm, w=w)
