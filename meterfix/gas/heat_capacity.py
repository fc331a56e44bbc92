"""Ideal-gas heat capacities of the 21 components (and the combustion products) near ambient.

Cp°/R = a0 + a1·T + a2·T² + a3·T³ + a4·T⁴, T in K, from the polynomial table of Poling, Prausnitz
and O'Connell, *The Properties of Gases and Liquids*, 5th ed. (McGraw-Hill, 2001), Appendix A,
section C (valid 50–1000 K, or 200–1000 K for the C4+ alkanes; helium and argon monatomic 5/2).
Liquid water: Cp = 75.29 J/(mol·K) at 298.15 K (same appendix).

Used only for the small Kirchhoff correction of heating values between combustion reference
temperatures (meterfix.energy), where 25 K of integration makes the polynomial's own error
(about 1 %) negligible (about 0.003 % of the heating value).
"""

from __future__ import annotations

import numpy as np

from ..constants import R
from .components import INDEX, N_COMPONENTS

#: (a0, a1, a2, a3, a4) of Cp°/R — Poling et al. (2001), Appendix A, section C
POLING_CP = {
    "methane": (4.568, -0.008975, 3.631e-05, -3.407e-08, 1.091e-11),
    "nitrogen": (3.539, -0.000261, 7e-08, 1.57e-09, -9.9e-13),
    "carbon_dioxide": (3.259, 0.001356, 1.502e-05, -2.374e-08, 1.056e-11),
    "ethane": (4.178, -0.004427, 5.66e-05, -6.651e-08, 2.487e-11),
    "propane": (3.847, 0.005131, 6.011e-05, -7.893e-08, 3.079e-11),
    "isobutane": (3.351, 0.017883, 5.477e-05, -8.1e-08, 3.243e-11),
    "n_butane": (5.547, 0.005536, 8.057e-05, -1.0571e-07, 4.134e-11),
    "isopentane": (1.959, 0.038191, 2.434e-05, -5.175e-08, 2.165e-11),
    "n_pentane": (7.554, -0.000368, 0.00011846, -1.4939e-07, 5.753e-11),
    "n_hexane": (8.831, -0.000166, 0.00014302, -1.8314e-07, 7.124e-11),
    "n_heptane": (9.634, 0.004156, 0.00015494, -2.0066e-07, 7.77e-11),
    "n_octane": (10.824, 0.004983, 0.00017751, -2.3137e-07, 8.98e-11),
    "n_nonane": (12.152, 0.004575, 0.00020416, -2.6777e-07, 1.0465e-10),
    "n_decane": (13.467, 0.004139, 0.00023127, -3.0477e-07, 1.197e-10),
    "hydrogen": (2.883, 0.003681, -7.72e-06, 6.92e-09, -2.13e-12),
    "oxygen": (3.63, -0.001794, 6.58e-06, -6e-09, 1.79e-12),
    "carbon_monoxide": (3.912, -0.003913, 1.182e-05, -1.3e-08, 5.15e-12),
    "water": (4.395, -0.004186, 1.405e-05, -1.564e-08, 6.32e-12),
    "hydrogen_sulfide": (4.266, -0.003438, 1.319e-05, -1.331e-08, 4.88e-12),
    "helium": (2.5, 0.0, 0.0, 0.0, 0.0),
    "argon": (2.5, 0.0, 0.0, 0.0, 0.0),
    "sulfur_dioxide": (4.417, -0.002234, 2.344e-05, -3.271e-08, 1.393e-11),
}

#: liquid water heat capacity [J/(mol K)] at 298.15 K (Poling et al. 2001, Appendix A)
CP_WATER_LIQUID = 75.29

#: atoms (C, H, N, O, S) of each component, canonical order
ATOMS = {
    "methane": (1, 4, 0, 0, 0), "nitrogen": (0, 0, 2, 0, 0), "carbon_dioxide": (1, 0, 0, 2, 0),
    "ethane": (2, 6, 0, 0, 0), "propane": (3, 8, 0, 0, 0), "isobutane": (4, 10, 0, 0, 0),
    "n_butane": (4, 10, 0, 0, 0), "isopentane": (5, 12, 0, 0, 0), "n_pentane": (5, 12, 0, 0, 0),
    "n_hexane": (6, 14, 0, 0, 0), "n_heptane": (7, 16, 0, 0, 0), "n_octane": (8, 18, 0, 0, 0),
    "n_nonane": (9, 20, 0, 0, 0), "n_decane": (10, 22, 0, 0, 0), "hydrogen": (0, 2, 0, 0, 0),
    "oxygen": (0, 0, 0, 2, 0), "carbon_monoxide": (1, 0, 0, 1, 0), "water": (0, 2, 0, 1, 0),
    "hydrogen_sulfide": (0, 2, 0, 0, 1), "helium": (0, 0, 0, 0, 0), "argon": (0, 0, 0, 0, 0),
}


def cp_integral(name: str, t_from: float, t_to: float) -> float:
    """∫ Cp° dT of one species from ``t_from`` to ``t_to`` [J/mol] (temperatures [K])."""
    a = POLING_CP[name]

    def prim(t):
        return sum(a[k] * t ** (k + 1) / (k + 1) for k in range(5))

    return R * (prim(t_to) - prim(t_from))


def combustion_enthalpy_shift(t_from: float, t_to: float) -> np.ndarray:
    """Change of each component's gross heating value from ``t_from`` to ``t_to`` [J/mol].

    Kirchhoff's law for CcHhNnOoSs + (c + h/4 + s − o/2) O2 → c CO2 + h/2 H2O(l) + s SO2 + n/2 N2:
    Hs(t_to) = Hs(t_from) + ∫ ΔCp dT from t_to to t_from, ΔCp = Σ products − Σ reactants.
    Components that do not burn (N2, CO2, O2, He, Ar) get 0.

    Parameters
    ----------
    t_from, t_to : float [K]

    Returns
    -------
    ndarray (21,) [J/mol]
    """
    out = np.zeros(N_COMPONENTS)
    water_l = CP_WATER_LIQUID * (t_from - t_to)  # ∫ from t_to to t_from of a constant
    for name, (c, h, n, o, s) in ATOMS.items():
        o2 = c + h / 4 + s - o / 2
        if c == 0 and h == 0 and s == 0:
            continue  # no combustion
        if name == "carbon_dioxide":
            continue
        d = (c * cp_integral("carbon_dioxide", t_to, t_from) + h / 2 * water_l
             + s * cp_integral("sulfur_dioxide", t_to, t_from) + n / 2 * cp_integral("nitrogen", t_to, t_from)
             - cp_integral(name, t_to, t_from) - o2 * cp_integral("oxygen", t_to, t_from))
        out[INDEX[name]] = d
    return out
