"""The time axis as exports write it: '24:00', hour-ending layouts, unreadable times.

Expected values are worked out by hand from the rows written in each test; the clock is the IANA
tz database (America/Chicago: CDT = UTC-5 in June; CST = UTC-6 from 1 November 2026 02:00 CDT).
'24:00' as the midnight that ends its date and hour ending 1..24 are common practice of gas-day data.
"""

from __future__ import annotations

import io
import json

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

from meterfix.cli import app
from meterfix.errors import InputError
from meterfix.readers.logs import parse_log

runner = CliRunner()
GAS = "methane=0.95,ethane=0.03,nitrogen=0.02"
ARGS = ["--gas", GAS, "--base", "normal-0c", "--elevation", "120 m", "--timezone", "Europe/Berlin", "--quiet"]


def _log(rows, header="Interval end,P [bar(g)],T [degC],Volume [m3]"):
    return (header + "\n" + "".join(r + "\n" for r in rows)).encode()


def test_24_00_is_the_midnight_ending_that_day():
    rows = [f"2026-06-01 {h:02d}:00,30,11,{10 + h}" for h in range(1, 25)] + ["2026-06-02 01:00,30,11,50"]
    f, m = parse_log(io.BytesIO(_log(rows)), name="g.csv", timezone="Europe/Berlin")
    assert len(f) == 25 and not m.dropped_rows and not m.unreadable
    # 2026-06-01 24:00 CEST = 2026-06-02 00:00 CEST = 2026-06-01 22:00 UTC
    assert f.index[23] == pd.Timestamp("2026-06-01 22:00", tz="UTC")
    assert (f["duration"] == 3600.0).all()
    # every volume kept: 11 + 12 + ... + 34 = 540, plus 50
    assert f["volume_line"].sum() == 590.0


def test_24_00_in_day_first_text_and_with_offsets():
    f, _ = parse_log(io.BytesIO(_log(["01.06.2026 23:00,30,11,1", "01.06.2026 24:00,30,11,1"])), name="d.csv")
    assert list(f.index) == [pd.Timestamp("2026-06-01 23:00", tz="UTC"), pd.Timestamp("2026-06-02 00:00", tz="UTC")]
    f, _ = parse_log(io.BytesIO(_log(["2026-06-01T23:00+02:00,30,11,1", "2026-06-01T24:00+02:00,30,11,1"])),
                     name="o.csv")
    assert f.index[1] == pd.Timestamp("2026-06-01 22:00", tz="UTC")


def test_unreadable_time_has_no_result_counted_and_named(tmp_path):
    rows = [f"2026-06-01 {h:02d}:00,30,11,100" for h in range(1, 12)]
    rows[5] = "2026-06-01 6 o'clock,30,11,999"  # row 7 of the file
    p = tmp_path / "u.csv"
    p.write_bytes(_log(rows))
    out = tmp_path / "out"
    r = runner.invoke(app, ["correct", str(p), *ARGS[:-1], "--out", str(out), "--json", str(tmp_path / "s.json")])
    assert r.exit_code == 0, r.output
    s = json.loads((tmp_path / "s.json").read_text())
    # ten rows of 100 m3 read; the 06:00 interval has no volume (999 never enters a total)
    assert s["totals"]["uncorrected_volume_m3"] == pytest.approx(1000.0, rel=1e-12)
    assert s["totals"]["intervals"] == 11
    assert "rows left out        1" in r.output and "u.csv row 7" in r.output
    assert "intervals without volume (gap, unreadable cell, row left out): 1" in r.output


def _he_rows(day, hours, v=1.0):
    return [f"{day},{h},500,60,{v}" for h in hours]


HE_HEADER = "Date,Hour ending,Pressure [psig],Temperature [degF],Volume [Mcf]"


def test_hour_ending_1_to_24():
    rows = _he_rows("2026-06-01", range(1, 25)) + _he_rows("2026-06-02", range(1, 25))
    f, m = parse_log(io.BytesIO(_log(rows, HE_HEADER)), name="he.csv", timezone="America/Chicago")
    assert len(f) == 48 and m.interval_label == "end"
    # HE 1 on 1 June ends 01:00 CDT = 06:00 UTC; HE 24 ends at midnight = 2 June 05:00 UTC
    assert f.index[0] == pd.Timestamp("2026-06-01 06:00", tz="UTC")
    assert f.index[23] == pd.Timestamp("2026-06-02 05:00", tz="UTC")
    assert (f["duration"] == 3600.0).all()
    # 48 rows of 1 Mcf = 48 000 ft3 (1 ft = 0.3048 m, NIST SP 811 B.8)
    assert f["volume_line"].sum() == pytest.approx(48000 * 0.3048**3, rel=1e-12)


def test_hour_ending_header_variants_and_hour_beginning():
    rows = _he_rows("2026-06-01", range(1, 4))
    f, _ = parse_log(io.BytesIO(_log(rows, HE_HEADER.replace("Hour ending", "HE"))), name="he.csv",
                     timezone="America/Chicago")
    assert f.index[0] == pd.Timestamp("2026-06-01 06:00", tz="UTC")
    # hour beginning 0..23: hour 0 starts at midnight, so it ends 01:00 CDT
    rows = _he_rows("2026-06-01", range(0, 3))
    f, m = parse_log(io.BytesIO(_log(rows, HE_HEADER.replace("Hour ending", "Hour beginning"))), name="hb.csv",
                     timezone="America/Chicago")
    assert f.index[0] == pd.Timestamp("2026-06-01 06:00", tz="UTC") and len(f) == 3


def test_hour_column_that_does_not_say_start_or_end_is_refused():
    rows = _he_rows("2026-06-01", range(0, 24))
    with pytest.raises(InputError) as e:
        parse_log(io.BytesIO(_log(rows, HE_HEADER.replace("Hour ending", "Hour"))), name="h.csv",
                  timezone="America/Chicago")
    assert "hour numbers" in str(e.value) and e.value.column == "Hour"
    assert "--column 'Hour=hour_ending'" in e.value.hint and "--column 'Hour=hour_beginning'" in e.value.hint
    # the fix given works: mapped as hour beginning, hour 0 ends 01:00 CDT
    f, _ = parse_log(io.BytesIO(_log(rows, HE_HEADER.replace("Hour ending", "Hour"))), name="h.csv",
                     timezone="America/Chicago", column_map={"Hour": "hour_beginning"})
    assert len(f) == 24 and f.index[0] == pd.Timestamp("2026-06-01 06:00", tz="UTC")


def test_hour_ending_over_the_november_change():
    # 1 November 2026 has 25 hours in Chicago. Written on the clock (HE 2 twice: CDT, then CST) ...
    rows = (_he_rows("2026-10-31", range(1, 25)) + _he_rows("2026-11-01", [1, 2, 2] + list(range(3, 25)))
            + _he_rows("2026-11-02", [1]))
    f, m = parse_log(io.BytesIO(_log(rows, HE_HEADER)), name="n.csv", timezone="America/Chicago")
    assert len(f) == 50 and (f["duration"] == 3600.0).all() and f.index.is_unique
    # ... or counted 1..25 from midnight: the same instants
    rows2 = _he_rows("2026-10-31", range(1, 25)) + _he_rows("2026-11-01", range(1, 26)) + _he_rows("2026-11-02", [1])
    f2, m2 = parse_log(io.BytesIO(_log(rows2, HE_HEADER)), name="n.csv", timezone="America/Chicago")
    assert list(f2.index) == list(f.index)
    assert any("counts the hours of the clock-change days" in n for n in m2.notes)
    # HE 24 of 1 November ends at midnight CST = 2 November 06:00 UTC
    assert f.index[-2] == pd.Timestamp("2026-11-02 06:00", tz="UTC")


def test_hour_ending_out_of_range_refused():
    with pytest.raises(InputError, match="not a whole hour") as e:
        parse_log(io.BytesIO(_log(_he_rows("2026-06-01", [1, 2, 27]), HE_HEADER)), name="x.csv")
    assert e.value.row == 4


def test_absurd_volumes_give_no_library_warning_and_keep_the_last_row(tmp_path):
    # two 1e308 cells (beyond any physical volume: unreadable, see readers/logs.py) once overflowed the
    # summary-row check: a numpy warning on the terminal and the last row taken for a total row
    import subprocess
    import sys

    rows = [f"2026-06-01 {h:02d}:00,30,11,{'1e308' if h in (5, 6) else 100}" for h in range(1, 24)]
    p = tmp_path / "big.csv"
    p.write_bytes(_log(rows))
    r = subprocess.run([sys.executable, "-m", "meterfix", "correct", str(p), *ARGS[:-1], "--out", str(tmp_path / "o"),
                        "--json", str(tmp_path / "s.json")], capture_output=True, text=True, timeout=300)
    assert r.returncode == 0, r.stderr
    assert "Warning" not in r.stderr and "Warning" not in r.stdout
    s = json.loads((tmp_path / "s.json").read_text())
    # 23 rows, 21 readable volumes of 100 m3; the two absurd cells have no result
    assert s["totals"]["intervals"] == 23 and s["totals"]["uncorrected_volume_m3"] == pytest.approx(2100.0)


def test_hour_ending_over_the_march_change():
    # 8 March 2026 has 23 hours in Chicago (02:00 CST -> 03:00 CDT). Written on the clock, HE 3 does not
    # exist (its start, 02:00, is skipped): 1, 2, 4 ... 24; counted from midnight: 1 ... 23. Same instants.
    clock = _he_rows("2026-03-07", range(1, 25)) + _he_rows("2026-03-08", [1, 2] + list(range(4, 25)))
    f, m = parse_log(io.BytesIO(_log(clock, HE_HEADER)), name="c.csv", timezone="America/Chicago")
    counted = _he_rows("2026-03-07", range(1, 25)) + _he_rows("2026-03-08", range(1, 24))
    g, n = parse_log(io.BytesIO(_log(counted, HE_HEADER)), name="e.csv", timezone="America/Chicago")
    assert len(f) == len(g) == 47 and list(f.index) == list(g.index) and not m.dropped_rows and not n.dropped_rows
    assert (np.diff(f.index.asi8) == 3600 * 10**9).all()
    # HE 2 of 8 March: 01:00-02:00 CST = 07:00-08:00 UTC; HE 24 ends at midnight CDT = 9 March 05:00 UTC
    assert f.index[25] == pd.Timestamp("2026-03-08 08:00", tz="UTC") and f.index[-1] == pd.Timestamp("2026-03-09 05:00", tz="UTC")
    # an HE 3 on that day written on the clock is a row left out (its start does not exist), recorded
    bad = _he_rows("2026-03-08", [1, 2, 3, 4, 5])
    h, k = parse_log(io.BytesIO(_log(bad, HE_HEADER)), name="b.csv", timezone="America/Chicago")
    assert len(h) == 4 and "does not exist" in k.dropped_rows[0]["reason"] and k.dropped_rows[0]["row"] == 4
