"""Several files of one meter joined into the canonical interval frame.

Rows of all files in time order; rows with the same interval end reduced to the first (file order,
then row order; identical copies silently, differing ones flagged ``flag_duplicate`` and listed);
each row's duration from its spacing; the interval volume from an interval-volume column, else
meter-index differences (rollover, meter change), else flow rate × duration. See
:mod:`meterfix.readers.logs` for the rules as the user sees them.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..errors import InputError

#: numeric canonical columns read from a log
NUMERIC = ("pressure_gauge", "pressure_line", "pressure_atm", "temperature_line", "volume_line", "volume_index",
           "flow_rate", "volume_corrected_site", "volume_corrected_site_index", "duration",
           "pressure_differential", "mass", "mass_flow", "speed_of_sound", "pressure_differential_root")
#: flags the reader sets (always present in the frame)
READER_FLAGS = ("flag_unreadable", "flag_missing", "flag_duplicate", "flag_time_backwards", "flag_rollover",
                "flag_meter_change", "flag_negative_delta", "flag_implausible_delta", "flag_negative_volume",
                "flag_volume_mismatch")
#: interval volume against index difference: they disagree when they differ by more than this share
#: plus one unit of the register (the index is read in whole units of its column)
VOLUME_CHECK_REL = 0.005
#: ... and the log is refused when more than this share of the compared rows disagree, or the sums do
#: by more than VOLUME_CHECK_SUM_REL (then one column is not what its header says)
VOLUME_CHECK_REFUSE_SHARE = 0.1
VOLUME_CHECK_SUM_REL = 0.01
#: flow rate x duration against the interval volume: a month sum off by more than this is noted
#: (flow rates are often instantaneous samples, so rows are not compared one by one)
FLOW_CHECK_REL = 0.05
_MAX_RECORDED = 1000
#: which file wins where files overlap with different values (the ``overlap`` setting; default: refused)
OVERLAP_LATER, OVERLAP_EARLIER = "later", "earlier"
OVERLAP_CHOICES = (OVERLAP_LATER, OVERLAP_EARLIER)
#: SI unit of each numeric canonical column (for messages)
_SI_UNITS = {"pressure_gauge": "Pa", "pressure_line": "Pa", "pressure_atm": "Pa", "temperature_line": "K",
             "volume_line": "m3", "volume_index": "m3", "flow_rate": "m3/s", "volume_corrected_site": "m3",
             "volume_corrected_site_index": "m3", "duration": "s"}


def join_parts(parts, tables, meta, interval_label, column_map, register_digits, opening_index=None,
               timezone_given=True, overlap=None):
    """Join the rows of one meter's files: time order, duplicates, durations, volumes → frame.

    ``parts`` are the per-file column dicts of :func:`meterfix.readers.logs._read_part`,
    ``tables`` their RawTables, ``meta`` the LogMetadata being filled. The steps: the files must
    log the same pressure; their rows joined; start labels taken to interval ends; time order
    (first occurrence wins), a changing clock refused when no time zone is given, duplicates;
    each interval's duration; the interval volume from the interval volume, the meter index or
    the flow rate; the site's corrected volume from its index; the opening index reading.
    """
    _same_pressure_kind(parts, meta)
    meta.interval_label = parts[0]["label"][0] if len(parts[0]["label"]) else interval_label
    df = _rows_of_all_files(parts, meta)
    nominal = _interval_ends(df, meta)
    order = np.lexsort((df["source_row"], df["source_file"], df["time"]))
    if (np.diff(order) != 1).any():
        df = {c: v[order] for c, v in df.items()}
    if not timezone_given:
        _refuse_clock_change(df, meta)
    df = _dedupe(df, meta, overlap)
    t = df["time"]
    n = len(t)
    dur = _durations(df, nominal)
    df["duration"] = dur
    for f in ("flag_rollover", "flag_meter_change", "flag_negative_delta", "flag_implausible_delta", "flag_duplicate",
              "flag_negative_volume", "flag_volume_mismatch"):
        if f not in df:
            df[f] = np.zeros(n, bool)
    vol = np.asarray(df["volume_line"], dtype=float) if "volume_line" in df else np.full(n, np.nan)
    sources = []
    if "volume_line" in df:
        sources.append("interval volume")
    drop_first = False
    idx_used = np.zeros(n, bool)
    if "volume_index" in df and (~pd.isna(df["volume_index"])).any():
        vol, idx_used, drop_first = _volumes_from_index(df, meta, vol, dur, register_digits, opening_index)
        sources.append("meter index")
    if "flow_rate" in df:
        vol = _volumes_from_flow_rate(df, meta, vol, dur)
        sources.append("flow rate")
    df["flag_negative_volume"] = np.isfinite(vol) & (vol < 0) & ~idx_used
    df["volume_line"] = vol
    meta.volume_from = ", ".join(sources)
    if "volume_corrected_site_index" in df and (~pd.isna(df["volume_corrected_site_index"])).any():
        _site_corrected_from_index(df, dur)
    if drop_first:
        meta.notes.append(f"the first index reading ({meta.opening_index:g} m3 at "
                          f"{pd.Timestamp(int(t[0]), tz='UTC').isoformat()}) opens the log; it is not an interval")
        df = {c: v[1:] for c, v in df.items()}
    if not len(df["time"]):
        raise InputError("the log has no interval (an index log needs at least two readings)",
                         file=meta.sources[0]["file"], hint="export a longer period")
    return _finish(df, meta), meta


def _same_pressure_kind(parts, meta) -> None:
    """Refuse files of which some log gauge pressure and some absolute pressure."""
    kinds = {("pressure_gauge" if "pressure_gauge" in p else "pressure_line") for p in parts}
    if len(kinds) > 1:
        names = [s["file"] for s in meta.sources]
        raise InputError("the files disagree: some log gauge pressure, some absolute pressure", file=", ".join(names),
                         hint="map the pressure columns so that all files read the same quantity")


def _rows_of_all_files(parts, meta) -> dict:
    """The rows of all files as columns (name → array); columns a file lacks are NaN in its rows
    (pandas' rules for the joined dtypes). Refused when no row has a readable time."""
    if len(parts) == 1:
        df = dict(parts[0])
    else:
        joined = pd.concat([pd.DataFrame(p) for p in parts], ignore_index=True, sort=False)
        df = {c: joined[c].to_numpy() for c in joined.columns}
    if not len(df["time"]):
        raise InputError("no row of the log has a readable time", file=", ".join(s["file"] for s in meta.sources),
                         hint="check the time column: see metadata.dropped_rows")
    return df


def _interval_ends(df: dict, meta) -> float:
    """The nominal interval [s] (median positive spacing of the stamps, else of the durations
    given), and every start-labelled row taken to its interval's end: its own duration, else the
    forward spacing within its file (in time order). Index readings are instants and stay.
    Sets df['time'] [ns since epoch, int64] and df['duration'] [s]; refused with a single row."""
    t = df["time"].astype("datetime64[ns]").astype(np.int64)
    is_index = ~pd.isna(df["volume_index"]) if "volume_index" in df else np.zeros(len(t), bool)
    if "volume_line" in df:
        is_index &= pd.isna(df["volume_line"])
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
    return nominal


def _durations(df: dict, nominal: float) -> np.ndarray:
    """Each row's interval duration [s]: its own when given and positive, else the backward spacing
    to the previous row (nominal [s] where that is not an interval; an index reading covers none)."""
    own = np.asarray(df["duration"], dtype=float)
    covers = np.zeros(len(df["time"]), bool)
    if "volume_index" in df:
        covers = ~pd.isna(df["volume_index"])
        if "volume_line" in df:
            covers &= pd.isna(df["volume_line"])
    d = _spacing_durations(df["time"], nominal, covers, backward=True, local=True)
    return np.where(np.isfinite(own) & (own > 0), own, d)


def _volumes_from_index(df: dict, meta, vol, dur, register_digits, opening_index):
    """Interval volumes [m3] from the meter index where no interval volume is given: deltas of the
    readings (rollover, meter change, negative and implausible deltas flagged), cross-checked
    against the interval volumes; the register capacity [m3]; the opening index (given [m3], else
    the first reading, whose row is then dropped). Returns (vol, rows from the index, drop_first)."""
    reading = np.asarray(df["volume_index"], dtype=float)
    delta, ro, ch, ng, imp, cap = _index_deltas(reading, _filled(df["volume_index_scale"], 1.0), dur,
                                                register_digits)
    if "volume_line" in df:
        vol = _cross_check_index(vol, delta, _filled(df["volume_index_scale"], 1.0), ro | ch, df, meta)
    use = ~np.isfinite(vol) & ~np.isnan(reading) & ~np.asarray(df["flag_volume_mismatch"], dtype=bool)
    vol = np.where(use, delta, vol)
    for f, m in (("flag_rollover", ro), ("flag_meter_change", ch), ("flag_negative_delta", ng),
                 ("flag_implausible_delta", imp)):
        df[f] = np.asarray(df[f], dtype=bool) | (m & use)
    meta.register_capacity = float(np.nanmax(cap)) if np.isfinite(cap).any() else None
    drop_first = False
    first = int(np.flatnonzero(~np.isnan(reading))[0])
    if first == 0 and ("volume_line" not in df or not np.isfinite(df["volume_line"][0])):
        if opening_index is not None:
            if reading[0] < opening_index:
                raise InputError(f"the opening index {opening_index:g} m3 is above the first reading "
                                 f"{reading[0]:g} m3", file=meta.sources[0]["file"],
                                 hint="give the reading at the start of the first logged interval, in m3 "
                                      "or with its unit, e.g. --opening-index '123456 ft3'")
            vol[0] = reading[0] - opening_index
            meta.opening_index = float(opening_index)
            meta.notes.append(f"opening index {opening_index:g} m3 given: the first reading "
                              f"({reading[0]:g} m3) closes the first interval")
        else:
            meta.opening_index = float(reading[0])
            drop_first = True
    return vol, use, drop_first


def _volumes_from_flow_rate(df: dict, meta, vol, dur) -> np.ndarray:
    """Interval volumes [m3] from flow rate [m3/s] x duration [s] where none is known yet; a month
    sum off the interval volumes by more than FLOW_CHECK_REL is noted (the volumes are used)."""
    fr = np.asarray(df["flow_rate"], dtype=float)
    fv = fr * dur
    both = np.isfinite(vol) & np.isfinite(fv)
    if both.sum() >= 3 and abs(np.sum(vol[both])) > 0:
        off = np.sum(fv[both]) / np.sum(vol[both]) - 1.0
        if abs(off) > FLOW_CHECK_REL:
            meta.notes.append(f"flow rate x duration differs from the interval volumes by {100 * off:+.1f} % "
                              f"over {int(both.sum())} intervals (more than {100 * FLOW_CHECK_REL:g} %); the "
                              "interval volumes are used: check the flow-rate column's unit")
    return np.where(np.isfinite(vol), vol, fv)


def _site_corrected_from_index(df: dict, dur) -> None:
    """The site corrector's corrected volume [m3] from its index where no interval value is given."""
    n = len(df["time"])
    delta, ro, ch, ng, imp, _ = _index_deltas(np.asarray(df["volume_corrected_site_index"], dtype=float),
                                              _filled(df["volume_corrected_site_index_scale"], 1.0),
                                              dur, None)
    site = np.asarray(df["volume_corrected_site"], dtype=float) if "volume_corrected_site" in df else np.full(n, np.nan)
    df["volume_corrected_site"] = np.where(np.isfinite(site), site, delta)


def _refuse_clock_change(df: dict, meta) -> None:
    """No time zone given, and the local clock stamps repeat an hour (with other values) or skip
    one on a Sunday night of a clock-change season: the log was kept on a clock that changes."""
    local = np.asarray(df.get("local_clock", np.ones(len(df["time"]), bool)), dtype=bool)
    t = np.asarray(df["time"], dtype=np.int64)
    if len(t) < 2 or not local.any():
        return
    files = [s["file"] for s in meta.sources]
    hint = ("give the time zone of the log's clock with --timezone (e.g. 'Europe/Berlin', 'America/Chicago'); "
            "if the clock really is UTC, give --timezone UTC")
    same = np.flatnonzero(t[1:] == t[:-1]) + 1
    if len(same):
        cols = _value_columns(df)
        for i in same:
            a = np.array([df[c][i - 1] for c in cols], dtype=float)
            b = np.array([df[c][i] for c in cols], dtype=float)
            stamp = pd.Timestamp(int(t[i]))
            if not _clock_change_night(stamp):
                continue
            if not np.all((a == b) | (np.isnan(a) & np.isnan(b))):
                when = stamp.strftime("%Y-%m-%d %H:%M")
                raise InputError(f"the local time {when} appears twice with different values (rows "
                                 f"{df['source_row'][i - 1]} and {df['source_row'][i]}), as a clock going back "
                                 "from summer to winter time repeats an hour, and no time zone is given",
                                 file=files[int(df["source_file"][i])], row=int(df["source_row"][i]), hint=hint)
    sp = np.diff(t)
    if not len(sp):
        return
    nominal = float(np.median(sp))
    if nominal > 3600e9:
        return
    hole = np.flatnonzero(np.abs(sp - nominal - 3600e9) <= 1e9) + 1
    for i in hole:
        missing = pd.Timestamp(int(t[i - 1]) + int(nominal))
        if _clock_change_night(missing):
            raise InputError(f"one hour is missing at {missing.strftime('%Y-%m-%d %H:%M')} (a Sunday night), as a "
                             "clock going forward to summer time skips an hour, and no time zone is given",
                             file=files[int(df["source_file"][i])], row=int(df["source_row"][i]), hint=hint)


def _clock_change_night(stamp: pd.Timestamp) -> bool:
    """A wall-clock time at which clocks commonly change: a Sunday, 00:00-04:59, in March, April,
    September, October or November (the months of the northern and southern changes; common
    practice, IANA tz database rules)."""
    return stamp.day_of_week == 6 and stamp.month in (3, 4, 9, 10, 11) and stamp.hour <= 4


def _cross_check_index(vol, delta, scale, unusable, df, meta):
    """Interval volume against index difference, row by row (see VOLUME_CHECK_*).

    Returns the interval volumes with the disagreeing ones unknown (NaN, flagged
    ``flag_volume_mismatch``); raises InputError when the two columns disagree throughout."""
    both = np.isfinite(vol) & np.isfinite(delta) & ~unusable
    if not both.any():
        return vol
    tol = VOLUME_CHECK_REL * np.abs(delta) + scale
    bad = both & (np.abs(vol - delta) > tol)
    m = int(both.sum())
    agree = both & ~bad
    sv, sd = float(np.sum(vol[agree])), float(np.sum(delta[agree]))
    first = meta.sources[0]["file"]
    heads = meta.columns.get(first, {})
    hv, hi = heads.get("volume_line", "interval volume"), heads.get("volume_index", "meter index")
    if m >= 3 and (bad.sum() > VOLUME_CHECK_REFUSE_SHARE * m or abs(sv - sd) > VOLUME_CHECK_SUM_REL * abs(sd)):
        raise InputError(f"the interval volumes in '{hv}' and the differences of '{hi}' disagree: "
                         f"{float(np.sum(vol[both])):.6g} against {float(np.sum(delta[both])):.6g} m3 over {m} intervals (ratio {float(np.sum(vol[both])) / float(np.sum(delta[both])) if sd else float('nan'):.4g}; "
                         f"{int(bad.sum())} rows differ by more than {100 * VOLUME_CHECK_REL:g} % + one register unit), "
                         "so one of them is not what its header says", file=first, column=hv,
                         hint=f"check both columns' units; to use one, leave the other out: --column '{hi}=ignore' "
                              f"(the interval volumes) or --column '{hv}=ignore' (the index)")
    if bad.any():
        df["flag_volume_mismatch"] = np.asarray(df["flag_volume_mismatch"], dtype=bool) | bad
        files = [s["file"] for s in meta.sources]
        for i in np.flatnonzero(bad)[:_MAX_RECORDED]:
            meta.notes.append(f"{files[int(df['source_file'][i])]} row {int(df['source_row'][i])}: interval volume "
                              f"{vol[i]:.6g} m3 against index difference {delta[i]:.6g} m3 ('{hv}' vs '{hi}'): "
                              "the interval is left without a volume")
        vol = np.where(bad, np.nan, vol)
    return vol


def _filled(values, fill: float) -> np.ndarray:
    """Float values with the missing ones (NaN) replaced."""
    return np.where(pd.isna(values), fill, values).astype(float)


def _value_columns(df):
    return [c for c in NUMERIC if c in df]


def _dedupe(df: dict, meta, overlap=None) -> dict:
    """Rows with the same interval end reduced to one.

    Identical copies are dropped silently (counted). Differing rows of one file: the first is kept,
    flagged ``flag_duplicate`` and listed. Differing rows of *different files* (a re-export with
    corrected values) are refused unless ``overlap`` says which file wins: ``'later'`` or
    ``'earlier'`` by the order the files were given; the choice is noted, the kept row flagged
    ``flag_duplicate`` and each replaced row listed.
    """
    t = np.asarray(df["time"], dtype=np.int64)
    n = len(t)
    dup = np.concatenate([[False], t[1:] == t[:-1]])
    df["flag_duplicate"] = np.zeros(n, bool)
    if not dup.any():
        return df
    if overlap == OVERLAP_LATER:
        # within each interval end, the later file's row first (then row order)
        order = np.lexsort((df["source_row"], -np.asarray(df["source_file"], dtype=np.int64), t))
        df = {c: v[order] for c, v in df.items()}
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
    src = np.asarray(df["source_file"])
    across = differs & (src != src[first_pos])
    files = [s["file"] for s in meta.sources]
    if across.any():
        i = int(np.flatnonzero(across)[0])
        j = int(first_pos[i])
        a, b = sorted((i, j), key=lambda k: int(src[k]))
        c0 = diff_cols[i][0] if diff_cols[i] else cols[0]
        va, vb = float(df[c0][a]), float(df[c0][b])
        if overlap is None:
            raise InputError(
                f"the files overlap with different values in {int(across.sum())} interval(s): first "
                f"{files[src[a]]} row {df['source_row'][a]} and {files[src[b]]} row {df['source_row'][b]}, both the "
                f"interval ending {pd.Timestamp(int(t[i]), tz='UTC').isoformat()} ({c0} {va:.9g} vs {vb:.9g} "
                f"{_SI_UNITS.get(c0, '(SI)')})",
                file=files[src[a]], row=int(df["source_row"][a]),
                hint="say which export wins: --overlap later keeps the later file's rows (a re-export with "
                     "corrected values), --overlap earlier the earlier file's (by the order the files are given)")
        meta.notes.append(f"the files overlap with different values in {int(across.sum())} interval(s): the "
                          f"{overlap} file's rows kept (--overlap {overlap}), the others listed as differing duplicates")
    kept_flag = np.zeros(n, bool)
    kept_flag[first_pos[differs]] = True
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


def _finish(df: dict, meta) -> pd.DataFrame:
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
    for c in ("volume_corrected_site", "flow_rate", "volume_index", "pressure_differential", "mass", "mass_flow",
              "speed_of_sound", "pressure_differential_root"):
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


def local_intervals(t_ns: np.ndarray, nominal: float) -> np.ndarray:
    """The log's own interval around each row [s]: the larger of the medians of the (up to) three
    spacings before and the three after the row's own spacing (``nominal`` where there are none).

    A log may change its interval (5-minute rows, then hourly): a row's spacing is a gap only
    when it is more than 1.5 times this local interval, not the month's median spacing.
    """
    n = len(t_ns)
    if n < 2:
        return np.full(n, nominal)
    sp = np.concatenate([[np.nan], np.diff(t_ns) / 1e9])
    s = pd.Series(sp)
    before = s.shift(1).rolling(3, min_periods=1).median().to_numpy()
    after = s[::-1].shift(1).rolling(3, min_periods=1).median().to_numpy()[::-1]
    loc = np.fmax(before, after)
    return np.where(np.isfinite(loc) & (loc > 0), loc, nominal)


def _spacing_durations(t_ns: np.ndarray, nominal: float, covers_span: np.ndarray, backward: bool,
                       local: bool = False) -> np.ndarray:
    """Duration of each row [s] from its spacing to the previous (or next) row.

    A spacing longer than 1.5 intervals is a gap (its row takes one interval) unless the row
    covers the whole span (an index difference); with ``local`` the interval is the log's own
    around the row (:func:`local_intervals`), else ``nominal``.
    """
    n = len(t_ns)
    d = np.full(n, nominal)
    if n > 1:
        gaps = np.diff(t_ns) / 1e9
        if backward:
            sp = np.concatenate([[np.nan], gaps])
        else:
            sp = np.concatenate([gaps, [np.nan]])
        ref = local_intervals(t_ns, nominal) if local and backward else np.full(n, nominal)
        long = sp > 1.5 * ref
        use = np.isfinite(sp) & (~long | covers_span)
        d = np.where(use, sp, ref)
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
