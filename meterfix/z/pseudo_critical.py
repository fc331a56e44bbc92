"""Pseudo-critical properties of a gas mixture and the reduced properties built on them.

Kay's rule (mole-fraction average of the critical temperatures and pressures) is the classic
route into a generalized chart; the Lee–Kesler mixing rules weigh the components by their
critical volumes and usually do better for mixtures of unlike molecules. Hydrogen and helium
(quantum gases) follow corresponding states only with temperature-dependent effective critical
constants, which both rules here use by default.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..constants import R
from ..errors import SettingsError
from ..gas.components import (ACENTRIC_FACTOR, CRITICAL_PRESSURE, CRITICAL_TEMPERATURE, INDEX,
                              MOLAR_MASS)

#: Classical (quantum-corrected) critical constants of the quantum gases, for
#: Tc = Tc0 / (1 + 21.8/(M T)), Pc = Pc0 / (1 + 44.2/(M T)), M in g/mol, T in K, omega = 0.
#: Values: Tc0 [K], Pc0 [Pa] (from memory: Gunn, Chueh & Prausnitz, AIChE J. 12 (1966) 937, as
#: tabulated in Prausnitz, Lichtenthaler & de Azevedo, Molecular Thermodynamics of
#: Fluid-Phase Equilibria; Pc0 read as bar).
QUANTUM_CLASSICAL_CONSTANTS = {
    "hydrogen": (43.6, 20.5e5),
    "helium": (10.47, 6.76e5),
}
_QUANTUM_C1 = 21.8  # [K g/mol]
_QUANTUM_C2 = 44.2  # [K g/mol]

MIXING_RULES = ("kay", "lee-kesler")


@dataclass(frozen=True)
class PseudoCritical:
    """Pseudo-critical properties of a mixture (arrays broadcast to the temperature's shape
    when quantum corrections make them temperature-dependent, floats otherwise).

    Attributes
    ----------
    temperature : float or ndarray [K]
    pressure : float or ndarray [Pa]
    acentric_factor : float or ndarray [-]
    mixing : str          ``kay`` or ``lee-kesler``
    quantum : bool        whether effective constants were used for hydrogen and helium
    """

    temperature: object
    pressure: object
    acentric_factor: object
    mixing: str
    quantum: bool


def quantum_effective_critical(name: str, temperature):
    """Effective critical temperature and pressure of hydrogen or helium at a temperature.

    .. math:: T_c = \\frac{T_c^0}{1 + 21.8/(M T)}, \\quad P_c = \\frac{P_c^0}{1 + 44.2/(M T)}

    Parameters
    ----------
    name : str                      ``hydrogen`` or ``helium``
    temperature : float or ndarray [K]

    Returns
    -------
    (critical_temperature [K], critical_pressure [Pa]) : floats or ndarrays; the acentric
    factor to use with them is 0.

    Notes
    -----
    Common practice for corresponding-states methods (the quantum gases do not follow the
    two-parameter chart with their true critical constants). Constants from memory, see
    :data:`QUANTUM_CLASSICAL_CONSTANTS`.

    References
    ----------
    1. R. D. Gunn, P. L. Chueh, J. M. Prausnitz, AIChE J. 12 (1966) 937.
    """
    tc0, pc0 = QUANTUM_CLASSICAL_CONSTANTS[name]
    m = MOLAR_MASS[INDEX[name]] * 1000.0  # [g/mol]
    t = np.asarray(temperature, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return tc0 / (1.0 + _QUANTUM_C1 / (m * t)), pc0 / (1.0 + _QUANTUM_C2 / (m * t))


def _component_constants(fractions, temperature, quantum):
    """Nonzero fractions and their Tc, Pc, omega (with a trailing component axis)."""
    x = np.asarray(fractions, dtype=float)
    idx = np.flatnonzero(x)
    x = x[idx]
    tc = CRITICAL_TEMPERATURE[idx]
    pc = CRITICAL_PRESSURE[idx]
    om = ACENTRIC_FACTOR[idx]
    qpos = [k for k, i in enumerate(idx) if quantum and (i == INDEX["hydrogen"] or i == INDEX["helium"])]
    if not qpos:
        return x, tc, pc, om, False
    if temperature is None:
        raise SettingsError("the quantum-gas correction for hydrogen and helium needs the temperature",
                            hint="pass temperature=..., or quantum=False to use the true critical constants")
    t = np.asarray(temperature, dtype=float)[..., None]
    tc = np.broadcast_to(tc, t.shape[:-1] + tc.shape).copy()
    pc = np.broadcast_to(pc, t.shape[:-1] + pc.shape).copy()
    om = om.copy()
    for k in qpos:
        name = "hydrogen" if idx[k] == INDEX["hydrogen"] else "helium"
        tck, pck = quantum_effective_critical(name, t[..., 0])
        tc[..., k] = tck
        pc[..., k] = pck
        om[k] = 0.0
    return x, tc, pc, om, True


def pseudo_critical(composition, temperature=None, mixing: str = "kay", quantum: bool = True) -> PseudoCritical:
    """Pseudo-critical temperature, pressure and acentric factor of a mixture.

    Kay's rule:

    .. math:: T_{pc} = \\sum x_i T_{c,i}, \\quad P_{pc} = \\sum x_i P_{c,i}, \\quad
              \\omega = \\sum x_i \\omega_i

    Lee–Kesler rules, with :math:`Z_{c,i} = 0.2905 - 0.085\\,\\omega_i`,
    :math:`V_{c,i} = Z_{c,i} R T_{c,i}/P_{c,i}`:

    .. math:: V_{pc} = \\tfrac18 \\sum_i\\sum_j x_i x_j (V_{c,i}^{1/3} + V_{c,j}^{1/3})^3, \\quad
              T_{pc} = \\frac{1}{8 V_{pc}} \\sum_i\\sum_j x_i x_j (V_{c,i}^{1/3} + V_{c,j}^{1/3})^3
              \\sqrt{T_{c,i} T_{c,j}}, \\quad
              P_{pc} = (0.2905 - 0.085\\,\\omega) R T_{pc} / V_{pc}

    Parameters
    ----------
    composition : Composition
    temperature : float or ndarray [K], optional
        Needed only when hydrogen or helium is present and ``quantum`` is true.
    mixing : {"kay", "lee-kesler"}
    quantum : bool
        Use the temperature-dependent effective critical constants of hydrogen and helium
        (:func:`quantum_effective_critical`, omega = 0 for both).

    Returns
    -------
    PseudoCritical

    Notes
    -----
    Component critical constants and acentric factors: :mod:`meterfix.gas.components`
    (``chemicals`` 1.5.2). The double sums are evaluated through moments of
    :math:`V_c^{1/3}` (exact expansion of the cube), so the cost is linear in the number of
    components even with temperature-dependent constants.

    References
    ----------
    1. W. B. Kay, Ind. Eng. Chem. 28 (1936) 1014.
    2. B. I. Lee, M. G. Kesler, AIChE J. 21 (1975) 510.
    """
    mixing = str(mixing).strip().lower().replace("_", "-")
    if mixing not in MIXING_RULES:
        raise SettingsError(f"unknown mixing rule '{mixing}'", hint="use 'kay' or 'lee-kesler'")
    x, tc, pc, om, used_q = _component_constants(composition.fractions, temperature, quantum)
    omega = float(x @ om)
    if mixing == "kay":
        tpc = np.sum(x * tc, axis=-1)
        ppc = np.sum(x * pc, axis=-1)
    else:
        zc = 0.2905 - 0.085 * om
        vc = zc * R * tc / pc
        a = np.cbrt(vc)
        t = np.sqrt(tc)
        m1, m2, m3 = (np.sum(x * a**k, axis=-1) for k in (1, 2, 3))
        # sum_ij x_i x_j (a_i + a_j)^3 = 2 m3 + 6 m1 m2 (the fractions sum to 1)
        vpc = (2.0 * m3 + 6.0 * m1 * m2) / 8.0
        s0, s1, s2, s3 = (np.sum(x * t * a**k, axis=-1) for k in (0, 1, 2, 3))
        tpc = (2.0 * s3 * s0 + 6.0 * s1 * s2) / (8.0 * vpc)
        ppc = (0.2905 - 0.085 * omega) * R * tpc / vpc
    if np.ndim(tpc) == 0:
        tpc, ppc = float(tpc), float(ppc)
    return PseudoCritical(tpc, ppc, omega, mixing, used_q)


def reduced_pressure(pressure, critical_pressure):
    """Reduced pressure Pr = p / Pc.

    Parameters
    ----------
    pressure : float or ndarray [Pa]            absolute
    critical_pressure : float or ndarray [Pa]   critical or pseudo-critical

    Returns
    -------
    float or ndarray [-]
    """
    return np.asarray(pressure, dtype=float) / critical_pressure


def reduced_temperature(temperature, critical_temperature):
    """Reduced temperature Tr = T / Tc.

    Parameters
    ----------
    temperature : float or ndarray [K]
    critical_temperature : float or ndarray [K]   critical or pseudo-critical

    Returns
    -------
    float or ndarray [-]
    """
    return np.asarray(temperature, dtype=float) / critical_temperature


def pseudo_reduced_volume(molar_volume, critical_temperature, critical_pressure):
    """Pseudo-reduced (ideal reduced) specific volume v'R = v / (R Tc / Pc) = Z Tr / Pr.

    .. math:: v'_R = \\frac{v P_c}{R T_c}

    Parameters
    ----------
    molar_volume : float or ndarray [m3/mol]
    critical_temperature : float or ndarray [K]
    critical_pressure : float or ndarray [Pa]

    Returns
    -------
    float or ndarray [-]

    Notes
    -----
    The abscissa of the generalized compressibility chart's volume lines (Nelson–Obert):
    unlike v / v_c it needs no critical volume, which is poorly known for many gases.
    """
    return np.asarray(molar_volume, dtype=float) * critical_pressure / (R * critical_temperature)
