"""Interval and gas-day tables as CSV (and Parquet when pyarrow is installed)."""

from __future__ import annotations

import io

import numpy as np
import pandas as pd

from .atomic import atomic_path, neutralise_cell, write_bytes


def interval_table(result) -> pd.DataFrame:
    """The interval table with units in the headers, index as ISO 8601 UTC interval end."""
    from ..engine.pipeline import INTERVAL_UNITS

    df = result.intervals.copy()
    out = pd.DataFrame(index=pd.RangeIndex(len(df)))
    out["interval_end_utc"] = df.index.strftime("%Y-%m-%dT%H:%M:%SZ")
    for c in df.columns:
        if c == "flagged":
            continue
        unit = INTERVAL_UNITS.get(c)
        name = f"{c} [{unit}]" if unit and unit != "-" else c
        col = df[c]
        if c == "gas_day":
            col = col.astype(str)
        out[name] = col.to_numpy()
    return out


def _csv_bytes(df: pd.DataFrame) -> bytes:
    obj = df.select_dtypes(include=["object", "string", "category"]).columns
    df = df.copy()
    for c in obj:
        df[c] = df[c].astype(object).map(neutralise_cell)
    buf = io.StringIO()
    df.to_csv(buf, index=False, lineterminator="\n", float_format="%.10g")
    return buf.getvalue().encode("utf-8")


def write_interval_csv(result, path, *, overwrite: bool = False):
    """Write the interval table as CSV, atomically; deterministic bytes for the same result."""
    return write_bytes(path, _csv_bytes(interval_table(result)), overwrite=overwrite)


def write_interval_parquet(result, path, *, overwrite: bool = False):
    """Write the interval table as Parquet (needs pyarrow); returns None without pyarrow."""
    try:
        import pyarrow  # noqa: F401
    except ImportError:
        return None
    with atomic_path(path, overwrite=overwrite) as tmp:
        interval_table(result).to_parquet(tmp, index=False)
    return path


def write_gas_day_csv(result, path, *, overwrite: bool = False):
    df = result.gas_days.copy()
    df.insert(0, "gas_day", [str(d) for d in df.index])
    df = df.replace([np.inf, -np.inf], np.nan)
    return write_bytes(path, _csv_bytes(df.reset_index(drop=True)), overwrite=overwrite)
