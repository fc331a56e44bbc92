"""The "History" sheet of the month workbook: the meter's stored months, newest last.

``result.history`` is a pandas DataFrame filled by the store (one row per stored month or
version, at most 12 months, SI values with the unit in the column name, e.g. ``base_volume_m3``).
The sheet shows them as the rest of the workbook does: the vocabulary's words as headers and
quantities in the run's display units (:data:`HEADERS`); a column it does not know keeps its
name and SI value, its number format following its unit suffix. Times with a zone are shown in
UTC (said in a note above the table).
"""

from __future__ import annotations

import datetime as _dt

import numpy as np
import pandas as pd

from .. import vocabulary as V
from . import xlsx_common as X

#: store column -> (header words, display kind or None, factor to SI, what the number is at)
HEADERS = {
    "month": ("Gas month", None, 1.0, ""), "version": ("Version", None, 1.0, ""),
    "closed_at_utc": ("Closed at (UTC)", None, 1.0, ""), "stored_at": ("Closed at (UTC)", None, 1.0, ""),
    "closed_by": ("Closed by", None, 1.0, ""), "reason": ("Reason", None, 1.0, ""),
    "intervals": ("Intervals", None, 1.0, ""),
    "uncorrected_volume_m3": (V.UNCORRECTED_VOLUME, "volume", 1.0, " at line conditions"),
    "base_volume_m3": (V.BASE_VOLUME, "volume", 1.0, " at base"),
    "ideal_gas_base_volume_m3": (V.BASE_VOLUME_IDEAL, "volume", 1.0, " at base"),
    "energy_MJ": (V.ENERGY, "energy", 1e6, ""), "mass_kg": (V.MASS, "mass", 1.0, ""),
    "ideal_gas_error_pct": (V.IDEAL_GAS_ERROR, "%", 1.0, ""),
    "invoice_difference_pct": (V.INVOICE_MINUS_OURS, "%", 1.0, ""),
    "corrector_deviation_pct": ("Site corrector − ours", "%", 1.0, ""),
    "expanded_uncertainty_pct": (V.EXPANDED_UNCERTAINTY, "%", 1.0, ""),
    "base_volume_change_from_previous_month_pct": ("Base volume change from the previous month", "%", 1.0, ""),
}
_KIND_FORMAT = {"volume": X.FMT_VOLUME, "energy": X.FMT_ENERGY, "mass": X.FMT_VOLUME, "%": X.FMT_PCT}


def _column(name: str, values, du):
    """(header, values for the sheet, number format or None) of one store column."""
    spec = HEADERS.get(str(name))
    if spec is None:
        return str(name), list(values), column_format(name, values)
    words, kind, factor, at = spec
    if kind is None:
        return words, list(values), column_format(name, values)
    if kind == "%":
        return f"{words} [%]", list(values), X.FMT_PCT
    si = pd.to_numeric(pd.Series(values), errors="coerce").to_numpy(float) * factor
    shown = du.convert(kind, si)
    unit = du.label(kind) if kind != "mass" else du.names["mass"]
    return f"{words} [{unit}{at}]", [None if not np.isfinite(v) else float(v) for v in shown], _KIND_FORMAT[kind]

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
    r = X.note(ws, r, "The store's values in this workbook's display units; the store and its JSON keep SI. Times "
                      "with a time zone are in UTC.", span=min(8, max(2, len(history.columns))))
    du = X.DisplayUnits.for_settings(result.settings)
    cols = [_column(c, history[c], du) for c in history.columns]
    headers = [h for h, _, _ in cols]
    fmts = [f for _, _, f in cols]
    rows = [[_cell(v) for v in row] for row in zip(*[vals for _, vals, _ in cols])] if cols else []
    top = r + 1
    for i, row in enumerate(rows):
        for j, v in enumerate(row):
            if isinstance(v, _dt.datetime) and fmts[j] is None:
                fmts[j] = X.FMT_DATETIME if (v.hour, v.minute, v.second) != (0, 0, 0) else X.FMT_DATE
    end = X.write_table(ws, top, 1, headers, rows, fmts)
    ws.freeze = (top + 1, 1)
    ws.repeat_rows = (top, top)
    return {"first": top + 1, "last": end - 1, "columns": len(headers)}
