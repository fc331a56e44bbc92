"""Gross characterisation of a natural gas (AGA Report No. 8 GROSS method inputs).

Not a composition: the GROSS methods of AGA8 Part 1 describe the gas by its volumetric gross
(superior) heating value and relative density at stated reference conditions, plus CO2
(method 1) or N2 and CO2 (method 2).
"""

from __future__ import annotations

from dataclasses import dataclass

from ..errors import CompositionError


@dataclass(frozen=True)
class GrossCharacterization:
    """Inputs of the AGA8 GROSS methods.

    Attributes
    ----------
    relative_density : float [-]
        Ideal-gas or real-gas relative density as defined by the standard, at the metering
        reference (``temperature_reference_density``, ``pressure_reference``).
    heating_value : float or None [J/m3]
        Volumetric gross heating value at the metering reference, combustion at
        ``temperature_reference_combustion``. Required for method 1.
    x_co2 : float [mol/mol]
    x_n2 : float or None [mol/mol]
        Required for method 2.
    temperature_reference_density : float [K]   metering reference temperature (default 273.15 K)
    pressure_reference : float [Pa]             metering reference pressure (default 101325 Pa)
    temperature_reference_combustion : float [K] combustion reference (default 298.15 K)
    x_h2, x_co : float [mol/mol]  (optional, default 0)
    """

    relative_density: float
    heating_value: float | None = None
    x_co2: float = 0.0
    x_n2: float | None = None
    temperature_reference_density: float = 273.15
    pressure_reference: float = 101325.0
    temperature_reference_combustion: float = 298.15
    x_h2: float = 0.0
    x_co: float = 0.0

    def __post_init__(self):
        if not (0.4 < self.relative_density < 1.5):
            raise CompositionError(f"relative density {self.relative_density} is not plausible for natural gas",
                                   hint="the GROSS methods cover about 0.55 to 0.87")
        if self.heating_value is not None and not (1e6 < self.heating_value < 1e8):
            raise CompositionError(f"heating value {self.heating_value} J/m3 is not plausible",
                                   hint="give it in J/m3 (e.g. 38.5e6), or use a unit string at the edges")
        for name in ("x_co2", "x_n2", "x_h2", "x_co"):
            v = getattr(self, name)
            if v is not None and not (0.0 <= v <= 1.0):
                raise CompositionError(f"{name} = {v} is not a mole fraction between 0 and 1")
