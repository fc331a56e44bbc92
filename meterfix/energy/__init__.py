"""Energy: calorific values, density, relative density and Wobbe index of a gas (stage 4).

* :mod:`meterfix.energy.iso6976` — ISO 6976:2016 in full (1995 edition selectable): component
  tables, summation-factor compression factor, gross and net values on molar, mass and volumetric
  bases, density, relative density, Wobbe indices, and Annex B uncertainties. The month run uses it.
* :mod:`meterfix.energy.kirchhoff` — the earlier sums kept for their public functions: the AGA8
  reference code's 25 degC component values shifted to other combustion temperatures by
  Kirchhoff's law, with Z at the metering reference from an equation of state. Used only where
  ISO 6976 does not tabulate the temperatures asked for (stated in the output when it is).
* :mod:`meterfix.energy.month` — the heating value of one analysis for the month run (the
  edition named), US practice in Btu/scf.
"""

from .kirchhoff import (AIR, COMBUSTION_RANGE, EDITION, GROSS_MOLAR_25C, MOLAR_MASS_AIR, HeatingValueResult,
                        _z_at, component_heating_values, convert_volumetric_heating_value, density,
                        gross_molar_heating_value, heating_value, relative_density, wobbe_index)

__all__ = ["AIR", "COMBUSTION_RANGE", "EDITION", "GROSS_MOLAR_25C", "MOLAR_MASS_AIR", "HeatingValueResult",
           "component_heating_values", "convert_volumetric_heating_value", "density", "gross_molar_heating_value",
           "heating_value", "relative_density", "wobbe_index", "_z_at"]
