"""Gross heating value, density, relative density and Wobbe index of a natural gas (ISO 6976 way).

Ideal molar gross (superior) heating value at a combustion reference t1 is the mole-fraction sum
of the component values; the real-gas volumetric value at a metering reference (t2, p2) is

    Hv = Hm(t1) · p2 / (Z R t2)

with Z of the gas at the metering reference (from the chosen Z method; the pipeline passes the
base-condition Z it already computed). Relative density d = (M / M_air) · (Z_air / Z) and the
Wobbe index W = Hv / sqrt(d), both at the metering reference.

Component values: the ideal molar gross heating values at 25 degC printed in the AGA Report No. 8
reference code (usnistgov/AGA8, Gross method, AGA Report No. 8 Part 1 (2017)). Other combustion
references between 0 and 30 degC (0, 15, 60 degF, 20 degC are the usual ones) follow from them by
Kirchhoff's law with ideal-gas heat capacities (meterfix.gas.heat_capacity), which reproduces the
ISO 6976:1995 component tables to about 0.005 % (tests/test_energy.py).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..constants import R
from ..errors import SettingsError
from ..gas.components import INDEX, N_COMPONENTS

EDITION = ("ISO 6976 summation: 25 degC component values of the AGA8 reference code, other combustion "
           "references by Kirchhoff's law")

#: molar mass of dry air [kg/mol] (ISO 6976:2016, from memory)
MOLAR_MASS_AIR = 0.02896546
#: dry air composition used for Z of air [mol/mol] (ISO 6976, from memory; normalised)
AIR = {"nitrogen": 0.78102, "oxygen": 0.20946, "argon": 0.00916, "carbon_dioxide": 0.00033}
#: combustion references accepted [K]
COMBUSTION_RANGE = (273.15, 303.15)

#: ideal molar gross heating value at 25 degC [J/mol] (AGA8 reference code usnistgov/AGA8, Gross.cpp)
_HV25_KJ = {"methane": 890.63, "ethane": 1560.69, "propane": 2219.17, "isobutane": 2868.2, "n_butane": 2877.4,
            "isopentane": 3528.83, "n_pentane": 3535.77, "n_hexane": 4194.95, "n_heptane": 4853.43,
            "n_octane": 5511.8, "n_nonane": 6171.15, "n_decane": 6829.77, "hydrogen": 285.83,
            "carbon_monoxide": 282.98, "water": 44.016, "hydrogen_sulfide": 562.01}
GROSS_MOLAR_25C = np.zeros(N_COMPONENTS)
for _n, _v in _HV25_KJ.items():
    GROSS_MOLAR_25C[INDEX[_n]] = _v * 1e3


@dataclass(frozen=True)
class HeatingValueResult:
    """Gross heating value of one composition.

    Attributes
    ----------
    gross_molar : float [J/mol]               ideal molar gross heating value
    gross_volumetric_ideal : float [J/m3]     at the metering reference, Z = 1
    gross_volumetric_real : float [J/m3]      at the metering reference, real gas
    z_metering : float [-]                    Z used at the metering reference
    temperature_combustion, temperature_metering : float [K]
    pressure_metering : float [Pa]
    edition : str
    """

    gross_molar: float
    gross_volumetric_ideal: float
    gross_volumetric_real: float
    z_metering: float
    temperature_combustion: float
    temperature_metering: float
    pressure_metering: float
    edition: str = EDITION


def gross_molar_heating_value(fractions, temperature_combustion: float = 298.15):
    """Ideal molar gross heating value, sum of x_j Hm_j(t1).

    Parameters
    ----------
    fractions : ndarray (21,) or (n, 21) [mol/mol]
    temperature_combustion : float [K]   combustion reference t1, 273.15–303.15 K

    Returns
    -------
    float or ndarray [J/mol]
    """
    return np.asarray(fractions, float) @ component_heating_values(temperature_combustion)


def component_heating_values(temperature_combustion: float = 298.15) -> np.ndarray:
    """Ideal molar gross heating value of each component at a combustion reference [J/mol].

    Parameters
    ----------
    temperature_combustion : float [K]   273.15–303.15 K
    """
    t1 = float(temperature_combustion)
    lo, hi = COMBUSTION_RANGE
    if not (lo - 1e-9 <= t1 <= hi + 1e-9):
        raise SettingsError(f"combustion reference {t1 - 273.15:g} degC is outside 0-30 degC",
                            hint="use --combustion-temperature '25 degC' (or 0, 15, 20 degC, 60 degF)")
    if abs(t1 - 298.15) < 1e-9:
        return GROSS_MOLAR_25C.copy()
    from ..gas.heat_capacity import combustion_enthalpy_shift

    return GROSS_MOLAR_25C + combustion_enthalpy_shift(298.15, t1)


def heating_value(composition, *, temperature_combustion: float = 298.15, temperature_metering: float = 288.15,
                  pressure_metering: float = 101325.0, z_metering: float | None = None,
                  method: str = "gerg-2008") -> HeatingValueResult:
    """Gross heating value of a composition at a metering reference.

    Parameters
    ----------
    composition : Composition
    temperature_combustion : float [K]
    temperature_metering : float [K]
    pressure_metering : float [Pa]
    z_metering : float [-], optional   Z at the metering reference; computed with ``method`` if None
    method : str                       Z method used when ``z_metering`` is None
    """
    hm = float(gross_molar_heating_value(composition.fractions, temperature_combustion))
    if z_metering is None:
        z_metering = _z_at(pressure_metering, temperature_metering, composition, method)
    rho_ideal = pressure_metering / (R * temperature_metering)
    return HeatingValueResult(hm, hm * rho_ideal, hm * rho_ideal / z_metering, float(z_metering),
                              temperature_combustion, temperature_metering, pressure_metering)


def convert_volumetric_heating_value(value, *, composition=None, temperature_metering_from: float,
                                     pressure_metering_from: float, temperature_metering_to: float,
                                     pressure_metering_to: float):
    """Re-state a volumetric heating value at another metering reference (ideal-gas scaling).

    Hv_to = Hv_from · (p_to / p_from) · (T_from / T_to)

    Parameters
    ----------
    value : float [J/m3]
    composition : ignored in this build (the Z ratio between two near-atmospheric references
        differs from 1 by less than about 1e-4; stated, not applied)
    temperature_metering_from, temperature_metering_to : float [K]
    pressure_metering_from, pressure_metering_to : float [Pa]
    """
    return value * (pressure_metering_to / pressure_metering_from) * (temperature_metering_from / temperature_metering_to)


def _z_at(pressure: float, temperature: float, gas, method: str) -> float:
    """Z of ``gas`` at one state [-] (pressure [Pa], temperature [K]) with a registered method."""
    from ..z import evaluate_z

    return float(np.asarray(evaluate_z(pressure, temperature, gas, method).z).reshape(-1)[0])


def relative_density(composition, *, temperature_metering: float = 288.15, pressure_metering: float = 101325.0,
                     z_metering: float | None = None, method: str = "gerg-2008") -> float:
    """Real-gas relative density d = (M / M_air) (Z_air / Z) at a metering reference [-].

    Parameters
    ----------
    composition : Composition
    temperature_metering : float [K]
    pressure_metering : float [Pa]
    z_metering : float [-], optional   Z of the gas at the reference; computed with ``method`` if None
    method : str                       Z method for the gas (if needed) and for dry air
    """
    if z_metering is None:
        z_metering = _z_at(pressure_metering, temperature_metering, composition, method)
    z_air = _z_at(pressure_metering, temperature_metering, AIR, method)
    return composition.molar_mass / MOLAR_MASS_AIR * z_air / z_metering


def density(composition, *, temperature_metering: float = 288.15, pressure_metering: float = 101325.0,
            z_metering: float | None = None, method: str = "gerg-2008") -> float:
    """Real-gas density ρ = p M / (Z R T) at a metering reference [kg/m3].

    Parameters
    ----------
    composition : Composition
    temperature_metering : float [K]
    pressure_metering : float [Pa]
    z_metering : float [-], optional
    method : str
    """
    if z_metering is None:
        z_metering = _z_at(pressure_metering, temperature_metering, composition, method)
    return pressure_metering * composition.molar_mass / (z_metering * R * temperature_metering)


def wobbe_index(heating_value_volumetric, relative_density_value):
    """Gross Wobbe index W = Hv / sqrt(d) [J/m3].

    Parameters
    ----------
    heating_value_volumetric : float or ndarray [J/m3]   gross, real gas, at the metering reference
    relative_density_value : float or ndarray [-]        real-gas relative density at the same reference
    """
    return np.asarray(heating_value_volumetric, float) / np.sqrt(np.asarray(relative_density_value, float))
