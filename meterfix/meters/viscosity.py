"""Dynamic viscosity of natural gas by the Lee, Gonzalez and Eakin (1966) correlation.

mu = 1e-4 K exp(X rho^Y) [cP], K = (9.4 + 0.02 M) T^1.5 / (209 + 19 M + T),
X = 3.5 + 986 / T + 0.01 M, Y = 2.4 - 0.2 X, with T in degrees Rankine, M in g/mol and rho in
g/cm3. Stated accuracy about 2 to 4 % for natural gases (the paper). In an orifice's C it acts
through Re_D only: 10 % in mu moves C by well under 0.1 % at pipeline Reynolds numbers.

Reference: A. L. Lee, M. H. Gonzalez, B. E. Eakin, "The viscosity of natural gases",
J. Petroleum Technology 18 (1966) 997-1000.
"""

from __future__ import annotations

import numpy as np


def viscosity_lee_gonzalez_eakin_1966(temperature, density, molar_mass):
    """Dynamic viscosity of a natural gas [Pa s].

    Parameters
    ----------
    temperature : float or ndarray [K]
    density : float or ndarray [kg/m3]   at the same state
    molar_mass : float [kg/mol]

    Returns
    -------
    ndarray [Pa s]
    """
    t_r = np.asarray(temperature, float) * 1.8
    m = molar_mass * 1000.0
    k = (9.4 + 0.02 * m) * t_r ** 1.5 / (209.0 + 19.0 * m + t_r)
    x = 3.5 + 986.0 / t_r + 0.01 * m
    y = 2.4 - 0.2 * x
    rho = np.asarray(density, float) / 1000.0
    return 1e-4 * k * np.exp(x * rho ** y) * 1e-3
