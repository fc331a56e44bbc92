"""Meter logs (CSV/TXT/XLSX/XLSM/XLS/ODS) → the canonical interval frame in SI, plus metadata.

The layout is found, not configured: optional title and note rows, one header row (see
:mod:`meterfix.readers.columns` for the headers understood), one row per interval or reading.

Quirks handled
--------------
- **Time**: one date-time column, or a date column and a time-of-day column; spreadsheet dates,
  spreadsheet serial numbers, ISO 8601 with or without offsets, ``dd.mm.yyyy HH:MM``, slash dates
  (order decided from the file), AM/PM (:mod:`meterfix.readers.times`). Local clock times are
  placed in ``timezone``; days with a clock change have 23 or 25 hours; the repeated autumn hour
  is resolved by order. A header ``Timestamp (UTC)`` or times with offsets are taken as given. A
  logger kept on winter time all year is read with a fixed-offset zone, e.g. ``Etc/GMT-1`` for
  UTC+1 (the IANA names of fixed offsets have the inverted sign).
- **Interval label**: by default a timestamp marks the *end* of its interval. Loggers and volume
  correctors conventionally stamp an interval when it closes, the moment its volume is known
  (common practice); ``interval_label='start'`` reads interval-beginning exports. A header that
  says which (``Interval start``, ``Interval end``) wins over the setting, noted in the metadata.
  The canonical index is always the interval end, in UTC.
- **Duration** of each row: its own spacing from the previous row (interval-start labels: to the
  next row). The first row (start labels: the last row) has no neighbour and takes the median
  spacing of the log, as does a row after a gap (the missing rows are not its interval: the quality
  step counts and inserts them). A ``Duration`` column wins where it has a value. A meter-index
  difference after a gap does cover the whole gap, so its duration is the whole span.
- **Volume** from an interval volume column; else a meter index (differences; the first reading
  opens the log and is not an interval: it is dropped and kept in the metadata); else a flow rate
  times each row's duration. Index differences: a drop that fits a register rollover at
  10^n (``register_digits``, else the number of integer digits of the largest reading) is added
  back and flagged ``flag_rollover``; a drop that does not (reset, meter change) leaves that
  interval's volume unknown (NaN) and is flagged ``flag_meter_change``; a small drop is kept as it
  is (so the total still equals the index difference) and flagged ``flag_negative_delta``; a rise
  above ten times the 99th-percentile flow of the log is kept and flagged ``flag_implausible_delta``.
- **Several files** for one meter are joined in time order. Rows with the same interval end are
  reduced to the first (in the order the files were given, then row order): identical copies
  silently, differing ones flagged ``flag_duplicate`` and listed in the metadata.
- **Bad cells**: a number that cannot be read is NaN with ``flag_unparseable`` and the cell (file,
  sheet, row, column, text) recorded in the metadata; an empty required cell is NaN with
  ``flag_missing``. A row whose time cannot be read (or does not exist on the clock) is placed
  between its neighbours when they leave exactly the right number of regular slots, and flagged
  ``flag_unparseable``; otherwise it cannot be placed: it is left out, recorded in
  ``metadata.dropped_rows``, and the next row of its file is flagged ``flag_unparseable`` (the
  quality step sees the missing interval). A required column in which no value can be read is
  an error naming the file, row and column.
  ``flag_time_backwards`` marks a row whose time is earlier than a row above it in its file.
"""

from __future__ import annotations

import hashlib
import re
from dataclasses import asdict, dataclass, field
from functools import lru_cache
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import InputError, SettingsError
from .columns import ColumnMapping, _key, map_columns, require_log_columns
from .tables import DEFAULT_LIMITS, Limits, RawTable, _looks_numeric, parse_table, to_numbers
from .times import localize, parse_clock, parse_datetimes, parse_dates

#: numeric canonical columns read from a log
NUMERIC = ("pressure_gauge", "pressure_line", "pressure_atm", "temperature_line", "volume_line", "volume_index",
           "flow_rate", "volume_corrected_site", "volume_corrected_site_index", "duration")
#: flags the reader sets (always present in the frame)
READER_FLAGS = ("flag_unparseable", "flag_missing", "flag_duplicate", "flag_time_backwards", "flag_rollover",
                "flag_meter_change", "flag_negative_delta", "flag_implausible_delta")
_MAX_RECORDED = 1000


@dataclass
class LogMetadata:
    """Where a log came from and how it was read.

    Attributes
    ----------
    sources : list of dict      per file: file, role ('log'), sha256, sheet, rows (data rows),
                                header_row, encoding, delimiter, decimal
    columns : dict              file → {canonical name: header as written}
    units : dict                canonical name → unit as written (first file that has it)
    ignored_columns : dict      file → headers not used
    timezone : str              IANA zone the local clock times were read in
    interval_label : str        'end' or 'start' (as read from the first file)
    nominal_interval_s : float [s]  median spacing of the rows
    volume_from : str           'interval volume', 'meter index' or 'flow rate'
    register_capacity : float or None [m3]  rollover capacity used for index differences
    opening_index : float or None [m3]      first index reading (opens the log)
    unparseable : list of dict  cells that could not be read (first 1000): file, sheet, row, column, value
    unparseable_count : int
    dropped_rows : list of dict rows left out (time unreadable or not existing): file, sheet, row, reason, value
    duplicates : list of dict   rows with the same interval end and different values
    identical_overlap_rows : int  identical copies dropped
    status : list of dict       non-empty status cells: time, file, row, text (first 1000)
    notes : list of str         title rows of each file and what the reader decided
    flag_counts : dict          flag name → rows flagged by the reader
    """

    sources: list = field(default_factory=list)
    columns: dict = field(default_factory=dict)
    units: dict = field(default_factory=dict)
    ignored_columns: dict = field(default_factory=dict)
    timezone: str = "UTC"
    interval_label: str = "end"
    nominal_interval_s: float = float("nan")
    volume_from: str = ""
    register_capacity: float | None = None
    opening_index: float | None = None
    unparseable: list = field(default_factory=list)
    unparseable_count: int = 0
    dropped_rows: list = field(default_factory=list)
    duplicates: list = field(default_factory=list)
    identical_overlap_rows: int = 0
    status: list = field(default_factory=list)
    notes: list = field(default_factory=list)
    flag_counts: dict = field(default_factory=dict)

    def to_record(self) -> dict:
        return asdict(self)


# ---------------------------------------------------------------------------------------------
def _score(cells) -> float:
    """Header score for a log: 100 x the cells read as a known quantity (at least two), plus the
    plain text-cell count, so that a header of unknown names is still found and reported."""
    known = text = 0
    for c in cells:
        if isinstance(c, str):
            t = c.strip()
            if t:
                if not _looks_numeric(t):
                    text += 1
                if _MAY_NAME.search(c) is not None and _known_text(c):
                    known += 1
    return 100.0 * (float(known) if known >= 2 else 0.0) + (float(text) if text >= 2 else 0.0)


#: a cell can name a quantity only if it holds a letter (every header word has letters; '°' reads
#: as 'deg'): time stamps and numbers are passed over without reading them as headers
_MAY_NAME = re.compile(r"[^\W\d_]|[°º]")


@lru_cache(maxsize=2048)
def _known_text(cell: str) -> bool:
    """The cell reads as a known quantity (a known name with a bad unit still marks a header)."""
    from .columns import read_header

    try:
        return read_header(cell, 0, {}) is not None
    except Exception:  # noqa: BLE001 - a known name with a bad unit still marks a header
        return True


def read_log(paths, *, timezone: str = "UTC", interval_label: str = "end", column_map=None,
             register_digits: int | None = None, sheet=None, limits: Limits = DEFAULT_LIMITS):
    """Read one meter's log from one or several files.

    Parameters
    ----------
    paths : path or list of paths   CSV, TXT, TSV, XLSX, XLSM, XLS or ODS; joined in time order
    timezone : str                  IANA zone of the local clock times, e.g. 'Europe/Berlin'
    interval_label : {'end', 'start'}  which end of its interval a timestamp marks (default 'end')
    column_map : dict, optional     source header → canonical name (see meterfix.readers.columns)
    register_digits : int, optional digits of the meter index register (rollover at 10^n [in the
                                    index column's unit])
    sheet : str, optional           workbook sheet (default: 'Log', else the sheet holding a log)
    limits : Limits                 safety limits of the table reader

    Returns
    -------
    (DataFrame, LogMetadata)
        The canonical frame: UTC DatetimeIndex ``interval_end``; ``pressure_gauge`` [Pa] or
        ``pressure_line`` [Pa absolute]; optional ``pressure_atm`` [Pa]; ``temperature_line`` [K];
        ``volume_line`` [m3]; ``duration`` [s]; optional ``volume_corrected_site`` [m3 at the
        site corrector's base], ``flow_rate`` [m3/s], ``volume_index`` [m3], ``status``;
        ``source_file`` (position in ``metadata.sources``), ``source_row`` (1-based); and the
        boolean ``flag_*`` columns of READER_FLAGS.
    """
    plist = [paths] if isinstance(paths, (str, Path)) else list(paths)
    if not plist:
        raise InputError("no log file given", hint="give one or more log files")
    tables = []
    for p in plist:
        p = Path(p)
        if not p.exists():
            raise InputError("file not found", file=p, hint="check the path")
        with open(p, "rb") as fh:
            tables.append(parse_table(fh, name=str(p), suffix=p.suffix, sheet=sheet, header_score=_score,
                                      prefer=("log",), limits=limits))
    return _assemble(tables, timezone, interval_label, column_map, register_digits)


def parse_log(fileobj, *, name: str = "<log>", timezone: str = "UTC", interval_label: str = "end",
              column_map=None, register_digits: int | None = None, sheet=None, limits: Limits = DEFAULT_LIMITS):
    """Read a log from a binary file-like object (see :func:`read_log`).

    Parameters
    ----------
    fileobj : binary file-like
    name : str     file name for messages; its extension gives the format
    """
    t = parse_table(fileobj, name=name, sheet=sheet, header_score=_score, prefer=("log",), limits=limits)
    return _assemble([t], timezone, interval_label, column_map, register_digits)


# ---------------------------------------------------------------------------------------------
def _read_part(t: RawTable, k: int, timezone: str, label: str, column_map, meta: LogMetadata) -> dict:
    """One table's rows as columns (name → array, all of one length), rows without a time left out."""
    where = {"file": t.file, "sheet": t.sheet, "row": t.header_row}
    mapping: ColumnMapping = map_columns(t.header, column_map, where=where)
    require_log_columns(mapping, t.header, where)
    c = mapping.columns
    fname = Path(t.file).name
    meta.columns[fname] = {n: s.header for n, s in c.items()}
    meta.ignored_columns[fname] = list(mapping.ignored)
    for n, s in c.items():
        meta.units.setdefault(n, s.unit_text)
    meta.notes += [f"{fname}: {x}" for x in t.notes]
    n = len(t.cells)
    rows = t.rows
    # the columns of this part, in order (one frame is built from them at the end)
    part = {"source_file": np.full(n, k, dtype=np.int32), "source_row": rows}

    # -- time
    tcol = next((c[x] for x in ("interval_end", "interval_start", "time") if x in c), None)
    if tcol is None and "date" in c and "clock" not in c:
        tcol = c["date"]
    if tcol is None and "clock" in c and "date" not in c:
        tcol = c["clock"]  # a 'Time' column alone holds the date too
    if tcol is not None:
        naive, bad_t, is_utc = parse_datetimes(t.cells[tcol.index].to_numpy(), {**where, "row": None, "column": tcol.header})
        zone = "utc" if is_utc else tcol.zone
    elif "date" in c and "clock" in c:
        d, bad_d = parse_dates(t.cells[c["date"].index].to_numpy(), {**where, "row": None, "column": c["date"].header})
        h, bad_h = parse_clock(t.cells[c["clock"].index].to_numpy(), {**where, "row": None, "column": c["clock"].header})
        naive = d + h
        bad_t = bad_d | bad_h | np.isnat(naive)
        zone = c["clock"].zone or c["date"].zone
        tcol = c["clock"]
    else:
        raise InputError("a time-of-day column without a date column", **where, column=c["clock"].header,
                         hint="add a 'Date' column, or give one 'Interval end' column with date and time")
    if zone == "utc":
        utc = naive
        nonexist = np.zeros(n, bool)
    else:
        utc, nonexist, _ = localize(naive, timezone)
    own_label = "end" if tcol.name == "interval_end" else "start" if tcol.name == "interval_start" else label
    if own_label != label:
        meta.notes.append(f"{fname}: header '{tcol.header}' says interval {own_label}; read as such "
                          f"(setting was '{label}')")
    part["label"] = np.full(n, own_label, dtype=object)
    drop = np.isnat(utc) | bad_t
    stray = _stray_times(utc, drop)
    drop |= stray
    utc, inferred = _infer_times(utc, drop)
    raw_t = t.cells[tcol.index]
    for i in np.flatnonzero(inferred)[:_MAX_RECORDED]:
        meta.unparseable.append({"file": fname, "sheet": t.sheet, "row": int(rows[i]), "column": tcol.header,
                                 "value": str(raw_t.iat[i]),
                                 "note": ("the time is more than a day off the slot its neighbours leave; "
                                          if stray[i] else "the time cannot be read; ")
                                 + f"time placed between its neighbours at {pd.Timestamp(utc[i]).isoformat()}Z"})
    meta.unparseable_count += int(inferred.sum())
    drop &= ~inferred
    part["time"] = utc
    for i in np.flatnonzero(drop)[:_MAX_RECORDED]:
        reason = ("the local time does not exist (skipped by the clock change)" if nonexist[i]
                  else "the time cannot be read")
        meta.dropped_rows.append({"file": fname, "sheet": t.sheet, "row": int(rows[i]), "reason": reason,
                                  "value": str(raw_t.iat[i])})
    # the kept row below a row that could not be placed carries the flag, so the month's counts show it
    after_dropped = np.zeros(n, bool)
    if drop.any() and (~drop).any():
        kept = np.flatnonzero(~drop)
        nxt = np.searchsorted(kept, np.flatnonzero(drop))
        nxt = nxt[nxt < len(kept)]
        after_dropped[kept[nxt]] = True

    # -- numbers
    unparseable = np.zeros(n, bool)
    missing = np.zeros(n, bool)
    required = {"pressure_gauge", "pressure_line", "temperature_line", "volume_line", "volume_index", "flow_rate"}
    for name in NUMERIC:
        if name not in c:
            continue
        s = c[name]
        raw = t.cells[s.index].to_numpy()
        v, empty, bad = to_numbers(raw, t.decimal)
        part[name] = s.unit.to_si(v)
        if name in ("volume_index", "volume_corrected_site_index"):
            part[name + "_scale"] = np.full(n, s.unit.scale)
        if bad.any():
            unparseable |= bad
            idx = np.flatnonzero(bad)
            meta.unparseable_count += len(idx)
            room = _MAX_RECORDED - len(meta.unparseable)
            for i in idx[:max(room, 0)]:
                meta.unparseable.append({"file": fname, "sheet": t.sheet, "row": int(rows[i]), "column": s.header,
                                         "value": str(raw[i])})
        if name in required:
            missing |= empty
            if bad.any() and not np.isfinite(v).any():
                i = int(np.flatnonzero(bad)[0])
                raise InputError(f"no value in column '{s.header}' can be read as a number (e.g. '{raw[i]}')",
                                 file=t.file, sheet=t.sheet, row=int(rows[i]), column=s.header,
                                 hint="write plain numbers in this column (the unit goes in the header), "
                                      "or map another column to it")
    part["flag_unparseable"] = unparseable | inferred | after_dropped
    part["flag_missing"] = missing
    if "status" in c:
        st = t.cells[c["status"].index].astype(str).str.strip()
        part["status"] = st.to_numpy(dtype=object)
    # time going backwards within the file, in file order
    ti = np.where(np.isnat(utc), np.iinfo(np.int64).min, utc.astype("datetime64[ns]").astype(np.int64))
    prev_max = np.maximum.accumulate(np.concatenate([[np.iinfo(np.int64).min], ti[:-1]]))
    part["flag_time_backwards"] = (ti < prev_max) & ~drop
    if drop.any():
        part = {name: v[~drop] for name, v in part.items()}
    return part


def _stray_times(utc: np.ndarray, bad: np.ndarray) -> np.ndarray:
    """Rows whose time is more than a day off the one slot their neighbours leave (a mistyped year,
    month or day). They are treated as unreadable times, so that one typing error neither inserts
    months of gap rows nor reorders the log; :func:`_infer_times` then places them in that slot.
    """
    n = len(utc)
    out = np.zeros(n, bool)
    if n < 3:
        return out
    t = utc.astype(np.int64)
    ok = ~bad
    d = np.diff(np.sort(t[ok]))
    d = d[d > 0]
    if not len(d):
        return out
    nominal = int(np.median(d))
    prev, cur, nxt = t[:-2], t[1:-1], t[2:]
    usable = ok[:-2] & ok[1:-1] & ok[2:]
    one_slot = np.abs((nxt - prev) - 2 * nominal) <= 10**9
    off = np.abs(cur - (prev + nominal)) > 86_400 * 10**9
    out[1:-1] = usable & one_slot & off
    return out


def _infer_times(utc: np.ndarray, bad: np.ndarray):
    """Place rows with an unreadable time where their neighbours leave exactly that many slots.

    A run of k such rows between readable rows at t_a and t_b (file order) is placed at
    t_a + j (t_b - t_a)/(k + 1) when that step equals the log's median spacing.
    Returns (times, inferred mask).
    """
    out = utc.copy()
    inferred = np.zeros(len(utc), bool)
    if not bad.any() or bad.all():
        return out, inferred
    good_t = np.sort(utc[~bad].astype(np.int64))
    d = np.diff(good_t)
    d = d[d > 0]
    if not len(d):
        return out, inferred
    nominal = int(np.median(d))
    edges = np.diff(np.concatenate([[0], bad.astype(np.int8), [0]]))
    for a, b in zip(np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)):  # runs of bad rows (few)
        if a == 0 or b >= len(utc):
            continue
        ta, tb = int(utc[a - 1].astype(np.int64)), int(utc[b].astype(np.int64))
        k = b - a
        if abs((tb - ta) - (k + 1) * nominal) <= 10**9:
            slots = ta + nominal * np.arange(1, k + 1)
            if np.isin(slots, good_t).any():
                continue  # the slots are taken (rows out of order): cannot tell where these belong
            out[a:b] = slots.astype("datetime64[ns]")
            inferred[a:b] = True
    return out, inferred


def _spacing_durations(t_ns: np.ndarray, nominal: float, covers_span: np.ndarray, backward: bool) -> np.ndarray:
    """Duration of each row [s] from its spacing to the previous (or next) row."""
    n = len(t_ns)
    d = np.full(n, nominal)
    if n > 1:
        gaps = np.diff(t_ns) / 1e9
        if backward:
            sp = np.concatenate([[np.nan], gaps])
        else:
            sp = np.concatenate([gaps, [np.nan]])
        long = sp > 1.5 * nominal
        use = np.isfinite(sp) & (~long | covers_span)
        d = np.where(use, sp, nominal)
    return d


def _index_deltas(reading: np.ndarray, scale: np.ndarray, dur: np.ndarray, digits):
    """Differences of a cumulative register: (delta [m3], rollover, change, negative, implausible, capacity)."""
    n = len(reading)
    prev = np.concatenate([[np.nan], reading[:-1]])
    delta = reading - prev
    raw = reading / scale
    if digits is not None:
        cap_raw = 10.0 ** int(digits)
    else:
        mx = np.nanmax(raw) if np.isfinite(raw).any() else np.nan
        cap_raw = 10.0 ** max(1, int(np.ceil(np.log10(mx + 1e-9)))) if np.isfinite(mx) and mx > 0 else np.nan
    cap = cap_raw * scale
    pos = np.isfinite(delta) & (delta > 0)
    with np.errstate(invalid="ignore", divide="ignore"):
        rate = delta / dur
    if pos.sum() >= 3:
        q = float(np.nanquantile(rate[pos], 0.99))
        typical = float(np.nanmedian(delta[pos]))
    else:
        q, typical = np.nan, np.nan
    max_delta = 10.0 * q * dur if np.isfinite(q) and q > 0 else np.full(n, np.nan)
    neg = np.isfinite(delta) & (delta < 0)
    corrected = delta + cap
    prev_raw = prev / scale
    cur_raw = raw
    fits = np.where(np.isfinite(max_delta), corrected <= max_delta,
                    (prev_raw >= 0.9 * cap_raw) & (cur_raw <= 0.1 * cap_raw))
    rollover = neg & np.isfinite(cap) & (corrected >= 0) & fits
    small = np.isfinite(typical) & (np.abs(delta) <= np.maximum(10.0 * typical, 0.0))
    change = neg & ~rollover & ~small
    negative = neg & ~rollover & ~change
    out = np.where(rollover, corrected, delta)
    out = np.where(change, np.nan, out)
    implausible = np.isfinite(max_delta) & (out > max_delta) & ~rollover
    return out, rollover, change, negative, implausible, cap


def _assemble(tables, timezone, interval_label, column_map, register_digits):
    if interval_label not in ("end", "start"):
        raise SettingsError(f"interval label '{interval_label}' is not 'end' or 'start'")
    try:
        from zoneinfo import ZoneInfo

        ZoneInfo(timezone)
    except Exception:  # noqa: BLE001 - zoneinfo raises several types for a bad key
        raise SettingsError(f"unknown time zone '{timezone}'",
                            hint="use an IANA name such as 'Europe/Berlin' or 'America/Chicago'") from None
    meta = LogMetadata(timezone=timezone, interval_label=interval_label)
    parts = []
    for k, t in enumerate(tables):
        meta.sources.append({"file": Path(t.file).name, "role": "log", "sha256": t.sha256, "sheet": t.sheet,
                             "rows": int(len(t.cells)), "header_row": t.header_row, "encoding": t.encoding,
                             "delimiter": t.delimiter, "decimal": t.decimal})
        parts.append(_read_part(t, k, timezone, interval_label, column_map, meta))
    if column_map:
        seen = {_key(h) for t in tables for h in t.header}
        unknown = [h for h in column_map if _key(h) not in seen]
        if unknown:
            raise SettingsError("column map names header(s) not found in any log file: " + ", ".join(unknown),
                                hint="headers found: " + ", ".join(dict.fromkeys(str(h) for t in tables for h in t.header if str(h).strip())))
    kinds = {("pressure_gauge" if "pressure_gauge" in p else "pressure_line") for p in parts}
    if len(kinds) > 1:
        names = [s["file"] for s in meta.sources]
        raise InputError("the files disagree: some log gauge pressure, some absolute pressure", file=", ".join(names),
                         hint="map the pressure columns so that all files read the same quantity")
    meta.interval_label = parts[0]["label"][0] if len(parts[0]["label"]) else interval_label
    # the rows of all files as columns (name → array); the work below is on arrays
    if len(parts) == 1:
        df = dict(parts[0])
    else:  # columns a file lacks are NaN in its rows (pandas' rules for the joined dtypes)
        joined = pd.concat([pd.DataFrame(p) for p in parts], ignore_index=True, sort=False)
        df = {c: joined[c].to_numpy() for c in joined.columns}
    if not len(df["time"]):
        raise InputError("no row of the log has a readable time", file=", ".join(s["file"] for s in meta.sources),
                         hint="check the time column: see metadata.dropped_rows")
    t = df["time"].astype("datetime64[ns]").astype(np.int64)
    is_index = ~pd.isna(df["volume_index"]) if "volume_index" in df else np.zeros(len(t), bool)
    if "volume_line" in df:
        is_index &= pd.isna(df["volume_line"])
    # start labels → end: forward spacing within each file (in time order)
    label_start = np.asarray(df["label"] == "start", dtype=bool)
    start = label_start & ~is_index  # index readings are instants
    if (label_start & is_index).any():
        meta.notes.append("index readings are instants: a start label does not apply to them")
    pos_sp = np.diff(np.sort(t)) / 1e9  # (np.sort, not np.unique: hashing 10^6 stamps is slow)
    pos_sp = pos_sp[pos_sp > 0]
    nominal = float(np.median(pos_sp)) if len(pos_sp) else np.nan
    own = np.asarray(df["duration"], dtype=float) if "duration" in df else np.full(len(t), np.nan)
    if not np.isfinite(nominal):
        nominal = float(np.nanmedian(own)) if np.isfinite(own).any() else np.nan
    if not np.isfinite(nominal):
        raise InputError("cannot tell the interval length from a single row", file=meta.sources[0]["file"],
                         hint="add a 'Duration [min]' column or give more rows")
    meta.nominal_interval_s = nominal
    own = own.copy()
    if start.any():
        source_file = df["source_file"]
        for k in pd.unique(source_file[start]):
            sel = np.flatnonzero(start & (source_file == k))
            order = sel[np.argsort(t[sel], kind="stable")]
            d = _spacing_durations(t[order], nominal, np.zeros(len(order), bool), backward=False)
            d = np.where(np.isfinite(own[order]) & (own[order] > 0), own[order], d)
            t[order] = t[order] + np.round(d * 1e9).astype(np.int64)
            own[order] = d
    df["time"] = t
    df["duration"] = own
    # join in time order; first occurrence (file order, then row) wins. (file, row) is unique,
    # so the order is fully determined
    order = np.lexsort((df["source_row"], df["source_file"], t))
    if (np.diff(order) != 1).any():
        df = {c: v[order] for c, v in df.items()}
    df = _dedupe(df, meta)
    t = df["time"]
    n = len(t)
    own = np.asarray(df["duration"], dtype=float)
    covers = np.zeros(n, bool)
    if "volume_index" in df:
        covers = ~pd.isna(df["volume_index"])
        if "volume_line" in df:
            covers &= pd.isna(df["volume_line"])
    d = _spacing_durations(t, nominal, covers, backward=True)
    dur = np.where(np.isfinite(own) & (own > 0), own, d)
    df["duration"] = dur

    # volumes
    for f in ("flag_rollover", "flag_meter_change", "flag_negative_delta", "flag_implausible_delta", "flag_duplicate"):
        if f not in df:
            df[f] = np.zeros(n, bool)
    vol = np.asarray(df["volume_line"], dtype=float) if "volume_line" in df else np.full(n, np.nan)
    sources = []
    if "volume_line" in df:
        sources.append("interval volume")
    drop_first = False
    if "volume_index" in df and (~pd.isna(df["volume_index"])).any():
        reading = np.asarray(df["volume_index"], dtype=float)
        delta, ro, ch, ng, imp, cap = _index_deltas(reading, _filled(df["volume_index_scale"], 1.0), dur,
                                                    register_digits)
        use = ~np.isfinite(vol) & ~np.isnan(reading)
        vol = np.where(use, delta, vol)
        for f, m in (("flag_rollover", ro), ("flag_meter_change", ch), ("flag_negative_delta", ng),
                     ("flag_implausible_delta", imp)):
            df[f] = np.asarray(df[f], dtype=bool) | (m & use)
        meta.register_capacity = float(np.nanmax(cap)) if np.isfinite(cap).any() else None
        sources.append("meter index")
        first = int(np.flatnonzero(~np.isnan(reading))[0])
        if first == 0 and ("volume_line" not in df or not np.isfinite(df["volume_line"][0])):
            meta.opening_index = float(reading[0])
            drop_first = True
    if "flow_rate" in df:
        fr = np.asarray(df["flow_rate"], dtype=float)
        vol = np.where(np.isfinite(vol), vol, fr * dur)
        sources.append("flow rate")
    df["volume_line"] = vol
    meta.volume_from = ", ".join(sources)
    if "volume_corrected_site_index" in df and (~pd.isna(df["volume_corrected_site_index"])).any():
        delta, ro, ch, ng, imp, _ = _index_deltas(np.asarray(df["volume_corrected_site_index"], dtype=float),
                                                  _filled(df["volume_corrected_site_index_scale"], 1.0),
                                                  dur, None)
        site = np.asarray(df["volume_corrected_site"], dtype=float) if "volume_corrected_site" in df else np.full(n, np.nan)
        df["volume_corrected_site"] = np.where(np.isfinite(site), site, delta)
    if drop_first:
        meta.notes.append(f"the first index reading ({meta.opening_index:g} m3 at "
                          f"{pd.Timestamp(int(t[0]), tz='UTC').isoformat()}) opens the log; it is not an interval")
        df = {c: v[1:] for c, v in df.items()}
    if not len(df["time"]):
        raise InputError("the log has no interval (an index log needs at least two readings)",
                         file=meta.sources[0]["file"], hint="export a longer period")
    return _finish(df, meta), meta


def _filled(values, fill: float) -> np.ndarray:
    """Float values with the missing ones (NaN) replaced."""
    return np.where(pd.isna(values), fill, values).astype(float)


def _value_columns(df):
    return [c for c in NUMERIC if c in df]


def _dedupe(df: dict, meta: LogMetadata) -> dict:
    t = np.asarray(df["time"], dtype=np.int64)
    n = len(t)
    dup = np.concatenate([[False], t[1:] == t[:-1]])
    df["flag_duplicate"] = np.zeros(n, bool)
    if not dup.any():
        return df
    first_pos = pd.Series(np.arange(n)).groupby(t).transform("min").to_numpy()
    cols = _value_columns(df)
    differs = np.zeros(n, bool)
    diff_cols = [[] for _ in range(n)]
    for c in cols:
        v = np.asarray(df[c], dtype=float)
        a, b = v[dup], v[first_pos[dup]]
        same = (a == b) | (np.isnan(a) & np.isnan(b)) | np.isclose(a, b, rtol=1e-9, atol=0.0)
        d = np.flatnonzero(dup)[~same]
        differs[d] = True
        for i in d[:_MAX_RECORDED]:
            diff_cols[i].append(c)
    kept_flag = np.zeros(n, bool)
    kept_flag[first_pos[differs]] = True
    files = [s["file"] for s in meta.sources]
    for i in np.flatnonzero(differs)[:_MAX_RECORDED]:
        j = first_pos[i]
        meta.duplicates.append({"time": pd.Timestamp(int(t[i]), tz="UTC").isoformat(),
                                "kept": f"{files[df['source_file'][j]]} row {df['source_row'][j]}",
                                "dropped": f"{files[df['source_file'][i]]} row {df['source_row'][i]}",
                                "columns": diff_cols[i]})
    meta.identical_overlap_rows += int((dup & ~differs).sum())
    df["flag_duplicate"] = kept_flag
    keep = ~dup
    # a dropped copy's own bad-cell flags do not carry over; its flags of time order do
    return {c: v[keep] for c, v in df.items()}


def _finish(df: dict, meta: LogMetadata) -> pd.DataFrame:
    idx = pd.DatetimeIndex(pd.to_datetime(np.asarray(df["time"], dtype=np.int64), unit="ns", utc=True),
                           name="interval_end")
    n = len(idx)
    out = {}  # the canonical columns, in order (one frame is built from them at the end)
    pcol = "pressure_gauge" if "pressure_gauge" in df else "pressure_line"
    out[pcol] = np.asarray(df[pcol], dtype=float)
    if "pressure_atm" in df:
        out["pressure_atm"] = np.asarray(df["pressure_atm"], dtype=float)
    out["temperature_line"] = np.asarray(df["temperature_line"], dtype=float)
    out["volume_line"] = np.asarray(df["volume_line"], dtype=float)
    out["duration"] = np.asarray(df["duration"], dtype=float)
    for c in ("volume_corrected_site", "flow_rate", "volume_index"):
        if c in df:
            out[c] = np.asarray(df[c], dtype=float)
    if "status" in df:
        status = np.array(df["status"], dtype=object)
        status[pd.isna(status)] = ""
        out["status"] = status
        files = [s["file"] for s in meta.sources]
        nz = np.flatnonzero(status != "")
        for i in nz[:_MAX_RECORDED]:
            meta.status.append({"time": idx[i].isoformat(), "file": files[int(df["source_file"][i])],
                                "row": int(df["source_row"][i]), "text": str(status[i])})
    out["source_file"] = np.asarray(df["source_file"]).astype(np.int32)
    out["source_row"] = np.asarray(df["source_row"]).astype(np.int64)
    for f in READER_FLAGS:
        out[f] = np.asarray(df[f], dtype=bool) if f in df else np.zeros(n, bool)
    meta.flag_counts = {f[5:]: int(np.count_nonzero(out[f])) for f in READER_FLAGS}
    out = pd.DataFrame(out, index=idx)
    out.attrs["timezone"] = meta.timezone
    out.attrs["nominal_interval_s"] = meta.nominal_interval_s
    out.attrs["volume_from"] = meta.volume_from
    return out


def file_sha256(path) -> str:
    """sha256 of a file's bytes (hex)."""
    return hashlib.sha256(Path(path).read_bytes()).hexdigest()
