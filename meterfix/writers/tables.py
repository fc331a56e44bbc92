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
    return _with_times(result, _interval_columns(result), times_as_text)


def _interval_columns(result) -> dict:
    """The interval table's columns after its time, {header with unit: array}."""
    from ..engine.pipeline import INTERVAL_UNITS

    df = result.intervals
    cols = {}
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
        cols[name] = col.to_numpy()
    return cols


def _with_times(result, cols: dict, times_as_text: bool) -> pd.DataFrame:
    idx = result.intervals.index
    if times_as_text:
        t = idx.strftime("%Y-%m-%dT%H:%M:%SZ")
    else:
        t = pd.DatetimeIndex(idx).tz_convert("UTC").as_unit("ns")
    # one frame from the columns at once (column by column insertion costs a copy each)
    return pd.DataFrame({"interval_end_utc": t, **cols}, index=pd.RangeIndex(len(idx)))


def interval_tables(result) -> tuple[pd.DataFrame, pd.DataFrame]:
    """(CSV table, Parquet table) of the intervals, built and neutralised once for both: the same
    columns as :func:`interval_table` after :func:`_neutralised`, times as text for the CSV and as
    UTC timestamps for Parquet (the times are ISO 8601 text of our own, which never reads as a formula)."""
    cols = _interval_columns(result)
    fixed = _neutralised(pd.DataFrame(cols, index=pd.RangeIndex(len(result.intervals))))
    cols = {c: fixed[c].to_numpy() for c in fixed.columns}
    return _with_times(result, cols, True), _with_times(result, cols, False)


def _neutralised(df: pd.DataFrame) -> pd.DataFrame:
    obj = df.select_dtypes(include=["object", "string", "category"]).columns
    df = df.copy()
    for c in obj:
        col = df[c].astype(object)
        # each distinct text once (a long log repeats its gas days and flags a million times)
        codes, uniques = pd.factorize(col, use_na_sentinel=True)
        fixed = np.array([neutralise_cell(v) for v in uniques], dtype=object)
        out = np.full(len(col), None, dtype=object)
        has = codes >= 0
        out[has] = fixed[codes[has]]
        out[~has] = col.to_numpy()[~has]
        df[c] = out
    return df


#: characters that make the csv module quote a cell (delimiter, quote, line ends)
_CSV_SPECIAL = (",", '"', "\n", "\r")


def _csv_field(v) -> str:
    """One text cell as the csv module writes it (minimal quoting), missing values empty."""
    import csv

    if v is None or v is pd.NA or v is pd.NaT or (isinstance(v, float) and v != v):
        return ""
    v = str(v)
    if v == "" or not any(ch in v for ch in _CSV_SPECIAL):  # nothing the minimal rule would quote
        return v
    buf = io.StringIO()
    csv.writer(buf, lineterminator="\n").writerow([v])  # the writer's own line end decides the quoting
    return buf.getvalue()[:-1]


def _csv_bytes(df: pd.DataFrame, *, neutralised: bool = False) -> bytes:
    """CSV bytes, the same as ``DataFrame.to_csv(index=False, float_format="%.10g")`` writes (tested),
    several times faster on long logs: every row is one ``%`` of a row format (floats ``%.10g``,
    integers ``%d``); a float column with missing values, and each distinct text, are formatted
    once as text (missing values empty, text quoted by the csv module's minimal rule)."""
    if not neutralised:
        df = _neutralised(df)
    header = ",".join(_csv_field(c) for c in df.columns) + "\n"
    specs, arrays = [], []
    for c in df.columns:
        a = df[c].to_numpy()
        if a.dtype.kind == "f":
            specs.append("%.10g" if not np.isnan(a).any() else "%s")
        elif a.dtype.kind in "iu":
            specs.append("%d")
        elif a.dtype.kind == "b":
            a = np.array(["False", "True"], dtype=object)[a.astype(np.int8)]
            specs.append("%s")
        else:
            codes, uniques = pd.factorize(pd.Series(a, dtype=object), use_na_sentinel=True)
            a = np.array([_csv_field(v) for v in uniques] + [""], dtype=object)[codes]
            specs.append("%s")
        arrays.append(a)
    row = (",".join(specs) + "\n").__mod__
    out = io.BytesIO()
    out.write(header.encode("utf-8"))
    for a0 in range(0, len(df), _CSV_ROWS):  # in blocks of rows: the text of a block at a time
        cols = []
        for spec, a in zip(specs, arrays):
            a = a[a0:a0 + _CSV_ROWS]
            if spec == "%s" and a.dtype.kind == "f":  # a float column with missing values
                txt = list(map("%.10g".__mod__, a.tolist()))
                for i in np.flatnonzero(np.isnan(a)).tolist():
                    txt[i] = ""
                cols.append(txt)
            else:
                cols.append(a.tolist())
        out.write("".join(map(row, zip(*cols))).encode("utf-8"))
    return out.getvalue()


#: rows formatted at a time by the CSV writer
_CSV_ROWS = 65536


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
    return _parquet_bytes(_neutralised(interval_table(result, times_as_text=False)))


def _parquet_bytes(df: pd.DataFrame) -> bytes:
    """Parquet bytes of a neutralised interval table (see :func:`interval_parquet_bytes`)."""
    import pyarrow as pa
    import pyarrow.parquet as pq

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


def gas_day_csv_bytes(result) -> bytes:
    """The gas-day table as CSV bytes (infinite values empty)."""
    df = gas_day_table(result)
    df = df.replace([np.inf, -np.inf], np.nan)
    return _csv_bytes(df.reset_index(drop=True))


def write_gas_day_csv(result, path, *, overwrite: bool = False):
    return write_bytes(path, gas_day_csv_bytes(result), overwrite=overwrite)


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


def edits_csv_bytes(result) -> bytes:
    """The quality edit record as CSV bytes."""
    return _csv_bytes(edits_table(result))
