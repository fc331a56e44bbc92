"""Gas days across clock changes: every hour in its gas day (issue: the clock-change hour).

Outside source: the IANA time zone database rules, read through Python's standard-library
``zoneinfo`` (independent of the pandas/dateutil path the engine uses). A gas day runs from the
gas-day start on the site's clock to the same wall-clock hour of the next day (common practice),
so the gas day holding a clock change has 23 or 25 hours. The change dates of 2026 stated below
are from the rules as published (EU: last Sunday of March / October at 01:00 UTC; US: second
Sunday of March / first Sunday of November at 02:00 local; New South Wales: first Sunday of
October / April at 02:00 / 03:00 local standard / summer time; Chile: first Sunday of September
at 24:00 / first Sunday of April at 24:00).
"""

from __future__ import annotations

import datetime as dt
from collections import Counter
from types import SimpleNamespace
from zoneinfo import ZoneInfo

import numpy as np
import pandas as pd
import pytest

from meterfix.engine.pipeline import _gas_day

UTC = dt.timezone.utc


def _expected_hours(zone: str, start_hour: int, first_utc: dt.datetime, n: int, step_min: int = 60) -> Counter:
    """Hours per gas day by the rule, interval by interval with the standard library."""
    z = ZoneInfo(zone)
    out = Counter()
    for k in range(n):
        start = first_utc + dt.timedelta(minutes=step_min * k)
        wall = start.astimezone(z).replace(tzinfo=None)
        out[(wall - dt.timedelta(hours=start_hour)).date()] += step_min / 60
    return out


def _engine_hours(zone: str, start_hour: int, first_utc: dt.datetime, n: int, step_min: int = 60) -> Counter:
    ends = pd.date_range(pd.Timestamp(first_utc) + pd.Timedelta(minutes=step_min), periods=n,
                         freq=f"{step_min}min", tz="UTC")
    days, codes = _gas_day(ends, np.full(n, 60.0 * step_min),
                           SimpleNamespace(timezone=zone, gas_day_start=start_hour))
    out = Counter()
    for c in codes:
        out[days[c]] += step_min / 60
    return out


#: (zone, gas-day start hour, gas day with 23 hours, gas day with 25 hours) in 2026, by the rules
CASES = [
    ("Europe/Berlin", 0, dt.date(2026, 3, 29), dt.date(2026, 10, 25)),
    ("Europe/Berlin", 6, dt.date(2026, 3, 28), dt.date(2026, 10, 24)),
    ("Europe/Berlin", 9, dt.date(2026, 3, 28), dt.date(2026, 10, 24)),
    ("America/Chicago", 0, dt.date(2026, 3, 8), dt.date(2026, 11, 1)),
    ("America/Chicago", 6, dt.date(2026, 3, 7), dt.date(2026, 10, 31)),
    ("America/Chicago", 9, dt.date(2026, 3, 7), dt.date(2026, 10, 31)),
    ("Australia/Sydney", 0, dt.date(2026, 10, 4), dt.date(2026, 4, 5)),
    ("Australia/Sydney", 6, dt.date(2026, 10, 3), dt.date(2026, 4, 4)),
    ("Australia/Sydney", 9, dt.date(2026, 10, 3), dt.date(2026, 4, 4)),
    # Chile changes at midnight: with a 00:00 gas day the change is the gas-day boundary itself
    ("America/Santiago", 0, dt.date(2026, 9, 6), dt.date(2026, 4, 4)),
    ("America/Santiago", 6, dt.date(2026, 9, 5), dt.date(2026, 4, 4)),
    ("America/Santiago", 9, dt.date(2026, 9, 5), dt.date(2026, 4, 4)),
]


@pytest.mark.parametrize("zone,hour,short,long", CASES)
def test_every_hour_in_its_gas_day_across_both_changes(zone, hour, short, long):
    for day, hours in ((short, 23), (long, 25)):
        # eight days of intervals around the change, in both directions of it
        first = dt.datetime(day.year, day.month, day.day, tzinfo=UTC) - dt.timedelta(days=4)
        for step in (60, 15):
            n = 8 * 24 * 60 // step
            got = _engine_hours(zone, hour, first, n, step)
            want = _expected_hours(zone, hour, first, n, step)
            interior = sorted(want)[1:-1]  # the first and last gas day are cut by the window
            assert {d: got[d] for d in interior} == {d: want[d] for d in interior}
            assert got[day] == hours, (zone, hour, day, step)
            others = [d for d in interior if d != day]
            assert all(got[d] == 24 for d in others)


def test_demo_gas_days_have_the_long_day_on_24_october():
    """The demo (Europe/Berlin, 06:00 gas day, October 2026): the gas day from 24 Oct 06:00 CEST to
    25 Oct 06:00 CET holds the repeated hour, so 2026-10-24 has 25 hours and 2026-10-25 24."""
    from pathlib import Path

    p = Path(__file__).resolve().parents[1] / "fixtures" / "demo"
    from meterfix.engine.run import read_month
    from meterfix.engine.settings import build_settings

    res = read_month(sorted(p.glob("fv-m1_log_*.csv")), build_settings(p / "site.toml", {}),
                     composition=p / "fv-m1_analyses_2026-10.csv")
    hours = {str(k): v for k, v in res.gas_days["hours"].items()}
    assert hours["2026-10-24"] == 25.0
    assert hours["2026-10-25"] == 24.0
    assert hours["2026-10-23"] == 24.0
