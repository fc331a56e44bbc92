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
                         N_COMPONENTS, NAMES, canonical_name)
from . import iso6976_components as ISO

#: A composition whose sum differs from 1 by more than this is rejected (fraction units).
SUM_TOLERANCE = 0.02
#: Lumped heavy-end labels mapped onto a single component (rule in
#: :data:`meterfix.gas.iso6976_components.LUMPS`; recorded in Composition.notes).
_LUMPED = ISO.LUMPS


@dataclass(frozen=True)
class Composition:
    """Mole fractions of the 21 components, summing to 1.

    Attributes
    ----------
    fractions : ndarray, shape (21,)  [mol/mol], canonical order (the Z methods' components)
    sum_as_given : float              sum of the input in fraction units, before normalising
    notes : tuple of str              what was done to the input (normalised, lumped, assigned, ...)
    detail : dict or None             the analysis as reported over the ISO 6976 component list
                                      (neopentane, hexane isomers, benzene ... kept), normalised
                                      [mol/mol]; energy uses it exactly. None: ``fractions`` is all.
    detail_uncertainty : dict or None standard uncertainty of each reported mole fraction [mol/mol],
                                      scaled with the normalisation (ISO 6976:2016 Annex B input)
    correlation : ndarray or None     (60, 60) correlation matrix of the mole fractions over the
                                      ISO 6976 component list (identity when None)
    """

    fractions: np.ndarray
    sum_as_given: float = 1.0
    notes: tuple = field(default=())
    detail: dict | None = field(default=None, compare=False)
    detail_uncertainty: dict | None = field(default=None, compare=False)
    correlation: np.ndarray | None = field(default=None, compare=False, repr=False)

    # -- construction ---------------------------------------------------------------------------
    @classmethod
    def from_mapping(cls, mapping: Mapping[str, float], *, unit: str = "auto",
                     tolerance: float = SUM_TOLERANCE, source: str | None = None, uncertainties=None,
                     correlation=None, allow_no_z: bool = False) -> "Composition":
        """Build from ``{name or alias: amount}``.

        Parameters
        ----------
        mapping : mapping of str to float
            Component names or aliases (``CH4``, ``C1``, ``iC4``, ``neo-C5``, ``benzene``,
            ``Carbon dioxide``, lumps such as ``C6+``) to amounts.
        unit : {"auto", "fraction", "percent"}
            ``auto`` reads a sum near 100 as percent and a sum near 1 as fractions.
        tolerance : float
            Largest accepted deviation of the sum from 1 (fraction units) before normalising.
        source : str, optional
            File name for error messages.
        uncertainties : mapping of str to float, optional
            Standard uncertainty of each amount, in the amounts' unit.
        correlation : mapping of (str, str) to float, optional
            Correlation coefficients between the amounts' uncertainties (symmetric; 1 on the diagonal).
        allow_no_z : bool
            Accept components without a counterpart among the Z methods' (energy only); they are
            left out of ``fractions`` (renormalised) and kept in ``detail``.
        """
        detail: dict[str, float] = {}
        u_detail: dict[str, float] = {}
        notes = []
        seen = {}
        for raw, value in mapping.items():
            name = ISO.iso_name(raw)
            if name is None:
                name = ISO.lump_name(raw)
                if name is not None:
                    notes.append(f"'{raw}' lumped as {name} (rule: a Cn+ lump counts as the normal alkane of n carbons)")
            if name is None:
                close = ISO.closest_names(raw)
                raise CompositionError(
                    f"unknown gas component '{raw}'" + (f"; closest known: {', '.join(close)}" if close else ""),
                    file=source,
                    hint="use a component name of ISO 6976 (methane, n_butane, neopentane, benzene ...) or an alias "
                         "(CH4, C1, iC4, nC4, neoC5, CO2, N2); lumps C6+ ... C10+",
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
            if name in seen:
                notes.append(f"'{raw}' added to '{seen[name]}' ({name})")
            seen[name] = raw
            detail[name] = detail.get(name, 0.0) + v
            if uncertainties is not None and raw in uncertainties and uncertainties[raw] is not None:
                u = float(uncertainties[raw])
                if not np.isfinite(u) or u < 0:
                    raise CompositionError(f"standard uncertainty of '{raw}' must be zero or positive: {u!r}",
                                           file=source)
                u_detail[name] = float(np.hypot(u_detail.get(name, 0.0), u))
        x = np.zeros(N_COMPONENTS)
        for name, v in detail.items():
            z = name if name in NAMES else ISO.Z_ASSIGNMENT.get(name)
            if z is None:
                if allow_no_z:
                    notes.append(f"{name}: no counterpart among the Z methods' components; energy only")
                    continue
                raise CompositionError(
                    f"'{ISO.DISPLAY[name]}' has no counterpart among the components of the Z methods",
                    file=source, hint="remove it from the analysis for the month run (the properties command "
                                      "takes it for energy)")
            if z != name:
                notes.append(f"{name} counted as {z} for Z (rule: same carbon number, from memory)")
            x[NAMES.index(z)] += v
        if allow_no_z and not x.any():
            raise CompositionError("no component of the analysis is among the Z methods' components", file=source)
        comp = cls.from_array(x, unit=unit, tolerance=tolerance, source=source, notes=notes,
                              check_total=sum(detail.values()))
        total_raw = sum(detail.values())
        scale = 1.0 / total_raw if total_raw > 0 else 0.0
        d = {k: v * scale for k, v in detail.items() if v > 0}
        ud = {k: v * scale for k, v in u_detail.items()} if u_detail else None
        R = None
        if correlation:
            R = np.eye(ISO.N_COMPONENTS)
            for (a, b), rho in correlation.items():
                ia, ib = ISO.iso_name(a) or ISO.lump_name(a), ISO.iso_name(b) or ISO.lump_name(b)
                if ia is None or ib is None:
                    raise CompositionError(f"correlation given for an unknown component pair ({a}, {b})", file=source)
                if not -1.0 <= float(rho) <= 1.0:
                    raise CompositionError(f"correlation of ({a}, {b}) is {rho}, outside -1..1", file=source)
                R[ISO.INDEX[ia], ISO.INDEX[ib]] = R[ISO.INDEX[ib], ISO.INDEX[ia]] = float(rho)
        trivial = set(d) <= set(NAMES) and not ud and R is None
        if trivial:
            return comp
        return cls(comp.fractions, comp.sum_as_given, comp.notes, d, ud, R)

    @classmethod
    def from_array(cls, x, *, unit: str = "auto", tolerance: float = SUM_TOLERANCE,
                   source: str | None = None, notes=(), check_total: float | None = None) -> "Composition":
        """Build from an array of 21 amounts in canonical order.

        ``check_total`` (the analysis' own total, when components were left out of ``x``) is the
        sum the unit and the tolerance are judged on.
        """
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
        raw = total if check_total is None else float(check_total)
        if unit == "auto":
            unit = "percent" if raw > 1.5 else "fraction"
        if unit == "percent":
            x = x / 100.0
            total /= 100.0
            raw /= 100.0
        elif unit != "fraction":
            raise CompositionError(f"unknown composition unit {unit!r}; use 'fraction' or 'percent'")
        if total <= 0:
            raise CompositionError("composition is empty (all amounts zero)", file=source)
        if abs(raw - 1.0) > tolerance:
            raise CompositionError(
                f"composition sums to {raw * 100:.4g} %, more than {tolerance * 100:g} % from 100 %",
                file=source, hint="check for a missing or doubled component, or a mix of % and fractions",
            )
        if total != 1.0:
            if abs(raw - 1.0) > 1e-12:
                notes.append(f"normalised: sum was {raw * 100:.6g} %")
            x = x / total
        x.setflags(write=False)
        return cls(x, raw, tuple(notes))

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
