"""Quality flags, gap insertion, substitution and the edit record, on the invented fault fixture.

Expected values are written by hand from the rows of fixtures/logs/heron_fen_m4_faults.csv
(hourly, UTC): pressure 20.0 + 0.3 x ((7i) mod 5) bar(g), temperature 9.0 + 0.5 x ((3i) mod 4) degC,
volume 800 + 10 x ((5i) mod 6) m3 for i = 0..71 starting 2026-10-20 01:00, with rows i = 30..33
missing, pressure stuck at 21.7 for i = 10..23, temperature 38.0 at i = 40, pressure 0.0 at i = 50,
temperature 150.0 at i = 55, volume '#VALUE!' at i = 60 and an empty pressure at i = 65.
"""

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from meterfix.engine.quality import QualityLimits, apply_quality
from meterfix.errors import SettingsError
from meterfix.readers import read_log

FIX = Path(__file__).resolve().parent.parent / "fixtures" / "logs"
T0 = pd.Timestamp("2026-10-20 01:00", tz="UTC")


def at(i):
    return T0 + pd.Timedelta(hours=i)


@pytest.fixture(scope="module")
def faults():
    f, _ = read_log(FIX / "heron_fen_m4_faults.csv", timezone="Europe/Berlin")  # header says UTC
    return f


def test_flags_where_the_faults_are(faults):
    q, edits = apply_quality(faults)
    assert len(q) == 72 and (np.diff(q.index.asi8) == 3600 * 10**9).all()  # four missing hours inserted
    assert len(edits) == 0 and not q["flag_estimated"].any()

    def rows(flag):
        return [int((t - T0) / pd.Timedelta(hours=1)) for t in q.index[q[flag].to_numpy()]]

    assert rows("flag_gap") == [30, 31, 32, 33]
    assert q["gap_intervals"].loc[at(34)] == 4 and q["gap_intervals"].sum() == 4
    assert q["source_row"].loc[at(30)] == -1 and np.isnan(q["volume_line"].loc[at(30)])
    assert rows("flag_stuck") == list(range(10, 24))          # 14 intervals unchanged while flowing
    assert rows("flag_temperature_range") == [55]             # 150 degC
    assert rows("flag_flow_zero_pressure") == [50]
    assert 40 in rows("flag_spike")                           # 38 degC among 9.0-10.5 degC
    assert rows("flag_unreadable") == [60] and rows("flag_missing") == [65]
    assert rows("flag_pressure_range") == []
    assert faults.equals(read_log(FIX / "heron_fen_m4_faults.csv")[0])  # input frame not modified


def test_interpolate_records_every_edit(faults):
    q, e = apply_quality(faults, policy="interpolate", max_gap_intervals=4)
    # gap i = 30..33 between i = 29 (283.65 K, 810 m3) and i = 34 (283.15 K, 820 m3): straight lines
    gap = e[e["reason"] == "missing interval (gap)"]
    assert len(gap) == 12
    t = gap[gap["what"] == "temperature_line"]["new"].to_numpy()
    assert t == pytest.approx([283.55, 283.45, 283.35, 283.25])
    v = gap[gap["what"] == "volume_line"]["new"].to_numpy()
    assert v == pytest.approx([812.0, 814.0, 816.0, 818.0])
    # missing pressure at i = 65 between 20.9 bar(g) (i = 64) and 20.6 bar(g) (i = 66)
    r = e[(e["time"] == at(65)) & (e["what"] == "pressure_gauge")].iloc[0]
    assert np.isnan(r["original"]) and r["new"] == pytest.approx(20.75e5) and r["reason"] == "missing value"
    # 150 degC replaced by the mean of 10.0 degC (i = 54) and 9.0 degC (i = 56); the raw value kept
    r = e[(e["time"] == at(55)) & (e["what"] == "temperature_line")].iloc[0]
    assert r["original"] == pytest.approx(423.15) and r["new"] == pytest.approx(282.65)
    assert r["reason"] == "outside plausible limits" and r["method"] == "interpolate"
    assert q["temperature_line_raw"].loc[at(55)] == pytest.approx(423.15)
    assert q["temperature_line"].loc[at(55)] == pytest.approx(282.65)
    # zero pressure while flowing (i = 50); the unparseable volume (i = 60) between 810 and 850 m3
    assert e[(e["time"] == at(50))]["reason"].tolist() == ["zero pressure while gas flows"]
    r = e[(e["time"] == at(60))].iloc[0]
    assert r["what"] == "volume_line" and r["reason"] == "unreadable cell" and r["new"] == pytest.approx(830.0)
    assert list(e.columns) == ["time", "what", "original", "new", "method", "reason"]
    assert q["flag_estimated"].sum() == 4 + 1 + 1 + 1 + 1
    # spikes and stuck values are flagged, not replaced
    assert q["temperature_line"].loc[at(40)] == pytest.approx(311.15)


def test_max_gap_intervals_limits_the_fill(faults):
    q, e = apply_quality(faults, policy="interpolate", max_gap_intervals=3)
    assert not (e["reason"] == "missing interval (gap)").any()
    assert q["volume_line"].loc[at(30):at(33)].isna().all() and q["flag_gap"].sum() == 4


def test_hold_uses_the_last_valid_value(faults):
    q, e = apply_quality(faults, policy="hold", max_gap_intervals=4)
    assert e[e["what"] == "volume_line"]["new"].iloc[:4].tolist() == [810.0] * 4  # i = 29 held
    assert q["pressure_gauge"].loc[at(65)] == pytest.approx(20.9e5)


def test_profile_uses_the_same_hour_of_other_days():
    idx = pd.date_range("2026-10-01 01:00", periods=72, freq="h", tz="UTC")
    hour = np.asarray(idx.hour)
    day = np.repeat([0, 1, 2], 24)
    frame = pd.DataFrame({"pressure_gauge": 30e5 + 1e3 * hour, "temperature_line": 280.0 + 0.1 * hour + day,
                          "volume_line": 100.0 + hour + 10 * day, "duration": 3600.0}, index=idx)
    frame.loc[idx[33], "temperature_line"] = np.nan  # day 2, 10:00 UTC
    q, e = apply_quality(frame, policy="profile", timezone="UTC")
    # median of the other days at 10:00: 280 + 0.1 x 10 + 0 = 281.0 and 280 + 0.1 x 10 + 2 = 283.0
    assert e["new"].tolist() == pytest.approx([282.0]) and e["what"].tolist() == ["temperature_line"]


def test_engine_totals_over_inserted_rows(faults):
    from meterfix.engine.pipeline import run_month
    from meterfix.engine.settings import build_settings

    q, _ = apply_quality(faults)
    s = build_settings(None, {"base": "iso-15c", "atmospheric_pressure": "101.325 kPa", "method": "ideal",
                              "timezone": "UTC", "gas_day_start": "00:00"})
    res = run_month(q, [], s)
    # uncorrected total by hand: 12 cycles of (6 x 800 + 150) minus the missing i = 30..33
    # (800 + 850 + 840 + 830) and the unreadable i = 60 (800): 59 400 - 3320 - 800
    assert res.totals["uncorrected_volume_m3"] == pytest.approx(55280.0)
    assert res.gas_days["hours"].sum() == pytest.approx(72.0)
    assert res.flags["gap"] == 4


def test_bad_policy():
    with pytest.raises(SettingsError):
        apply_quality(pd.DataFrame(), policy="guess")


def test_limits_are_settable(faults):
    q, _ = apply_quality(faults, limits=QualityLimits(temperature=(273.15, 300.0), stuck_intervals=20))
    assert q["flag_temperature_range"].sum() == 2 and q["flag_stuck"].sum() == 0  # 38 degC and 150 degC


def test_spike_rate_on_white_noise_and_microsecond_index():
    # a modified z-score above 3.5 is rare for Gaussian noise (two-sided normal tail beyond ~3.5
    # standard deviations: about 0.05 %; Iglewicz & Hoaglin 1993); a single 10-sigma step is caught
    rng = np.random.default_rng(7)
    n = 20000
    idx = pd.date_range("2026-10-01", periods=n, freq="min", tz="UTC").as_unit("us")
    frame = pd.DataFrame({"pressure_gauge": 30e5 + 1e3 * rng.standard_normal(n),
                          "temperature_line": 285.0 + 0.1 * rng.standard_normal(n),
                          "volume_line": 10.0 + 0.1 * rng.standard_normal(n), "duration": 60.0}, index=idx)
    frame.iloc[500, 0] += 1e4
    frame = frame.drop(frame.index[[1000, 1001]])
    q, _ = apply_quality(frame)
    assert q["flag_spike"].mean() < 0.005 and q["flag_spike"].iat[500]
    assert q["flag_gap"].sum() == 2 and len(q) == n  # gaps found whatever the index unit


def _sine_log(days=20, gap=(200, 206), phase=0.0):
    # a smooth log: daily sines in pressure, temperature and flow (no noise), one six-hour hole
    n = 24 * days
    h = np.arange(n)
    idx = pd.date_range("2026-06-01 01:00", periods=n, freq="h", tz="UTC")
    w = 2 * np.pi * (h / 24.0) + phase
    frame = pd.DataFrame({"pressure_gauge": 30e5 + 2e5 * np.sin(w), "temperature_line": 285.0 + 3.0 * np.sin(w + 1.0),
                          "volume_line": 1000.0 + 400.0 * np.sin(w + 2.0), "duration": 3600.0}, index=idx)
    return frame.drop(frame.index[gap[0]:gap[1]]) if gap else frame


@pytest.mark.parametrize("phase", [0.0, 0.7, 1.9, 3.1, 4.4])
def test_no_spike_flags_on_a_smooth_log_at_its_ends_or_beside_a_gap(phase):
    # the rule tests only points with two present neighbours on each side in evenly spaced rows
    # (engine/quality.py _spikes): the first two and last two rows and the rows beside the hole are
    # not tested, and the interior of a sine has residuals of the same order everywhere
    q, _ = apply_quality(_sine_log(phase=phase))
    assert q["flag_gap"].sum() == 6 and len(q) == 480  # the six missing hours inserted
    assert not q["flag_spike"].any()
    # a break (no rows inserted) splits the log the same way
    big = _sine_log(days=30, gap=(200, 200 + 24 * 8), phase=phase)
    q, _ = apply_quality(big)
    assert not q["flag_spike"].any()


def test_a_spike_inside_a_smooth_log_is_still_flagged():
    f = _sine_log()
    f.iloc[100, 1] += 8.0  # 8 K on a 3 K daily swing
    f.iloc[300, 2] *= 1.5
    q, _ = apply_quality(f)
    assert list(np.flatnonzero(q["flag_spike"].to_numpy())) == [100, 306]  # 300 moves by the 6 inserted rows


def test_no_spike_flags_on_a_smooth_log_written_with_few_digits():
    # a SCADA export rounds its readings (temperature to 0.1 degF, pressure to 0.01 psi): on a smooth
    # log the residuals are then 0 or one step and their MAD is 0; such steps are no spike (the rule's
    # resolution floor, engine/quality.py _spikes), while a real jump in the same log still is
    n = 24 * 4 * 5
    h = np.arange(n)
    idx = pd.date_range("2026-10-31 05:15", periods=n, freq="15min", tz="UTC")
    deg_f = np.round(55.0 + 5.0 * np.sin(h / 40.0), 1)
    psi = np.round(600.0 + 15.0 * np.sin(h / 20.0), 2)
    frame = pd.DataFrame({"pressure_gauge": psi * 6894.757293168361,
                          "temperature_line": (deg_f - 32.0) * 5.0 / 9.0 + 273.15,
                          "volume_line": np.round(25.0 + 3.0 * np.sin(h / 10.0), 3), "duration": 900.0}, index=idx)
    q, _ = apply_quality(frame)
    assert not q["flag_spike"].any()
    frame.iloc[200, 1] += 5.0  # a 9 degF jump
    q, _ = apply_quality(frame)
    assert list(np.flatnonzero(q["flag_spike"].to_numpy())) == [200]
