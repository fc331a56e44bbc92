"""Gas components, compositions and gross characterisations."""

from .components import COMPONENTS, NAMES, canonical_name
from .composition import Composition, as_composition
from .gross import GrossCharacterization

__all__ = ["COMPONENTS", "NAMES", "canonical_name", "Composition", "as_composition", "GrossCharacterization"]
