"""Registry entry for the ideal gas."""

from .ideal import EDITION, IDEAL_METHOD, z_ideal
from .registry import ZMethod


def _evaluate(pressure, temperature, gas=None, **_):
    from ..gas.composition import Composition
    return z_ideal(pressure, temperature, gas if isinstance(gas, Composition) else None)


METHODS = [ZMethod(IDEAL_METHOD, EDITION, _evaluate, family="ideal",
                   range_text="any pressure and temperature (exact only as p -> 0)",
                   uncertainty_pct={}, uncertainty_source="not a real-gas method: its error is the ideal-gas error")]
