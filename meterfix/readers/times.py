"""Time cells → UTC instants, vectorized (shared by the log and analysis readers).

Accepted cells: spreadsheet datetimes; spreadsheet serial numbers (days since 1899-12-30, the
1900 date system of spreadsheet programs, common practice); ISO 8601 text with or without an
offset (``2026-10-01 07:00``, ``2026-10-01T07:00:00+02:00``, ``...Z``); ``dd.mm.yyyy HH:MM``;
``dd/mm/yyyy`` or ``mm/dd/yyyy`` (decided from the file: the order under which the dates read
as a forward-running series wins; refused when both read equally well); 12-hour clocks with
AM/PM; separate date and time-of-day columns. ``24:00`` (or ``24:00:00``) is midnight ending that
day, in a date-time cell (``2026-06-01 24:00`` = ``2026-06-02 00:00``) as in a time-of-day cell:
gas-day data commonly write the last hour so (common practice).

Local clock times are placed in an IANA time zone. On the autumn change the repeated hour is
resolved by order: the first occurrence of a repeated wall time is read as summer time, the
second as winter time. A wall time that does not exist (the skipped spring hour) cannot be
placed and is returned as bad.
"""

from __future__ import annotations

import datetime as _dt
import re
import warnings

import numpy as np
import pandas as pd

from ..errors import InputError

_EPOCH_1900 = pd.Timestamp("1899-12-30")
_OFFSET = re.compile(r"(?:[+-]\d{2}:?\d{2}|Z)$")
_DATETIME_FORMATS = [
    "%d.%m.%Y %H:%M:%S", "%d.%m.%Y %H:%M", "%d.%m.%y %H:%M",
    "%d/%m/%Y %H:%M:%S", "%d/%m/%Y %H:%M", "%m/%d/%Y %H:%M:%S", "%m/%d/%Y %H:%M",
    "%m/%d/%Y %I:%M:%S %p", "%m/%d/%Y %I:%M %p", "%d/%m/%Y %I:%M %p",
    "%d-%m-%Y %H:%M:%S", "%d-%m-%Y %H:%M", "%Y/%m/%d %H:%M:%S", "%Y/%m/%d %H:%M",
]
_DATE_FORMATS = ["%d.%m.%Y", "%d.%m.%y", "%d/%m/%Y", "%m/%d/%Y", "%d-%m-%Y", "%Y/%m/%d"]


def _types(s: pd.Series) -> np.ndarray:
    if len(s) and pd.api.types.infer_dtype(s, skipna=False) == "string":
        return np.full(len(s), "s", dtype=object)
    return s.map(lambda v: "s" if isinstance(v, str) else (
        "b" if isinstance(v, bool) else
        "n" if isinstance(v, (int, float, np.integer, np.floating)) else
        "t" if isinstance(v, (_dt.datetime, pd.Timestamp)) else
        "d" if isinstance(v, _dt.date) else
        "c" if isinstance(v, _dt.time) else
        "e" if isinstance(v, (_dt.timedelta, pd.Timedelta)) else "x")).to_numpy()


def _order_score(values: np.ndarray) -> tuple:
    """(parsed count, −backward steps, −median forward step): higher reads better as a time series.

    A log's rows lie close together: of two readings of slash dates, the one whose rows run
    forward in small steps (days, not months) is the right one.
    """
    ok = ~np.isnat(values)
    v = values[ok].astype("datetime64[ns]").astype(np.int64)
    d = np.diff(v) if len(v) > 1 else np.zeros(0, np.int64)
    back = int(np.count_nonzero(d < 0))
    fwd = d[d > 0]
    step = float(np.median(fwd)) if len(fwd) else 0.0
    return int(ok.sum()), -back, -step


def _pick_format(strings: pd.Series, formats, where, what: str):
    """The format that reads the strings best; (format or 'ISO8601', utc flag)."""
    sample = strings.iloc[:: max(1, len(strings) // 500)].iloc[:500]
    if sample.str.match(r"^\d{4}-\d{1,2}-\d{1,2}").mean() > 0.5:
        has_off = sample.str.contains(_OFFSET).mean() > 0.5
        return "ISO8601", has_off
    scores = []
    for f in formats:
        parsed = pd.to_datetime(sample, format=f, errors="coerce").to_numpy()
        scores.append((_order_score(parsed), f))
    scores.sort(key=lambda t: t[0], reverse=True)
    (best_score, best), rest = scores[0], scores[1:]
    if best_score[0] == 0:
        raise InputError(f"cannot read the {what} values (e.g. '{sample.iloc[0]}')", **where,
                         hint="write times as YYYY-MM-DD HH:MM (e.g. 2026-10-01 07:00) or use spreadsheet dates")
    for score, f in rest:
        if score == best_score and _dmy_mdy(best, f):
            # both orders read the sample equally: decide on the whole column
            a = _order_score(pd.to_datetime(strings, format=best, errors="coerce").to_numpy())
            b = _order_score(pd.to_datetime(strings, format=f, errors="coerce").to_numpy())
            if a == b:
                raise InputError(f"the {what} values are ambiguous: day/month or month/day (e.g. '{sample.iloc[0]}')",
                                 **where, hint="write times as YYYY-MM-DD HH:MM (e.g. 2026-10-01 07:00)")
            return (best if a > b else f), False
    return best, False


def _dmy_mdy(f1: str, f2: str) -> bool:
    return f1.replace("%d", "X").replace("%m", "%d").replace("X", "%m") == f2


def parse_datetimes(values, where: dict, *, what: str = "time"):
    """Cells → (instants, bad, is_utc).

    Parameters
    ----------
    values : array of cells
    where : dict          file/sheet/column for errors

    Returns
    -------
    instants : ndarray of datetime64[ns]   naive wall-clock times, or UTC when ``is_utc``
    bad : bool ndarray                     non-empty cells that are not a date-time
    is_utc : bool                          the text carried offsets (already converted to UTC)
    """
    cells = np.asarray(values, dtype=object)
    end_of_day = _end_of_day(cells)
    if end_of_day is not None:
        cells = cells.copy()
        cells[end_of_day] = [_END_OF_DAY.sub(r"00:00\1\2", c) for c in cells[end_of_day]]
        out, bad, is_utc = parse_datetimes(cells, where, what=what)
        ok = end_of_day & ~np.isnat(out)
        out[ok] = out[ok] + np.timedelta64(1, "D")
        return out, bad, is_utc
    exact = _exact_iso(cells)
    if exact is not None:
        return exact, np.zeros(len(cells), bool), False
    s = pd.Series(cells)
    n = len(s)
    out = np.full(n, np.datetime64("NaT"), dtype="datetime64[ns]")
    bad = np.zeros(n, bool)
    kinds = _types(s)
    is_utc = False
    m = kinds == "t"
    if m.any():
        ts = pd.to_datetime(s[m], errors="coerce", utc=False)
        if getattr(ts.dt, "tz", None) is not None:
            ts = ts.dt.tz_convert("UTC").dt.tz_localize(None)
            is_utc = True
        out[m] = ts.to_numpy("datetime64[ns]")
    m = kinds == "d"
    if m.any():
        out[m] = pd.to_datetime(s[m].astype(str), format="%Y-%m-%d").to_numpy("datetime64[ns]")
    m = kinds == "n"
    if m.any():
        v = s[m].astype(float).to_numpy()
        ok = (v > 1.0) & (v < 2958466.0)
        days = np.where(ok, v, np.nan)
        ns = np.round(days * 86400.0) * 1e9
        t = _EPOCH_1900.to_datetime64() + pd.to_timedelta(ns, unit="ns").to_numpy()
        t[~ok] = np.datetime64("NaT")
        out[m] = t
        bad[np.flatnonzero(m)[~ok]] = True
    m = kinds == "s"
    if m.any() and _plain_iso(s[m] if not m.all() else s):
        # every text cell is a plain ISO 8601 local time (no spaces to tidy, no offset, no blanks):
        # the general path below would read them the same way, with the same parser
        st = s[m] if not m.all() else s
        vals = pd.to_datetime(st, format="ISO8601", errors="coerce").to_numpy("datetime64[ns]")
        out[m] = vals
        bad[m] = np.isnat(vals)
    elif m.any():
        idx = np.flatnonzero(m)
        st = s[m]
        fmt = None
        done = np.zeros(len(st), bool)
        if len(st) > 2000:
            # fast path: the format from a sample, then one vectorized parse of the raw text
            sample = st.iloc[:: max(1, len(st) // 500)].str.strip()
            sample = sample[~sample.str.lower().isin(["", "-", "n/a", "na", "null", "none"])]
            if len(sample) and not sample.str.fullmatch(r"\d{5}(?:[.,]\d+)?").any():
                fmt, has_off = _pick_format(sample, _DATETIME_FORMATS + _DATE_FORMATS, where, what)
                if not has_off:
                    try:
                        fast = pd.to_datetime(st, format=fmt, errors="coerce").to_numpy("datetime64[ns]")
                    except (ValueError, TypeError):
                        fast = np.full(len(st), np.datetime64("NaT"), dtype="datetime64[ns]")
                    done = ~np.isnat(fast)
                    out[idx[done]] = fast[done]
        if (~done).any():
            vals, b_, utc_ = _strings(st[~done], where, what, fmt)
            out[idx[~done]] = vals
            bad[idx[~done]] = b_
            is_utc |= utc_
    other = (kinds == "x") | (kinds == "b") | (kinds == "c") | (kinds == "e")
    bad |= other & ~pd.isna(s).to_numpy()
    return out, bad, is_utc


#: a date-time text ending in 24:00 (or 24:00:00), the midnight that ends its date
_END_OF_DAY = re.compile(r"(?<=[ T])24:00(:00)?(\s*(?:[+-]\d{2}:?\d{2}|Z)?\s*)$")


def _end_of_day(cells: np.ndarray):
    """Mask of text cells written as 'DATE 24:00[:00]', or None when there is none."""
    if not len(cells):
        return None
    kind = pd.api.types.infer_dtype(cells, skipna=True)
    if kind == "string":
        if "24:00" not in "\n".join(cells.tolist()):
            return None
    elif kind not in ("mixed", "mixed-integer"):
        return None
    mask = np.fromiter((isinstance(c, str) and "24:00" in c and _END_OF_DAY.search(c) is not None for c in cells),
                       bool, len(cells))
    return mask if mask.any() else None


_NS_RANGE = (np.datetime64("1678-01-01T00:00:00", "s"), np.datetime64("2262-01-01T00:00:00", "s"))


def _exact_iso(cells: np.ndarray):
    """Text cells that are all 'YYYY-MM-DD HH:MM' (or all with seconds; 'T' or a space between)
    read by numpy, or None when any cell is not exactly that.

    A cell is taken only when numpy writes the instant it read back as the very same text, so
    the reading is the literal one (the one the general path gives); anything else (other
    layouts, spaces, offsets, impossible dates, times outside 1678-2261) is left to it.
    """
    if not len(cells) or pd.api.types.infer_dtype(cells, skipna=False) != "string":
        return None
    first = cells[0]
    unit = {16: "m", 19: "s"}.get(len(first))
    if unit is None or first[10] not in " T":
        return None
    text = cells.tolist()
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            t = np.array(text, dtype=f"datetime64[{unit}]")
    except (ValueError, TypeError, Warning):
        return None
    back = np.datetime_as_string(t, unit=unit).tolist()
    if first[10] == " ":
        back = [b.replace("T", " ", 1) for b in back]
    if back != text:
        return None
    if not ((t >= _NS_RANGE[0]) & (t < _NS_RANGE[1])).all():
        return None
    return t.astype("datetime64[ns]")


#: 'YYYY-MM-DD HH:MM[:SS]' (or with 'T'), one per line
_PLAIN_ISO_LINES = re.compile(r"\d{4}-\d{2}-\d{2}[ T]\d{2}:\d{2}(?::\d{2})?(?:\n\d{4}-\d{2}-\d{2}[ T]\d{2}:\d{2}(?::\d{2})?)*")


def _plain_iso(st: pd.Series) -> bool:
    """All cells are plain ISO 8601 date-times without offset, spaces around them or blanks."""
    try:
        joined = "\n".join(st.tolist())
    except TypeError:
        return False
    return joined.count("\n") == len(st) - 1 and _PLAIN_ISO_LINES.fullmatch(joined) is not None


def _strings(st_raw: pd.Series, where, what, fmt=None):
    """Text cells → (naive or UTC datetime64[ns], bad, is_utc)."""
    st = st_raw.str.strip().str.replace(r"\s+", " ", regex=True)
    n = len(st)
    out = np.full(n, np.datetime64("NaT"), dtype="datetime64[ns]")
    bad = np.zeros(n, bool)
    is_utc = False
    empty = st.str.lower().isin(["", "-", "n/a", "na", "null", "none"]).to_numpy()
    numeric = st.str.fullmatch(r"\d{5}(?:[.,]\d+)?").fillna(False).to_numpy()
    if numeric.any():
        v = st[numeric].str.replace(",", ".").astype(float).to_numpy()
        out[numeric] = (_EPOCH_1900.to_datetime64()
                        + pd.to_timedelta(np.round(v * 86400.0) * 1e9, unit="ns").to_numpy())
    rest = ~empty & ~numeric
    if rest.any():
        txt = st[rest]
        if fmt is None:
            fmt, _ = _pick_format(txt, _DATETIME_FORMATS + _DATE_FORMATS, where, what)
        if fmt == "ISO8601":
            off = txt.str.contains(_OFFSET).to_numpy()
            vals = np.full(len(txt), np.datetime64("NaT"), dtype="datetime64[ns]")
            if off.any():
                u = pd.to_datetime(txt[off], format="ISO8601", utc=True, errors="coerce")
                vals[off] = u.dt.tz_localize(None).to_numpy("datetime64[ns]")
                is_utc = True
            if (~off).any():
                if off.any():
                    raise InputError(f"the {what} column mixes times with and without a UTC offset", **where,
                                     hint="write every time with its offset, or none of them")
                vals[~off] = pd.to_datetime(txt[~off], format="ISO8601", errors="coerce").to_numpy("datetime64[ns]")
        else:
            vals = pd.to_datetime(txt, format=fmt, errors="coerce").to_numpy("datetime64[ns]")
        out[rest] = vals
        bad[rest] = np.isnat(vals)
    return out, bad, is_utc


def parse_clock(values, where: dict):
    """Time-of-day cells → (timedelta64[ns] since midnight, bad). '24:00' is one day."""
    s = pd.Series(np.asarray(values, dtype=object))
    n = len(s)
    out = np.full(n, np.timedelta64("NaT"), dtype="timedelta64[ns]")
    bad = np.zeros(n, bool)
    kinds = _types(s)
    m = kinds == "c"
    if m.any():
        out[m] = pd.to_timedelta(s[m].map(lambda t: t.hour * 3600 + t.minute * 60 + t.second
                                          + t.microsecond / 1e6), unit="s").to_numpy()
    m = kinds == "e"
    if m.any():
        out[m] = pd.to_timedelta(s[m]).to_numpy()
    m = kinds == "t"
    if m.any():
        ts = pd.to_datetime(s[m])
        out[m] = (ts - ts.dt.normalize()).to_numpy()
    m = kinds == "n"
    if m.any():
        v = s[m].astype(float).to_numpy()
        ok = (v >= 0) & (v <= 1.0)
        out[m] = pd.to_timedelta(np.where(ok, np.round(v * 86400.0), np.nan), unit="s").to_numpy()
        bad[np.flatnonzero(m)[~ok]] = True
    m = kinds == "s"
    if m.any():
        st = s[m].str.strip().str.upper()
        idx = np.flatnonzero(m)
        empty = st.isin(["", "-", "N/A", "NA"]).to_numpy()
        hhmm = st.str.fullmatch(r"\d{1,2}:\d{2}(?::\d{2})?").fillna(False).to_numpy()
        vals = np.full(len(st), np.timedelta64("NaT"), dtype="timedelta64[ns]")
        if hhmm.any():
            t = st[hhmm].where(st[hhmm].str.count(":") == 2, st[hhmm] + ":00")
            t = t.str.replace(r"^(\d):", r"0\1:", regex=True)
            vals[hhmm] = pd.to_timedelta(t, errors="coerce").to_numpy()
        ampm = ~hhmm & ~empty
        if ampm.any():
            for f in ("%I:%M %p", "%I:%M:%S %p", "%I %p"):
                p = pd.to_datetime(st[ampm], format=f, errors="coerce")
                got = p.notna().to_numpy()
                if got.any():
                    sub = np.flatnonzero(ampm)[got]
                    vals[sub] = (p[got] - p[got].dt.normalize()).to_numpy()
        out[idx] = vals
        bad[idx] = ~empty & np.isnat(vals)
    bad |= (kinds == "x") | (kinds == "b") | (kinds == "d")
    over = ~np.isnat(out) & (out > np.timedelta64(86400, "s"))
    out[over] = np.timedelta64("NaT")
    bad |= over
    return out, bad


def parse_dates(values, where: dict):
    """Date cells → (datetime64[ns] at midnight, bad)."""
    t, bad, _ = parse_datetimes(values, where, what="date")
    t = t.astype("datetime64[D]").astype("datetime64[ns]")
    return t, bad


def localize(naive: np.ndarray, timezone: str):
    """Naive wall-clock times in ``timezone`` → (UTC datetime64[ns], nonexistent mask, ambiguous mask).

    The repeated hour of the autumn change is resolved by order (first = summer time).
    """
    idx = pd.DatetimeIndex(naive)
    n = len(idx)
    if timezone in ("UTC", "Etc/UTC", "utc"):
        return idx.to_numpy("datetime64[ns]"), np.zeros(n, bool), np.zeros(n, bool)
    a = idx.tz_localize(timezone, ambiguous="NaT", nonexistent="NaT")
    b = idx.tz_localize(timezone, ambiguous=np.ones(n, bool), nonexistent="NaT")
    valid = ~idx.isna()
    nonexistent = valid & b.isna()
    ambiguous = valid & a.isna() & ~b.isna()
    if ambiguous.any():
        key = pd.Series(idx.asi8).where(ambiguous)
        order = key.groupby(key).cumcount().to_numpy()
        dst = np.ones(n, bool)
        dst[ambiguous] = order[ambiguous] == 0
        loc = idx.tz_localize(timezone, ambiguous=dst, nonexistent="NaT")
    else:
        loc = a
    utc = loc.tz_convert("UTC").tz_localize(None).to_numpy("datetime64[ns]")
    return utc, np.asarray(nonexistent), np.asarray(ambiguous)
