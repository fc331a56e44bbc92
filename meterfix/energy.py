"""Gross heating value of a natural gas from its composition.

Ideal molar gross (superior) heating value at a combustion reference of 25 degC is the
mole-fraction sum of the component values; the real-gas volumetric value at a metering
reference (T, p) is

    Hv = Hm · p / (Z R T)

with Z of the gas at the metering reference (from the chosen Z method; the pipeline passes the
base-condition Z it already computed).

Component values: the ideal molar gross heating values at 25 degC printed in the AGA Report No. 8
reference code (usnistgov/AGA8, Gross method; listed in REFERENCES.md §1). Only the 25 degC
combustion reference is shipped in this build: a request for another raises SettingsError rather
than converting silently.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .constants import R
from .errors import SettingsError
from .gas.components import INDEX, N_COMPONENTS

EDITION = "component values at 25 degC of the AGA8 reference code"

#: ideal molar gross heating value at 25 degC [J/mol] (AGA8 reference code, REFERENCES.md §1)
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
    """Ideal molar gross heating value, sum of x_j Hm_j.

    Parameters
    ----------
    fractions : ndarray (21,) or (n, 21) [mol/mol]
    temperature_combustion : float [K]   only 298.15 K in this build

    Returns
    -------
    float or ndarray [J/mol]
    """
    if abs(temperature_combustion - 298.15) > 1e-6:
        raise SettingsError(f"combustion reference {temperature_combustion - 273.15:g} degC is not available",
                            hint="this build ships component heating values at 25 degC only; use --combustion-temperature '25 degC'")
    return np.asarray(fractions, float) @ GROSS_MOLAR_25C


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
        from .z import evaluate_z

        z_metering = float(np.asarray(evaluate_z(pressure_metering, temperature_metering, composition, method).z))
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
