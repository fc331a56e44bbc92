"""Gas compositions: parse, alias, normalise, validate.

A :class:`Composition` holds mole fractions of the 21 AGA8 / GERG-2008 components in the
fixed order of :mod:`meterfix.gas.components`. It accepts fractions or percent, normalises a
sum that is within a tolerance of 1 (and records by how much it was off), and rejects unknown
names (listing the known ones), negative fractions and sums far from 100 %.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from ..errors import CompositionError
from .components import (ACENTRIC_FACTOR, CRITICAL_PRESSURE, CRITICAL_TEMPERATURE, MOLAR_MASS,
                         N_COMPONENTS, NAMES, _key, canonical_name)

#: A composition whose sum differs from 1 by more than this is rejected (fraction units).
SUM_TOLERANCE = 0.02
#: Lumped heavy-end labels mapped onto a single component (common practice for pipeline gas
#: analyses when no extended analysis is available; recorded in Composition.notes).
_LUMPED = {"c6+": "n_hexane", "c6plus": "n_hexane", "hexanes+": "n_hexane", "hexanesplus": "n_hexane",
           "c7+": "n_heptane", "c7plus": "n_heptane"}


@dataclass(frozen=True)
class Composition:
    """Mole fractions of the 21 components, summing to 1.

    Attributes
    ----------
    fractions : ndarray, shape (21,)  [mol/mol], canonical order
    sum_as_given : float              sum of the input in fraction units, before normalising
    notes : tuple of str              what was done to the input (normalised, lumped, ...)
    """

    fractions: np.ndarray
    sum_as_given: float = 1.0
    notes: tuple = field(default=())

    # -- construction ---------------------------------------------------------------------------
    @classmethod
    def from_mapping(cls, mapping: Mapping[str, float], *, unit: str = "auto",
                     tolerance: float = SUM_TOLERANCE, source: str | None = None) -> "Composition":
        """Build from ``{name or alias: amount}``.

        Parameters
        ----------
        mapping : mapping of str to float
            Component names or aliases (``CH4``, ``C1``, ``iC4``, ``Carbon dioxide``) to amounts.
        unit : {"auto", "fraction", "percent"}
            ``auto`` reads a sum near 100 as percent and a sum near 1 as fractions.
        tolerance : float
            Largest accepted deviation of the sum from 1 (fraction units) before normalising.
        source : str, optional
            File name for error messages.
        """
        x = np.zeros(N_COMPONENTS)
        notes = []
        seen = {}
        for raw, value in mapping.items():
            name = canonical_name(raw)
            if name is None and _key(raw).replace("+", "plus") in {k.replace("+", "plus") for k in _LUMPED}:
                name = _LUMPED.get(_key(raw)) or _LUMPED.get(_key(raw).replace("+", "plus"))
                notes.append(f"'{raw}' lumped as {name}")
            if name is None:
                raise CompositionError(
                    f"unknown gas component '{raw}'", file=source,
                    hint="known components: " + ", ".join(NAMES) + " (and aliases such as CH4, C1, iC4, nC4, CO2, N2)",
                )
            try:
                v = float(value)
            except (TypeError, ValueError):
                raise CompositionError(f"amount of '{raw}' is not a number: {value!r}", file=source) from None
            if not np.isfinite(v):
                raise CompositionError(f"amount of '{raw}' is not finite: {value!r}", file=source)
            if v < 0:
                raise CompositionError(f"negative amount for '{raw}': {v}", file=source,
                                       hint="mole fractions must be zero or positive")
            idx = NAMES.index(name)
            if name in seen:
                notes.append(f"'{raw}' added to '{seen[name]}' ({name})")
            seen[name] = raw
            x[idx] += v
        return cls.from_array(x, unit=unit, tolerance=tolerance, source=source, notes=notes)

    @classmethod
    def from_array(cls, x, *, unit: str = "auto", tolerance: float = SUM_TOLERANCE,
                   source: str | None = None, notes=()) -> "Composition":
        """Build from an array of 21 amounts in canonical order."""
        x = np.asarray(x, dtype=float).copy()
        notes = list(notes)
        if x.shape != (N_COMPONENTS,):
            raise CompositionError(f"a composition needs {N_COMPONENTS} amounts, got shape {x.shape}", file=source)
        if np.any(~np.isfinite(x)):
            raise CompositionError("composition has a non-finite amount", file=source)
        if np.any(x < 0):
            bad = [NAMES[i] for i in np.flatnonzero(x < 0)]
            raise CompositionError(f"negative amount for {', '.join(bad)}", file=source,
                                   hint="mole fractions must be zero or positive")
        total = float(x.sum())
        if unit == "auto":
            unit = "percent" if total > 1.5 else "fraction"
        if unit == "percent":
            x = x / 100.0
            total /= 100.0
        elif unit != "fraction":
            raise CompositionError(f"unknown composition unit {unit!r}; use 'fraction' or 'percent'")
        if total <= 0:
            raise CompositionError("composition is empty (all amounts zero)", file=source)
        if abs(total - 1.0) > tolerance:
            raise CompositionError(
                f"composition sums to {total * 100:.4g} %, more than {tolerance * 100:g} % from 100 %",
                file=source, hint="check for a missing or doubled component, or a mix of % and fractions",
            )
        if total != 1.0:
            if abs(total - 1.0) > 1e-12:
                notes.append(f"normalised: sum was {total * 100:.6g} %")
            x = x / total
        x.setflags(write=False)
        return cls(x, total, tuple(notes))

    @classmethod
    def parse(cls, text: str, **kw) -> "Composition":
        """Parse ``"methane=0.95,ethane=0.03,nitrogen=0.02"`` (``:`` also accepted)."""
        mapping = {}
        for part in str(text).replace(";", ",").split(","):
            part = part.strip()
            if not part:
                continue
            if "=" in part:
                k, v = part.split("=", 1)
            elif ":" in part:
                k, v = part.split(":", 1)
            else:
                raise CompositionError(f"cannot read '{part}' in the gas string",
                                       hint="write name=fraction pairs, e.g. 'methane=0.95,ethane=0.03,nitrogen=0.02'")
            v = v.strip().rstrip("%")
            mapping[k.strip()] = v
        if not mapping:
            raise CompositionError("empty gas string",
                                   hint="write name=fraction pairs, e.g. 'methane=0.95,ethane=0.03,nitrogen=0.02'")
        return cls.from_mapping(mapping, **kw)

    # -- properties ---------------------------------------------------------------------------------
    def __getitem__(self, name: str) -> float:
        canon = canonical_name(name)
        if canon is None:
            raise KeyError(name)
        return float(self.fractions[NAMES.index(canon)])

    def as_dict(self, nonzero: bool = True) -> dict[str, float]:
        return {n: float(v) for n, v in zip(NAMES, self.fractions) if v != 0 or not nonzero}

    @property
    def molar_mass(self) -> float:
        """Molar mass [kg/mol] from the general component table."""
        return float(self.fractions @ MOLAR_MASS)

    def pseudo_critical_kay(self) -> tuple[float, float, float]:
        """Kay's rule pseudo-critical temperature [K], pressure [Pa] and acentric factor [-]."""
        x = self.fractions
        return float(x @ CRITICAL_TEMPERATURE), float(x @ CRITICAL_PRESSURE), float(x @ ACENTRIC_FACTOR)

    def __hash__(self):
        return hash(self.fractions.tobytes())

    def __eq__(self, other):
        return isinstance(other, Composition) and np.array_equal(self.fractions, other.fractions)

    def __repr__(self):
        body = ", ".join(f"{k}={v:.6g}" for k, v in self.as_dict().items())
        return f"Composition({body})"


def as_composition(gas) -> Composition:
    """Accept a Composition, a mapping, a 21-array or a 'name=x,...' string."""
    if isinstance(gas, Composition):
        return gas
    if isinstance(gas, str):
        return Composition.parse(gas)
    if isinstance(gas, Mapping):
        return Composition.from_mapping(gas)
    arr = np.asarray(gas, dtype=float)
    if arr.shape == (N_COMPONENTS,):
        return Composition.from_array(arr)
    raise CompositionError(f"cannot use {type(gas).__name__} as a gas composition",
                           hint="give a mapping of component name to mole fraction")
