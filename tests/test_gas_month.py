"""Exactly one gas month out of a longer log (engine/gas_month.py).

Hand arithmetic: a gas month runs from the first of the month at the gas-day start to the first of
the next month at the same wall-clock hour (common practice); hours on the site's clock from the
IANA tz database (Europe/Berlin: CEST = UTC+2 all of June 2026; the October month has 745 hours).
The ideal-gas base volume is Vb = V (p/pb)(Tb/T) (the gas laws, common practice).
"""

from __future__ import annotations

import pandas as pd
import pytest

from meterfix.engine.gas_month import gas_month_bounds, select_gas_month
from meterfix.engine.run import read_month
from meterfix.engine.settings import build_settings
from meterfix.errors import InputError, SettingsError


def test_bounds_and_hours_on_the_sites_clock():
    s, e = gas_month_bounds("2026-06", "Europe/Berlin", 6)
    assert s == pd.Timestamp("2026-06-01 04:00", tz="UTC") and e == pd.Timestamp("2026-07-01 04:00", tz="UTC")
    for month, hours in (("2026-06", 720), ("2026-10", 745), ("2026-03", 743), ("2026-07", 744)):
        s, e = gas_month_bounds(month, "Europe/Berlin", 6)
        assert (e - s).total_seconds() / 3600 == hours
    # Chicago, 09:00 gas day: the fall-back night (1 Nov 02:00) is before the November gas month's first
    # gas day begins (1 Nov 09:00): October has 31 x 24 + 1 = 745 hours, November 720
    for month, hours in (("2026-10", 745), ("2026-11", 720)):
        s, e = gas_month_bounds(month, "America/Chicago", 9)
        assert (e - s).total_seconds() / 3600 == hours
    with pytest.raises(SettingsError, match="YYYY-MM"):
        gas_month_bounds("June 2026", "UTC", 6)


def _long_log(path):
    # hourly, stamped at the interval end, 25 May 01:00 to 2 July 00:00 CEST: 912 rows of 100 m3
    idx = pd.date_range("2026-05-25 01:00", "2026-07-02 00:00", freq="h")
    rows = "".join(f"{t:%Y-%m-%d %H:%M},30,15,100\n" for t in idx)
    path.write_text("Interval end,Pressure [bar(a)],Temperature [degC],Volume [m3]\n" + rows)
    return path, len(idx)


def test_june_exactly_from_a_log_of_25_may_to_2_july(tmp_path):
    log, n = _long_log(tmp_path / "long.csv")
    assert n == 912
    s = build_settings(None, {"base": "normal-0c", "timezone": "Europe/Berlin", "gas_day_start": "06:00",
                              "method": "ideal", "month": "2026-06"})
    r = read_month([log], s)
    # June gas month: ends 1 June 07:00 CEST .. 1 July 06:00 CEST = 720 intervals; before it the ends
    # 25 May 01:00 .. 1 June 06:00 (7 x 24 + 6 = 174), after it 1 July 07:00 .. 2 July 00:00 (18)
    assert r.totals["intervals"] == 720 and list(r.months.index) == ["2026-06"]
    assert r.totals["uncorrected_volume_m3"] == pytest.approx(72000.0, rel=1e-12)
    vb = 72000.0 * (30e5 / 101325.0) * (273.15 / 288.15)
    assert r.totals["base_volume_m3"] == pytest.approx(vb, rel=1e-12)
    gm = r.gas_month
    assert (gm["intervals_before_month"], gm["intervals_after_month"]) == (174, 18)
    assert gm["hours_in_month"] == 720 and gm["hours_logged"] == 720 and gm["coverage_pct"] == 100.0
    assert r.intervals.index[0] == pd.Timestamp("2026-06-01 05:00", tz="UTC")
    assert r.intervals.index[-1] == pd.Timestamp("2026-07-01 04:00", tz="UTC")
    # left out, not flagged (the constant readings are flagged 'stuck', nothing else)
    assert {k: v for k, v in r.flags.items() if v} == {"stuck": 720}
    assert len(r.gas_days) == 30 and (r.gas_days["hours"] == 24).all()


def test_without_month_the_console_names_the_months_and_the_fix(tmp_path):
    log, _ = _long_log(tmp_path / "long.csv")
    s = build_settings(None, {"base": "normal-0c", "timezone": "Europe/Berlin", "gas_day_start": "06:00",
                              "method": "ideal"})
    r = read_month([log], s)
    assert list(r.months.index) == ["2026-05", "2026-06", "2026-07"] and r.gas_month is None
    assert any("touches 3 gas months (2026-05, 2026-06, 2026-07)" in w and "--month 2026-06" in w
               for w in r.warnings)


def test_a_month_with_missing_hours_states_its_coverage(tmp_path):
    log, _ = _long_log(tmp_path / "long.csv")
    lines = log.read_text().splitlines()
    # drop the 24 rows ending 10 June 01:00 .. 11 June 00:00 CEST
    kept = [ln for ln in lines if not (ln.startswith("2026-06-10 ") and ln[11:13] != "00" or ln.startswith("2026-06-11 00"))]
    log.write_text("\n".join(kept) + "\n")
    s = build_settings(None, {"base": "normal-0c", "timezone": "Europe/Berlin", "gas_day_start": "06:00",
                              "method": "ideal", "month": "2026-06"})
    r = read_month([log], s)
    assert r.gas_month["hours_logged"] == 696 and r.gas_month["hours_in_month"] == 720
    assert r.totals["uncorrected_volume_m3"] == pytest.approx(69600.0)
    assert any("covers 696 of the 720 hours" in w for w in r.warnings)


def test_daily_log_at_midnight_with_a_six_oclock_gas_day_straddles_and_is_refused(tmp_path):
    idx = pd.date_range("2026-09-01", "2026-10-01", freq="D")
    p = tmp_path / "daily.csv"
    p.write_text("Interval end,Pressure [bar(a)],Temperature [degC],Volume [m3]\n"
                 + "".join(f"{t:%Y-%m-%d %H:%M},30,15,2400\n" for t in idx))
    s = build_settings(None, {"base": "normal-0c", "timezone": "Europe/Berlin", "gas_day_start": "06:00",
                              "method": "ideal"})
    s.month = "2026-09"
    with pytest.raises(InputError) as e:
        read_month([p], s)
    assert "straddles the start of gas month 2026-09" in str(e.value) and "straddles every gas day" in str(e.value)
    assert "--gas-day-start 00:00" in e.value.hint and "--interval-label start" in e.value.hint
    # without --month: named on the console as a likely mislabel
    s.month = None
    r = read_month([p], s)
    assert any("likely mislabelled" in w and "--gas-day-start 00:00" in w for w in r.warnings)
    # the fix: calendar days -> September exactly (30 days of 2400 m3; the row ending 1 Sep 00:00 is August's)
    s2 = build_settings(None, {"base": "normal-0c", "timezone": "Europe/Berlin", "gas_day_start": "00:00",
                               "method": "ideal"})
    s2.month = "2026-09"
    r = read_month([p], s2)
    assert r.totals["uncorrected_volume_m3"] == pytest.approx(30 * 2400.0) and r.gas_month["intervals_before_month"] == 1


def test_select_is_pure_and_counts(tmp_path):
    idx = pd.date_range("2026-06-30 20:00", periods=12, freq="h", tz="UTC")
    f = pd.DataFrame({"volume_line": 1.0, "duration": 3600.0}, index=idx)
    sel = select_gas_month(f, "2026-06", timezone="UTC", gas_day_start=6)
    # June (UTC, 06:00 gas day) ends 1 July 06:00: ends 20:00 .. 06:00 kept (11), 07:00 after
    assert len(sel.frame) == 11 and sel.intervals_after == 1 and sel.intervals_before == 0
    assert len(f) == 12  # input untouched


def test_cli_month_closes_june_exactly_into_the_store(tmp_path):
    import json
    import sqlite3

    from typer.testing import CliRunner

    from meterfix.cli import app

    log, _ = _long_log(tmp_path / "long.csv")
    store = tmp_path / "months.sqlite"
    site = tmp_path / "site.toml"
    site.write_text('meter = "GM-1"\nmonth = "2026-06"\ntimezone = "Europe/Berlin"\ngas_day_start = "06:00"\n'
                    'base = "101.325kPa-0C"\nmethod = "ideal"\n')
    r = CliRunner().invoke(app, ["correct", str(log), "--site", str(site), "--out", str(tmp_path / "out"),
                                 "--store", str(store)])
    assert r.exit_code == 0, r.output
    assert "gas month            2026-06: 720 of 720 hours logged (100 %); left out: 174 interval(s) before, 18 after" \
        in r.output
    names = sorted(p.name for p in (tmp_path / "out").iterdir())
    assert "GM-1_2026-06_summary.json" in names and not any("_to_" in n for n in names)
    s = json.loads((tmp_path / "out" / "GM-1_2026-06_summary.json").read_text())
    assert s["totals"]["uncorrected_volume_m3"] == pytest.approx(72000.0, rel=1e-12)
    assert s["gas_month"]["coverage_pct"] == 100.0 and s["gas_month"]["hours_in_month"] == 720
    with sqlite3.connect(store) as c:
        month, n, vl = c.execute("SELECT month, intervals, uncorrected_volume_m3 FROM mf_closings").fetchone()
    assert (month, n) == ("2026-06", 720) and vl == pytest.approx(72000.0, rel=1e-12)
    # the next month from the same log: a closing of its own; the selected month is not a change of the
    # meter's configuration (the store's configuration log stays empty)
    r = CliRunner().invoke(app, ["correct", str(log), "--site", str(site), "--month", "2026-07",
                                 "--out", str(tmp_path / "o7"), "--store", str(store), "--quiet"])
    assert r.exit_code == 0, r.output
    with sqlite3.connect(store) as c:
        assert [m for (m,) in c.execute("SELECT month FROM mf_closings ORDER BY month")] == ["2026-06", "2026-07"]
        assert c.execute("SELECT COUNT(*) FROM mf_config_log WHERE setting = 'month'").fetchone()[0] == 0
    # the option wins over the site key; a month outside the log is refused in one line
    r = CliRunner().invoke(app, ["correct", str(log), "--site", str(site), "--month", "2026-09",
                                 "--out", str(tmp_path / "o9")])
    assert r.exit_code == 2 and "no interval in gas month 2026-09" in r.output
