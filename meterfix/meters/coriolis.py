"""Coriolis meters: base volume and energy from the measured mass (AGA Report No. 11 practice).

A Coriolis meter measures mass; the volume at base conditions is the mass over the base density
of the analysis, Vb = m / rho_b, and the energy is the mass times the mass-basis heating value
(ISO 6976), E = m · Hm. Line pressure and temperature enter only range checks and the uncertainty.
"""

from __future__ import annotations

import numpy as np


def base_volume_from_mass(mass, density_base):
    """Volume at base conditions, Vb = m / rho_b [m3].

    Parameters
    ----------
    mass : float or ndarray [kg]
    density_base : float or ndarray [kg/m3]   real-gas density at base conditions (the Z method)
    """
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.divide(np.asarray(mass, float), density_base)


def energy_from_mass(mass, heating_value_mass):
    """Energy, E = m · Hm [J].

    Parameters
    ----------
    mass : float or ndarray [kg]
    heating_value_mass : float or ndarray [J/kg]   gross mass-basis heating value
    """
    return np.asarray(mass, float) * heating_value_mass


def mass_from_flow_rate(mass_flow, duration):
    """Interval mass from a mass flow rate over the interval, m = qm · t [kg].

    Parameters
    ----------
    mass_flow : float or ndarray [kg/s]
    duration : float or ndarray [s]
    """
    return np.asarray(mass_flow, float) * duration
