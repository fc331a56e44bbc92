"""The log reader's record reaches the outputs: the JSON summary's `log` section, the workbook's
"Source data" sheet and the edit record CSV.

Expected values are fixture facts: each test reads the invented fixture file itself with the
standard csv module (header line, line number of a bad cell, rows of two files with the same
time) and checks that the outputs point at the same file, row, column and text. Edit record
values are compared with the MonthResult's own `edits` field.
"""

from __future__ import annotations

import csv
import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from openpyxl import load_workbook

from meterfix.month import run_files
from meterfix.engine.settings import build_settings
from meterfix.readers.logs import LogMetadata
from meterfix.writers import write_outputs
from meterfix.writers.source_record import LISTED, log_record

ROOT = Path(__file__).resolve().parents[1]
LOGS = ROOT / "fixtures" / "logs"
GAS = "methane=0.9,ethane=0.05,propane=0.02,nitrogen=0.02,carbon_dioxide=0.01"
OPTIONS = {"base": "iso-15c", "elevation": "50 m", "substitution": "interpolate"}


def _lines(path):
    """(1-based line number, cells) of a CSV fixture, read with the csv module."""
    with open(path, newline="", encoding="utf-8-sig") as fh:
        return list(enumerate(csv.reader(fh), start=1))


def _run(logs, tmp_path, **options):
    s = build_settings(None, {**OPTIONS, **options})
    result = run_files(logs, s, gas=GAS, uncertainty=False)
    written = write_outputs(result, tmp_path / "out")
    summary = json.loads(written["summary"].read_text(encoding="utf-8"))
    return result, written, summary


def _sheet_rows(ws):
    return [tuple(c.value for c in row) for row in ws.iter_rows()]


def _table_after(ws, *headers):
    """Rows of the table whose header row starts with the given headers (until a blank row)."""
    rows = _sheet_rows(ws)
    for i, row in enumerate(rows):
        if tuple(row[:len(headers)]) == headers:
            out = []
            for r in rows[i + 1:]:
                if r[0] is None:
                    break
                out.append(r)
            return out
    raise AssertionError(f"no table headed {headers!r} on {ws.title}")


@pytest.fixture(scope="module")
def faults(tmp_path_factory):
    return _run(LOGS / "heron_fen_m4_faults.csv", tmp_path_factory.mktemp("faults"))


def test_summary_names_the_file_its_rows_and_how_each_column_was_read(faults):
    _, _, d = faults
    lines = _lines(LOGS / "heron_fen_m4_faults.csv")
    header = lines[0][1]
    data_rows = [cells for _, cells in lines[1:] if any(c.strip() for c in cells)]
    log = d["log"]
    assert [(f["file"], f["sheet"], f["header_row"], f["rows"]) for f in log["files"]] == \
        [("heron_fen_m4_faults.csv", None, 1, len(data_rows))]
    cols = log["columns"]["heron_fen_m4_faults.csv"]
    # every header of the file is accounted for: read as a quantity or listed as not used
    assert sorted([c["header"] for c in cols.values()] + log["ignored_columns"]["heron_fen_m4_faults.csv"]) == \
        sorted(header)
    assert cols["pressure_gauge"] == {"header": "Line pressure [bar(g)]", "unit": "bar(g)",
                                      "meaning": "line pressure, gauge", "unit_inside": "Pa"}
    assert cols["temperature_line"]["unit"] == "degC" and cols["temperature_line"]["unit_inside"] == "K"
    assert cols["volume_line"]["header"] == "Uncorrected volume [m3]"
    assert log["timezone"] == "UTC" and log["interval_label"] == "end"
    assert log["nominal_interval_s"] == 3600.0  # the fixture is hourly


def test_summary_points_at_the_unreadable_cell(faults):
    _, _, d = faults
    lines = _lines(LOGS / "heron_fen_m4_faults.csv")
    header = lines[0][1]
    where = [(n, header[j], c) for n, cells in lines for j, c in enumerate(cells) if c == "#VALUE!"]
    assert len(where) == 1  # fixtures/logs/README.md: one '#VALUE!' cell
    line, column, text = where[0]
    u = d["log"]["unreadable_cells"]
    assert u["count"] == 1 and u["listed"] == 1
    e = u["entries"][0]
    assert (e["file"], e["sheet"], e["row"], e["column"], e["text"]) == \
        ("heron_fen_m4_faults.csv", None, line, column, text)
    assert d["log"]["dropped_rows"] == {"count": 0, "listed": 0, "entries": []}
    assert d["log"]["reader_flags"]["unreadable"] == 1


def test_source_data_sheet_lists_the_cell_as_text(faults):
    _, written, d = faults
    wb = load_workbook(written["workbook"])
    assert wb.sheetnames[-1] == "Source data"
    ws = wb["Source data"]
    e = d["log"]["unreadable_cells"]["entries"][0]
    problems = _table_after(ws, "File", "Sheet", "Row")
    hits = [r for r in problems if r[2] == e["row"]]
    assert len(hits) == 1
    assert hits[0][0] == e["file"] and hits[0][3] == e["column"] and hits[0][4] == "#VALUE!"
    cell = next(c for row in ws.iter_rows() for c in row if c.value == "#VALUE!")
    assert cell.data_type == "s"  # the text as written, not a spreadsheet error value
    mapping = _table_after(ws, "File", "Column as written")
    assert ("heron_fen_m4_faults.csv", "Line pressure [bar(g)]", "bar(g)", "line pressure, gauge", "pressure_gauge",
            "Pa") in [r[:6] for r in mapping]
    ov = wb["Overview"]
    guide = [r for r in _sheet_rows(ov) if r[0] == "Source data"]
    assert guide and "row" in guide[0][1]


def test_edits_csv_holds_the_result_edit_record(faults):
    result, written, d = faults
    path = written["edits"]
    # no --meter given: the log's file name stands in for the meter name
    assert path.name == "heron_fen_m4_faults_2026-10_edits.csv" and path.parent == written["intervals"].parent
    e = pd.read_csv(path, keep_default_na=False, na_values=[""])
    e = pd.read_csv(path, keep_default_na=False, na_values=[""])
    assert len(e) == len(result.edits) == d["edits"] > 0
    assert len(e) == len(result.edits) == d["edits"] > 0
    assert list(e.columns[:7]) == ["interval_end_utc", "what", "unit", "original", "new", "method", "reason"]
    want_t = pd.DatetimeIndex(pd.to_datetime(result.edits["time"], utc=True))
    assert (pd.to_datetime(e["interval_end_utc"], utc=True).to_numpy() == want_t.to_numpy()).all()
    assert list(e["what"]) == list(result.edits["what"].astype(str))
    for c in ("original", "new"):
        np.testing.assert_allclose(e[c].to_numpy(float), result.edits[c].to_numpy(float), rtol=1e-9, equal_nan=True)
    # the '#VALUE!' volume (fixture line 58, 2026-10-22T13:00 UTC) was substituted, with no original value
    lines = _lines(LOGS / "heron_fen_m4_faults.csv")
    stamp = next(cells[0] for _, cells in lines if "#VALUE!" in cells)
    row = e[(e["interval_end_utc"] == stamp + ":00Z") & (e["what"] == "volume_line")]
    assert len(row) == 1 and np.isnan(row["original"].iat[0]) and row["unit"].iat[0] == "m3"


def test_joined_files_report_the_differing_duplicate_where_it_is(tmp_path):
    parts = [LOGS / f"fv_m1_part{k}.csv" for k in (1, 2, 3)]
    _, written, d = _run(parts, tmp_path, overlap="earlier")
    rows = {}  # time → [(file, line, values)] from the files themselves
    for p in parts:
        lines = _lines(p)
        for n, cells in lines[1:]:
            rows.setdefault(cells[0], []).append((p.name, n, cells[1:], lines[0][1]))
    repeated = {t: v for t, v in rows.items() if len(v) > 1}
    identical = [t for t, v in repeated.items() if v[0][2] == v[1][2]]
    differing = [t for t, v in repeated.items() if v[0][2] != v[1][2]]
    assert len(identical) == 1 and len(differing) == 1  # fixtures/logs/README.md
    (kept, dropped) = repeated[differing[0]]
    header = dropped[3]
    changed = [header[j + 1] for j, (a, b) in enumerate(zip(kept[2], dropped[2])) if a != b]
    log = d["log"]
    assert log["identical_overlap_rows"] == 1
    dup = log["differing_duplicates"]
    assert dup["count"] == 1
    e = dup["entries"][0]
    assert (e["file"], e["row"], e["column"]) == (dropped[0], dropped[1], ", ".join(changed))
    assert e["kept"] == f"{kept[0]} row {kept[1]}"
    assert [f["file"] for f in log["files"]] == [p.name for p in parts]
    assert set(log["columns"]) == {p.name for p in parts}
    ws = load_workbook(written["workbook"])["Source data"]
    problems = _table_after(ws, "File", "Sheet", "Row")
    assert [(r[0], r[2], r[5]) for r in problems] == [(dropped[0], dropped[1], "differing duplicate")]


def test_rows_left_out_and_formula_text(tmp_path):
    """An invented log: an unreadable time that cannot be placed, a local time skipped by the spring
    clock change (2026-03-29 02:00 does not exist in Europe/Berlin: EU summer time starts at
    01:00 UTC on the last Sunday of March, common practice), a formula-like cell, status texts."""
    text = ["Interval end,Line pressure [bar(g)],Line temperature [degC],Uncorrected volume [m3],Status,Operator initials",
            "2026-03-28 20:00,20.0,8.0,500,,a",
            "2026-03-28 21:00,20.0,8.0,500,door open,b",
            "2026-03-28 22:00,20.0,=1+2,500,door open,c",
            "2026-03-28 23:00,20.0,8.0,500,,d",
            "no clock here,20.0,8.0,500,,e",
            "2026-03-29 00:00,20.0,8.0,500,,f",
            "2026-03-29 01:00,20.0,8.0,500,battery low,g",
            "2026-03-29 02:00,20.0,8.0,500,,h",
            "2026-03-29 03:00,20.0,8.0,500,,i",
            "2026-03-29 04:00,20.0,8.0,500,,j"]
    log = tmp_path / "x9_log.csv"
    log.write_text("\n".join(text) + "\n", encoding="utf-8")
    _, written, d = _run(log, tmp_path, timezone="Europe/Berlin")
    rec = d["log"]
    dropped = rec["dropped_rows"]["entries"]
    assert [(e["row"], e["text"], e["column"]) for e in dropped] == \
        [(6, "no clock here", "Interval end"), (9, "2026-03-29 02:00", "Interval end")]
    assert "does not exist" in dropped[1]["problem"]
    u = rec["unreadable_cells"]["entries"]
    assert [(e["row"], e["column"], e["text"]) for e in u] == [(4, "Line temperature [degC]", "=1+2")]
    assert rec["ignored_columns"]["x9_log.csv"] == ["Operator initials"]
    assert rec["status_texts"]["count"] == 3 and rec["status_texts"]["distinct"] == 2
    assert [(s["text"], s["count"], s["row"]) for s in rec["status_texts"]["by_text"]] == \
        [("battery low", 1, 8), ("door open", 2, 3)]
    ws = load_workbook(written["workbook"])["Source data"]
    problems = _table_after(ws, "File", "Sheet", "Row")
    assert [(r[2], r[4]) for r in problems] == [(4, "'=1+2"), (6, "no clock here"), (9, "2026-03-29 02:00")]
    status = _table_after(ws, "Text", "First in file")
    assert [(r[0], r[4], r[2]) for r in status] == [("battery low", 1, 8), ("door open", 2, 3)]


def test_month_in_memory_has_no_log_record(tmp_path):
    from workbook_month import plain_month

    r, _ = plain_month()
    written = write_outputs(r, tmp_path / "out")
    d = json.loads(written["summary"].read_text())
    assert d["log"] is None
    ws = load_workbook(written["workbook"])["Source data"]
    assert "in memory" in ws.cell(row=2, column=1).value
    assert written["edits"].read_text().splitlines()[0].startswith("interval_end_utc,what,unit,original,new")
    man = json.loads(written["manifest"].read_text())
    assert man["outputs"]["edits"] == written["edits"].name


def test_summary_lists_the_first_entries_and_counts_all():
    meta = LogMetadata(sources=[{"file": "a.csv", "sheet": None, "rows": 500}, {"file": "b.xlsx", "sheet": "Log"}],
                       columns={"a.csv": {"pressure_gauge": "P [bar(g)]"}, "b.xlsx": {"pressure_gauge": "P [bar(g)]"}},
                       units={"pressure_gauge": "bar(g)"})
    # entries recorded out of order: b.xlsx first, rows descending
    meta.unreadable = [{"file": "b.xlsx", "sheet": "Log", "row": 5, "column": "P [bar(g)]", "value": "x"}]
    meta.unreadable += [{"file": "a.csv", "sheet": None, "row": r, "column": "P [bar(g)]", "value": "?"}
                         for r in range(130, 10, -1)]
    meta.unreadable_count = 400  # the reader counts beyond what it lists
    rec = log_record(meta)
    u = rec["unreadable_cells"]
    assert u["count"] == 400 and u["listed"] == LISTED == len(u["entries"])
    # sorted by the order the files were read, then row
    assert [e["row"] for e in u["entries"]] == list(range(11, 11 + LISTED))
    full = log_record(meta, limit=None)["unreadable_cells"]
    assert full["listed"] == 121 and full["entries"][-1]["file"] == "b.xlsx" and full["entries"][-1]["sheet"] == "Log"
    assert json.loads(json.dumps(rec)) == rec  # JSON-safe as it stands
    assert log_record(None) is None
