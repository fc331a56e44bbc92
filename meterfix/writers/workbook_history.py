"""The "History" sheet of the month workbook: the meter's stored months, newest last.

``result.history`` is a pandas DataFrame filled by the store (one row per stored month or
version, at most 12 months, SI values with the unit in the column name, e.g. ``base_volume_m3``).
The sheet is a plain table with the headers as given; each column's number format follows its
unit suffix. Times with a zone are shown in UTC (said in a note above the table).
"""

from __future__ import annotations

import datetime as _dt

import numpy as np
import pandas as pd

from . import xlsx_common as X

#: column-name suffix → number format (SI units as the store names them)
SUFFIX_FORMATS = (
    ("_pct", X.FMT_PCT), ("_m3", X.FMT_VOLUME), ("_MJ", X.FMT_ENERGY), ("_GJ", X.FMT_ENERGY), ("_J", "#,##0"),
    ("_kg", X.FMT_VOLUME), ("_Pa", "#,##0"), ("_K", X.FMT_TEMPERATURE), ("_s", "#,##0"),
    ("_J_per_m3", "#,##0"), ("_MJ_per_m3", X.FMT_HV),
)


def column_format(name: str, values) -> str | None:
    """Number format of a history column from its unit suffix (or its values' type)."""
    n = str(name)
    for suffix, fmt in sorted(SUFFIX_FORMATS, key=lambda x: -len(x[0])):
        if n.endswith(suffix):
            return fmt
    kind = getattr(getattr(values, "dtype", None), "kind", "O")
    if kind == "M":
        return X.FMT_DATETIME
    if kind in "iu":
        return X.FMT_INT
    return None


def _cell(v):
    if isinstance(v, pd.Timestamp):
        if pd.isna(v):
            return None
        if v.tzinfo is not None:
            v = v.tz_convert("UTC").tz_localize(None)
        return v.to_pydatetime()
    if isinstance(v, _dt.datetime) and v.tzinfo is not None:
        return v.astimezone(_dt.timezone.utc).replace(tzinfo=None)
    if v is not None and not isinstance(v, (str, bytes)) and np.ndim(v) == 0:
        try:
            if pd.isna(v):
                return None
        except (TypeError, ValueError):
            pass
    if isinstance(v, (list, dict, tuple)):
        return str(v)
    return X.cell_value(v)


def write_history(ws, result, history: pd.DataFrame) -> dict:
    """Write the stored months of this meter; returns {'first': row, 'last': row, 'columns': n}."""
    r = X.section(ws, 1, f"History of meter {result.settings.meter}: stored months, newest last")
    r = X.note(ws, r, "As the store holds them: SI values, the unit at the end of each column name (m3, MJ, Pa, K, "
                      "pct = percent). Times with a time zone are in UTC.", span=min(8, max(2, len(history.columns))))
    headers = [str(c) for c in history.columns]
    fmts = [column_format(c, history[c]) for c in history.columns]
    rows = [[_cell(v) for v in row] for row in history.itertuples(index=False, name=None)]
    top = r + 1
    for i, row in enumerate(rows):
        for j, v in enumerate(row):
            if isinstance(v, _dt.datetime) and fmts[j] is None:
                fmts[j] = X.FMT_DATETIME if (v.hour, v.minute, v.second) != (0, 0, 0) else X.FMT_DATE
    end = X.write_table(ws, top, 1, headers, rows, fmts)
    ws.freeze = (top + 1, 1)
    ws.repeat_rows = (top, top)
    return {"first": top + 1, "last": end - 1, "columns": len(headers)}
