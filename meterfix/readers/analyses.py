"""Gas analyses (CSV/TXT/XLSX/ODS) → a list of (effective from, gas) in time order.

Three layouts are read (title and note rows above the header are allowed; a workbook's sheet
named ``Analyses`` is used first):

1. **One analysis**, one row per component::

       Component | Mole percent [mol%]          (or 'Mole fraction [-]', '[ppm]')
       methane   | 93.12
       C2H6      | 3.42   ...

   Component names are the canonical ones (``methane``, ``n_butane`` ...) or the usual aliases
   (``CH4``, ``C1``, ``iC4``, ``nC4``, ``CO2``, ``N2``, ``C6+`` lumped as n-hexane). Rows naming a
   property instead of a component (``Total``, ``Heating value``, ``Relative density``,
   ``Wobbe index``, ``Density``, ``Compressibility``) are skipped and noted.
2. **A table of analyses**, one row per analysis: ``Effective from`` (local clock time of the
   site, or with an offset) then one column per component (``methane [mol%]``, ``CO2 (mol %)``).
   Each analysis applies from its time until the next one; the earliest also covers any interval
   before it (the pipeline's rule).
3. **A gross characterisation** (the inputs of the AGA8 GROSS methods): ``Heating value [MJ/m3]``
   and/or ``Relative density [-]`` with ``CO2 [mol%]``, ``N2 [mol%]`` (optionally ``H2``, ``CO``,
   ``Effective from`` and the reference conditions ``Metering temperature [degC]``,
   ``Metering pressure [kPa]``, ``Combustion temperature [degC]``; defaults 0 degC, 101.325 kPa,
   25 degC as in :class:`meterfix.gas.gross.GrossCharacterization`).

An amount column without a unit is read as percent when the analysis sums near 100 and as
fractions when it sums near 1. A sum further than 2 % from 100 %, an unknown component, a
negative or unreadable amount raise :class:`meterfix.errors.CompositionError` naming file, sheet,
row and column.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import CompositionError, InputError, UnitError
from ..gas import iso6976_components as ISO
from ..gas.composition import Composition
from ..gas.gross import GrossCharacterization
from ..units import parse_unit
from .columns import _candidates, _norm
from .tables import DEFAULT_LIMITS, Limits, RawTable, default_header_score, parse_table, to_numbers
from .times import localize, parse_datetimes

_COMPONENT_WORDS = {"component", "components", "name", "species", "compound", "gas component", "constituent"}
_AMOUNT_WORDS = {"mole percent", "mol percent", "mol", "mole fraction", "mol fraction", "amount", "concentration",
                 "value", "fraction", "percent", "mole", "mol %", "content", "x"}
_TIME_WORDS = {"effective from", "effective", "valid from", "from", "date", "sample date", "sampled", "date time",
               "timestamp", "effective date", "start", "applies from"}
_PROPERTY_WORDS = ("total", "sum", "heating value", "calorific value", "relative density", "wobbe", "density",
                   "compressibility", "molar mass", "specific gravity", "gcv", "hhv", "ncv", "lhv", "z")
_GROSS = {
    "heating_value": ({"heating value", "gross heating value", "calorific value", "gross calorific value",
                       "gcv", "hhv", "hs", "superior heating value"}, "heating_value"),
    "relative_density": ({"relative density", "specific gravity", "rd", "sg", "gravity", "d"}, "fraction_plain"),
    "temperature_reference_density": ({"metering temperature", "reference temperature", "metering reference temperature"},
                                      "temperature"),
    "pressure_reference": ({"metering pressure", "reference pressure", "metering reference pressure"}, "pressure"),
    "temperature_reference_combustion": ({"combustion temperature", "combustion reference temperature"},
                                         "temperature"),
}
_GROSS_FRACTIONS = {"carbon_dioxide": "x_co2", "nitrogen": "x_n2", "hydrogen": "x_h2", "carbon_monoxide": "x_co"}


def _component(text: str):
    """Canonical component name (ISO 6976 list, lumps counted by their rule) of a header or cell, or None."""
    return ISO.iso_name(str(text)) or ISO.lump_name(str(text))


_UNCERTAINTY_WORDS = ("standard uncertainty", "uncertainty", "u", "std uncertainty", "u(x)", "ux",
                      "standard deviation")


def _is_uncertainty(name: str) -> bool:
    n = _norm(name)
    return n in _UNCERTAINTY_WORDS or n.startswith("standard uncertainty") or n.startswith("uncertainty")


def _split(header: str):
    """Header → (name, unit text): the most explicit split whose name means something."""
    for name, unit, explicit in _candidates(header):
        n = _norm(name)
        if (_component(name) or n in _COMPONENT_WORDS or n in _AMOUNT_WORDS or n in _TIME_WORDS
                or any(n in g[0] for g in _GROSS.values()) or _is_uncertainty(name)):
            if unit and not explicit and _component(name) is None and n not in _AMOUNT_WORDS:
                continue
            return name, unit
    return header, ""


def _score(cells) -> float:
    n = 0
    for c in cells:
        if isinstance(c, str) and c.strip():
            name, _ = _split(c)
            k = _norm(name)
            if (_component(name) or k in _COMPONENT_WORDS or k in _AMOUNT_WORDS or k in _TIME_WORDS
                    or any(k in g[0] for g in _GROSS.values())):
                n += 1
    return 100.0 * (float(n) if n >= 2 else 0.0) + default_header_score(cells)


def read_analyses(path, *, timezone: str = "UTC", sheet=None, limits: Limits = DEFAULT_LIMITS):
    """Read a gas-analysis file.

    Parameters
    ----------
    path : str or Path     CSV, TXT, XLSX, XLSM, XLS or ODS
    timezone : str         IANA zone of the ``Effective from`` clock times
    sheet : str, optional  workbook sheet (default 'Analyses', else the sheet holding analyses)
    limits : Limits

    Returns
    -------
    list of (pandas.Timestamp [UTC] or None, Composition or GrossCharacterization)
        In time order; ``None`` for an analysis without an effective-from time (it applies
        throughout).
    """
    p = Path(path)
    if not p.exists():
        raise InputError("gas-analysis file not found", file=p, hint="check the path given to --composition")
    with open(p, "rb") as fh:
        return parse_analyses(fh, name=str(p), timezone=timezone, sheet=sheet, limits=limits)


def parse_analyses(fileobj, *, name: str = "<analysis>", timezone: str = "UTC", sheet=None,
                   limits: Limits = DEFAULT_LIMITS):
    """Read gas analyses from a binary file-like object (see :func:`read_analyses`).

    Parameters
    ----------
    fileobj : binary file-like
    name : str        file name for messages; its extension gives the format
    timezone : str    IANA zone of the ``Effective from`` clock times
    """
    t = parse_table(fileobj, name=name, sheet=sheet, header_score=_score, prefer=("analyses", "analysis"),
                    limits=limits)
    heads = [(j, h) + _split(h) for j, h in enumerate(t.header) if str(h).strip()]
    comp_col = next((j for j, h, n, u in heads if _norm(n) in _COMPONENT_WORDS), None)
    if comp_col is not None:
        return [(None, _one_analysis(t, comp_col, heads))]
    return _table(t, heads, timezone)


def _is_fraction_unit(unit_text: str) -> bool:
    try:
        parse_unit(unit_text, "fraction")
        return True
    except UnitError:
        return False


def _fraction_scale(unit_text: str, where) -> float | None:
    """Scale to mole fractions for an amount unit; None when no unit is given."""
    if not unit_text:
        return None
    try:
        return parse_unit(unit_text, "fraction").scale
    except UnitError:
        raise CompositionError(f"unknown amount unit '{unit_text}'", **where,
                               hint="write the header as 'Mole percent [mol%]' or 'Mole fraction [-]'") from None


def _one_analysis(t: RawTable, comp_col: int, heads) -> Composition:
    """One analysis, one row per component. Optional columns: ``Standard uncertainty`` (same unit as
    the amounts unless its header gives one; ISO 6976:2016 Annex B input) and a correlation matrix
    as one column per component (headers are component names, cells the correlation coefficients
    with the row's component)."""
    unc = [(j, h, n, u) for j, h, n, u in heads if j != comp_col and _is_uncertainty(n)]
    corr_cols = [(j, h, _component(n)) for j, h, n, u in heads if j != comp_col and _component(n) is not None]
    heads = [x for x in heads if x[0] not in {c[0] for c in unc} | {c[0] for c in corr_cols}]
    amount = [(j, h, n, u) for j, h, n, u in heads if j != comp_col]
    pref = [x for x in amount if _norm(x[2]) in _AMOUNT_WORDS]
    if not (pref or amount):
        raise CompositionError("the analysis has a component column but no amount column", **t.where(t.header_row),
                               hint="add a column 'Mole percent [mol%]' beside 'Component'")
    j, header, name, unit_text = (pref or amount)[0]
    scale = _fraction_scale(unit_text, t.where(t.header_row, header))
    if scale is None and "fraction" in _norm(name):
        scale = 1.0
    if scale is None and "percent" in _norm(name):
        scale = 0.01
    values, empty, bad = to_numbers(t.cells[j].to_numpy(), t.decimal)
    names = t.cells[comp_col].astype(str).str.strip().to_numpy()
    u_values = None
    if unc:
        ju, hu, nu, uu = unc[0]
        u_scale = _fraction_scale(uu, t.where(t.header_row, hu))
        u_values, u_empty, u_bad = to_numbers(t.cells[ju].to_numpy(), t.decimal)
        for i in np.flatnonzero(u_bad):
            raise CompositionError(f"the standard uncertainty '{t.cells[ju].iat[i]}' is not a number",
                                   **t.where(int(t.rows[i]), hu), hint="write a plain number; the unit goes in the header")
        if u_scale is not None:
            # into the amounts' own unit (fractions when the amounts have a unit, else as auto-detected)
            amount_unit = scale if scale is not None else (0.01 if np.nansum(values) > 1.5 else 1.0)
            u_values = u_values * u_scale / amount_unit
    mapping: dict = {}
    uncertainties: dict = {}
    correlation: dict = {}
    notes = []
    for i in range(len(names)):
        row = int(t.rows[i])
        nm = names[i]
        if not nm:
            if not empty[i]:
                raise CompositionError("an amount without a component name", **t.where(row, t.header[comp_col]),
                                       hint="name the component in every row")
            continue
        canon = _component(nm)
        if canon is None:
            if _norm(nm).startswith(_PROPERTY_WORDS):
                notes.append(f"row {row}: '{nm}' is not a component; skipped")
                continue
            close = ISO.closest_names(nm)
            raise CompositionError(f"unknown gas component '{nm}'" + (f"; closest known: {', '.join(close)}"
                                                                     if close else ""),
                                   **t.where(row, t.header[comp_col]),
                                   hint="use a component name of ISO 6976 (methane, n_butane, neopentane, benzene ...) "
                                        "or an alias (CH4, C2H6, nC4, neoC5, CO2, N2 ...)")
        if bad[i]:
            raise CompositionError(f"the amount of '{nm}' is not a number: '{t.cells[j].iat[i]}'", **t.where(row, header),
                                   hint="write a plain number; the unit goes in the header")
        if empty[i]:
            continue
        v = float(values[i]) * (scale if scale is not None else 1.0)
        if v < 0:
            raise CompositionError(f"negative amount for '{nm}': {values[i]:g}", **t.where(row, header),
                                   hint="mole fractions are zero or positive")
        mapping[nm] = mapping.get(nm, 0.0) + v
        if u_values is not None and np.isfinite(u_values[i]):
            if u_values[i] < 0:
                raise CompositionError(f"negative standard uncertainty for '{nm}'", **t.where(row, unc[0][1]))
            uncertainties[nm] = float(u_values[i]) * (scale if scale is not None else 1.0)
        for jc, hc, cname in corr_cols:
            rv, re_, rb = to_numbers(t.cells[jc].to_numpy()[i:i + 1], t.decimal)
            if rb[0]:
                raise CompositionError(f"correlation '{t.cells[jc].iat[i]}' is not a number", **t.where(row, hc))
            if np.isfinite(rv[0]) and cname != canon:
                correlation[(nm, cname)] = float(rv[0])
    if not mapping:
        raise CompositionError("the analysis lists no component amounts", **t.where(t.header_row, header),
                               hint="one row per component with its mole percent")
    try:
        comp = Composition.from_mapping(mapping, unit="fraction" if scale is not None else "auto", source=t.file,
                                        uncertainties=uncertainties or None, correlation=correlation or None)
    except CompositionError as exc:
        raise CompositionError(exc.message, **t.where(None, header), hint=exc.hint) from None
    if notes:
        import dataclasses

        comp = dataclasses.replace(comp, notes=comp.notes + tuple(notes))
    return comp


def _table(t: RawTable, heads, timezone):
    tcol = next(((j, h) for j, h, n, u in heads if _norm(n) in _TIME_WORDS), None)
    comps = [(j, h, _component(n), u) for j, h, n, u in heads if _component(n) is not None]
    for j, h, n, u in heads:
        # a column in an amount unit that names no known component is refused, never dropped
        if _component(n) is not None or _norm(n).startswith(_PROPERTY_WORDS):
            continue
        named = [(cn, cu) for cn, cu, explicit in _candidates(h) if explicit and cu and _is_fraction_unit(cu)]
        if named and _component(named[0][0]) is None and not _norm(named[0][0]).startswith(_PROPERTY_WORDS) \
                and _norm(named[0][0]) not in _AMOUNT_WORDS:
            n = named[0][0]
            close = ISO.closest_names(n)
            raise CompositionError(f"unknown gas component '{n}'" + (f"; closest known: {', '.join(close)}"
                                                                    if close else ""), **t.where(t.header_row, h),
                                   hint="name the column after a component of ISO 6976 (methane, neopentane, "
                                        "benzene ...) or an alias (CH4, nC4, neoC5, CO2)")
    raw_names = {j: str(n).strip() for j, h, n, u in heads if _component(n) is not None}
    gross = {}
    for j, h, n, u in heads:
        k = _norm(n)
        for key, (names, kind) in _GROSS.items():
            if k in names:
                gross[key] = (j, h, u, kind)
    if not comps and not gross:
        raise CompositionError("no component or heating-value columns found", **t.where(t.header_row),
                               hint="one analysis: columns 'Component' and 'Mole percent [mol%]'; a table: "
                                    "'Effective from' then one column per component, e.g. 'methane [mol%]'")
    names = {c for _, _, c, _ in comps}
    is_gross = ("heating_value" in gross or "relative_density" in gross) and names <= set(_GROSS_FRACTIONS)
    when = _times(t, tcol, timezone)
    out = []
    if is_gross:
        values = {}
        for key, (j, h, u, kind) in gross.items():
            values[key] = _column_si(t, j, h, u, kind)
        for j, h, c, u in comps:
            values[_GROSS_FRACTIONS[c]] = _column_fraction(t, j, h, u, default=0.01)
        for i in range(len(t.cells)):
            kw = {k: float(v[i]) for k, v in values.items() if np.isfinite(v[i])}
            try:
                gas = GrossCharacterization(**kw)
            except (CompositionError, TypeError) as exc:
                raise CompositionError(getattr(exc, "message", str(exc)), **t.where(int(t.rows[i])),
                                       hint=getattr(exc, "hint", None)) from None
            out.append((when[i], gas))
    else:
        cols = [(j, h, c, _column_fraction(t, j, h, u, default=None)) for j, h, c, u in comps]
        all_units = all(u for _, _, _, u in comps)
        if not all_units and any(u for _, _, _, u in comps):
            raise CompositionError("some component columns give a unit and some do not", **t.where(t.header_row),
                                   hint="write the unit in every component header, e.g. 'methane [mol%]'")
        for i in range(len(t.cells)):
            row = int(t.rows[i])
            mapping = {}
            for j, h, c, v in cols:
                x = v[i]
                if np.isnan(x):
                    continue
                if x < 0:
                    raise CompositionError(f"negative amount for '{h}': {x:g}", **t.where(row, h),
                                           hint="mole fractions are zero or positive")
                key = raw_names.get(j, c)  # the header's own name: lumps and aliases are recorded in the notes
                mapping[key] = mapping.get(key, 0.0) + x
            try:
                gas = Composition.from_mapping(mapping, unit="fraction" if all_units else "auto", source=t.file)
            except CompositionError as exc:
                raise CompositionError(exc.message, **t.where(row, None), hint=exc.hint) from None
            out.append((when[i], gas))
    if len(out) > 1 and any(w is None for w, _ in out[1:]):
        raise InputError("several analyses, but not every one has an effective-from time", **t.where(t.header_row),
                         hint="add an 'Effective from' column with the local time each analysis applies from")
    return _ordered(out, t)


def _ordered(out, t: RawTable):
    stamps = [w for w, _ in out if w is not None]
    if len(set(stamps)) != len(stamps):
        dup = pd.Series(stamps)[pd.Series(stamps).duplicated()].iloc[0]
        raise InputError(f"two analyses have the same effective-from time {dup.isoformat()}", **t.where(None),
                         hint="each analysis needs its own effective-from time")
    return sorted(out, key=lambda a: pd.Timestamp.min.tz_localize("UTC") if a[0] is None else a[0])


def _times(t: RawTable, tcol, timezone):
    n = len(t.cells)
    if tcol is None:
        return [None] * n
    j, h = tcol
    where = {"file": t.file, "sheet": t.sheet, "column": h}
    raw = t.cells[j].to_numpy()
    naive, bad, is_utc = parse_datetimes(raw, where, what="effective-from")
    for i in np.flatnonzero(bad):
        raise InputError(f"'{raw[i]}' is not a date and time", **t.where(int(t.rows[i]), h),
                         hint="write e.g. 2026-10-15 06:00 (local time of the site)")
    utc = naive if is_utc else localize(naive, timezone)[0]
    out = []
    for i in range(n):
        if np.isnat(utc[i]):
            if str(raw[i]).strip() and not np.isnat(naive[i]):
                raise InputError(f"'{raw[i]}' does not exist in {timezone} (clock change)", **t.where(int(t.rows[i]), h),
                                 hint="give a time outside the skipped hour")
            out.append(None)
        else:
            out.append(pd.Timestamp(utc[i]).tz_localize("UTC"))
    return out


def _column_fraction(t: RawTable, j, header, unit_text, default):
    scale = _fraction_scale(unit_text, t.where(t.header_row, header))
    v, empty, bad = to_numbers(t.cells[j].to_numpy(), t.decimal)
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise CompositionError(f"'{t.cells[j].iat[i]}' is not a number", **t.where(int(t.rows[i]), header),
                               hint="write a plain number; the unit goes in the header")
    s = scale if scale is not None else default
    return v * s if s is not None else v


def _column_si(t: RawTable, j, header, unit_text, kind):
    v, empty, bad = to_numbers(t.cells[j].to_numpy(), t.decimal)
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise CompositionError(f"'{t.cells[j].iat[i]}' is not a number", **t.where(int(t.rows[i]), header),
                               hint="write a plain number; the unit goes in the header")
    if kind == "fraction_plain":
        return v
    if not unit_text:
        raise UnitError(f"column '{header}' has no unit", **t.where(t.header_row, header),
                        hint="e.g. 'Heating value [MJ/m3]', 'Metering temperature [degC]'")
    try:
        u = parse_unit(unit_text, kind)
    except UnitError as exc:
        raise UnitError(exc.message, **t.where(t.header_row, header), hint=exc.hint) from None
    if kind == "pressure" and u.reference == "gauge":
        raise UnitError("a reference pressure is absolute", **t.where(t.header_row, header))
    return u.to_si(v)
