"""meterfix: gas volumes and energy at contract base conditions, with real-gas Z.

Results support engineering review, reconciliation and invoice queries. meterfix is not an
approved volume conversion device; it defers to the contract, local legal-metrology rules and
licensed practice.
"""

from __future__ import annotations

__version__ = "0.1.0"

from .constants import R, specific_gas_constant
from .errors import InputError, MeterfixError, RangeWarning
from .gas import Composition, GrossCharacterization
from .z import compressibility, evaluate_z, method_names, z_methods

__all__ = ["__version__", "R", "specific_gas_constant", "Composition", "GrossCharacterization",
           "compressibility", "evaluate_z", "method_names", "z_methods", "MeterfixError", "InputError",
           "RangeWarning"]
