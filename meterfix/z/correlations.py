"""Natural-gas chart correlations: Dranchuk–Abou-Kassem and Hall–Yarborough.

Both are fits to the Standing–Katz chart of Z against pseudo-reduced temperature and pressure
of sweet natural gas. The pseudo-critical properties come from the composition (Kay's rule)
or, when only the relative density is known, from Sutton's correlation; carbon dioxide and
hydrogen sulfide are accounted for by the Wichert–Aziz correction.
"""

from __future__ import annotations

import numpy as np

from ..constants import PSI, R, RANKINE
from ..errors import SettingsError
from ..gas.composition import Composition, as_composition
from ..gas.gross import GrossCharacterization
from .base import EXTENDED, NORMAL, OUTSIDE, REASON_INVALID_INPUT, ZResult, invalid_points
from .gas_root import gas_root_density
from .pseudo_critical import pseudo_critical
from .registry import ZMethod

#: molar mass of dry air [kg/mol] for the ideal relative density M / M_air (GPA 2145 / AGA8
#: value, from memory)
MOLAR_MASS_AIR = 0.0289625

EDITION_DAK = "Dranchuk-Abou-Kassem (J. Can. Pet. Tech. 14 (1975) 34), Wichert-Aziz correction"
EDITION_HY = "Hall-Yarborough (Oil Gas J. 71 (1973) 82), Wichert-Aziz correction"

#: Dranchuk & Abou-Kassem (1975), the eleven constants A1..A11
DAK_CONSTANTS = (0.3265, -1.0700, -0.5339, 0.01569, -0.05165, 0.5475, -0.7361, 0.1844, 0.1056, 0.6134, 0.7210)

PSEUDO_CRITICAL_SOURCES = ("kay", "sutton")


# ---------------------------------------------------------------------------------------------
# pseudo-critical properties
def pseudo_critical_sutton(relative_density):
    """Pseudo-critical temperature and pressure of a natural gas from its relative density.

    .. math:: T_{pc} = 169.2 + 349.5\\,\\gamma - 74.0\\,\\gamma^2 \\;[°R], \\quad
              P_{pc} = 756.8 - 131.0\\,\\gamma - 3.6\\,\\gamma^2 \\;[psia]

    Parameters
    ----------
    relative_density : float or ndarray [-]   gas specific gravity (air = 1)

    Returns
    -------
    (temperature [K], pressure [Pa])

    Notes
    -----
    Fitted for hydrocarbon gases of relative density about 0.57 to 1.68. Apply
    :func:`wichert_aziz` afterwards for CO2 and H2S.

    References
    ----------
    1. R. P. Sutton, SPE 14265 (1985) (constants from memory).
    """
    g = np.asarray(relative_density, dtype=float)
    t_r = 169.2 + 349.5 * g - 74.0 * g * g
    p_psia = 756.8 - 131.0 * g - 3.6 * g * g
    return t_r * RANKINE, p_psia * PSI


def wichert_aziz(critical_temperature, critical_pressure, x_co2, x_h2s):
    """Wichert–Aziz correction of pseudo-critical properties for CO2 and H2S.

    .. math:: \\varepsilon = 120 (A^{0.9} - A^{1.6}) + 15 (B^{0.5} - B^4) \\;[°R], \\quad
              T'_{pc} = T_{pc} - \\varepsilon, \\quad
              P'_{pc} = \\frac{P_{pc} T'_{pc}}{T_{pc} + B (1 - B) \\varepsilon}

    with A = x_CO2 + x_H2S and B = x_H2S.

    Parameters
    ----------
    critical_temperature : float or ndarray [K]   pseudo-critical temperature before correction
    critical_pressure : float or ndarray [Pa]     pseudo-critical pressure before correction
    x_co2 : float [mol/mol]
    x_h2s : float [mol/mol]

    Returns
    -------
    (temperature [K], pressure [Pa], epsilon [K])

    References
    ----------
    1. E. Wichert, K. Aziz, Hydrocarbon Processing 51 (1972) 119.
    """
    a = float(x_co2) + float(x_h2s)
    b = float(x_h2s)
    eps = (120.0 * (a**0.9 - a**1.6) + 15.0 * (b**0.5 - b**4)) * RANKINE  # [K]
    tpc = np.asarray(critical_temperature, dtype=float)
    t_new = tpc - eps
    p_new = np.asarray(critical_pressure, dtype=float) * t_new / (tpc + b * (1.0 - b) * eps)
    return t_new, p_new, eps


def pseudo_critical_sutton_with_inerts(relative_density, x_n2=0.0, x_co2=0.0, x_h2s=0.0):
    """Sutton pseudo-criticals for a gas with nitrogen, carbon dioxide and hydrogen sulfide.

    The hydrocarbon part's relative density is recovered from the whole gas's, Sutton's
    correlation gives its pseudo-criticals, and Kay's rule mixes them with the true critical
    constants of N2, CO2 and H2S:

    .. math:: \\gamma_{hc} = \\frac{\\gamma M_{air} - \\sum_i y_i M_i}{(1 - \\sum_i y_i) M_{air}}, \\quad
              T_{pc} = (1 - \\textstyle\\sum_i y_i) T_{pc,hc}(\\gamma_{hc}) + \\sum_i y_i T_{c,i}

    (and the same for P_pc), i over N2, CO2, H2S.

    Parameters
    ----------
    relative_density : float [-]   of the whole gas (air = 1)
    x_n2, x_co2, x_h2s : float [mol/mol]

    Returns
    -------
    (temperature [K], pressure [Pa])   before the Wichert–Aziz correction

    Notes
    -----
    Common practice in natural-gas engineering (Sutton's fit covers hydrocarbon gases only; applied
    to the whole gravity it overstates Tpc by tens of kelvin for a gas with 10 % nitrogen).
    """
    from ..gas.components import CRITICAL_PRESSURE, CRITICAL_TEMPERATURE, INDEX, MOLAR_MASS

    names = ("nitrogen", "carbon_dioxide", "hydrogen_sulfide")
    y = np.array([x_n2 or 0.0, x_co2 or 0.0, x_h2s or 0.0], dtype=float)
    idx = [INDEX[n] for n in names]
    y_in = float(y.sum())
    if y_in >= 1.0:
        raise SettingsError("a gas of nitrogen, CO2 and H2S only has no hydrocarbon part for Sutton's correlation",
                            hint="use pseudo_critical_source='kay' with the composition")
    g_hc = (relative_density * MOLAR_MASS_AIR - float(y @ MOLAR_MASS[idx])) / ((1.0 - y_in) * MOLAR_MASS_AIR)
    t_hc, p_hc = pseudo_critical_sutton(g_hc)
    tpc = (1.0 - y_in) * t_hc + float(y @ CRITICAL_TEMPERATURE[idx])
    ppc = (1.0 - y_in) * p_hc + float(y @ CRITICAL_PRESSURE[idx])
    return tpc, ppc


def natural_gas_pseudo_critical(gas, temperature=None, source: str = "kay", correct_acid: bool = True):
    """Pseudo-critical temperature and pressure for the natural-gas correlations.

    Parameters
    ----------
    gas : Composition or GrossCharacterization
    temperature : float or ndarray [K], optional   (quantum-gas correction of Kay's rule)
    source : {"kay", "sutton"}
        ``kay``: mole-fraction average of the components' critical constants (needs a
        Composition; hydrogen and helium with effective constants). ``sutton``: from the
        relative density (the GrossCharacterization's, or M/M_air of a Composition), with
        nitrogen, CO2 and H2S taken out first (:func:`pseudo_critical_sutton_with_inerts`).
        A GrossCharacterization always uses ``sutton``.
    correct_acid : bool   apply the Wichert–Aziz correction

    Returns
    -------
    dict with ``temperature`` [K], ``pressure`` [Pa], ``epsilon`` [K], ``source``,
    ``relative_density`` (Sutton only)

    Notes
    -----
    A GrossCharacterization carries CO2 (and N2 for GROSS method 2) but no H2S: H2S is then 0.
    Its relative density is the standard's real-gas ratio at the metering reference, used here
    as the ideal-gas one (they differ by about 0.1 %).
    """
    source = str(source).strip().lower()
    if source not in PSEUDO_CRITICAL_SOURCES:
        raise SettingsError(f"unknown pseudo-critical source '{source}'", hint="use 'kay' or 'sutton'")
    out = {"source": source}
    if isinstance(gas, GrossCharacterization):
        source = out["source"] = "sutton"  # no composition: the relative density is all there is
        x_n2, x_co2, x_h2s = (gas.x_n2 or 0.0), gas.x_co2, 0.0
        tpc, ppc = pseudo_critical_sutton_with_inerts(gas.relative_density, x_n2, x_co2, x_h2s)
        out["relative_density"] = gas.relative_density
    elif isinstance(gas, Composition):
        x_n2, x_co2, x_h2s = gas["nitrogen"], gas["carbon_dioxide"], gas["hydrogen_sulfide"]
        if source == "kay":
            pc = pseudo_critical(gas, temperature, mixing="kay", quantum=True)
            tpc, ppc = pc.temperature, pc.pressure
        else:
            d = gas.molar_mass / MOLAR_MASS_AIR
            tpc, ppc = pseudo_critical_sutton_with_inerts(d, x_n2, x_co2, x_h2s)
            out["relative_density"] = d
    else:
        raise SettingsError(f"cannot take {type(gas).__name__} as a gas for the natural-gas correlations",
                            hint="give a Composition or a GrossCharacterization (relative density)")
    eps = 0.0
    if correct_acid and (x_co2 > 0 or x_h2s > 0):
        tpc, ppc, eps = wichert_aziz(tpc, ppc, x_co2, x_h2s)
    out.update(temperature=tpc, pressure=ppc, epsilon=eps)
    return out


# ---------------------------------------------------------------------------------------------
# the correlations in reduced form
def _dak_pressure(tpr):
    a1, a2, a3, a4, a5, a6, a7, a8, a9, a10, a11 = DAK_CONSTANTS
    c1 = a1 + a2 / tpr + a3 / tpr**3 + a4 / tpr**4 + a5 / tpr**5
    c2 = a6 + a7 / tpr + a8 / tpr**2
    c3 = a9 * (a7 / tpr + a8 / tpr**2)
    c4 = a10 / tpr**3
    scale = tpr / 0.27

    def pressure(rho):
        r2 = rho * rho
        ex = np.exp(-a11 * r2)
        z = 1.0 + c1 * rho + c2 * r2 - c3 * r2 * r2 * rho + c4 * (1.0 + a11 * r2) * r2 * ex
        dz = (c1 + 2.0 * c2 * rho - 5.0 * c3 * r2 * r2
              + c4 * ex * (2.0 * rho + 4.0 * a11 * r2 * rho - 2.0 * a11 * rho * (r2 + a11 * r2 * r2)))
        return scale * rho * z, scale * (z + rho * dz)

    return pressure


def _reduced_inputs(tpr, ppr):
    tpr, ppr = np.broadcast_arrays(np.asarray(tpr, float), np.asarray(ppr, float))
    bad = invalid_points(ppr, tpr)
    return tpr, ppr, bad, np.where(bad, 1.5, tpr), np.where(bad, 1.0, ppr)


def z_dak_reduced(pseudo_reduced_temperature, pseudo_reduced_pressure):
    """Dranchuk–Abou-Kassem Z at pseudo-reduced conditions (gas-phase root).

    .. math:: Z = 1 + \\left(A_1 + \\frac{A_2}{T_{pr}} + \\frac{A_3}{T_{pr}^3} + \\frac{A_4}{T_{pr}^4}
              + \\frac{A_5}{T_{pr}^5}\\right)\\rho_r + \\left(A_6 + \\frac{A_7}{T_{pr}}
              + \\frac{A_8}{T_{pr}^2}\\right)\\rho_r^2 - A_9\\left(\\frac{A_7}{T_{pr}}
              + \\frac{A_8}{T_{pr}^2}\\right)\\rho_r^5 + A_{10}(1 + A_{11}\\rho_r^2)
              \\frac{\\rho_r^2}{T_{pr}^3} e^{-A_{11}\\rho_r^2}, \\quad
              \\rho_r = \\frac{0.27\\,P_{pr}}{Z\\,T_{pr}}

    Parameters
    ----------
    pseudo_reduced_temperature : float or ndarray [-]
    pseudo_reduced_pressure : float or ndarray [-]

    Returns
    -------
    z : ndarray [-]   NaN where no gas-phase root exists
    reason : ndarray of str

    Notes
    -----
    Fitted to 1500 points of the Standing–Katz chart: 1.0 <= Tpr <= 3.0, 0.2 <= Ppr <= 30
    (and Ppr < 1.0 for 0.7 < Tpr < 1.0 with larger errors); from memory.
    Near Tpr = 1 the fitted isotherm has a loop (at Tpr = 1.0 a local maximum near Ppr 0.97):
    above it the correlation has no root on its gas branch and the point is NaN with reason
    ``no-gas-root`` rather than a jump to the dense branch.

    References
    ----------
    1. P. M. Dranchuk, J. H. Abou-Kassem, J. Can. Pet. Tech. 14 (1975) 34.
    """
    tpr, ppr, bad, ts, ps = _reduced_inputs(pseudo_reduced_temperature, pseudo_reduced_pressure)
    rho, reason = gas_root_density(_dak_pressure(ts), ps, 0.5 * 0.27 * ps / ts, rho_max=6.0)
    z = 0.27 * ps / (ts * rho)
    return np.where(bad, np.nan, z), np.where(bad, REASON_INVALID_INPUT, reason)


def _hy_pressure(tpr):
    t = 1.0 / tpr
    a = 0.06125 * t * np.exp(-1.2 * (1.0 - t) ** 2)
    b = 14.76 * t - 9.76 * t * t + 4.58 * t**3
    c = 90.7 * t - 242.2 * t * t + 42.4 * t**3
    d = 2.18 + 2.82 * t

    def pressure(y):
        y2 = y * y
        om = 1.0 - y
        hs = (y + y2 + y2 * y - y2 * y2) / om**3
        dhs = (1.0 + 4.0 * y + 4.0 * y2 - 4.0 * y2 * y + y2 * y2) / om**4
        yd = y ** (d - 1.0)
        return (hs - b * y2 + c * yd * y) / a, (dhs - 2.0 * b * y + c * d * yd) / a

    return pressure, a


def z_hall_yarborough_reduced(pseudo_reduced_temperature, pseudo_reduced_pressure):
    """Hall–Yarborough Z at pseudo-reduced conditions (gas-phase root).

    .. math:: -A P_{pr} + \\frac{y + y^2 + y^3 - y^4}{(1 - y)^3} - B y^2 + C y^D = 0, \\quad
              Z = \\frac{A P_{pr}}{y}

    with t = 1/Tpr, :math:`A = 0.06125\\,t\\,e^{-1.2(1-t)^2}`,
    :math:`B = 14.76 t - 9.76 t^2 + 4.58 t^3`, :math:`C = 90.7 t - 242.2 t^2 + 42.4 t^3`,
    :math:`D = 2.18 + 2.82 t`; y is the reduced density (Carnahan–Starling packing fraction).

    Parameters
    ----------
    pseudo_reduced_temperature : float or ndarray [-]
    pseudo_reduced_pressure : float or ndarray [-]

    Returns
    -------
    z : ndarray [-]   NaN where no gas-phase root exists
    reason : ndarray of str

    Notes
    -----
    Fitted to the Standing–Katz chart; recommended for about 1.2 <= Tpr <= 3.0 and
    0.1 <= Ppr <= 24 (from memory); poor near Tpr = 1.

    References
    ----------
    1. K. R. Hall, L. Yarborough, Oil Gas J. 71 (1973) 82.
    """
    tpr, ppr, bad, ts, ps = _reduced_inputs(pseudo_reduced_temperature, pseudo_reduced_pressure)
    pressure, a = _hy_pressure(ts)
    y, reason = gas_root_density(pressure, ps, 0.5 * a * ps, rho_max=0.95)
    z = a * ps / y
    return np.where(bad, np.nan, z), np.where(bad, REASON_INVALID_INPUT, reason)


# ---------------------------------------------------------------------------------------------
# ranges
def range_dak(tpr, ppr):
    """Normal 1.0 <= Tpr <= 3.0 with 0.2 <= Ppr <= 30; extended below Ppr 0.2 at those Tpr
    (the low-pressure limit, Z -> 1) and 0.7 <= Tpr < 1.0 with Ppr <= 1.0."""
    tpr, ppr = np.broadcast_arrays(np.asarray(tpr, float), np.asarray(ppr, float))
    out = np.full(tpr.shape, OUTSIDE, dtype=np.int8)
    with np.errstate(invalid="ignore"):
        t_ok = (tpr >= 1.0) & (tpr <= 3.0)
        out[(t_ok & (ppr < 0.2)) | ((tpr >= 0.7) & (tpr < 1.0) & (ppr <= 1.0))] = EXTENDED
        out[t_ok & (ppr >= 0.2) & (ppr <= 30.0)] = NORMAL
        out[~(ppr > 0)] = OUTSIDE
    return out


def range_hall_yarborough(tpr, ppr):
    """Normal 1.2 <= Tpr <= 3.0 with 0.1 <= Ppr <= 24; extended below Ppr 0.1 at those Tpr and
    1.0 <= Tpr < 1.2 with Ppr <= 24."""
    tpr, ppr = np.broadcast_arrays(np.asarray(tpr, float), np.asarray(ppr, float))
    out = np.full(tpr.shape, OUTSIDE, dtype=np.int8)
    with np.errstate(invalid="ignore"):
        t_ok = (tpr >= 1.2) & (tpr <= 3.0)
        out[(t_ok & (ppr < 0.1)) | ((tpr >= 1.0) & (tpr < 1.2) & (ppr <= 24.0))] = EXTENDED
        out[t_ok & (ppr >= 0.1) & (ppr <= 24.0)] = NORMAL
        out[~(ppr > 0)] = OUTSIDE
    return out


# ---------------------------------------------------------------------------------------------
# dimensional wrappers
def _natural_gas_z(reduced_fn, range_fn, name, edition, pressure, temperature, gas, pseudo_critical_source,
                   correct_acid):
    if not isinstance(gas, (Composition, GrossCharacterization)):
        gas = as_composition(gas)
    p, t = np.broadcast_arrays(np.asarray(pressure, float), np.asarray(temperature, float))
    bad = invalid_points(p, t)
    ts = np.where(bad, 300.0, t)
    pc = natural_gas_pseudo_critical(gas, ts, source=pseudo_critical_source, correct_acid=correct_acid)
    tpr = np.where(bad, np.nan, ts / pc["temperature"])
    ppr = np.where(bad, np.nan, p / pc["pressure"])
    z, reason = reduced_fn(np.where(bad, 1.5, tpr), np.where(bad, 1.0, ppr))
    z = np.where(bad, np.nan, z)
    reason = np.where(bad, REASON_INVALID_INPUT, reason)
    with np.errstate(divide="ignore", invalid="ignore"):
        rho = p / (z * R * t)
    if isinstance(gas, Composition):
        molar_mass = gas.molar_mass
    else:
        molar_mass = gas.relative_density * MOLAR_MASS_AIR
    extra = {"pseudo_critical_temperature": pc["temperature"], "pseudo_critical_pressure": pc["pressure"],
             "pseudo_critical_source": pc["source"], "wichert_aziz_epsilon": pc["epsilon"],
             "reduced_temperature": tpr, "reduced_pressure": ppr}
    if "relative_density" in pc:
        extra["relative_density"] = pc["relative_density"]
    return ZResult(z, range_fn(tpr, ppr), reason, name, edition, molar_density=rho, molar_mass=molar_mass,
                   extra=extra)


def z_dak(pressure, temperature, gas, pseudo_critical_source: str = "kay", correct_acid: bool = True) -> ZResult:
    """Dranchuk–Abou-Kassem compressibility of a natural gas.

    Parameters
    ----------
    pressure : float or ndarray [Pa]       absolute
    temperature : float or ndarray [K]
    gas : Composition, mapping of component name -> mole fraction, or GrossCharacterization
    pseudo_critical_source : {"kay", "sutton"}   see :func:`natural_gas_pseudo_critical`
    correct_acid : bool                    Wichert–Aziz correction for CO2 and H2S

    Returns
    -------
    ZResult   (``extra``: pseudo-critical and pseudo-reduced properties, Wichert–Aziz epsilon [K])

    Notes
    -----
    Range classes: :func:`range_dak`. The molar mass of a GrossCharacterization is taken as
    relative density x M_air (ideal-gas relative density).

    References
    ----------
    1. P. M. Dranchuk, J. H. Abou-Kassem, J. Can. Pet. Tech. 14 (1975) 34.
    2. E. Wichert, K. Aziz, Hydrocarbon Processing 51 (1972) 119.
    3. R. P. Sutton, SPE 14265 (1985).
    """
    return _natural_gas_z(z_dak_reduced, range_dak, "dak", EDITION_DAK, pressure, temperature, gas,
                          pseudo_critical_source, correct_acid)


def z_hall_yarborough(pressure, temperature, gas, pseudo_critical_source: str = "kay",
                      correct_acid: bool = True) -> ZResult:
    """Hall–Yarborough compressibility of a natural gas.

    Parameters
    ----------
    pressure : float or ndarray [Pa]       absolute
    temperature : float or ndarray [K]
    gas : Composition, mapping of component name -> mole fraction, or GrossCharacterization
    pseudo_critical_source : {"kay", "sutton"}   see :func:`natural_gas_pseudo_critical`
    correct_acid : bool                    Wichert–Aziz correction for CO2 and H2S

    Returns
    -------
    ZResult

    Notes
    -----
    Range classes: :func:`range_hall_yarborough`.

    References
    ----------
    1. K. R. Hall, L. Yarborough, Oil Gas J. 71 (1973) 82.
    2. E. Wichert, K. Aziz, Hydrocarbon Processing 51 (1972) 119.
    3. R. P. Sutton, SPE 14265 (1985).
    """
    return _natural_gas_z(z_hall_yarborough_reduced, range_hall_yarborough, "hall-yarborough", EDITION_HY,
                          pressure, temperature, gas, pseudo_critical_source, correct_acid)


def _evaluate_dak(pressure, temperature, gas, pseudo_critical_source="kay", correct_acid=True, **_):
    return z_dak(pressure, temperature, gas, pseudo_critical_source, correct_acid)


def _evaluate_hy(pressure, temperature, gas, pseudo_critical_source="kay", correct_acid=True, **_):
    return z_hall_yarborough(pressure, temperature, gas, pseudo_critical_source, correct_acid)


METHODS = [
    ZMethod("dak", EDITION_DAK, _evaluate_dak, family="natural-gas correlation",
            range_text="normal 1.0 <= Tpr <= 3.0, 0.2 <= Ppr <= 30; extended Ppr < 0.2, "
                       "or 0.7 <= Tpr < 1.0 with Ppr <= 1",
            uncertainty_pct={NORMAL: 2.0, EXTENDED: 5.0},
            uncertainty_source="set at the largest deviation measured, for natural gas with Kay's-rule pseudo-"
                               "criticals, against CoolProp 8.0 at 250-350 K, 0.1-10 MPa for the five AGA8 "
                               "reference gases and a 10 % hydrogen blend, 1.9 %; Sutton pseudo-criticals from "
                               "relative density add up to 11 % (rich gas near Tpr 1.2); the fit to the "
                               "Standing-Katz chart itself about 0.5 % (from memory). Not for pure ethane or "
                               "CO2 near their critical point (12-17 %)"),
    ZMethod("hall-yarborough", EDITION_HY, _evaluate_hy, family="natural-gas correlation",
            range_text="normal 1.2 <= Tpr <= 3.0, 0.1 <= Ppr <= 24; extended Ppr < 0.1, "
                       "or 1.0 <= Tpr < 1.2",
            uncertainty_pct={NORMAL: 3.0, EXTENDED: 5.0},
            uncertainty_source="set at the largest deviation measured, for natural gas with Kay's-rule pseudo-"
                               "criticals, against CoolProp 8.0 at 250-350 K, 0.1-10 MPa for the five AGA8 "
                               "reference gases and a 10 % hydrogen blend, 2.6 %; Sutton pseudo-criticals add "
                               "up to 12 % (rich gas near Tpr 1.2); 1.0 <= Tpr < 1.2 up to 5 % (CO2)"),
]

__all__ = ["DAK_CONSTANTS", "MOLAR_MASS_AIR", "pseudo_critical_sutton", "wichert_aziz",
           "pseudo_critical_sutton_with_inerts", "natural_gas_pseudo_critical", "z_dak_reduced",
           "z_hall_yarborough_reduced", "range_dak", "range_hall_yarborough", "z_dak", "z_hall_yarborough", "METHODS"]
