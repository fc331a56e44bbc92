"""Exactly one gas month out of a longer log: bounds on the site's clock, selection, coverage.

A gas month is the gas days from the first to the last day of the calendar month, each starting at
the gas-day start on the site's clock (common practice): June 2026 with a 06:00 gas day in
Europe/Berlin runs from 1 June 06:00 CEST to 1 July 06:00 CEST, 720 hours; October 2026 there has
745 hours (the autumn clock change, IANA tz database), March 743.

:func:`select_gas_month` is a pure function of the canonical interval frame (UTC index at the
interval end, ``duration`` [s]): the intervals inside the month are kept, those wholly before or
after it are left out and counted (they are not bad data), and an interval that straddles a bound
of the month is refused, since its volume belongs to two months. The month run (``correct``,
``fleet``) and the system balance call it.
"""

from __future__ import annotations

import datetime as _dt
import re
from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..errors import InputError, SettingsError

_MONTH = re.compile(r"^\s*(\d{4})-(\d{1,2})\s*$")


def parse_month(text) -> tuple[int, int]:
    """'YYYY-MM' → (year, month); SettingsError with the fix otherwise."""
    m = _MONTH.match(str(text))
    if not m or not 1 <= int(m.group(2)) <= 12:
        raise SettingsError(f"month '{text}' is not YYYY-MM", hint="write the gas month as e.g. --month 2026-06")
    return int(m.group(1)), int(m.group(2))


def _gas_day_begin(day: _dt.date, timezone: str, gas_day_start: int) -> pd.Timestamp:
    """UTC instant the gas day ``day`` begins: the gas-day start on that date on the site's clock
    (a start the spring change skips is taken at the first wall time after it)."""
    t = pd.Timestamp(_dt.datetime(day.year, day.month, day.day, int(gas_day_start)))
    return t.tz_localize(timezone, ambiguous=True, nonexistent="shift_forward").tz_convert("UTC")


def gas_month_bounds(month: str, timezone: str, gas_day_start: int) -> tuple[pd.Timestamp, pd.Timestamp]:
    """(start, end) of a gas month [UTC]: its first gas day's begin and the next month's."""
    y, m = parse_month(month)
    first = _dt.date(y, m, 1)
    nxt = _dt.date(y + (m == 12), m % 12 + 1, 1)
    return _gas_day_begin(first, timezone, gas_day_start), _gas_day_begin(nxt, timezone, gas_day_start)


@dataclass
class GasMonthSelection:
    """What :func:`select_gas_month` kept and left out.

    Attributes
    ----------
    frame : DataFrame            the intervals of the month (same columns and attrs as the input)
    month : str                  'YYYY-MM'
    start, end : Timestamp       bounds of the gas month [UTC]
    hours_in_month : float [h]   length of the gas month on the site's clock (743/744/745 ...)
    hours_logged : float [h]     hours of the kept intervals with a logged reading (see logged_mask)
    intervals_before, intervals_after : int   intervals left out, wholly before / after the month
    """

    frame: pd.DataFrame
    month: str
    start: pd.Timestamp
    end: pd.Timestamp
    hours_in_month: float
    hours_logged: float
    intervals_before: int
    intervals_after: int

    @property
    def coverage_pct(self) -> float:
        return 100.0 * self.hours_logged / self.hours_in_month if self.hours_in_month else float("nan")

    def record(self) -> dict:
        """Plain data for the summary JSON (``gas_month``)."""
        return {"month": self.month, "start_utc": self.start.isoformat(), "end_utc": self.end.isoformat(),
                "hours_in_month": self.hours_in_month, "hours_logged": self.hours_logged,
                "coverage_pct": self.coverage_pct, "intervals_before_month": self.intervals_before,
                "intervals_after_month": self.intervals_after}


#: the measured quantity of each meter kind: volume meters log volume, orifice plates differential
#: pressure (or its root), Coriolis meters mass (or mass flow)
PRIMARY_COLUMNS = ("volume_line", "pressure_differential", "pressure_differential_root", "mass", "mass_flow")


def logged_mask(frame: pd.DataFrame) -> np.ndarray:
    """Intervals whose meter reading (volume, differential pressure or mass) came from the log, not
    rows the quality step inserted for a gap."""
    cols = [f"{c}_raw" if f"{c}_raw" in frame.columns else c for c in PRIMARY_COLUMNS
            if c in frame.columns or f"{c}_raw" in frame.columns]
    if not cols:
        return np.ones(len(frame), bool)
    mask = np.zeros(len(frame), bool)
    for c in cols:
        mask |= np.isfinite(frame[c].to_numpy(float))
    return mask


def select_gas_month(frame: pd.DataFrame, month: str, *, timezone: str, gas_day_start: int,
                     interval_label: str = "end") -> GasMonthSelection:
    """The intervals of one gas month.

    Parameters
    ----------
    frame : DataFrame           canonical interval frame: UTC DatetimeIndex at the interval end,
                                ``duration`` [s] (a row without one is an instant at its end)
    month : str                 'YYYY-MM'
    timezone : str              IANA zone of the site's clock
    gas_day_start : int    local hour the gas day starts
    interval_label : str        how the log was read ('end' or 'start'): named in the refusal

    Returns
    -------
    GasMonthSelection

    Raises
    ------
    InputError
        An interval straddles a bound of the month (its volume belongs to two gas months); the
        message names it and, for a daily log stamped at midnight with a gas day that does not
        start at midnight, says so and gives the fix.
    """
    start, end = gas_month_bounds(month, timezone, gas_day_start)
    t_end = pd.DatetimeIndex(frame.index).as_unit("ns").asi8
    dur = frame["duration"].to_numpy(float) if "duration" in frame.columns else np.zeros(len(frame))
    t_start = t_end - np.round(np.nan_to_num(dur, nan=0.0) * 1e9).astype(np.int64)
    a, b = start.value, end.value
    before = t_end <= a
    after = t_start >= b
    inside = (t_start >= a) & (t_end <= b)
    straddle = ~before & ~after & ~inside
    if straddle.any():
        i = int(np.flatnonzero(straddle)[0])
        s_loc = pd.Timestamp(int(t_start[i]), tz="UTC").tz_convert(timezone)
        e_loc = pd.Timestamp(int(t_end[i]), tz="UTC").tz_convert(timezone)
        bound = start if t_start[i] < a else end
        text = (f"the interval from {s_loc:%Y-%m-%d %H:%M} to {e_loc:%Y-%m-%d %H:%M} ({timezone}) straddles the "
                f"{'start' if bound is start else 'end'} of gas month {month} "
                f"({bound.tz_convert(timezone):%Y-%m-%d %H:%M}): its volume belongs to two gas months")
        hint = ("give logs whose intervals end on the gas-day boundaries, or check --gas-day-start and "
                "--interval-label")
        if dur[i] >= 86_400 - 3_600 and e_loc.hour == 0 and e_loc.minute == 0 and gas_day_start != 0:
            text += (f"; a daily log stamped at 00:00 with a gas day starting {gas_day_start:02d}:00 "
                     "straddles every gas day")
            hint = ("if the rows are calendar days, give --gas-day-start 00:00; if each stamp is the start of a "
                    "gas day, give --interval-label start" + (" (read now as the end)" if interval_label == "end" else ""))
        raise InputError(text, hint=hint)
    kept = frame[inside]
    kept_dur = np.nan_to_num(dur[inside], nan=0.0)
    hours_logged = float(np.sum(kept_dur[logged_mask(kept)])) / 3600.0
    return GasMonthSelection(frame=kept, month=f"{parse_month(month)[0]:04d}-{parse_month(month)[1]:02d}",
                             start=start, end=end, hours_in_month=(end - start).total_seconds() / 3600.0,
                             hours_logged=hours_logged, intervals_before=int(before.sum()),
                             intervals_after=int(after.sum()))


def likely_midnight_mislabel(frame: pd.DataFrame, timezone: str, gas_day_start: int,
                             interval_label: str) -> bool:
    """A daily log whose stamps fall on local midnight, read as interval ends, with a gas day that
    starts at another hour: each row then straddles two gas days (a likely mislabel)."""
    if interval_label != "end" or gas_day_start == 0 or not len(frame) or "duration" not in frame.columns:
        return False
    dur = frame["duration"].to_numpy(float)
    if not np.isfinite(dur).any() or float(np.nanmedian(dur)) < 86_400 - 3_600:
        return False
    local = frame.index.tz_convert(timezone)
    return bool(np.mean((local.hour == 0) & (local.minute == 0)) > 0.9)
