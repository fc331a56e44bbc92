"""Data quality of a canonical log: per-row flags, optional substitution, and the edit record.

Flags (boolean ``flag_*`` columns; the reader's own flags are kept)
-------------------------------------------------------------------
=========================== ==================================================================
``flag_gap``                a missing interval. Where the row after a gap holds one interval
                            (interval-volume and flow-rate logs) the missing intervals are
                            *inserted* as rows with no values (NaN) and a duration of one
                            nominal interval, so that every hour of the month is present, the
                            gas-day hours add up and substitution has a row to fill; the row after
                            the gap carries the count in ``gap_intervals``. Where the row after
                            the gap covers the whole gap (a meter-index difference: its volume is
                            measured, only the readings in between are missing) nothing is
                            inserted and that row is flagged with the count. Inserted rows carry
                            no volume unless substituted, so the engine's totals count only what
                            was logged (plus what was estimated, flagged ``flag_estimated``).
``flag_duplicate``          (reader) two rows for one interval with different values
``flag_time_backwards``     (reader) a row earlier than a row above it in its file
``flag_pressure_range``     pressure outside the plausible limits (``QualityLimits``)
``flag_temperature_range``  temperature outside the plausible limits
``flag_stuck``              pressure or temperature unchanged for ``stuck_intervals`` or more
                            intervals while gas flows (the whole unchanged run is flagged)
``flag_spike``              pressure, temperature or volume with a robust z-score above
                            ``spike_z``: the residual r from the median of the neighbouring
                            values (``spike_window`` // 2 on each side, the point itself left
                            out), scaled by the median absolute deviation of the residuals
                            (modified z-score z = 0.6745 r / MAD, Iglewicz & Hoaglin 1993;
                            threshold 3.5 is their recommendation; white noise flags about
                            0.05 % of rows). Only points with that full neighbourhood in
                            consecutive, evenly spaced rows are tested: not the ends of the log,
                            not the rows beside a gap or break (a one-sided median follows the
                            trend, so smooth data would be flagged there); of the points within
                            ``spike_window`` // 2 rows only the largest z is flagged; a residual
                            of at most two steps of the reading's resolution (a value written to
                            0.1 degF moves in whole steps) is never a spike
``flag_flow_zero_pressure`` volume through the meter while the pressure reads zero
``flag_rollover``, ``flag_meter_change``, ``flag_negative_delta``, ``flag_implausible_delta``,
``flag_unreadable``, ``flag_missing``   (reader)
``flag_estimated``          a value of the row was substituted
=========================== ==================================================================

Substitution
------------
Policies ``none``, ``interpolate`` (linear in time between the valid neighbours; volumes as
rates), ``hold`` (last valid value; volumes as rates), ``profile`` (the median of the same clock
time of day over the other days of the log; volumes as rates). Values filled: pressure,
temperature and interval volume that are missing (empty, unreadable, inserted gap rows, unknown
after a meter change) or, for pressure and temperature, outside the plausible limits (and a
pressure reading zero while gas flows). Only runs
of at most ``max_gap_intervals`` consecutive bad values are filled; longer runs stay NaN
(and flagged) because an estimate across them would be a guess. Spikes and stuck values are
flagged for review, not replaced. Raw values are never overwritten: each filled column keeps its
original in ``<column>_raw``, and every filled value is one row of the edit record (time, what,
original, new, method, reason), values in SI (Pa, K, m3).
Substituted volumes are estimates: where they feed billing, the contract's provisions for
estimated readings apply.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass

import numpy as np
import pandas as pd

from ..errors import SettingsError

POLICIES = ("none", "interpolate", "hold", "profile")
QUALITY_FLAGS = ("flag_gap", "flag_duplicate", "flag_time_backwards", "flag_pressure_range",
                 "flag_temperature_range", "flag_stuck", "flag_spike", "flag_flow_zero_pressure", "flag_rollover",
                 "flag_meter_change", "flag_negative_delta", "flag_implausible_delta", "flag_unreadable",
                 "flag_missing", "flag_negative_volume", "flag_volume_mismatch", "flag_estimated")
EDIT_COLUMNS = ["time", "what", "original", "new", "method", "reason"]


@dataclass(frozen=True)
class QualityLimits:
    """Plausibility limits and detector settings (common practice values, change per site).

    Attributes
    ----------
    pressure_line : (float, float) [Pa]      absolute pressure limits
    pressure_gauge : (float, float) [Pa]     gauge pressure limits
    temperature : (float, float) [K]         gas temperature limits (-40 degC to 70 degC)
    stuck_intervals : int                    unchanged this many intervals while flowing → stuck
    spike_z : float [-]                      modified z-score threshold
    spike_window : int                       neighbourhood of the median (intervals, odd)
    zero_pressure_gauge : float [Pa]         gauge pressure at or below this reads as zero
    zero_pressure_line : float [Pa]          absolute pressure at or below this reads as zero
    """

    pressure_line: tuple = (50e3, 20e6)
    pressure_gauge: tuple = (-50e3, 20e6)
    temperature: tuple = (233.15, 343.15)
    stuck_intervals: int = 12
    spike_z: float = 3.5
    spike_window: int = 5
    zero_pressure_gauge: float = 1e3
    zero_pressure_line: float = 10e3


def _nominal(frame: pd.DataFrame, attrs: dict) -> float:
    nom = attrs.get("nominal_interval_s")
    if nom is not None and np.isfinite(nom) and nom > 0:
        return float(nom)
    t = frame.index.asi8
    d = np.diff(t) / 1e9
    d = d[d > 0]
    if len(d):
        return float(np.median(d))
    dur = frame["duration"].to_numpy(float) if "duration" in frame else np.array([np.nan])
    return float(np.nanmedian(dur)) if np.isfinite(dur).any() else 3600.0


#: a gap longer than this many intervals or this many seconds is a break in the log: reported
#: (``flag_gap`` on the row after it, ``quality.breaks`` in the frame's attrs), no rows inserted
MAX_GAP_INSERT_INTERVALS = 10_000
MAX_GAP_INSERT_SECONDS = 7 * 86_400.0


def _insert_gaps(df: pd.DataFrame, nominal: float):
    """Insert missing intervals.

    The interval around each row is the log's own there (:func:`meterfix.readers.join.local_intervals`),
    so that a log changing from 5-minute to hourly rows has no false gaps. A gap longer than
    MAX_GAP_INSERT_INTERVALS intervals or MAX_GAP_INSERT_SECONDS is a break: flagged, not filled.

    Returns (frame, inserted, gap_intervals, flag_gap, breaks): the frame with the inserted rows,
    and per row of it whether it was inserted, the count of missing intervals before it and its
    gap flag; and the breaks as a list of dicts (from, to [UTC ISO], seconds, intervals).
    """
    from ..readers.join import local_intervals

    t = df.index.asi8
    n = len(df)
    gap_n = np.zeros(n, np.int64)
    if n < 2:
        return df, np.zeros(n, bool), gap_n, np.zeros(n, bool), []
    loc = local_intervals(t, nominal)
    sp = np.concatenate([[0.0], np.diff(t) / 1e9])
    k = np.maximum(np.round(sp / loc).astype(np.int64) - 1, 0)
    k[sp <= 1.5 * loc] = 0
    k[0] = 0
    dur = df["duration"].to_numpy(float)
    covers = np.isfinite(dur) & (dur > 1.5 * loc)
    gap_n[:] = k
    brk = (k > 0) & ~covers & ((k > MAX_GAP_INSERT_INTERVALS) | (sp > MAX_GAP_INSERT_SECONDS))
    breaks = [{"from": df.index[i - 1].isoformat(), "to": df.index[i].isoformat(), "seconds": float(sp[i]),
               "intervals": int(k[i])} for i in np.flatnonzero(brk)[:1000]]
    flag = (k > 0) & (covers | brk)
    ins = (k > 0) & ~covers & ~brk
    if not ins.any():
        return df, np.zeros(n, bool), gap_n, flag, breaks
    df = df.copy()
    df["_inserted"] = False
    df["_gap_intervals"] = gap_n
    df["_flag_gap"] = flag
    pos = np.flatnonzero(ins)
    counts = k[pos]
    total = int(counts.sum())
    prev_t = np.repeat(t[pos - 1], counts)
    step = np.arange(total) - np.repeat(np.cumsum(counts) - counts, counts) + 1
    # the missing intervals share the gap evenly (k + 1 equal steps, each about one local interval)
    width = np.repeat(sp[pos] / (counts + 1), counts)
    new_t = prev_t + np.round(step * width * 1e9).astype(np.int64)
    add = pd.DataFrame(index=pd.DatetimeIndex(pd.to_datetime(new_t, unit="ns", utc=True), name=df.index.name))
    for c in df.columns:
        col = df[c]
        if c.startswith("flag_"):
            add[c] = False
        elif c == "duration":
            add[c] = width
        elif c in ("gap_intervals", "_gap_intervals"):
            add[c] = 0
        elif c in ("_inserted", "_flag_gap"):
            add[c] = True
        elif c in ("source_file", "source_row"):
            add[c] = -1
        elif col.dtype == object:
            add[c] = ""
        else:
            add[c] = np.nan
    out = pd.concat([df, add]).sort_index(kind="stable")
    for c in ("source_file", "source_row", "gap_intervals"):
        if c in out:
            out[c] = out[c].astype(np.int64)
    for c in out.columns:
        if c.startswith("flag_"):
            out[c] = out[c].astype(bool)
    out.attrs = dict(df.attrs)
    inserted = out.pop("_inserted").to_numpy(bool)
    gap_n = out.pop("_gap_intervals").to_numpy(np.int64)
    flag = out.pop("_flag_gap").to_numpy(bool)
    return out, inserted, gap_n, flag, breaks


def _runs(mask: np.ndarray):
    """(run id, run length) of each True element's run of consecutive Trues (0 elsewhere)."""
    m = mask.astype(np.int8)
    starts = np.diff(np.concatenate([[0], m])) == 1
    rid = np.cumsum(starts) * mask
    length = np.bincount(rid)[rid] * mask if len(rid) else rid
    return rid, length


def _stuck(x: np.ndarray, flowing: np.ndarray, n_min: int) -> np.ndarray:
    finite = np.isfinite(x)
    same_prev = np.concatenate([[False], (x[1:] == x[:-1]) & finite[1:] & finite[:-1]])
    new_run = ~same_prev
    rid = np.cumsum(new_run)
    flow_count = np.bincount(rid, weights=flowing.astype(float))
    size = np.bincount(rid)
    bad_run = (flow_count >= n_min) & (size >= n_min)
    return bad_run[rid] & finite


def _neighbour_median(x: np.ndarray, half: int) -> np.ndarray:
    """Median of the ``half`` values before and after each point, the point itself excluded."""
    n = len(x)
    cols = []
    for k in range(1, half + 1):
        a = np.full(n, np.nan)
        a[k:] = x[:-k]
        b = np.full(n, np.nan)
        b[:-k] = x[k:]
        cols += [a, b]
    st = np.column_stack(cols)
    full = np.isfinite(st).all(axis=1)
    srt = np.sort(st[full], axis=1)
    m = 2 * half
    med = np.full(n, np.nan)
    med[full] = 0.5 * (srt[:, m // 2 - 1] + srt[:, m // 2])
    part = ~full & np.isfinite(st).any(axis=1)
    if part.any():
        # median of the values present (NaN left out), as np.nanmedian: the mean of the two middle
        # values of the sorted row (the middle one twice for an odd count)
        rows = np.sort(st[part], axis=1)  # NaN sort last
        present = np.count_nonzero(~np.isnan(rows), axis=1)
        r = np.arange(len(rows))
        med[part] = (rows[r, (present - 1) // 2] + rows[r, present // 2]) / 2.0
    return med


def _testable(x: np.ndarray, half: int, t_ns: np.ndarray | None) -> np.ndarray:
    """Points the spike rule can judge: ``half`` values on each side in consecutive rows, all
    present, and (with times) the window's spacings within a factor of 1.5 of each other."""
    n = len(x)
    ok = np.isfinite(x)
    fin = ok.copy()
    for k in range(1, half + 1):
        ok[k:] &= fin[:-k]
        ok[:-k] &= fin[k:]
        ok[:k] = False
        ok[n - k:] = False
    if t_ns is not None and n > 2 * half:
        sp = np.diff(np.asarray(t_ns, dtype=np.int64)).astype(float)
        m = len(sp) - 2 * half + 1  # windows of the 2*half spacings around point i = j + half
        lo = sp[:m].copy()
        hi = sp[:m].copy()
        for k in range(1, 2 * half):
            np.minimum(lo, sp[k:k + m], out=lo)
            np.maximum(hi, sp[k:k + m], out=hi)
        reg = np.zeros(n, bool)
        reg[half:half + m] = (lo > 0) & (hi <= 1.5 * lo)
        ok &= reg
    return ok


def _resolution(x: np.ndarray) -> float:
    """The step a reading is written in: the median spacing of its distinct finite values (the
    quantum of a rounded reading; for a reading with all its digits, a tiny fraction of its range)."""
    v = np.unique(x[np.isfinite(x)])
    d = np.diff(v)
    return float(np.median(d)) if len(d) else 0.0


def _spikes(x: np.ndarray, window: int, z_max: float, t_ns: np.ndarray | None = None) -> np.ndarray:
    """The spike rule (``flag_spike``).

    A point is tested only where it has ``window // 2`` values on each side in consecutive rows, all
    present, with spacings that agree within a factor of 1.5: not the first or last rows of the log,
    not the rows beside a gap (missing or inserted rows) or a break. There a one-sided
    neighbourhood follows the trend rather than the point, so a smooth log would be flagged at its
    ends; a spike at an end or beside a gap is not flagged. A tested point's residual r is its
    distance from the median of its neighbours (itself left out); it is a spike when the modified
    z-score 0.6745 r / MAD exceeds ``z_max`` (MAD: median |r| over the tested points; Iglewicz &
    Hoaglin 1993, threshold 3.5 their recommendation) and is the largest |z| within ``window // 2``
    rows on either side (a spike moves its neighbours' medians too: only the spike is flagged; of
    two spikes that close, the larger). A reading written with few digits (0.1 degF, a whole kPa)
    moves in whole steps on a smooth log, and its residuals are 0 or one step, so its MAD says
    nothing: a residual of at most two steps of the reading's resolution (the median spacing of its
    distinct values) is never a spike.
    """
    half = max(1, window // 2)
    if np.isfinite(x).sum() < max(window, 5):
        return np.zeros(len(x), bool)
    ok = _testable(x, half, t_ns)
    if not ok.any():
        return np.zeros(len(x), bool)
    r = np.where(ok, x - _neighbour_median(x, half), np.nan)
    a = np.abs(r[ok])
    mad = float(np.median(a)) if len(a) else 0.0
    if mad > 0:
        z = 0.6745 * r / mad
    else:
        mean_ad = float(np.mean(a)) if len(a) else 0.0
        if mean_ad == 0:
            return np.zeros(len(x), bool)
        z = r / (1.253314 * mean_ad)
    az = np.where(ok & np.isfinite(z), np.abs(z), 0.0)
    az[np.abs(np.nan_to_num(r)) <= 2.0 * _resolution(x)] = 0.0
    # a spike also moves the medians of its neighbours: of the points within one half-window only
    # the largest |z| is flagged
    peak = az > 0
    for k in range(1, half + 1):
        peak[k:] &= az[k:] >= az[:-k]
        peak[:-k] &= az[:-k] > az[k:]
    return peak & (az > z_max)


def apply_quality(frame: pd.DataFrame, *, policy: str = "none", max_gap_intervals: int = 3,
                  limits: QualityLimits | None = None, timezone: str | None = None, bidirectional: bool = False):
    """Flag every row of a canonical log and optionally substitute short runs of bad values.

    Parameters
    ----------
    frame : DataFrame           canonical log from meterfix.readers.read_log (not modified)
    policy : {'none', 'interpolate', 'hold', 'profile'}
    max_gap_intervals : int     longest run of bad values filled [intervals]
    limits : QualityLimits      plausibility limits [Pa, K] and detector settings
    timezone : str, optional    IANA zone for the 'profile' time of day (default: the reader's)
    bidirectional : bool        the meter measures both directions: negative interval volumes are
                                reverse flow and count; otherwise they are left out (NaN, raw value
                                in ``volume_line_raw``, one edit row each) and never substituted

    Returns
    -------
    (DataFrame, DataFrame)
        The frame with missing intervals inserted, every ``flag_*`` column of QUALITY_FLAGS,
        ``gap_intervals`` and, where values were filled, ``<column>_raw``; and the edit record
        with columns time (UTC interval end), what, original, new (SI), method, reason.
    """
    if policy not in POLICIES:
        raise SettingsError(f"substitution policy '{policy}' is not one of {', '.join(POLICIES)}")
    if max_gap_intervals < 0:
        raise SettingsError("max_gap_intervals is negative")
    lim = limits or QualityLimits()
    df = frame.copy()
    # the attrs are kept aside meanwhile: pandas deep-copies a frame's attrs into every column
    # taken from it
    attrs = dict(frame.attrs)
    df.attrs = {}
    if isinstance(df.index, pd.DatetimeIndex):
        df.index = df.index.as_unit("ns")
    if not len(df):
        for f in QUALITY_FLAGS:
            if f not in df.columns:
                df[f] = False
        df.attrs = attrs
        return df, pd.DataFrame(columns=EDIT_COLUMNS)
    nominal = _nominal(df, attrs)
    own_duration = "duration" in df
    if not own_duration:
        df["duration"] = nominal
    df, inserted, gap_n, flag_gap, breaks = _insert_gaps(df, nominal)
    n = len(df)
    negative = np.zeros(n, bool)
    edits = []
    if not bidirectional and "flag_negative_volume" in df and df["flag_negative_volume"].any():
        negative = df["flag_negative_volume"].to_numpy(bool)
        raw = df["volume_line"].to_numpy(float)
        df["volume_line_raw"] = raw
        df["volume_line"] = np.where(negative, np.nan, raw)
        idx = np.flatnonzero(negative)
        edits.append(pd.DataFrame({"time": df.index[idx], "what": "volume_line", "original": raw[idx],
                                   "new": np.nan, "method": "left out",
                                   "reason": "negative interval volume (the meter is not declared bidirectional)"}))
    pcol = "pressure_gauge" if "pressure_gauge" in df else ("pressure_line" if "pressure_line" in df else None)
    vol = df["volume_line"].to_numpy(float) if "volume_line" in df else np.full(n, np.nan)
    flowing = np.isfinite(vol) & (vol > 0)
    with np.errstate(invalid="ignore", divide="ignore"):
        rate = vol / df["duration"].to_numpy(float)  # volumes compared as rates: intervals may differ
    temp = df["temperature_line"].to_numpy(float) if "temperature_line" in df else np.full(n, np.nan)
    p = df[pcol].to_numpy(float) if pcol else np.full(n, np.nan)
    plo, phi = lim.pressure_gauge if pcol == "pressure_gauge" else lim.pressure_line
    with np.errstate(invalid="ignore"):
        p_range = np.isfinite(p) & ((p < plo) | (p > phi))
        t_range = np.isfinite(temp) & ((temp < lim.temperature[0]) | (temp > lim.temperature[1]))
        zero = lim.zero_pressure_gauge if pcol == "pressure_gauge" else lim.zero_pressure_line
        zero_p = flowing & np.isfinite(p) & (p <= zero)
    t_ns = df.index.asi8 if isinstance(df.index, pd.DatetimeIndex) else None
    found = {
        "flag_gap": flag_gap,
        "flag_pressure_range": p_range,
        "flag_temperature_range": t_range,
        "flag_stuck": _stuck(p, flowing, lim.stuck_intervals) | _stuck(temp, flowing, lim.stuck_intervals),
        "flag_spike": (_spikes(np.where(p_range, np.nan, p), lim.spike_window, lim.spike_z, t_ns)
                       | _spikes(np.where(t_range, np.nan, temp), lim.spike_window, lim.spike_z, t_ns)
                       | _spikes(rate, lim.spike_window, lim.spike_z, t_ns)),
        "flag_flow_zero_pressure": zero_p,
    }
    # one frame: the log's columns (flags found here replace the log's own), then the quality
    # flags it lacks (False unless found here), the nominal duration where the log has none, and
    # the gap counts
    cols = {c: df[c] for c in df.columns if own_duration or c != "duration"}
    for f in QUALITY_FLAGS:
        if f in found:
            cols[f] = found[f]
        elif f not in cols:
            cols[f] = np.zeros(n, bool)
    if not own_duration:
        cols["duration"] = df["duration"]
    cols["gap_intervals"] = gap_n
    df = pd.DataFrame(cols, index=df.index)
    if policy != "none":
        tz = timezone or attrs.get("timezone") or "UTC"
        dur = df["duration"].to_numpy(float)
        zero_p = df["flag_flow_zero_pressure"].to_numpy(bool)
        for col, bad_extra, as_rate in ((pcol, p_range | zero_p, False), ("temperature_line", t_range, False),
                                        ("volume_line", np.zeros(len(df), bool), True)):
            if col is None or col not in df:
                continue
            x = df[col].to_numpy(float)
            invalid = ~np.isfinite(x) | bad_extra
            if not invalid.any():
                continue
            _, length = _runs(invalid)
            fill = invalid & (length <= max_gap_intervals)
            if not fill.any():
                continue
            y = np.where(invalid, np.nan, x / dur if as_rate else x)
            new = _estimate(y, df.index, policy, tz)
            if as_rate:
                new = new * dur
            fill &= np.isfinite(new) & ~(negative if as_rate else np.zeros(len(x), bool))
            if not fill.any():
                continue
            if col + "_raw" not in df:
                df[col + "_raw"] = x
            df[col] = np.where(fill, new, x)
            df["flag_estimated"] = df["flag_estimated"].to_numpy(bool) | fill
            edits.append(_edit_rows(df, col, fill, x, new, policy, bad_extra, inserted))
    edit = pd.concat(edits, ignore_index=True) if edits else pd.DataFrame(columns=EDIT_COLUMNS)
    if len(edit):
        edit = edit.sort_values(["time", "what"], kind="stable").reset_index(drop=True)
    df.attrs = attrs
    df.attrs["quality"] = {"policy": policy, "max_gap_intervals": int(max_gap_intervals), **asdict(lim),
                           "nominal_interval_s": nominal, "bidirectional": bool(bidirectional), "breaks": breaks}
    return df, edit


def _estimate(y: np.ndarray, index: pd.DatetimeIndex, policy: str, tz: str) -> np.ndarray:
    s = pd.Series(y, index=index.asi8.astype(float))
    if policy == "interpolate":
        return s.interpolate(method="index", limit_area="inside").to_numpy()
    if policy == "hold":
        return s.ffill().to_numpy()
    if policy == "profile":
        local = index.tz_convert(tz)
        key = local.hour * 60 + local.minute
        return pd.Series(y).groupby(np.asarray(key)).transform("median").to_numpy()
    raise SettingsError(f"unknown substitution policy '{policy}'")


def _edit_rows(df, col, fill, original, new, policy, out_of_range, inserted) -> pd.DataFrame:
    idx = np.flatnonzero(fill)
    reason = np.full(len(idx), "missing value", dtype=object)
    gap = inserted[idx]
    unp = df["flag_unreadable"].to_numpy(bool)[idx]
    mc = df["flag_meter_change"].to_numpy(bool)[idx]
    rng = out_of_range[idx]
    zero = df["flag_flow_zero_pressure"].to_numpy(bool)[idx] if col.startswith("pressure") else np.zeros(len(idx), bool)
    reason[mc] = "meter change: interval volume unknown"
    reason[unp] = "unreadable cell"
    reason[rng] = "outside plausible limits"
    reason[zero] = "zero pressure while gas flows"
    reason[gap] = "missing interval (gap)"
    return pd.DataFrame({"time": df.index[idx], "what": col, "original": original[idx], "new": new[idx],
                         "method": policy, "reason": reason})
