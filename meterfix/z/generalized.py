"""Generalized compressibility chart in digital form: Lee–Kesler and the Pitzer/Abbott virial form.

Lee & Kesler (1975) fitted one BWR-type equation to a simple fluid (omega = 0) and one to a
reference fluid (n-octane, omega_r = 0.3978); Z of any fluid at the same reduced temperature
and pressure is interpolated linearly in the acentric factor:

    Z = Z0 + (omega / omega_r) (Z_r - Z0) = Z0 + omega Z1

This is the chart of the textbooks (the Z0 and Z1 tables) as code. The Pitzer/Abbott second
virial coefficient gives the same chart at low reduced pressure in closed form.
Mixtures enter through pseudo-critical properties (:mod:`meterfix.z.pseudo_critical`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..gas.composition import as_composition
from .base import (EXTENDED, NORMAL, OUTSIDE, REASON_INVALID_INPUT, REASON_NO_GAS_ROOT, ZResult,
                   invalid_points)
from .gas_root import gas_root_density
from .pseudo_critical import (PseudoCritical, pseudo_critical, pseudo_reduced_volume,
                              quantum_effective_critical, reduced_pressure, reduced_temperature)
from .registry import ZMethod

#: acentric factor of the Lee–Kesler reference fluid (n-octane)
OMEGA_REFERENCE = 0.3978

EDITION_LEE_KESLER = "Lee-Kesler (AIChE J. 21 (1975) 510), pseudo-criticals by Kay's rule or Lee-Kesler mixing"
EDITION_PITZER = "Pitzer second virial, Abbott form (B0 = 0.083 - 0.422/Tr^1.6, B1 = 0.139 - 0.172/Tr^4.2)"


@dataclass(frozen=True)
class _Fluid:
    b1: float
    b2: float
    b3: float
    b4: float
    c1: float
    c2: float
    c3: float
    c4: float
    d1: float
    d2: float
    beta: float
    gamma: float


#: Lee & Kesler (1975), Table 1: constants of the simple fluid and of the reference fluid
SIMPLE_FLUID = _Fluid(0.1181193, 0.265728, 0.154790, 0.030323, 0.0236744, 0.0186984, 0.0, 0.042724,
                      0.155488e-4, 0.623689e-4, 0.65392, 0.060167)
REFERENCE_FLUID = _Fluid(0.2026579, 0.331511, 0.027655, 0.203488, 0.0313385, 0.0503618, 0.016901, 0.041577,
                         0.48736e-4, 0.0740336e-4, 1.226, 0.03754)


def _lk_pressure(fluid: _Fluid, tr):
    """p_r(rho_r) and its derivative for one Lee–Kesler fluid at reduced temperature tr."""
    f = fluid
    b = f.b1 - f.b2 / tr - f.b3 / tr**2 - f.b4 / tr**3
    c = f.c1 - f.c2 / tr + f.c3 / tr**3
    d = f.d1 + f.d2 / tr
    e4 = f.c4 / tr**3

    def pressure(rho):
        r2 = rho * rho
        ex = np.exp(-f.gamma * r2)
        z = 1.0 + b * rho + c * r2 + d * r2 * r2 * rho + e4 * r2 * (f.beta + f.gamma * r2) * ex
        dz = (b + 2.0 * c * rho + 5.0 * d * r2 * r2
              + e4 * ex * (2.0 * f.beta * rho + 4.0 * f.gamma * r2 * rho
                           - 2.0 * f.gamma * rho * (f.beta * r2 + f.gamma * r2 * r2)))
        return tr * rho * z, tr * (z + rho * dz)

    return pressure


def _lk_fluid_z(fluid: _Fluid, tr, pr):
    """Gas-phase Z of one Lee–Kesler fluid, with reasons."""
    tr, pr = np.broadcast_arrays(np.asarray(tr, float), np.asarray(pr, float))
    bad = invalid_points(pr, tr)
    trs = np.where(bad, 1.0, tr)
    prs = np.where(bad, 1.0, pr)
    rho, reason = gas_root_density(_lk_pressure(fluid, trs), prs, 0.5 * prs / trs, rho_max=50.0)
    z = prs / (trs * rho)
    z = np.where(bad, np.nan, z)
    reason = np.where(bad, REASON_INVALID_INPUT, reason)
    return z, reason


def lee_kesler_vapour_pressure(reduced_temperature, acentric_factor):
    """Reduced vapour pressure by the Lee–Kesler correlation.

    .. math:: \\ln P_{r,sat} = f^{(0)}(T_r) + \\omega f^{(1)}(T_r)

    with :math:`f^{(0)} = 5.92714 - 6.09648/T_r - 1.28862 \\ln T_r + 0.169347 T_r^6` and
    :math:`f^{(1)} = 15.2518 - 15.6875/T_r - 13.4721 \\ln T_r + 0.43577 T_r^6`.

    Parameters
    ----------
    reduced_temperature : float or ndarray [-]   below 1
    acentric_factor : float or ndarray [-]

    Returns
    -------
    float or ndarray [-]   p_sat / Pc (NaN at Tr >= 1)

    References
    ----------
    1. B. I. Lee, M. G. Kesler, AIChE J. 21 (1975) 510 (constants from memory).
    """
    tr = np.asarray(reduced_temperature, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        lt = np.log(tr)
        f0 = 5.92714 - 6.09648 / tr - 1.28862 * lt + 0.169347 * tr**6
        f1 = 15.2518 - 15.6875 / tr - 13.4721 * lt + 0.43577 * tr**6
        return np.where(tr < 1.0, np.exp(f0 + acentric_factor * f1), np.nan)


def lee_kesler_terms(reduced_temperature, reduced_pressure):
    """Simple-fluid Z0 and deviation Z1 of the Lee–Kesler chart (gas-phase root).

    .. math:: Z^{(0)} = Z_{simple}(T_r, P_r), \\quad
              Z^{(1)} = \\frac{Z_{ref}(T_r, P_r) - Z^{(0)}}{\\omega_r}, \\quad \\omega_r = 0.3978

    Each fluid follows :math:`Z = P_r V_r / T_r = 1 + B/V_r + C/V_r^2 + D/V_r^5 +
    \\frac{c_4}{T_r^3 V_r^2}(\\beta + \\gamma/V_r^2) e^{-\\gamma/V_r^2}` with
    :math:`B = b_1 - b_2/T_r - b_3/T_r^2 - b_4/T_r^3`, :math:`C = c_1 - c_2/T_r + c_3/T_r^3`,
    :math:`D = d_1 + d_2/T_r` and :math:`V_r = P_c V / (R T_c)`.

    Parameters
    ----------
    reduced_temperature : float or ndarray [-]
    reduced_pressure : float or ndarray [-]

    Returns
    -------
    z0, z1 : ndarrays [-]   NaN where a fluid has no root on its vapour branch
    reason : ndarray of str

    References
    ----------
    1. B. I. Lee, M. G. Kesler, AIChE J. 21 (1975) 510, Table 1 (constants) and Tables 2-3 (Z0, Z1).
    """
    z0, r0 = _lk_fluid_z(SIMPLE_FLUID, reduced_temperature, reduced_pressure)
    zr, rr = _lk_fluid_z(REFERENCE_FLUID, reduced_temperature, reduced_pressure)
    reason = np.where(r0 != "", r0, rr)
    return z0, (zr - z0) / OMEGA_REFERENCE, reason


def _subcritical_liquid(tr, pr, omega):
    """True where Tr < 1 and Pr is above the Lee–Kesler vapour pressure: no gas phase."""
    psat = lee_kesler_vapour_pressure(np.minimum(tr, 0.999999), omega)
    with np.errstate(invalid="ignore"):
        return (tr < 1.0) & (pr > psat)


def z_lee_kesler_reduced(reduced_temperature, reduced_pressure, acentric_factor):
    """Lee–Kesler Z at reduced conditions, gas phase.

    .. math:: Z = Z^{(0)} + \\frac{\\omega}{\\omega_r} (Z_{ref} - Z^{(0)})

    Parameters
    ----------
    reduced_temperature : float or ndarray [-]
    reduced_pressure : float or ndarray [-]
    acentric_factor : float or ndarray [-]

    Returns
    -------
    z : ndarray [-]   NaN where there is no gas phase
    reason : ndarray of str

    Notes
    -----
    Below Tr = 1 a point above the Lee–Kesler vapour pressure of a fluid with this acentric
    factor is liquid (no gas-phase root): NaN with reason ``no-gas-root``. For a mixture this
    is a pseudo-pure-fluid estimate of the dew line, not a phase-envelope calculation.
    """
    tr, pr = np.broadcast_arrays(np.asarray(reduced_temperature, float), np.asarray(reduced_pressure, float))
    z0, z1, reason = lee_kesler_terms(tr, pr)
    z = z0 + acentric_factor * z1
    liquid = _subcritical_liquid(tr, pr, acentric_factor) & (reason == "")
    z = np.where(liquid, np.nan, z)
    reason = np.where(liquid, REASON_NO_GAS_ROOT, reason)
    return z, reason


def z_pitzer_virial_reduced(reduced_temperature, reduced_pressure, acentric_factor):
    """Z from the Pitzer-correlated second virial coefficient (Abbott form).

    .. math:: Z = 1 + (B^{(0)} + \\omega B^{(1)}) \\frac{P_r}{T_r}, \\quad
              B^{(0)} = 0.083 - \\frac{0.422}{T_r^{1.6}}, \\quad
              B^{(1)} = 0.139 - \\frac{0.172}{T_r^{4.2}}

    Parameters
    ----------
    reduced_temperature : float or ndarray [-]
    reduced_pressure : float or ndarray [-]
    acentric_factor : float or ndarray [-]

    Returns
    -------
    z : ndarray [-]   NaN where there is no gas phase (below the Lee–Kesler vapour pressure
                      check at Tr < 1, or Z <= 0)
    reason : ndarray of str

    References
    ----------
    1. K. S. Pitzer, R. F. Curl, J. Am. Chem. Soc. 79 (1957) 2369.
    2. J. M. Smith, H. C. Van Ness, M. M. Abbott, Introduction to Chemical Engineering
       Thermodynamics (Abbott's fit of B0, B1).
    """
    tr, pr = np.broadcast_arrays(np.asarray(reduced_temperature, float), np.asarray(reduced_pressure, float))
    bad = invalid_points(pr, tr)
    with np.errstate(divide="ignore", invalid="ignore"):
        b0 = 0.083 - 0.422 / tr**1.6
        b1 = 0.139 - 0.172 / tr**4.2
        z = 1.0 + (b0 + acentric_factor * b1) * pr / tr
    liquid = ~bad & (_subcritical_liquid(tr, pr, acentric_factor) | ~(z > 0))
    z = np.where(bad | liquid, np.nan, z)
    reason = np.where(bad, REASON_INVALID_INPUT, np.where(liquid, REASON_NO_GAS_ROOT, ""))
    return z, reason


# ---------------------------------------------------------------------------------------------
# dimensional wrappers: pressure [Pa], temperature [K], composition
def _prepare(pressure, temperature, composition, mixing, quantum):
    composition = as_composition(composition)
    p, t = np.broadcast_arrays(np.asarray(pressure, float), np.asarray(temperature, float))
    bad = invalid_points(p, t)
    ts = np.where(bad, 300.0, t)
    pc = pseudo_critical(composition, ts, mixing=mixing, quantum=quantum)
    tr = np.where(bad, np.nan, reduced_temperature(ts, pc.temperature))
    pr = np.where(bad, np.nan, reduced_pressure(p, pc.pressure))
    return p, t, bad, pc, tr, pr, composition


def _extra(pc: PseudoCritical, tr, pr, z):
    return {
        "pseudo_critical_temperature": pc.temperature,
        "pseudo_critical_pressure": pc.pressure,
        "acentric_factor": pc.acentric_factor,
        "mixing": pc.mixing,
        "quantum_correction": pc.quantum,
        "reduced_temperature": tr,
        "reduced_pressure": pr,
        "pseudo_reduced_volume": z * tr / pr,
    }


def _density(p, t, z):
    from ..constants import R
    with np.errstate(divide="ignore", invalid="ignore"):
        return p / (z * R * t)


def range_lee_kesler(reduced_temperature, reduced_pressure):
    """Range class of Lee–Kesler.

    Normal for 0.3 <= Tr <= 4 and Pr <= 10 (the paper's fit) away from the critical region;
    extended in the near-critical zone 0.93 <= Tr <= 1.12, 0.6 <= Pr <= 2.5 (where the
    corresponding-states chart is least accurate: up to about 4 % for ethane and CO2 against
    their reference equations of state, measured with CoolProp); outside beyond.
    """
    tr, pr = np.broadcast_arrays(np.asarray(reduced_temperature, float), np.asarray(reduced_pressure, float))
    out = np.full(tr.shape, OUTSIDE, dtype=np.int8)
    with np.errstate(invalid="ignore"):
        box = (tr >= 0.3) & (tr <= 4.0) & (pr <= 10.0) & (pr > 0)
        critical = (tr >= 0.93) & (tr <= 1.12) & (pr >= 0.6) & (pr <= 2.5)
        out[box & critical] = EXTENDED
        out[box & ~critical] = NORMAL
    return out


def range_pitzer_virial(reduced_temperature, pseudo_reduced_volume_):
    """Range class of the virial form from the pseudo-reduced volume v'R = Z Tr / Pr.

    Normal where v'R >= 4, extended where 2 <= v'R < 4 (the rule of thumb v'R >= 2 for a
    truncated virial equation, from memory; measured against CoolProp for methane, ethane,
    nitrogen, propane, n-butane, CO2 and argon at 250-350 K: at most about 1.1 % off for
    v'R >= 4 and 3.1 % for 2 <= v'R < 4), outside below; 0.5 <= Tr <= 10 in both.
    """
    tr, vr = np.broadcast_arrays(np.asarray(reduced_temperature, float), np.asarray(pseudo_reduced_volume_, float))
    out = np.full(tr.shape, OUTSIDE, dtype=np.int8)
    with np.errstate(invalid="ignore"):
        t_ok = (tr >= 0.5) & (tr <= 10.0)
        out[t_ok & (vr >= 2.0)] = EXTENDED
        out[t_ok & (vr >= 4.0)] = NORMAL
    return out


def z_lee_kesler(pressure, temperature, composition, mixing: str = "kay", quantum: bool = True) -> ZResult:
    """Lee–Kesler compressibility of a gas (pure or mixture), gas-phase root.

    .. math:: Z = Z^{(0)}(T_r, P_r) + \\frac{\\omega}{\\omega_r}\\left(Z_{ref}(T_r, P_r) - Z^{(0)}(T_r, P_r)\\right)

    Parameters
    ----------
    pressure : float or ndarray [Pa]       absolute
    temperature : float or ndarray [K]
    composition : Composition or mapping of component name -> mole fraction
    mixing : {"kay", "lee-kesler"}         pseudo-critical rule (:func:`pseudo_critical`)
    quantum : bool                         effective critical constants for hydrogen, helium

    Returns
    -------
    ZResult
        ``extra`` holds the pseudo-critical and reduced properties.

    Notes
    -----
    Range: 0.3 <= Tr <= 4, Pr <= 10 (Lee & Kesler's fit); outside it the point is computed
    and flagged. Accuracy for natural gas and its components in the pipeline range is stated
    in the registry entry (measured against CoolProp).

    References
    ----------
    1. B. I. Lee, M. G. Kesler, AIChE J. 21 (1975) 510.
    """
    p, t, bad, pc, tr, pr, composition = _prepare(pressure, temperature, composition, mixing, quantum)
    z, reason = z_lee_kesler_reduced(np.where(bad, 1.5, tr), np.where(bad, 1.0, pr), pc.acentric_factor)
    z = np.where(bad, np.nan, z)
    reason = np.where(bad, REASON_INVALID_INPUT, reason)
    rng = range_lee_kesler(tr, pr)
    return ZResult(z, rng, reason, "lee-kesler", EDITION_LEE_KESLER, molar_density=_density(p, t, z),
                   molar_mass=composition.molar_mass, extra=_extra(pc, tr, pr, z))


def z_pitzer_virial(pressure, temperature, composition, mixing: str = "kay", quantum: bool = True) -> ZResult:
    """Compressibility from the Pitzer/Abbott generalized second virial coefficient.

    .. math:: Z = 1 + \\frac{B P}{R T} = 1 + (B^{(0)} + \\omega B^{(1)}) \\frac{P_r}{T_r}

    Parameters
    ----------
    pressure : float or ndarray [Pa]       absolute
    temperature : float or ndarray [K]
    composition : Composition or mapping of component name -> mole fraction
    mixing : {"kay", "lee-kesler"}         pseudo-critical rule
    quantum : bool                         effective critical constants for hydrogen, helium

    Returns
    -------
    ZResult

    Notes
    -----
    A two-term virial equation: good only at low density. Range by the pseudo-reduced volume
    (:func:`range_pitzer_virial`).

    References
    ----------
    1. K. S. Pitzer, R. F. Curl, J. Am. Chem. Soc. 79 (1957) 2369.
    2. J. M. Smith, H. C. Van Ness, M. M. Abbott, Introduction to Chemical Engineering Thermodynamics.
    """
    p, t, bad, pc, tr, pr, composition = _prepare(pressure, temperature, composition, mixing, quantum)
    z, reason = z_pitzer_virial_reduced(np.where(bad, 1.5, tr), np.where(bad, 1.0, pr), pc.acentric_factor)
    z = np.where(bad, np.nan, z)
    reason = np.where(bad, REASON_INVALID_INPUT, reason)
    with np.errstate(divide="ignore", invalid="ignore"):
        rng = range_pitzer_virial(tr, z * tr / pr)
    return ZResult(z, rng, reason, "pitzer-virial", EDITION_PITZER, molar_density=_density(p, t, z),
                   molar_mass=composition.molar_mass, extra=_extra(pc, tr, pr, z))


def _evaluate_lk(pressure, temperature, gas, mixing="kay", quantum=True, **_):
    return z_lee_kesler(pressure, temperature, gas, mixing=mixing, quantum=quantum)


def _evaluate_pitzer(pressure, temperature, gas, mixing="kay", quantum=True, **_):
    return z_pitzer_virial(pressure, temperature, gas, mixing=mixing, quantum=quantum)


METHODS = [
    ZMethod("lee-kesler", EDITION_LEE_KESLER, _evaluate_lk, family="generalized chart",
            range_text="normal 0.3 <= Tr <= 4, Pr <= 10, gas phase; extended in the near-critical zone "
                       "0.93 <= Tr <= 1.12, 0.6 <= Pr <= 2.5 (pseudo-reduced by Kay's rule by default)",
            uncertainty_pct={NORMAL: 2.5, EXTENDED: 5.0},
            uncertainty_source="set at the largest deviation measured against CoolProp 8.0 (reference equations"
                               " of state; GERG-2008-type mixture model) at 250-350 K, 0.1-10 MPa, gas phase, "
                               "Kay's rule: methane 0.33 %, nitrogen 0.10 %, ethane 1.4 %, CO2 0.74 %, five "
                               "AGA8 reference natural gases 2.46 % (Lee-Kesler mixing 1.83 %); near-critical "
                               "zone up to 4.2 % (ethane, CO2)"),
    ZMethod("pitzer-virial", EDITION_PITZER, _evaluate_pitzer, family="generalized chart",
            range_text="normal v'R >= 4, extended 2 <= v'R < 4 (v'R = Z Tr/Pr), 0.5 <= Tr <= 10",
            uncertainty_pct={NORMAL: 1.5, EXTENDED: 3.5},
            uncertainty_source="set at the largest deviation measured against CoolProp 8.0 at 250-350 K, 0.1-10"
                               " MPa, gas phase, for methane, ethane, nitrogen, propane, n-butane, CO2, argon, "
                               "oxygen, hydrogen and natural gases: 1.1 % for v'R >= 4, 3.1 % for 2 <= v'R < 4"),
]

__all__ = ["OMEGA_REFERENCE", "SIMPLE_FLUID", "REFERENCE_FLUID", "lee_kesler_terms", "lee_kesler_vapour_pressure",
           "z_lee_kesler_reduced", "z_pitzer_virial_reduced", "z_lee_kesler", "z_pitzer_virial",
           "range_lee_kesler", "range_pitzer_virial", "pseudo_critical", "PseudoCritical",
           "quantum_effective_critical", "reduced_pressure", "reduced_temperature", "pseudo_reduced_volume",
           "METHODS"]
