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
- **Bad cells**: a number that cannot be read is NaN with ``flag_unreadable`` and the cell (file,
  sheet, row, column, text) recorded in the metadata; an empty required cell is NaN with
  ``flag_missing``. A row whose time cannot be read (or does not exist on the clock, or is more
  than a day off the one slot its neighbours leave) is never placed by guess: it is left out,
  recorded in ``metadata.dropped_rows`` (and named on the console), and the next row of its file
  is flagged ``flag_unreadable``; the quality step sees the missing interval, which then has no
  result (counted) unless a substitution policy fills it (recorded). ``24:00`` is midnight ending
  that day, in a date-time cell as in a time-of-day cell. A required column in which no value can be read is
  an error naming the file, row and column.
  ``flag_time_backwards`` marks a row whose time is earlier than a row above it in its file.
"""

from __future__ import annotations

import copy
import hashlib
import re
from dataclasses import asdict, dataclass, field
from functools import lru_cache
from pathlib import Path

import numpy as np

from ..errors import InputError, SettingsError
from .columns import ColumnMapping, _key, map_columns, require_log_columns
from .tables import DEFAULT_LIMITS, Limits, RawTable, _looks_numeric, parse_table, to_numbers
from .times import localize, parse_clock, parse_datetimes, parse_dates

from .join import NUMERIC, OVERLAP_CHOICES, READER_FLAGS, _MAX_RECORDED, join_parts  # noqa: F401  (READER_FLAGS: public)


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
    unreadable : list of dict  cells that could not be read (first 1000): file, sheet, row, column, value
    unreadable_count : int
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
    unreadable: list = field(default_factory=list)
    unreadable_count: int = 0
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
             register_digits: int | None = None, sheet=None, limits: Limits = DEFAULT_LIMITS,
             opening_index: float | None = None, timezone_given: bool = True, overlap: str | None = None):
    """Read one meter's log from one or several files.

    Parameters
    ----------
    paths : path or list of paths   CSV, TXT, TSV, XLSX, XLSM, XLS or ODS; joined in time order
    timezone : str                  IANA zone of the local clock times, e.g. 'Europe/Berlin'
    interval_label : {'end', 'start'}  which end of its interval a timestamp marks (default 'end')
    column_map : dict, optional     source header → canonical name (see meterfix.readers.columns)
    register_digits : int, optional digits of the meter index register (rollover at 10^n [in the
                                    index column's unit])
    sheet : str, optional           workbook sheet (default: 'Log', else the one sheet holding a log)
    limits : Limits                 safety limits of the table reader
    opening_index : float, optional [m3]  index reading at the start of the first logged interval:
                                    the first reading then closes an interval (index logs)
    timezone_given : bool           False when the user gave no time zone: a local clock whose
                                    stamps repeat or skip an hour (a clock change) is refused
    overlap : {None, 'later', 'earlier'}  files that overlap with different values: refused
                                    (None, the default), or the later / earlier file's rows kept
                                    (by the order of ``paths``); identical overlaps are dropped

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
    return _assemble(tables, timezone, interval_label, column_map, register_digits, opening_index, timezone_given,
                     overlap)


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
def _read_part(t: RawTable, k: int, timezone: str, label: str, column_map, meta: LogMetadata,
               key: str | None = None) -> dict:
    """One table's rows as columns (name → array, all of one length), rows without a time left out.

    ``key`` names the table in ``meta.columns`` (the file name; a later segment of a file whose
    header repeats mid-file is 'file (from row N)'). Raises :class:`_RepeatedHeader` when a row
    below the header is itself a header (the caller splits the table there). The steps: the
    columns mapped and recorded; the time column chosen; the times read (date-times, date and
    hour numbers, or date and clock) and placed in UTC; the interval label; the rows whose time
    cannot be placed left out and recorded; the numbers read in SI; time going backwards flagged.
    """
    where = {"file": t.file, "sheet": t.sheet, "row": t.header_row}
    c = _mapped_columns(t, column_map, meta, key, where)
    fname = Path(t.file).name
    tcol, hcol = _time_columns(c)
    t = _drop_summary_rows(t, c, tcol or c.get("date"), meta)
    n = len(t.cells)
    rows = t.rows
    # the columns of this part, in order (one frame is built from them at the end)
    part = {"source_file": np.full(n, k, dtype=np.int32), "source_row": rows}
    naive, bad_t, zone, tcol, hour_nonexist = _read_times(t, c, tcol, hcol, where, timezone, meta)
    if bad_t.any():
        heads = [int(i) for i in np.flatnonzero(bad_t)[:1000] if _score(list(t.cells.iloc[int(i)])) >= 200]
        if heads:
            raise _RepeatedHeader([int(rows[i]) for i in heads])
    part["local_clock"] = np.full(n, zone != "utc")
    if zone == "utc":
        utc = naive
        nonexist = hour_nonexist if hour_nonexist is not None else np.zeros(n, bool)
    else:
        utc, nonexist, _ = localize(naive, timezone)
    part["label"] = np.full(n, _row_label(tcol, hour_nonexist is not None, label, meta, fname), dtype=object)
    drop, after_dropped = _rows_left_out(t, tcol, utc, bad_t, nonexist, meta)
    part["time"] = utc
    unreadable, missing = _read_numbers(t, c, part, meta)
    part["flag_unreadable"] = unreadable | after_dropped
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


def _mapped_columns(t: RawTable, column_map, meta: LogMetadata, key, where) -> dict:
    """The table's columns mapped to canonical names (canonical name → source column), the log's
    required columns checked, and recorded in ``meta``: headers, ignored columns, units, notes."""
    mapping: ColumnMapping = map_columns(t.header, column_map, where=where)
    require_log_columns(mapping, t.header, where)
    c = mapping.columns
    fname = Path(t.file).name
    key = key or fname
    meta.columns[key] = {n: s.header for n, s in c.items()}
    meta.ignored_columns[key] = list(mapping.ignored)
    for n, s in c.items():
        meta.units.setdefault(n, s.unit_text)
    meta.notes += [f"{fname}: {x}" for x in t.notes]
    return c


def _time_columns(c: dict):
    """The column holding the whole time (interval end or start, a time, a date-time under an
    hour header, a date or a clock alone), or None, and the hour-number column (or None)."""
    tcol = next((c[x] for x in ("interval_end", "interval_start", "time") if x in c), None)
    hcol = next((c[x] for x in ("hour_ending", "hour_beginning") if x in c), None)
    if tcol is None and hcol is not None and "date" not in c:
        tcol = hcol  # a full date-time under an 'Hour ending' / 'Hour beginning' header
    if tcol is None and "date" in c and "clock" not in c and hcol is None:
        tcol = c["date"]
    if tcol is None and "clock" in c and "date" not in c:
        tcol = c["clock"]  # a 'Time' column alone holds the date too
    return tcol, hcol


def _read_times(t: RawTable, c: dict, tcol, hcol, where, timezone: str, meta: LogMetadata):
    """Each row's time: from one column, from a date and hour numbers, or from a date and a clock.

    Returns (naive datetime64 [ns], unreadable bool, zone of the naive times ('utc' or the
    column's, None: the site's clock), the column that says the label, the hour numbers' local
    times that do not exist (None unless hour numbers were placed on the site's clock)).
    """
    if tcol is not None:
        naive, bad_t, is_utc = parse_datetimes(t.cells[tcol.index].to_numpy(), {**where, "row": None, "column": tcol.header})
        return naive, bad_t, "utc" if is_utc else tcol.zone, tcol, None
    if "date" in c and hcol is not None:
        naive, bad_t, hour_nonexist = _times_from_hour_numbers(t, c, hcol, where, timezone, meta)
        return naive, bad_t, "utc", hcol, hour_nonexist
    if "date" in c and "clock" in c:
        _refuse_hour_numbers(t.cells[c["clock"].index].to_numpy(), c["clock"], t)
        d, bad_d = parse_dates(t.cells[c["date"].index].to_numpy(), {**where, "row": None, "column": c["date"].header})
        h, bad_h = parse_clock(t.cells[c["clock"].index].to_numpy(), {**where, "row": None, "column": c["clock"].header})
        naive = d + h
        return naive, bad_d | bad_h | np.isnat(naive), c["clock"].zone or c["date"].zone, c["clock"], None
    raise InputError("a time-of-day column without a date column", **where, column=c["clock"].header,
                     hint="add a 'Date' column, or give one 'Interval end' column with date and time")


def _times_from_hour_numbers(t: RawTable, c: dict, hcol, where, timezone: str, meta: LogMetadata):
    """UTC interval ends [ns] from a date and hour numbers (ending 1..24 or beginning 0..23).

    The hour's start is placed on the site's clock (the repeated autumn hour by order, as any wall
    time), its end is one hour later in absolute time: 'HE 2' written twice on the autumn night is
    01:00-02:00 CDT, then 01:00-02:00 CST. Hours counted 1..23 or 1..25 on the clock-change days
    are hours elapsed since the day's local midnight. Returns (times, unreadable, nonexistent).
    """
    n = len(t.cells)
    fname = Path(t.file).name
    d, bad_d = parse_dates(t.cells[c["date"].index].to_numpy(), {**where, "row": None, "column": c["date"].header})
    h, bad_h, elapsed = _hour_numbers(t.cells[hcol.index].to_numpy(), hcol, t, t.rows)
    local = (hcol.zone or c["date"].zone) != "utc"
    if not elapsed and local and hcol.name == "hour_ending":
        elapsed = _counts_elapsed(d, h, timezone)
    hour = np.timedelta64(3600, "s").astype("timedelta64[ns]")
    if elapsed:
        # hours counted from the day's local midnight (25 on the long day): midnight placed on
        # the clock, the hours added as elapsed time
        mid, hour_nonexist, _ = localize(d, timezone) if local else (d, np.zeros(n, bool), None)
        naive = mid + h
        meta.notes.append(f"{fname}: '{hcol.header}' counts the hours of the clock-change days (1..23 or "
                          "1..25): read as hours elapsed since the day's local midnight")
    else:
        wall = d + h - (hour if hcol.name == "hour_ending" else np.timedelta64(0, "ns"))
        st, hour_nonexist, _ = localize(wall, timezone) if local else (wall, np.zeros(n, bool), None)
        naive = st + hour
    meta.notes.append(f"{fname}: '{c['date'].header}' + '{hcol.header}' read as hour "
                      + ("ending (1..24, 24 ends at midnight)" if hcol.name == "hour_ending"
                         else "beginning (0..23)") + " on the site's clock")
    return naive, bad_d | bad_h | np.isnat(naive), hour_nonexist


def _row_label(tcol, hours_placed: bool, label: str, meta: LogMetadata, fname: str) -> str:
    """Whether the rows' times are interval 'end' or 'start': what the header says (hour numbers
    placed on the clock are ends), else the setting ``label``; a header overriding it is noted."""
    hours_given = tcol.name in ("hour_ending", "hour_beginning") and hours_placed
    own_label = ("end" if tcol.name == "interval_end" or hours_given or tcol.name == "hour_ending"
                 else "start" if tcol.name in ("interval_start", "hour_beginning") else label)
    if own_label != label and not hours_given:
        meta.notes.append(f"{fname}: header '{tcol.header}' says interval {own_label}; read as such "
                          f"(setting was '{label}')")
    return own_label


def _rows_left_out(t: RawTable, tcol, utc, bad_t, nonexist, meta: LogMetadata):
    """The rows whose time cannot be placed, and the kept rows right after them (flagged).

    A row whose time cannot be read is never placed by guess (a value enters a total only when
    its interval is known): it is left out and recorded, the quality step sees the missing
    interval (no result there, counted), and an index difference after it spans the whole gap.
    Returns (left out, after a left-out row), bool arrays over the rows.
    """
    n = len(utc)
    rows = t.rows
    fname = Path(t.file).name
    drop = np.isnat(utc) | bad_t
    stray = _stray_times(utc, drop)
    drop |= stray
    raw_t = t.cells[tcol.index]
    for i in np.flatnonzero(drop)[:_MAX_RECORDED]:
        reason = ("the local time does not exist (skipped by the clock change)" if nonexist[i]
                  else "the time is more than a day off the slot its neighbours leave (mistyped?)" if stray[i]
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
    return drop, after_dropped


def _read_numbers(t: RawTable, c: dict, part: dict, meta: LogMetadata):
    """The numeric columns read and converted to SI into ``part`` (a cell beyond any physical value
    is unreadable); unreadable cells recorded; a required column with no readable number, or
    empty, refused. Returns (rows with an unreadable cell, rows missing a required value)."""
    n = len(t.cells)
    rows = t.rows
    fname = Path(t.file).name
    unreadable = np.zeros(n, bool)
    missing = np.zeros(n, bool)
    empty_columns = []
    required = {"pressure_gauge", "pressure_line", "temperature_line", "volume_line", "volume_index", "flow_rate",
                "pressure_differential", "mass", "mass_flow"}
    for name in NUMERIC:
        if name not in c:
            continue
        s = c[name]
        raw = t.cells[s.index].to_numpy()
        v, empty, bad = to_numbers(raw, t.decimal)
        with np.errstate(over="ignore", invalid="ignore"):
            v = s.unit.to_si(v)
        # a cell beyond any physical value (1e308 overflowing, 1e20 Pa) is unreadable, never a number
        off = np.isfinite(v) & (np.abs(v) > _MAX_MAGNITUDE) | np.isinf(v)
        if off.any():
            bad = bad | off
            v = np.where(off, np.nan, v)
        part[name] = v
        if name in required and not np.isfinite(v).any() and empty.all():
            empty_columns.append(s)
        if name in ("volume_index", "volume_corrected_site_index"):
            part[name + "_scale"] = np.full(n, s.unit.scale)
        if bad.any():
            unreadable |= bad
            idx = np.flatnonzero(bad)
            meta.unreadable_count += len(idx)
            room = _MAX_RECORDED - len(meta.unreadable)
            for i in idx[:max(room, 0)]:
                meta.unreadable.append({"file": fname, "sheet": t.sheet, "row": int(rows[i]), "column": s.header,
                                         "value": str(raw[i])})
        if name in required:
            missing |= empty
            if bad.any() and not np.isfinite(v).any():
                i = int(np.flatnonzero(bad)[0])
                raise InputError(f"no value in column '{s.header}' can be read as a number (e.g. '{raw[i]}')",
                                 file=t.file, sheet=t.sheet, row=int(rows[i]), column=s.header,
                                 hint="write plain numbers in this column (the unit goes in the header), "
                                      "or map another column to it")
    _refuse_empty(empty_columns, c, t)
    return unreadable, missing


#: |value| in SI above which a cell is not a reading (10^12 Pa, K, m3 or m3/s: beyond anything a
#: gas meter logs); such a cell is unreadable, so that no total can overflow
_MAX_MAGNITUDE = 1e12


def _hour_numbers(cells, col, t: RawTable, rows):
    """Hour numbers beside a date → (timedelta64 since midnight, bad, elapsed).

    ``hour_ending``: 1..24, the hour ending at that clock hour (24 ends at midnight); a column that
    reaches 25 counts hours elapsed since local midnight (``elapsed``). ``hour_beginning``: 0..23.
    Cells written as a clock time ('01:00') are read as that time.
    """
    vals, empty, bad = to_numbers(cells)
    out = np.full(len(vals), np.timedelta64("NaT"), dtype="timedelta64[ns]")
    if bad.any():
        clk, bad_c = parse_clock(np.asarray(cells, dtype=object)[bad], {"file": t.file, "column": col.header})
        ok = ~bad_c & ~np.isnat(clk)
        sub = np.flatnonzero(bad)
        vals[sub[ok]] = clk[ok].astype("timedelta64[s]").astype(np.int64) / 3600.0
        bad[sub[ok]] = False
    lo, hi = (1, 25) if col.name == "hour_ending" else (0, 23)
    with np.errstate(invalid="ignore"):
        fine = np.isfinite(vals) & (vals == np.round(vals)) & (vals >= lo) & (vals <= hi)
    wrong = np.isfinite(vals) & ~fine
    if wrong.any():
        i = int(np.flatnonzero(wrong)[0])
        raise InputError(f"column '{col.header}' holds {vals[i]:g}, not a whole hour {lo}..{hi if hi != 25 else 24}",
                         file=t.file, sheet=t.sheet, row=int(rows[i]), column=col.header,
                         hint=("hour ending runs 1..24 (24 ends at midnight); hour beginning 0..23: "
                               "rename the header or map it with --column "
                               f"'{col.header}=hour_ending' or '{col.header}=hour_beginning'"))
    elapsed = col.name == "hour_ending" and bool((vals[fine] == 25).any())
    out[fine] = (vals[fine] * 3600.0).astype(np.int64).astype("timedelta64[s]").astype("timedelta64[ns]")
    return out, bad | wrong, elapsed


def _counts_elapsed(d: np.ndarray, h: np.ndarray, timezone: str) -> bool:
    """Hour-ending numbers that count a clock-change day's hours 1..23 or 1..25 (elapsed since local
    midnight) rather than naming clock hours (1, 2, 4 ... 24 in spring; 1, 2, 2, 3 ... 24 in autumn)."""
    ok = ~np.isnat(d) & ~np.isnat(h)
    if not ok.any():
        return False
    days = np.unique(d[ok].astype("datetime64[D]"))
    if len(days) > 10_000:
        return False
    mid, _, _ = localize(days.astype("datetime64[ns]"), timezone)
    nxt, _, _ = localize((days + np.timedelta64(1, "D")).astype("datetime64[ns]"), timezone)
    length = ((nxt - mid) / np.timedelta64(1, "h")).astype(float)
    hours = (h / np.timedelta64(1, "h")).astype(float)
    for day, n in zip(days, length):
        if np.isfinite(n) and n != 24:
            got = np.sort(hours[ok & (d.astype("datetime64[D]") == day)])
            if len(got) == int(n) and (got == np.arange(1, int(n) + 1)).all():
                return True
    return False


def _refuse_hour_numbers(cells, col, t: RawTable) -> None:
    """A time-of-day column of plain whole numbers up to 24 ('Hour': 0..23 or 1..24) does not say
    whether hour 1 is the hour starting or ending at 01:00: refused with the fix."""
    vals, empty, bad = to_numbers(cells)
    got = np.isfinite(vals)
    if not got.any() or bad.any():
        return
    v = vals[got]
    if (v == np.round(v)).all() and v.max() > 1 and v.max() <= 25 and v.min() >= 0:
        raise InputError(
            f"column '{col.header}' holds hour numbers ({v.min():g}..{v.max():g}) but does not say whether an hour "
            "number marks the hour's start or its end", file=t.file, sheet=t.sheet, row=t.header_row, column=col.header,
            hint=f"rename the header 'Hour ending' (1..24, the usual gas-day layout) or 'Hour beginning' (0..23), "
                 f"or map it: --column '{col.header}=hour_ending' or --column '{col.header}=hour_beginning'")


class _RepeatedHeader(Exception):
    """Source rows (1-based, as the spreadsheet shows them) that repeat a header below the first."""

    def __init__(self, source_rows):
        super().__init__(source_rows)
        self.source_rows = source_rows


def _segments(t: RawTable, positions) -> list:
    """The table split at rows that are headers: each part under its own header."""
    from dataclasses import replace

    out = []
    cuts = [-1] + sorted(positions) + [len(t.cells)]
    for a, b in zip(cuts[:-1], cuts[1:]):
        if a < 0:
            header, header_row, notes = t.header, t.header_row, t.notes
        else:
            cells = [("" if v is None else str(v)).strip() for v in t.cells.iloc[a].tolist()]
            while cells and cells[-1] == "":
                cells.pop()
            header, header_row, notes = cells, int(t.rows[a]), []
        body = t.cells.iloc[a + 1:b]
        if not len(body):
            continue
        width = len(header)
        body = body.iloc[:, :width].copy() if body.shape[1] >= width else body
        body.columns = list(range(body.shape[1]))
        out.append(replace(t, header=header, header_row=header_row, notes=notes,
                           cells=body.reset_index(drop=True), rows=t.rows[a + 1:b]))
    return out


_SUMMARY_WORDS = re.compile(r"^\s*(grand\s+)?(total|totals|sum|subtotal|sub-total|average|avg|mean|minimum|min|"
                            r"maximum|max|summary|month|monthly)\b", re.IGNORECASE)


def _drop_summary_rows(t: RawTable, c: dict, tcol, meta: LogMetadata) -> RawTable:
    """Leave out summary rows below the data, recorded in ``meta.dropped_rows``.

    A summary row is (a) a row whose time cell (or first cell) starts with a word such as Total,
    Sum, Average, Min, Max; (b) one of the last rows when its time cell is a date without a time of
    day while the rows above carry times; (c) the last row when its interval volume equals the sum
    of all the others (to 1e-9, at least three others).
    """
    n = len(t.cells)
    if n < 2 or tcol is None:
        return t
    drop = np.zeros(n, bool)
    why = np.full(n, "", dtype=object)
    tc = t.cells[tcol.index].to_numpy(dtype=object)
    first = t.cells[0].to_numpy(dtype=object)
    # (a) a word in the time cell or the first cell (only text cells are looked at)
    for col in (tc, first) if tcol.index != 0 else (tc,):
        is_text = np.fromiter((type(v) is str and v[:1].isalpha() for v in col[-50:]), bool, count=min(n, 50))
        for j in np.flatnonzero(is_text):
            i = n - min(n, 50) + int(j)
            m = _SUMMARY_WORDS.match(col[i])
            if m and not drop[i]:
                drop[i] = True
                why[i] = f"summary row ('{col[i].strip()}')"
    # (b) trailing date-only stamps after rows with a time of day
    if tcol.name != "date":
        import datetime as _dt

        pt = [c[x].index for x in ("pressure_gauge", "pressure_line", "temperature_line") if x in c]
        above = tc[max(0, n - 50):max(0, n - 3)]
        timed = len(above) > 0 and all(isinstance(v, str) and ":" in v for v in above)

        def date_only(i):
            v = tc[i]
            if isinstance(v, str):
                return bool(_DATE_ONLY.match(v)) and timed
            # a workbook date cell may be a midnight time stamp: a summary row only without p or T
            return (isinstance(v, _dt.date) and not isinstance(v, _dt.datetime)
                    and any(str(t.cells[j].iat[i]).strip() == "" for j in pt))
        i = n - 1
        while i > 0 and n - i <= 3 and (drop[i] or date_only(i)):
            if not drop[i]:
                drop[i] = True
                why[i] = f"summary row (date '{str(tc[i]).strip()}' without a time after the data)"
            i -= 1
    # (c) the last kept row's volume is the sum of the others
    if "volume_line" in c:
        keep = np.flatnonzero(~drop)
        if len(keep) >= 4:
            v, _, _ = to_numbers(t.cells[c["volume_line"].index].to_numpy()[keep], t.decimal)
            last, rest = v[-1], v[:-1]
            if np.isfinite(last) and np.isfinite(rest).all() and last != 0:
                with np.errstate(over="ignore", invalid="ignore"):
                    tot = float(np.sum(rest))  # may overflow to inf on absurd cells: then no match
                if np.isfinite(tot) and (abs(last - tot) <= 1e-9 * max(abs(tot), 1e-300) or abs(last - tot) < 0.05 * 10 ** -_decimals(
                        t.cells[c["volume_line"].index].iat[keep[-1]])):
                    drop[keep[-1]] = True
                    why[keep[-1]] = "summary row (its volume is the sum of all the rows above)"
    if not drop.any():
        return t
    fname = Path(t.file).name
    for i in np.flatnonzero(drop):
        meta.dropped_rows.append({"file": fname, "sheet": t.sheet, "row": int(t.rows[i]),
                                  "reason": why[i] + ", not an interval", "value": str(tc[i])})
    meta.notes.append(f"{fname}: {int(drop.sum())} summary row(s) left out (rows "
                      + ", ".join(str(int(r)) for r in t.rows[drop]) + ")")
    from dataclasses import replace

    keep = ~drop
    return replace(t, cells=t.cells[keep].reset_index(drop=True), rows=t.rows[keep])


_DATE_ONLY = re.compile(r"^\s*\d{1,4}[-./]\d{1,2}[-./]\d{1,4}\s*$")


def _decimals(cell) -> int:
    """Decimal places a number is written with (0 for a workbook number or an integer)."""
    if isinstance(cell, str) and ("." in cell or "," in cell):
        return len(re.split(r"[.,]", cell.strip())[-1])
    return 0


def _refuse_empty(empty_columns, c, t: RawTable) -> None:
    """A required quantity whose column is empty in every row: the month cannot be read."""
    if not empty_columns:
        return
    # the primary measurement: a volume, index or flow rate, or a differential pressure or mass (one is enough)
    primary = ("volume_line", "volume_index", "flow_rate", "pressure_differential", "mass", "mass_flow")
    vol = [s for s in empty_columns if s.name in primary]
    others_have_volume = any(n in c and c[n] not in empty_columns for n in primary)
    bad = [s for s in empty_columns if s not in vol] + ([] if others_have_volume else vol)
    if not bad:
        return
    s = bad[0]
    raise InputError(f"column '{s.header}' is present but empty in every row ({len(t.cells)} rows)",
                     file=t.file, sheet=t.sheet, row=t.header_row + 1, column=s.header,
                     hint="export the log again with its values; a workbook whose cells are formulas saved "
                          "without their computed values reads as empty: open it in the spreadsheet program, "
                          "let it calculate and save it (or export a CSV)")


def _stray_times(utc: np.ndarray, bad: np.ndarray) -> np.ndarray:
    """Rows whose time is more than a day off the one slot their neighbours leave (a mistyped year,
    month or day). They are treated as unreadable times, so that one typing error neither inserts
    months of gap rows nor reorders the log; they are left out and recorded like unreadable times.
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


def _assemble(tables, timezone, interval_label, column_map, register_digits, opening_index=None,
              timezone_given=True, overlap=None):
    if interval_label not in ("end", "start"):
        raise SettingsError(f"interval label '{interval_label}' is not 'end' or 'start'")
    if overlap is not None and overlap not in OVERLAP_CHOICES:
        raise SettingsError(f"overlap '{overlap}' is not 'later' or 'earlier'",
                            hint="--overlap later keeps the later file's rows where files overlap, "
                                 "--overlap earlier the earlier file's (by the order of the files given)")
    try:
        from zoneinfo import ZoneInfo

        ZoneInfo(timezone)
    except Exception:  # noqa: BLE001 - zoneinfo raises several types for a bad key
        raise SettingsError(f"unknown time zone '{timezone}'",
                            hint="use an IANA name such as 'Europe/Berlin' or 'America/Chicago'") from None
    meta = LogMetadata(timezone=timezone, interval_label=interval_label)
    parts = []
    queue = [(t, None) for t in tables]
    while queue:
        t, key = queue.pop(0)
        k = len(meta.sources)
        snapshot = copy.deepcopy(meta)
        meta.sources.append({"file": Path(t.file).name, "role": "log", "sha256": t.sha256, "sheet": t.sheet,
                             "rows": int(len(t.cells)), "header_row": t.header_row, "encoding": t.encoding,
                             "delimiter": t.delimiter, "decimal": t.decimal})
        try:
            parts.append(_read_part(t, k, timezone, interval_label, column_map, meta, key))
        except _RepeatedHeader as rh:
            meta.__dict__.update(snapshot.__dict__)
            segs = _segments(t, [int(i) for i in np.flatnonzero(np.isin(t.rows, rh.source_rows))])
            fname = Path(t.file).name
            meta.notes.append(f"{fname}: the header repeats below the data (row(s) "
                              + ", ".join(str(r) for r in rh.source_rows)
                              + "); each block is read under its own header")
            queue = [(sg, key if j == 0 else f"{fname} (from row {sg.header_row})")
                     for j, sg in enumerate(segs)] + queue
    if column_map:
        seen = {_key(h) for t in tables for h in t.header}
        unknown = [h for h in column_map if _key(h) not in seen]
        if unknown:
            raise SettingsError("column map names header(s) not found in any log file: " + ", ".join(unknown),
                                hint="headers found: " + ", ".join(dict.fromkeys(str(h) for t in tables for h in t.header if str(h).strip())))
    return join_parts(parts, tables, meta, interval_label, column_map, register_digits,
                      opening_index=opening_index, timezone_given=timezone_given, overlap=overlap)


def file_sha256(path) -> str:
    """sha256 of a file's bytes (hex)."""
    return hashlib.sha256(Path(path).read_bytes()).hexdigest()
