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


def interval_columns(result) -> dict:
    """The interval table's columns after its time, neutralised, {header with unit: array}: built
    once for :func:`interval_csv_bytes` and :func:`interval_parquet_of` (the same bytes as
    :func:`write_interval_csv` and :func:`interval_parquet_bytes` write)."""
    return {c: _neutralised_array(a) if a.dtype == object else a for c, a in _interval_columns(result).items()}


def interval_csv_bytes(result, cols: dict) -> bytes:
    """The interval CSV from :func:`interval_columns` (the times are ISO 8601 text of our own,
    which never reads as a formula)."""
    times = result.intervals.index.strftime("%Y-%m-%dT%H:%M:%SZ")
    return _csv_bytes_of(["interval_end_utc", *cols], [np.asarray(times, dtype=object), *cols.values()])


def interval_parquet_of(result, cols: dict) -> bytes:
    """The interval Parquet file from :func:`interval_columns` (needs pyarrow)."""
    return _parquet_bytes(_with_times(result, cols, False))


def _neutralised_array(a: np.ndarray) -> np.ndarray:
    """An object column with formula-like text neutralised: each distinct text once (a long log
    repeats its gas days and flags a million times)."""
    codes, uniques = pd.factorize(pd.Series(a, dtype=object), use_na_sentinel=True)
    fixed = np.array([neutralise_cell(v) for v in uniques], dtype=object)
    out = np.full(len(a), None, dtype=object)
    has = codes >= 0
    out[has] = fixed[codes[has]]
    out[~has] = a[~has]
    return out


def _neutralised(df: pd.DataFrame) -> pd.DataFrame:
    obj = df.select_dtypes(include=["object", "string", "category"]).columns
    df = df.copy()
    for c in obj:
        df[c] = _neutralised_array(df[c].astype(object).to_numpy())
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
    several times faster on long logs (see :func:`_csv_bytes_of`)."""
    text = set() if neutralised else set(df.select_dtypes(include=["object", "string", "category"]).columns)
    return _csv_bytes_of(list(df.columns), [_neutralised_array(df[c].astype(object).to_numpy()) if c in text
                                            else df[c].to_numpy() for c in df.columns])


def _csv_fields(values) -> list[str]:
    """:func:`_csv_field` of each value; texts without a character the csv module quotes (the
    common case, checked on all of them at once) are taken as they are."""
    if all(type(v) is str for v in values) and not any(ch in "".join(values) for ch in _CSV_SPECIAL):
        return list(values)
    return [_csv_field(v) for v in values]


#: a text column with more distinct values than this share of its rows is not joined to its neighbours
_JOIN_SHARE = 0.25


def _discrete(a: np.ndarray):
    """The cells of a column that need no per-row number formatting, else None.

    ``("codes", codes, texts)`` (``texts[codes[i]]`` is the cell of row i) for booleans, constant
    numbers (formatted as ``to_csv`` formats them: floats ``%.10g``, integers ``%d``, a missing
    float empty) and text of few distinct values; ``("rows", cells)`` for other text. Text is
    quoted by the csv module's minimal rule, each distinct value once; missing values are empty."""
    n = len(a)
    if a.dtype.kind == "b":
        return "codes", a.astype(np.int8), ["False", "True"]
    if a.dtype.kind in "fiu":
        if not n:
            return None
        bits = a.view(np.int64 if a.dtype.itemsize == 8 else f"i{a.dtype.itemsize}")
        if not (bits == bits[0]).all():  # the same bits: -0.0 and 0.0, or two NaNs, never mixed
            return None
        v = a[0].item()
        text = ("" if v != v else "%.10g" % v) if a.dtype.kind == "f" else "%d" % v
        return "codes", np.zeros(n, dtype=np.int8), [text]
    codes, uniques = pd.factorize(pd.Series(a, dtype=object), use_na_sentinel=True)
    texts = _csv_fields(list(uniques)) + [""]
    codes = np.where(codes < 0, len(texts) - 1, codes)
    if len(texts) > max(64, _JOIN_SHARE * n):
        return "rows", np.array(texts, dtype=object)[codes]
    return "codes", codes, texts


def _joined(parts: list) -> tuple[np.ndarray, list]:
    """One (codes, texts) column of several neighbouring discrete ones: each distinct combination
    of their cells joined by commas once."""
    key = np.zeros(len(parts[0][0]), dtype=np.int64)
    radix = 1
    for codes, texts in parts:
        key = key * len(texts) + codes
        radix *= len(texts)
    if radix >= 2 ** 62:  # pragma: no cover - combinations beyond int64: join pairwise instead
        half = len(parts) // 2
        return _joined([_joined(parts[:half]), _joined(parts[half:])])
    combos, inverse = np.unique(key, return_inverse=True)
    texts = []
    for k in combos.tolist():
        cells = []
        for codes, t in reversed(parts):
            k, j = divmod(k, len(t))
            cells.append(t[j])
        texts.append(",".join(reversed(cells)))
    return inverse.reshape(-1), texts


def _csv_bytes_of(columns: list, arrays: list) -> bytes:
    """CSV bytes of neutralised columns, the same as ``DataFrame.to_csv(index=False,
    float_format="%.10g")`` writes for them (tested): every row is one ``%`` of a row format (floats
    ``%.10g``, integers ``%d``); a float column with missing values is formatted value by value;
    the cells of booleans, text and constant numbers are formatted once per distinct value, and
    neighbouring such columns are joined into one field per distinct combination (a log's flags
    and gas day take one ``%s`` a row, not 23)."""
    header = ",".join(_csv_field(c) for c in columns) + "\n"
    fields = []  # ("%.10g" | "%d" | "%s", array) or ("join", [(codes, texts), ...])
    for a in arrays:
        d = _discrete(a)
        if d is None and a.dtype.kind == "f":
            fields.append(("%s" if np.isnan(a).any() else "%.10g", a))  # with missing values: as text below
        elif d is None:
            fields.append(("%d", a))
        elif d[0] == "rows":
            fields.append(("%s", d[1]))
        elif fields and fields[-1][0] == "join":
            fields[-1][1].append(d[1:])
        else:
            fields.append(("join", [d[1:]]))
    specs, data = [], []
    for spec, a in fields:
        if spec == "join":
            codes, texts = _joined(a) if len(a) > 1 else a[0]
            spec, a = "%s", np.array(texts, dtype=object)[codes]
        specs.append(spec)
        data.append(a)
    row = (",".join(specs) + "\n").__mod__
    n = len(arrays[0]) if arrays else 0
    out = io.BytesIO()
    out.write(header.encode("utf-8"))
    for a0 in range(0, n, _CSV_ROWS):  # in blocks of rows: the text of a block at a time
        cols = []
        for spec, a in zip(specs, data):
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
