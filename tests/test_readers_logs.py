"""Log reader: each invented fixture layout read back to its canonical SI table.

Expected values are written by hand from the fixture rows. Unit factors: NIST SP 811 (2008),
appendix B.8/B.9: 1 psi = 6.894 757 E+03 Pa (exact form 0.45359237 kg x 9.80665 m/s2 / (0.0254 m)^2),
1 ft3 = 2.831 685 E-02 m3 (exactly 0.3048^3 m3), 1 bar = 1E+05 Pa, T/K = (t/degF + 459.67)/1.8,
T/K = t/degC + 273.15. Clock changes: IANA tz database rules (EU: last Sunday of March/October
at 01:00 UTC; US: second Sunday of March / first Sunday of November at 02:00 local).
"""

import datetime as dt
import io
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from meterfix.errors import InputError, SettingsError, UnitError
from meterfix.readers import parse_log, read_log

FIX = Path(__file__).resolve().parent.parent / "fixtures" / "logs"
PSI = 0.45359237 * 9.80665 / 0.0254**2  # Pa, NIST SP 811 B.8 (6.894 757 E+03)
FT3 = 0.3048**3  # m3, NIST SP 811 B.8 (2.831 685 E-02)
BAR = 1e5  # Pa, NIST SP 811 B.8


def degF(t):
    return (t + 459.67) / 1.8  # NIST SP 811 B.9


def degC(t):
    return t + 273.15  # NIST SP 811 B.9


def utc(text):
    return pd.Timestamp(text, tz="UTC")


def test_us_csv_date_time_columns_title_rows():
    f, m = read_log(FIX / "heron_fen_m4_us.csv", timezone="America/Chicago")
    assert len(f) == 48 and f.index.tz is not None and f.index.name == "interval_end"
    # first data row (spreadsheet row 5): 10/05/2026 01:00 CDT (UTC-5) = 06:00 UTC; 250.0 psig; 60.0 degF; 12000 ft3
    r = f.iloc[0]
    assert f.index[0] == utc("2026-10-05 06:00")
    assert r["pressure_gauge"] == pytest.approx(250.0 * PSI, rel=1e-12)
    assert r["temperature_line"] == pytest.approx(degF(60.0), rel=1e-12)
    assert r["volume_line"] == pytest.approx(12000 * FT3, rel=1e-12)
    assert r["duration"] == 3600.0 and r["source_row"] == 5
    # row of i = 7: 251.5 psig, 61 degF, 12200 ft3
    assert f["pressure_gauge"].iat[7] == pytest.approx(251.5 * PSI)
    assert f["temperature_line"].iat[7] == pytest.approx(degF(61.0))
    assert f["volume_line"].iat[7] == pytest.approx(12200 * FT3)
    # total by hand: 48 x 12000 + 9 cycles x (0+100+200+300+400) + (0+100+200) = 585 300 ft3
    assert f["volume_line"].sum() == pytest.approx(585300 * FT3, rel=1e-12)
    assert "pressure_line" not in f and not f.filter(like="flag_").to_numpy().any()
    assert m.sources[0]["header_row"] == 4 and m.sources[0]["delimiter"] == ","
    assert m.columns["heron_fen_m4_us.csv"]["temperature_line"] == "Temp (°F)"
    assert m.units["pressure_gauge"] == "psig" and m.volume_from == "interval volume"
    assert m.status == [{"time": "2026-10-05T16:00:00+00:00", "file": "heron_fen_m4_us.csv", "row": 15,
                         "text": "door open"}]
    assert any("Heron Fen M4" in n for n in m.notes)


def test_european_index_log_rollover_and_gap():
    f, m = read_log(FIX / "tallow_bridge_b2_index_eu.csv", timezone="Europe/Berlin")
    assert m.sources[0]["delimiter"] == ";" and m.sources[0]["decimal"] == "," and m.sources[0]["encoding"] == "utf-8-sig"
    # the first reading (12.10.2026 06:00 CEST, 99.700,00 m3) opens the log and is not an interval
    assert m.opening_index == 99700.0 and len(f) == 27
    assert f.index[0] == utc("2026-10-12 05:00")  # 07:00 CEST = 05:00 UTC
    assert f["volume_line"].iat[0] == pytest.approx(99742.5 - 99700.0)
    assert f["pressure_gauge"].iat[0] == pytest.approx(4.30 * BAR)
    assert f["temperature_line"].iat[0] == pytest.approx(degC(9.0))
    # rollover of the 5-digit register between 99.997,50 (13:00) and 42,50 (14:00 local)
    i = f.index.get_loc(utc("2026-10-12 12:00"))
    assert f["flag_rollover"].iat[i] and f["volume_line"].iat[i] == pytest.approx(42.5 - 99997.5 + 1e5)
    assert m.register_capacity == 1e5 and f["flag_rollover"].sum() == 1
    # readings 02:00 and 03:00 local on 13.10 are missing: the 04:00 difference covers three hours
    j = f.index.get_loc(utc("2026-10-13 02:00"))
    assert f["volume_line"].iat[j] == pytest.approx(630.0 - 507.5) and f["duration"].iat[j] == 3 * 3600
    # the month's volume is the index difference: 930 - 99 700 + 100 000 (one rollover)
    assert f["volume_line"].sum() == pytest.approx(930.0 - 99700.0 + 1e5)


def test_register_digits_setting_and_meter_change():
    f, m = read_log(FIX / "tallow_bridge_b2_meter_change.csv", timezone="UTC")
    assert len(f) == 23 and m.register_capacity == pytest.approx(1e7 * FT3)  # largest reading 5 416 500 ft3: 7 digits
    ch = f.index.get_loc(utc("2026-10-08 13:00"))
    assert f["flag_meter_change"].iat[ch] and np.isnan(f["volume_line"].iat[ch])
    assert f["flag_meter_change"].sum() == 1 and f["flag_rollover"].sum() == 0
    ok = np.delete(np.arange(len(f)), ch)
    assert np.allclose(f["volume_line"].to_numpy()[ok], 1500 * FT3)
    assert f["pressure_gauge"].iat[0] == pytest.approx(60.0 * PSI)
    # a declared 5-digit register: 99 990 -> 99 995 -> 5 is a rollover of 10
    text = "Interval end,P [psig],T [degF],Meter index [ft3]\n" + "".join(
        f"2026-10-08 0{h}:00,60,58,{v}\n" for h, v in ((1, 99985), (2, 99990), (3, 99995), (4, 5), (5, 10)))
    f, m = parse_log(io.BytesIO(text.encode()), name="b2.csv", register_digits=5)
    assert f["flag_rollover"].tolist() == [False, False, True, False]
    assert f["volume_line"].tolist() == pytest.approx([5 * FT3, 5 * FT3, 10 * FT3, 5 * FT3])


def test_small_negative_index_step_kept_and_flagged():
    text = "Interval end,P [bar(g)],T [degC],Meter index [m3]\n" + "".join(
        f"2026-10-08 {h:02d}:00,2,10,{v}\n" for h, v in enumerate((1000, 1010, 1020, 1030, 1029, 1040, 1050)))
    f, m = parse_log(io.BytesIO(text.encode()), name="x.csv")
    assert f["flag_negative_delta"].tolist() == [False, False, False, True, False, False]
    assert f["volume_line"].sum() == pytest.approx(1050 - 1000)  # totals still equal the index difference


def test_xlsx_log_sheet_barometer_site_volume_and_bad_cell():
    f, m = read_log(FIX / "fv_m1_log.xlsx", timezone="Europe/Berlin")
    assert m.sources[0]["sheet"] == "Log" and m.sources[0]["header_row"] == 3 and len(f) == 33
    assert f.index[0] == utc("2026-10-01 05:00")  # 07:00 CEST
    r = f.iloc[0]
    assert r["pressure_gauge"] == pytest.approx(39.5 * BAR) and r["pressure_atm"] == pytest.approx(98.6e3)
    assert r["temperature_line"] == pytest.approx(degC(12.0)) and r["volume_line"] == 1100.0
    assert r["volume_corrected_site"] == 4200.0 and r["source_row"] == 4
    # 'ERR' in the temperature of spreadsheet row 9: NaN, flagged, the cell recorded
    i = int(np.flatnonzero(f["source_row"].to_numpy() == 9)[0])
    assert np.isnan(f["temperature_line"].iat[i]) and f["flag_unreadable"].iat[i]
    assert f["volume_line"].iat[i] == 1150.0  # the rest of the row is kept
    assert m.unreadable == [{"file": "fv_m1_log.xlsx", "sheet": "Log", "row": 9,
                              "column": "Line temperature [degC]", "value": "ERR"}]
    # three hours missing (ending 19:00-21:00 CEST = 17:00-19:00 UTC); the reader leaves them to the
    # quality step, and the row after them keeps a one-hour duration
    for h in (17, 18, 19):
        assert utc(f"2026-10-01 {h}:00") not in f.index
    assert f.index[12] == utc("2026-10-01 20:00") and f["duration"].iat[12] == 3600.0


def test_dst_fall_back_25_hour_day():
    f, m = read_log(FIX / "heron_fen_m4_dst_fall.csv", timezone="America/Chicago")
    # 48 consecutive hours in UTC although the local label 2026-11-01 01:00 appears twice
    assert len(f) == 48 and (np.diff(f.index.asi8) == 3600 * 10**9).all()
    rows = np.flatnonzero(f["source_row"].isin([20, 21]).to_numpy())
    assert list(f.index[rows]) == [utc("2026-11-01 06:00"), utc("2026-11-01 07:00")]  # 01:00 CDT, then 01:00 CST
    start_local = (f.index - pd.Timedelta(hours=1)).tz_convert("America/Chicago")
    assert (start_local.date == dt.date(2026, 11, 1)).sum() == 25
    assert f["pressure_gauge"].iat[0] == pytest.approx(180 * PSI) and f["volume_line"].iat[1] == pytest.approx(1001 * FT3)
    assert m.units["volume_line"] == "ft3"  # suffix unit 'Uncorrected volume ft3'


def test_dst_spring_forward_23_hour_day_flow_rate():
    f, m = read_log(FIX / "fv_m1_dst_spring.csv", timezone="Europe/Berlin")
    assert len(f) == 48 and (np.diff(f.index.asi8) == 3600 * 10**9).all()
    start_local = (f.index - pd.Timedelta(hours=1)).tz_convert("Europe/Berlin")
    assert (start_local.date == dt.date(2026, 3, 29)).sum() == 23
    # label 03:00 CEST follows 01:00 CET: both one hour
    a = f.index.get_loc(utc("2026-03-29 00:00"))
    assert f.index[a + 1] == utc("2026-03-29 01:00") and f["duration"].iat[a + 1] == 3600
    # volume = flow rate x duration: 50 m3/h or 60 m3/h for one hour
    assert f["volume_line"].iat[0] == pytest.approx(50.0) and f["volume_line"].iat[1] == pytest.approx(60.0)
    assert m.volume_from == "flow rate"


def test_iso_offsets_irregular_interval_absolute_pressure():
    f, m = read_log(FIX / "tallow_bridge_b2_15min_offsets.csv", timezone="Europe/Berlin")
    assert f.index[0] == utc("2026-10-24 20:15") and len(f) == 12
    assert m.nominal_interval_s == 900.0
    assert f["duration"].iat[0] == 900.0  # first row: the median spacing
    assert f["pressure_line"].iat[0] == pytest.approx(850e3) and "pressure_gauge" not in f
    assert f["temperature_line"].iat[0] == pytest.approx(285.15)
    assert f["volume_line"].iat[0] == pytest.approx(90.0 * 0.25)  # 90 m3/h for 15 min
    i = f.index.get_loc(utc("2026-10-24 21:50"))  # the one 20-minute interval
    assert f["duration"].iat[i] == 1200.0 and f["volume_line"].iat[i] == pytest.approx(90.0 / 3)


def test_cp1252_tab_text_interval_start_labels():
    f, m = read_log(FIX / "heron_fen_m4_start_cp1252.txt", timezone="America/Chicago", interval_label="start")
    assert m.sources[0]["encoding"] == "cp1252" and m.sources[0]["delimiter"] == "\t"
    assert m.interval_label == "start" and len(f) == 24
    # interval starting 2026-10-06 00:00 CDT ends 01:00 CDT = 06:00 UTC
    assert f.index[0] == utc("2026-10-06 06:00") and f.index[-1] == utc("2026-10-07 05:00")
    assert f["pressure_line"].iat[0] == pytest.approx(264.7 * PSI)
    assert f["temperature_line"].iat[0] == pytest.approx(degF(50))
    assert f["volume_line"].iat[0] == pytest.approx(1.25 * 1000 * FT3)  # 1.25 Mcf
    assert f["volume_corrected_site"].iat[1] == pytest.approx(21350.0 * FT3)  # '21,350.0' scf


def test_header_label_wins_over_setting():
    f, m = read_log(FIX / "heron_fen_m4_start_cp1252.txt", timezone="America/Chicago", interval_label="end")
    assert f.index[0] == utc("2026-10-06 06:00") and any("says interval start" in n for n in m.notes)


def test_month_in_three_files_with_overlaps():
    files = [FIX / f"fv_m1_part{k}.csv" for k in (1, 2, 3)]
    # part2 and part3 differ in one shared hour: refused unless the user says which export wins
    with pytest.raises(InputError, match="fv_m1_part2.csv row 26 and fv_m1_part3.csv row 2") as e:
        read_log(files, timezone="Europe/Berlin")
    assert "--overlap later" in e.value.hint
    f, m = read_log(files, timezone="Europe/Berlin", overlap="earlier")
    assert len(f) == 72 and (np.diff(f.index.asi8) == 3600 * 10**9).all()
    assert f.index[0] == utc("2026-10-01 05:00") and f.index[-1] == utc("2026-10-04 04:00")
    assert m.identical_overlap_rows == 1  # part1/part2 repeat hour 24 exactly
    assert m.duplicates == [{"time": "2026-10-03T05:00:00+00:00", "kept": "fv_m1_part2.csv row 26",
                             "dropped": "fv_m1_part3.csv row 2", "columns": ["volume_line"]}]
    i = f.index.get_loc(utc("2026-10-03 05:00"))
    assert f["flag_duplicate"].iat[i] and f["volume_line"].iat[i] == 548.0 and f["flag_duplicate"].sum() == 1
    # volumes 500 + hour for hours 0..71
    assert f["volume_line"].sum() == pytest.approx(sum(500 + h for h in range(72)))
    assert [s["file"] for s in m.sources] == ["fv_m1_part1.csv", "fv_m1_part2.csv", "fv_m1_part3.csv"]
    # the later file's row: 555 m3 (fixture part3 row 2), one more interval of 7 m3
    g, _ = read_log(files, timezone="Europe/Berlin", overlap="later")
    assert g.index.equals(f.index) and g["volume_line"].iat[i] == 555.0
    assert g["volume_line"].sum() == pytest.approx(f["volume_line"].sum() + 7.0)
    # 'earlier' and 'later' go by the order the files are given
    h, _ = read_log(files[::-1], timezone="Europe/Berlin", overlap="earlier")
    assert h.index.equals(f.index) and h["volume_line"].iat[i] == 555.0


def test_time_going_backwards_and_unreadable_time():
    text = ("Interval end,P [bar(g)],T [degC],Volume [m3]\n2026-10-01 07:00,1,10,5\n2026-10-01 09:00,1,10,5\n"
            "2026-10-01 08:00,1,10,5\nnot a time,1,10,5\n2026-10-01 10:00,1,10,5\n")
    f, m = parse_log(io.BytesIO(text.encode()), name="b.csv")
    assert list(f.index.hour) == [7, 8, 9, 10]
    assert f["flag_time_backwards"].tolist() == [False, True, False, False]
    # 'not a time' sits between 08:00 and 10:00 but 09:00 is taken: it cannot be placed; the next row
    # of the file carries the flag so that the month's counts show it
    assert m.dropped_rows == [{"file": "b.csv", "sheet": None, "row": 5, "reason": "the time cannot be read",
                               "value": "not a time"}]
    assert f["flag_unreadable"].tolist() == [False, False, False, True]


def test_unreadable_time_never_placed_by_guess():
    # a row whose time cannot be read is left out and recorded (never placed between its neighbours:
    # a value enters a total only when its interval is known); the next row carries the flag and the
    # quality step sees the missing 08:00 interval (no result there, counted)
    text = ("Interval end,P [bar(g)],T [degC],Volume [m3]\n2026-10-01 06:00,1,10,5\n2026-10-01 07:00,1,10,5\n"
            "31/02/2026 25:61,1,10,6\n2026-10-01 09:00,1,10,5\n2026-10-01 10:00,1,10,5\n")
    f, m = parse_log(io.BytesIO(text.encode()), name="b.csv")
    assert list(f.index.hour) == [6, 7, 9, 10] and f["volume_line"].tolist() == [5, 5, 5, 5]
    assert f["flag_unreadable"].tolist() == [False, False, True, False]
    assert m.dropped_rows == [{"file": "b.csv", "sheet": None, "row": 4, "reason": "the time cannot be read",
                               "value": "31/02/2026 25:61"}]


def test_nonexistent_spring_hour_dropped_with_reason():
    text = ("Interval end,P [bar(g)],T [degC],Volume [m3]\n2026-03-29 01:00,1,10,5\n2026-03-29 02:00,1,10,5\n"
            "2026-03-29 03:00,1,10,5\n")
    f, m = parse_log(io.BytesIO(text.encode()), name="s.csv", timezone="Europe/Berlin")
    assert len(f) == 2 and "does not exist" in m.dropped_rows[0]["reason"] and m.dropped_rows[0]["row"] == 3
    assert f["flag_unreadable"].tolist() == [False, True]


def test_spreadsheet_serial_times_in_text():
    text = "Interval end,P [bar(g)],T [degC],Volume [m3]\n46296.25,1,10,5\n46296.291666667,1,10,5\n"
    f, _ = parse_log(io.BytesIO(text.encode()), name="s.csv")
    # days since 1899-12-30 (the 1900 date system of spreadsheet programs; common practice)
    assert f.index[0] == pd.Timestamp(dt.datetime(1899, 12, 30) + dt.timedelta(days=46296.25), tz="UTC")
    assert f.index[1] - f.index[0] == pd.Timedelta(hours=1)


def test_slash_dates_decided_by_the_series():
    rows = "".join(f"{d:02d}/10/2026 07:00,1,10,5\n" for d in range(1, 4))  # day first: 01/10, 02/10, 03/10
    f, _ = parse_log(io.BytesIO(("Interval end,P [bar(g)],T [degC],Volume [m3]\n" + rows).encode()), name="d.csv")
    assert list(f.index.day) == [1, 2, 3] and list(f.index.month) == [10, 10, 10]


def test_column_map_overrides_detection():
    text = "When,P1,Tgas [degC],Vm [m3]\n2026-10-01 07:00,3.5,10,5\n2026-10-01 08:00,3.6,10,5\n"
    f, m = parse_log(io.BytesIO(text.encode()), name="c.csv",
                     column_map={"When": "interval_end", "p1": "pressure_gauge [bar]"})
    assert f["pressure_gauge"].iat[1] == pytest.approx(3.6 * BAR)
    with pytest.raises(SettingsError, match="not found in any log file"):
        parse_log(io.BytesIO(text.encode()), name="c.csv", column_map={"When": "interval_end", "P1": "pressure_gauge [bar]",
                                                                       "P2": "ignore"})


def test_errors_name_file_row_and_column():
    with pytest.raises(InputError, match="missing required column") as e:
        parse_log(io.BytesIO(b"Interval end,Line pressure [bar(g)],Volume [m3]\n2026-10-01 07:00,1,5\n"), name="m.csv")
    assert e.value.file == "m.csv" and e.value.row == 1 and e.value.column == "line temperature"
    assert "found: 'Interval end'" in e.value.hint
    with pytest.raises(UnitError, match="unknown pressure unit 'bananas'") as e:
        parse_log(io.BytesIO(b"Interval end,Pressure (bananas),T [degC],V [m3]\n2026-10-01 07:00,1,2,5\n"), name="u.csv")
    assert e.value.column == "Pressure (bananas)"
    with pytest.raises(UnitError, match="does not say gauge or absolute"):
        parse_log(io.BytesIO(b"Interval end,P [bar],T [degC],V [m3]\n2026-10-01 07:00,1,2,5\n"), name="g.csv")
    with pytest.raises(InputError, match="two columns for the same quantity"):
        parse_log(io.BytesIO(b"Interval end,P [bar(g)],Pressure (psig),T [degC],V [m3]\n2026-10-01 07:00,1,1,2,5\n"),
                  name="d.csv")


def test_one_bad_cell_in_a_long_log_is_a_flagged_row():
    lines = ["Interval end,P [bar(g)],T [degC],Volume [m3]"]
    t0 = dt.datetime(2026, 10, 1, 7)
    for i in range(2000):
        lines.append(f"{t0 + dt.timedelta(hours=i):%Y-%m-%d %H:%M},{'x1,2' if i == 777 else '4.5'},10,5")
    lines[778] = lines[778].replace('x1,2', '"x1,2"')
    f, m = parse_log(io.BytesIO("\n".join(lines).encode()), name="long.csv")
    assert len(f) == 2000 and f["flag_unreadable"].sum() == 1 and m.unreadable[0]["row"] == 779


def test_ods_date_and_time_cells():
    f, m = read_log(FIX / "tallow_bridge_b2_log.ods", timezone="Europe/Berlin")
    assert m.sources[0]["sheet"] == "Log" and len(f) == 12
    # 14.10.2026 01:00 CEST (date cell + time cell) = 13.10.2026 23:00 UTC
    assert f.index[0] == utc("2026-10-13 23:00") and f["source_row"].iat[0] == 3
    assert f["pressure_gauge"].iat[0] == pytest.approx(420e3)  # kPa(g): 1E+03 Pa (NIST SP 811)
    assert f["volume_corrected_site"].iat[11] == 71.0 and f["volume_line"].sum() == sum(40 + i for i in range(12))


def test_time_column_alone_with_dates_and_bad_zone():
    text = "Time,P [bar(g)],T [degC],Volume [m3]\n2026-10-01 07:00,1,10,5\n2026-10-01 08:00,1,10,5\n"
    f, _ = parse_log(io.BytesIO(text.encode()), name="t.csv")
    assert list(f.index.hour) == [7, 8]
    with pytest.raises(SettingsError, match="unknown time zone"):
        parse_log(io.BytesIO(text.encode()), name="t.csv", timezone="Mars/Olympus")


def test_start_label_does_not_move_index_readings():
    text = "Interval end,P [bar(g)],T [degC],Meter index [m3]\n" + "".join(
        f"2026-10-08 {h:02d}:00,2,10,{1000 + 10 * h}\n" for h in range(5))
    f, m = parse_log(io.BytesIO(text.encode()), name="i.csv", interval_label="start")
    # header says 'Interval end' anyway; with a neutral header the readings stay where they are
    g, n = parse_log(io.BytesIO(text.replace("Interval end", "Timestamp").encode()), name="i.csv",
                     interval_label="start")
    assert list(g.index.hour) == [1, 2, 3, 4] and any("instants" in x for x in n.notes)
    assert g["volume_line"].tolist() == [10.0] * 4


def test_header_of_unknown_names_is_reported_with_what_was_found():
    text = "Heron Fen M4 (invented)\nZeit;Druck;Grad;Menge\n01.10.2026 07:00;1,5;10;5\n"
    with pytest.raises(InputError, match="missing required column") as e:
        parse_log(io.BytesIO(text.encode()), name="de.csv")
    assert e.value.row == 2 and "'Druck' (not used)" in e.value.hint and "--column" in e.value.hint


def test_xlsm_and_serial_numbers_in_a_workbook(tmp_path):
    import openpyxl

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Log"
    ws.append(["Interval end", "Line pressure [bar(g)]", "Line temperature [degC]", "Uncorrected volume [m3]"])
    for k in range(3):
        ws.append([46296.25 + k / 24, 4.5, 12.0, 100.0 + k])  # serial day numbers stored as plain numbers
    p = tmp_path / "fv_m1.xlsm"
    wb.save(p)
    f, m = read_log(p, timezone="UTC")
    # days since 1899-12-30 (the 1900 date system of spreadsheet programs; common practice)
    assert f.index[0] == pd.Timestamp(dt.datetime(1899, 12, 30) + dt.timedelta(days=46296.25), tz="UTC")
    assert f["volume_line"].tolist() == [100.0, 101.0, 102.0] and m.sources[0]["sheet"] == "Log"
