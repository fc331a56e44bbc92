"""The log reader's record of what it found, in the shape the outputs write it.

:func:`log_record` turns a :class:`meterfix.readers.logs.LogMetadata` into plain, JSON-safe data:
the files read, how each column was understood (header as written, canonical name, unit), the
clock and interval convention, and every problem the reader met, each with the file, sheet, row
and column where it is. The JSON summary writes it with the first :data:`LISTED` entries of each
kind; the workbook's "Source data" sheet writes every entry the reader recorded.

The reader records at most 1,000 entries of each kind per file; ``count`` says how many it found
(for unreadable cells, every one; for the other kinds, the ones recorded).
"""

from __future__ import annotations

import math

#: entries of each problem kind listed in the JSON summary
LISTED = 50

#: canonical column name → (what it is, unit inside meterfix); names of DESIGN.md's glossary
COLUMN_MEANING = {
    "interval_end": ("interval end (date and time)", ""), "interval_start": ("interval start (date and time)", ""),
    "time": ("time stamp (date and time)", ""), "date": ("date", ""), "clock": ("time of day", ""),
    "pressure_gauge": ("line pressure, gauge", "Pa"), "pressure_line": ("line pressure, absolute", "Pa"),
    "pressure_atm": ("atmospheric pressure (barometer)", "Pa"), "temperature_line": ("line temperature", "K"),
    "volume_line": ("uncorrected volume per interval", "m3"), "volume_index": ("meter index (cumulative)", "m3"),
    "flow_rate": ("flow rate at line conditions", "m3/s"),
    "volume_corrected_site": ("site corrector's volume at its base", "m3"),
    "volume_corrected_site_index": ("site corrector's index at its base", "m3"),
    "duration": ("interval length", "s"), "status": ("status text", ""),
    "pressure_differential": ("differential pressure, interval mean", "Pa"),
    "pressure_differential_root": ("interval mean of sqrt(differential pressure)", "Pa^0.5"),
    "mass": ("mass per interval", "kg"), "mass_flow": ("mass flow rate", "kg/s"),
    "speed_of_sound": ("speed of sound (the meter's)", "m/s"),
}

_TIME_COLUMNS = ("interval_end", "interval_start", "time")


def _get(meta, name, default=None):
    if isinstance(meta, dict):
        return meta.get(name, default)
    return getattr(meta, name, default)


def _number(v):
    if v is None:
        return None
    try:
        f = float(v)
    except (TypeError, ValueError):
        return None
    return f if math.isfinite(f) else None


def _text(v):
    return None if v is None else str(v)


def _time_header(columns: dict):
    """The header(s) the file's times were read from."""
    for n in _TIME_COLUMNS:
        if n in columns:
            return columns[n]
    parts = [columns[n] for n in ("date", "clock") if n in columns]
    return " + ".join(parts) if parts else None


def _unit_of(header: str, name: str):
    """The unit text a header carries for ``name`` (None when it cannot be told from the header)."""
    try:
        from ..readers.columns import read_header

        spec = read_header(header, 0, {})
    except Exception:  # noqa: BLE001 - a header read through a column map may not parse alone
        return None
    if spec is None or spec.name != name:
        return None
    return spec.unit_text


def _file_columns(meta) -> dict:
    """file → {canonical name: {header, unit, meaning, unit_inside}}.

    The reader keeps the unit of each quantity from the first file that has it; a later file with
    another header for that quantity has its unit read from its own header.
    """
    units = _get(meta, "units", {}) or {}
    first_header = {}
    out = {}
    for fname, cols in (_get(meta, "columns", {}) or {}).items():
        entry = {}
        for name, header in cols.items():
            if name not in first_header:
                first_header[name] = header
                unit = units.get(name)
            elif header == first_header[name]:
                unit = units.get(name)
            else:
                unit = _unit_of(header, name)
            meaning, inside = COLUMN_MEANING.get(name, (name.replace("_", " "), ""))
            entry[name] = {"header": _text(header), "unit": unit or None, "meaning": meaning,
                           "unit_inside": inside or None}
        out[str(fname)] = entry
    return out


def _sheets(meta) -> dict:
    out = {}
    for s in _get(meta, "sources", []) or []:
        out.setdefault(s.get("file"), s.get("sheet"))
    return out


def _order(meta):
    files = [s.get("file") for s in _get(meta, "sources", []) or []]
    pos = {f: i for i, f in reversed(list(enumerate(files)))}

    def key(e):
        return (pos.get(e["file"], len(files)), str(e["file"]), e["row"] if e["row"] is not None else -1,
                str(e["column"] or ""), str(e["text"] or ""))
    return key


def problem_entries(meta) -> dict:
    """Every problem the reader recorded, by kind, each entry with file, sheet, row, column, text
    (the cell as written, when known) and problem (what was found and what the run did)."""
    sheets = _sheets(meta)
    columns = _get(meta, "columns", {}) or {}
    key = _order(meta)
    unreadable = []
    for u in _get(meta, "unreadable", []) or []:
        f = u.get("file")
        note = u.get("note")
        problem = (note if note and note.startswith("the time") else f"the time cannot be read; {note}" if note else
                   "cannot be read as a number: read as empty and the interval flagged 'unreadable'")
        unreadable.append({"file": _text(f), "sheet": _text(u.get("sheet", sheets.get(f))), "row": u.get("row"),
                           "column": _text(u.get("column")), "text": _text(u.get("value")), "problem": problem})
    dropped = []
    for d in _get(meta, "dropped_rows", []) or []:
        f = d.get("file")
        dropped.append({"file": _text(f), "sheet": _text(d.get("sheet", sheets.get(f))), "row": d.get("row"),
                        "column": _time_header(columns.get(f, {})), "text": _text(d.get("value")),
                        "problem": f"{d.get('reason')}: the row is left out"})
    duplicates = []
    for d in _get(meta, "duplicates", []) or []:
        f, _, row = str(d.get("dropped", "")).rpartition(" row ")
        try:
            row = int(row)
        except ValueError:
            f, row = str(d.get("dropped")), None
        heads = [columns.get(f, {}).get(c, c) for c in d.get("columns") or []]
        duplicates.append({"file": f, "sheet": _text(sheets.get(f)), "row": row,
                           "column": ", ".join(str(h) for h in heads) or None, "text": None,
                           "interval_end_utc": _text(d.get("time")), "kept": _text(d.get("kept")),
                           "problem": f"same interval end as {d.get('kept')} with a different value; "
                                      f"{d.get('kept')} is kept and this row left out"})
    for group in (unreadable, dropped, duplicates):
        group.sort(key=key)
    return {"unreadable_cells": unreadable, "dropped_rows": dropped, "differing_duplicates": duplicates}


def status_summary(meta) -> list:
    """Status texts of the log, one entry per distinct text: count and where it first appears."""
    sheets = _sheets(meta)
    columns = _get(meta, "columns", {}) or {}
    by_text: dict = {}
    for s in _get(meta, "status", []) or []:
        t = str(s.get("text"))
        e = by_text.get(t)
        if e is None:
            f = s.get("file")
            by_text[t] = {"text": t, "count": 1, "file": _text(f), "sheet": _text(sheets.get(f)), "row": s.get("row"),
                          "column": _text(columns.get(f, {}).get("status")), "interval_end_utc": _text(s.get("time"))}
        else:
            e["count"] += 1
    return [by_text[t] for t in sorted(by_text)]


def log_record(meta, limit: int | None = LISTED) -> dict | None:
    """The reader's record as plain data; ``limit`` entries of each problem kind (None: all).

    Returns None when no log file was read (a month given in memory).
    """
    if meta is None:
        return None
    files = [{"file": _text(s.get("file")), "sheet": _text(s.get("sheet")), "header_row": s.get("header_row"),
              "rows": s.get("rows"), "encoding": _text(s.get("encoding")), "delimiter": _text(s.get("delimiter")),
              "decimal": _text(s.get("decimal"))} for s in _get(meta, "sources", []) or []]
    problems = problem_entries(meta)
    counts = {"unreadable_cells": int(_get(meta, "unreadable_count", 0) or 0)}
    counts["unreadable_cells"] = max(counts["unreadable_cells"], len(problems["unreadable_cells"]))
    statuses = status_summary(meta)
    out = {
        "files": files,
        "columns": _file_columns(meta),
        "ignored_columns": {str(k): [str(h) for h in v] for k, v in (_get(meta, "ignored_columns", {}) or {}).items()},
        "timezone": _text(_get(meta, "timezone")),
        "interval_label": _text(_get(meta, "interval_label")),
        "nominal_interval_s": _number(_get(meta, "nominal_interval_s")),
        "volume_from": _text(_get(meta, "volume_from")),
        "register_capacity_m3": _number(_get(meta, "register_capacity")),
        "opening_index_m3": _number(_get(meta, "opening_index")),
        "identical_overlap_rows": int(_get(meta, "identical_overlap_rows", 0) or 0),
        "reader_flags": {str(k): int(v) for k, v in sorted((_get(meta, "flag_counts", {}) or {}).items())},
        "notes": [str(n) for n in _get(meta, "notes", []) or []],
        "status_texts": {"count": sum(s["count"] for s in statuses), "distinct": len(statuses),
                         "by_text": statuses if limit is None else statuses[:limit]},
    }
    for kind, entries in problems.items():
        n = counts.get(kind, len(entries))
        out[kind] = {"count": n, "listed": len(entries) if limit is None else min(limit, len(entries)),
                     "entries": entries if limit is None else entries[:limit]}
    return out
