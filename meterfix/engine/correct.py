"""PTZ correction of interval volumes to base conditions: pure, vectorized model functions.

For a linear meter (turbine, rotary, diaphragm, ultrasonic), the volume at base conditions is

    Vb = Vf · (pf / pb) · (Tb / Tf) · (Zb / Zf)

with Fp = pf/pb, Ft = Tb/Tf and the supercompressibility term Zb/Zf = Fpv² (common practice;
AGA Report No. 7 and EN 12405-1 state the same conversion). Applying Fpv = sqrt(Zb/Zf) instead
of Fpv² to a linear meter halves the real-gas correction (common practice: the supercompressibility
factor Fpv = sqrt(Zb/Zf) enters a volume squared).
"""

from __future__ import annotations

import numpy as np

from ..constants import R


def factor_pressure(pressure_line, pressure_base):
    """Fp = p / pb.

    Parameters
    ----------
    pressure_line : float or ndarray [Pa]  absolute line pressure
    pressure_base : float [Pa]             contract base pressure

    Returns
    -------
    float or ndarray [-]
    """
    return np.divide(pressure_line, pressure_base)


def factor_temperature(temperature_line, temperature_base):
    """Ft = Tb / T.

    Parameters
    ----------
    temperature_line : float or ndarray [K]
    temperature_base : float [K]
    """
    return np.divide(temperature_base, temperature_line)


def factor_supercompressibility(z_line, z_base):
    """Fpv = sqrt(Zb / Zf) [-] (the linear-meter factor is its square, Zb/Zf)."""
    return np.sqrt(np.divide(z_base, z_line))


def volume_at_base(volume_line, pressure_line, temperature_line, pressure_base, temperature_base,
                   z_line=1.0, z_base=1.0):
    """Volume at base conditions of a linear meter, Vb = Vf (pf/pb) (Tb/Tf) (Zb/Zf).

    Parameters
    ----------
    volume_line : float or ndarray [m3]    uncorrected volume at line conditions
    pressure_line : float or ndarray [Pa]  absolute
    temperature_line : float or ndarray [K]
    pressure_base : float [Pa]
    temperature_base : float [K]
    z_line, z_base : float or ndarray [-]  compressibility at line and base conditions
        (1.0 for the ideal-gas result)

    Returns
    -------
    float or ndarray [m3 at base conditions]
    """
    return (np.asarray(volume_line, float) * factor_pressure(pressure_line, pressure_base)
            * factor_temperature(temperature_line, temperature_base) * np.divide(z_base, z_line))


def density_at_base(pressure_base, temperature_base, z_base, molar_mass):
    """Real-gas density at base conditions, rho_b = pb M / (Zb R Tb) [kg/m3].

    Parameters
    ----------
    pressure_base : float [Pa]
    temperature_base : float [K]
    z_base : float or ndarray [-]
    molar_mass : float or ndarray [kg/mol]
    """
    return np.divide(np.multiply(pressure_base, molar_mass), np.multiply(z_base, R * temperature_base))


def ideal_gas_error_pct(volume_base_ideal, volume_base):
    """Error of the ideal-gas correction relative to the real-gas one, 100 (Vi/Vr − 1) [%]."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return 100.0 * (np.divide(volume_base_ideal, volume_base) - 1.0)


def convert_base_volume(volume, pressure_from, temperature_from, z_from, pressure_to, temperature_to, z_to):
    """Re-state a volume at base conditions 'from' at base conditions 'to' (same amount of gas).

    V_to = V_from · (p_from / p_to) · (T_to / T_from) · (Z_to / Z_from)

    Parameters
    ----------
    volume : float or ndarray [m3 at 'from' conditions]
    pressure_from, pressure_to : float [Pa]
    temperature_from, temperature_to : float [K]
    z_from, z_to : float [-]  real-gas Z of this gas at each base condition
    """
    return (np.asarray(volume, float) * (pressure_from / pressure_to) * (temperature_to / temperature_from)
            * (z_to / z_from))
