"""Interval, gas-day and edit tables as CSV, and the interval table as Parquet when pyarrow is installed.

Every table is in SI with the unit in the column name (``pressure_line [Pa]``); times are UTC.
Text that a spreadsheet would run as a formula is neutralised in every file, Parquet included,
so that the CSV and the Parquet file hold the same values.
"""

from __future__ import annotations

import io

import numpy as np
import pandas as pd

from .atomic import neutralise_cell, write_bytes


def interval_table(result, *, times_as_text: bool = True) -> pd.DataFrame:
    """The interval table with units in the headers.

    ``interval_end_utc`` is ISO 8601 text (``2026-10-01T05:00:00Z``) or, with
    ``times_as_text=False``, a UTC timestamp column (for Parquet).
    """
    from ..engine.pipeline import INTERVAL_UNITS

    df = result.intervals.copy()
    out = pd.DataFrame(index=pd.RangeIndex(len(df)))
    if times_as_text:
        out["interval_end_utc"] = df.index.strftime("%Y-%m-%dT%H:%M:%SZ")
    else:
        out["interval_end_utc"] = pd.DatetimeIndex(df.index).tz_convert("UTC").as_unit("ns")
    for c in df.columns:
        if c == "flagged":
            continue
        unit = INTERVAL_UNITS.get(c)
        name = f"{c} [{unit}]" if unit and unit != "-" else c
        col = df[c]
        if c == "gas_day":
            col = col.astype(str)
        elif c == "analysis":
            col = col + 1  # analyses are numbered from 1, as in the workbook and the summary
        out[name] = col.to_numpy()
    return out


def _neutralised(df: pd.DataFrame) -> pd.DataFrame:
    obj = df.select_dtypes(include=["object", "string", "category"]).columns
    df = df.copy()
    for c in obj:
        df[c] = df[c].astype(object).map(neutralise_cell)
    return df


def _csv_bytes(df: pd.DataFrame) -> bytes:
    df = _neutralised(df)
    buf = io.StringIO()
    df.to_csv(buf, index=False, lineterminator="\n", float_format="%.10g")
    return buf.getvalue().encode("utf-8")


def write_interval_csv(result, path, *, overwrite: bool = False):
    """Write the interval table as CSV, atomically; deterministic bytes for the same result."""
    return write_bytes(path, _csv_bytes(interval_table(result)), overwrite=overwrite)


def parquet_available() -> bool:
    """True when pyarrow can be imported (the optional ``parquet`` extra)."""
    try:
        import pyarrow  # noqa: F401
        import pyarrow.parquet  # noqa: F401
    except ImportError:
        return False
    return True


def interval_parquet_bytes(result) -> bytes:
    """The interval table as Parquet bytes (needs pyarrow).

    The same columns and values as the CSV, except that ``interval_end_utc`` is a UTC timestamp
    and floats keep every digit. The bytes are the same for the same result and pyarrow version
    (no write time is stored).
    """
    import pyarrow as pa
    import pyarrow.parquet as pq

    df = _neutralised(interval_table(result, times_as_text=False))
    obj = df.select_dtypes(include=["object", "string"]).columns
    for c in obj:
        df[c] = df[c].astype(object).where(df[c].notna(), None)
    table = pa.Table.from_pandas(df, preserve_index=False)
    buf = io.BytesIO()
    pq.write_table(table, buf, compression="zstd")
    return buf.getvalue()


def write_interval_parquet(result, path, *, overwrite: bool = False):
    """Write the interval table as Parquet, atomically; returns None without pyarrow."""
    if not parquet_available():
        return None
    return write_bytes(path, interval_parquet_bytes(result), overwrite=overwrite)


def gas_day_table(result) -> pd.DataFrame:
    """The gas-day table with the SI unit in each header (``volume_base [m3]``, ``energy [J]``)."""
    from ..engine.pipeline import GAS_DAY_UNITS

    df = result.gas_days.copy()
    df.columns = [f"{c} [{GAS_DAY_UNITS[c]}]" if GAS_DAY_UNITS.get(c, "-") != "-" else c for c in df.columns]
    df.insert(0, "gas_day", [str(d) for d in df.index])
    return df


def write_gas_day_csv(result, path, *, overwrite: bool = False):
    df = gas_day_table(result)
    df = df.replace([np.inf, -np.inf], np.nan)
    return write_bytes(path, _csv_bytes(df.reset_index(drop=True)), overwrite=overwrite)


#: edit record column → SI unit of its values
EDIT_UNITS = {"pressure_gauge": "Pa gauge", "pressure_line": "Pa", "pressure_atm": "Pa", "temperature_line": "K",
              "volume_line": "m3", "duration": "s", "volume_corrected_site": "m3"}


def edits_table(result) -> pd.DataFrame:
    """The quality edit record: one row per substituted value, SI, times as ISO 8601 UTC.

    Columns: interval_end_utc, what (canonical column), unit, original (empty: there was none),
    new, method, reason, and any further columns of the record.
    """
    e = result.edits
    base = ["interval_end_utc", "what", "unit", "original", "new", "method", "reason"]
    extra = [c for c in e.columns if c not in ("time", "what", "original", "new", "method", "reason")]
    out = pd.DataFrame(index=pd.RangeIndex(len(e)), columns=base + extra)
    if not len(e):
        return out
    t = pd.DatetimeIndex(pd.to_datetime(e["time"], utc=True))
    out["interval_end_utc"] = t.strftime("%Y-%m-%dT%H:%M:%SZ")
    what = e["what"].astype(str).to_numpy()
    out["what"] = what
    out["unit"] = [EDIT_UNITS.get(w, "") for w in what]
    for c in ("original", "new"):
        out[c] = pd.to_numeric(e[c], errors="coerce").to_numpy(float) if c in e else np.nan
    for c in ("method", "reason"):
        out[c] = e[c].astype(object).to_numpy() if c in e else None
    for c in extra:
        out[c] = e[c].to_numpy()
    return out


def write_edits_csv(result, path, *, overwrite: bool = False):
    """Write the quality edit record as CSV, atomically (a header only when nothing was substituted)."""
    return write_bytes(path, _csv_bytes(edits_table(result)), overwrite=overwrite)
