"""Many meters: `meterfix fleet` over a folder of meter folders, in parallel, with a fleet summary.

The fleet (invented): the demo meter FV-M1 (its shipped files), Heron Fen M4 (a US-unit log) and a
third meter whose log lacks its temperature column. The two good meters must give exactly what
`meterfix correct` gives for each alone; the bad one is reported, exit 2, without losing the others.
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest
from typer.testing import CliRunner

from meterfix.cli import app

FIXTURES = Path(__file__).resolve().parents[1] / "fixtures"
GAS = "methane=0.93,ethane=0.035,propane=0.008,nitrogen=0.015,carbon_dioxide=0.012"


def _fleet(tmp_path, with_bad=True):
    root = tmp_path / "fleet"
    a = root / "fv-m1"
    shutil.copytree(FIXTURES / "demo", a, ignore=shutil.ignore_patterns("*.py", "__pycache__"))
    b = root / "heron-fen-m4"
    b.mkdir(parents=True)
    shutil.copy(FIXTURES / "logs" / "heron_fen_m4_us.csv", b / "log.csv")
    (b / "gas.csv").write_text("Component,Mole percent [mol%]\nmethane,93\nethane,3.5\npropane,0.8\n"
                               "nitrogen,1.5\ncarbon_dioxide,1.2\n", encoding="utf-8")
    (b / "site.toml").write_text('meter = "Heron Fen M4"\nbase = "us-14.73-60f"\natmospheric_pressure = "14.4 psia"\n'
                                 'timezone = "America/Chicago"\ngas_day_start = "09:00"\n'
                                 '[files]\nlogs = ["log.csv"]\ncomposition = "gas.csv"\n', encoding="utf-8")
    if with_bad:
        broken_meter(root)
    return root


def broken_meter(root: Path) -> Path:
    """A meter folder whose log lacks its temperature column."""
    c = root / "broken-m9"
    c.mkdir(parents=True)
    (c / "log.csv").write_text("Interval end,Line pressure [bar(g)],Uncorrected volume [m3]\n"
                               "2026-10-01 07:00,30,100\n", encoding="utf-8")
    (c / "site.toml").write_text('base = "normal-0c"\nelevation = "100 m"\n[files]\nlogs = ["log.csv"]\n',
                                 encoding="utf-8")
    return c


def test_fleet_matches_single_runs_and_reports_the_bad_meter(tmp_path):
    root = _fleet(tmp_path)
    out = tmp_path / "out"
    r = CliRunner().invoke(app, ["fleet", str(root), "--out", str(out), "--workers", "2"])
    assert r.exit_code == 2, r.output  # one meter could not be read: bad input, but the others are kept
    assert "broken-m9" in r.output and "temperature" in r.output.lower()
    rows = {row["meter_folder"]: row for row in json.loads((out / "fleet_summary.json").read_text())}
    assert rows["broken-m9"]["status"] == "error"
    assert rows["fv-m1"]["status"] == rows["heron-fen-m4"]["status"] == "ok"
    # each good meter alone through `meterfix correct` gives the same totals
    single = tmp_path / "single"
    r1 = CliRunner().invoke(app, ["correct", "--site", str(root / "heron-fen-m4" / "site.toml"),
                                  str(root / "heron-fen-m4" / "log.csv"), "--composition",
                                  str(root / "heron-fen-m4" / "gas.csv"), "--out", str(single), "--quiet"])
    assert r1.exit_code == 0, r1.output
    alone = json.loads(next(single.glob("*_summary.json")).read_text())
    assert rows["heron-fen-m4"]["base_volume_m3"] == pytest.approx(alone["totals"]["base_volume_m3"], rel=1e-12)
    assert rows["heron-fen-m4"]["energy_MJ"] == pytest.approx(alone["totals"]["energy_MJ"], rel=1e-12)
    assert (out / "Heron_Fen_M4").is_dir() and (out / "FV-M1").is_dir()
    assert "fleet_summary.csv" in {p.name for p in out.iterdir()}


def test_fleet_sequential_equals_parallel(tmp_path):
    root = _fleet(tmp_path, with_bad=False)
    seq, par = tmp_path / "seq", tmp_path / "par"
    assert CliRunner().invoke(app, ["fleet", str(root), "--out", str(seq), "--workers", "1"]).exit_code == 0
    assert CliRunner().invoke(app, ["fleet", str(root), "--out", str(par), "--workers", "2",
                                    "--workbooks"]).exit_code == 0
    assert (seq / "fleet_summary.csv").read_bytes() == (par / "fleet_summary.csv").read_bytes()
    assert json.loads((seq / "fleet_summary.json").read_text()) == json.loads((par / "fleet_summary.json").read_text())
    # --workbooks adds each meter's month workbook and changes nothing else
    for name in ("FV-M1", "Heron_Fen_M4"):
        a = {p.name for p in (seq / name).iterdir()}
        b = {p.name for p in (par / name).iterdir()}
        assert b - a == {f"{name}_2026-10.xlsx"}, (a, b)


def test_fleet_refuses_existing_summary_without_overwrite(tmp_path):
    root = _fleet(tmp_path, with_bad=False)
    out = tmp_path / "out"
    assert CliRunner().invoke(app, ["fleet", str(root), "--out", str(out)]).exit_code == 0
    again = CliRunner().invoke(app, ["fleet", str(root), "--out", str(out)])
    assert again.exit_code == 2 and "already exists" in again.output


def test_fleet_table_says_what_each_meters_summary_says(tmp_path):
    """One row per meter in CSV, JSON and the workbook; values from each meter's own summary;
    per-meter workbooks only with --workbooks."""
    import csv

    import openpyxl

    from meterfix.writers.fleet import FLEET_COLUMNS

    root = _fleet(tmp_path)
    out = tmp_path / "out"
    r = CliRunner().invoke(app, ["fleet", str(root), "--out", str(out), "--quiet"])
    assert r.exit_code == 2 and "approved conversion device" in r.output
    with open(out / "fleet_summary.csv", newline="", encoding="utf-8") as fh:
        table = list(csv.DictReader(fh))
    assert list(table[0]) == list(FLEET_COLUMNS)
    assert [t["meter_folder"] for t in table] == ["broken-m9", "fv-m1", "heron-fen-m4"]
    rows = {row["meter_folder"]: row for row in json.loads((out / "fleet_summary.json").read_text())}
    for folder, name in (("fv-m1", "FV-M1"), ("heron-fen-m4", "Heron_Fen_M4")):
        summary = json.loads(next((out / name).glob("*_summary.json")).read_text())
        row = rows[folder]
        for key in ("base_volume_m3", "energy_MJ", "ideal_gas_error_pct", "expanded_uncertainty_pct",
                    "uncorrected_volume_m3"):
            assert row[key] == summary["totals"][key], key
        assert row["base_pressure_Pa"] == summary["base_conditions"]["pressure_Pa"]
        assert row["outputs"] == name
        # no month workbook without --workbooks; the text outputs are all there
        names = sorted(p.name for p in (out / name).iterdir())
        assert not any(n.endswith(".xlsx") for n in names)
        assert {n.split("_")[-1] for n in names} >= {"summary.json", "intervals.csv", "days.csv", "edits.csv",
                                                     "manifest.json"}
    # the demo meter: invoice billed high, explained step by step; its site corrector left at ideal gas
    fv = rows["fv-m1"]
    summary = json.loads(next((out / "FV-M1").glob("*_summary.json")).read_text())
    inv = summary["invoice"]["totals"]
    assert fv["invoice_compared_on"] == inv["compared_on"]
    assert fv["invoice_difference_pct"] == inv[f"{inv['compared_on']}_difference_pct"]
    assert "not explained" in fv["invoice_explained_by"]
    assert fv["corrector_difference_pct"] == summary["corrector_check"]["size_pct"]
    assert summary["corrector_check"]["findings"][0]["description"] in fv["corrector_finding"]  # words, not the code
    assert rows["heron-fen-m4"]["invoice_difference_pct"] is None
    assert rows["broken-m9"]["status"] == "error" and "log.csv" in rows["broken-m9"]["error"]

    wb = openpyxl.load_workbook(out / "fleet_summary.xlsx")
    assert wb.sheetnames == ["Meters", "Notes"]
    ws = wb["Meters"]
    # print-ready: landscape, one page wide, the header row repeated on every page
    assert ws.page_setup.orientation == "landscape"
    assert ws.sheet_properties.pageSetUpPr.fitToPage and ws.page_setup.fitToWidth in (None, 1)  # 1: the default
    assert ws.page_setup.fitToHeight == 0
    assert ws.print_title_rows.replace("$", "") == "4:4"
    head = [c.value for c in ws[4]]
    vcol = head.index("Base volume [m3 at base]") + 1
    ecol = head.index("Energy [GJ]") + 1
    by_meter = {ws.cell(row=i, column=1).value: i for i in range(5, 8)}
    i = by_meter["heron-fen-m4"]
    assert ws.cell(row=i, column=vcol).value == pytest.approx(rows["heron-fen-m4"]["base_volume_m3"], rel=1e-15)
    assert ws.cell(row=i, column=ecol).value == pytest.approx(rows["heron-fen-m4"]["energy_MJ"] / 1e3, rel=1e-15)
    assert ws.cell(row=by_meter["broken-m9"], column=head.index("Status") + 1).value == "error"
    # two bases (101.325 kPa / 0 degC and 14.73 psia / 60 degF) and two gas months: never one sum of
    # them, but one total per group, each naming its base and month, and a line saying so
    labels = {i: ws.cell(row=i, column=1).value for i in range(8, 14) if ws.cell(row=i, column=1).value}
    assert "different base conditions" in labels[9] and "2 totals" in labels[9]
    totals = {v: ws.cell(row=i, column=vcol).value for i, v in labels.items() if str(v).startswith("Total of")}
    assert len(totals) == 2
    fv = next(v for k, v in totals.items() if "101.325 kPa abs, 0 °C, gas month 2026-10" in k)
    assert fv == pytest.approx(rows["fv-m1"]["base_volume_m3"], rel=1e-15)
    hf = next(v for k, v in totals.items() if "101.56 kPa abs, 15.5556 °C" in k)  # 14.73 psia x 6.894757 kPa/psi (NIST SP 811), 60 degF
    assert hf == pytest.approx(rows["heron-fen-m4"]["base_volume_m3"], rel=1e-15)
    # every label fits its column: no cut headers or '###' numbers when printed
    for j, h in enumerate(head, start=1):
        width = ws.column_dimensions[openpyxl.utils.get_column_letter(j)].width
        assert width >= max(len(w) for w in h.split()), h
    assert "legally approved volume conversion device" in " ".join(str(c.value) for c in wb["Notes"]["A"] if c.value)


def test_fleet_workbook_bytes_repeat_and_parquet_matches(tmp_path):
    from meterfix.writers.fleet import fleet_frame, fleet_workbook_bytes

    root = _fleet(tmp_path, with_bad=True)
    out = tmp_path / "out"
    CliRunner().invoke(app, ["fleet", str(root), "--out", str(out), "--quiet"])
    rows = json.loads((out / "fleet_summary.json").read_text())
    a = fleet_workbook_bytes(rows, {"runner": "local processes"})
    assert a == fleet_workbook_bytes(rows, {"runner": "local processes"})
    assert a == (out / "fleet_summary.xlsx").read_bytes() or len(a) > 1000  # run notes may differ
    pq = pytest.importorskip("pyarrow.parquet")
    table = pq.read_table(out / "fleet_summary.parquet").to_pandas()
    frame = fleet_frame(rows)
    assert list(table.columns) == list(frame.columns)
    assert table["base_volume_m3"].tolist()[1:] == frame["base_volume_m3"].tolist()[1:]


def test_meters_of_a_lost_local_worker_are_run_again(tmp_path):
    """A worker process killed mid-run (as by the out-of-memory killer): its meters run again in
    fresh processes, the fleet table and the closing lines say so, and nothing is lost."""
    import os
    import signal
    import subprocess
    import sys
    import threading
    import time

    psutil = pytest.importorskip("psutil")
    from test_fleet_dask import _feed_fifo, _meter

    if not hasattr(os, "mkfifo"):
        pytest.skip("named pipes")
    root = tmp_path / "fleet"
    _meter(root, "lark-hollow-1", "Lark Hollow 1", seed=0)
    slow = _meter(root, "slow-m5", "Slow M5", seed=7)
    gas = (slow / "gas.csv").read_bytes()
    (slow / "gas.csv").unlink()
    os.mkfifo(slow / "gas.csv")  # the worker running this meter waits on it until the test feeds it
    out = tmp_path / "out"
    env = dict(os.environ, PYTHONPATH=str(FIXTURES.parent) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    run = subprocess.Popen([sys.executable, "-m", "meterfix", "fleet", str(root), "--out", str(out), "--workers", "2"],
                           stdout=subprocess.PIPE, stderr=subprocess.STDOUT, env=env)
    stop = threading.Event()
    feeder = threading.Thread(target=_feed_fifo, args=(slow / "gas.csv", gas, stop), daemon=True)
    try:
        deadline = time.monotonic() + 60
        # the other meter done, the slow one waiting: kill a worker process of the pool
        while not list((out / "Lark_Hollow_1").glob("*_summary.json")) if (out / "Lark_Hollow_1").exists() else True:
            assert time.monotonic() < deadline and run.poll() is None, "the fleet run did not get going"
            time.sleep(0.05)
        workers = psutil.Process(run.pid).children()
        assert workers
        os.kill(workers[0].pid, signal.SIGKILL)
        time.sleep(0.5)
        feeder.start()
        output, _ = run.communicate(timeout=90)
    finally:
        stop.set()
        if run.poll() is None:
            run.kill()
            run.wait(timeout=10)
        if feeder.is_alive():
            try:
                os.close(os.open(slow / "gas.csv", os.O_RDONLY | os.O_NONBLOCK))
            except OSError:
                pass
            feeder.join(timeout=10)
    text = output.decode()
    assert run.returncode == 0, text
    again = next(ln for ln in text.splitlines() if "run again after their worker was lost:" in ln)
    assert "slow-m5" in again
    rows = {r["meter_folder"]: r for r in json.loads((out / "fleet_summary.json").read_text())}
    assert rows["slow-m5"]["status"] == "ok" and rows["slow-m5"]["attempts"] == 2
    # the other meter had written its outputs; whether its row had come back before the pool broke is a
    # matter of timing: if not, it is run again too and replaces the outputs this run wrote (never an
    # error, never an older run's files)
    assert rows["lark-hollow-1"]["status"] == "ok" and rows["lark-hollow-1"]["attempts"] in (1, 2)
    assert ("lark-hollow-1" in again) == (rows["lark-hollow-1"]["attempts"] == 2)


def test_fleet_totals_group_by_base_month_and_energy_reference():
    from meterfix.writers.fleet import fleet_totals

    def row(folder, pb, tb, month, vb, tc=298.15, status="ok"):
        return {"meter_folder": folder, "status": status, "base_pressure_Pa": pb, "base_temperature_K": tb,
                "gas_month": month, "combustion_temperature_K": tc, "uncorrected_volume_m3": 1.0,
                "base_volume_m3": vb, "ideal_gas_base_volume_m3": vb, "energy_MJ": 10.0}

    rows = [row("a", 101325.0, 273.15, "2026-10", 100.0), row("b", 101325.0, 273.15, "2026-10", 50.0),
            row("c", 101559.77, 288.7056, "2026-10", 7.0), row("d", 101325.0, 273.15, "2026-11", 3.0),
            row("e", 101325.0, 273.15, "2026-10", 1.0, tc=288.15), row("f", 101325.0, 273.15, "2026-10", 9e9,
                                                                      status="error")]
    g = fleet_totals(rows)
    # a + b share base, month and combustion reference: 150; the others are each their own group; the
    # meter without a result is in none
    assert [(x["meter_folders"], x["base_volume_m3"]) for x in g] == [
        (["a", "b"], 150.0), (["c"], 7.0), (["d"], 3.0), (["e"], 1.0)]
    assert g[0]["energy_MJ"] == 20.0 and g[0]["gas_month"] == "2026-10"


def test_fleet_month_option_closes_that_gas_month_for_every_meter(tmp_path):
    root = _fleet(tmp_path, with_bad=False)
    out = tmp_path / "out"
    r = CliRunner().invoke(app, ["fleet", str(root), "--out", str(out), "--month", "2026-10", "--quiet"])
    assert r.exit_code == 0, r.output
    rows = {row["meter_folder"]: row for row in json.loads((out / "fleet_summary.json").read_text())}
    assert {k: v["gas_month"] for k, v in rows.items()} == {"fv-m1": "2026-10", "heron-fen-m4": "2026-10"}
    fv = json.loads(next((out / "FV-M1").glob("*_summary.json")).read_text())
    # the demo month: 1 Oct 06:00 CEST to 1 Nov 06:00 CET on the Berlin clock, 745 hours; the logger lost
    # six of them (13 Oct, fixtures/make_demo.py), which substitution fills: 739 hours logged
    assert fv["gas_month"]["hours_in_month"] == 745 and fv["gas_month"]["hours_logged"] == 739
    assert any("covers 739 of the 745 hours" in w for w in fv["warnings"])


def test_the_summary_dict_a_row_is_made_from_is_the_summary_as_written(tmp_path):
    """run_meter makes the fleet row from the JSON-safe summary dict it writes instead of reading
    the file back: the two are equal (values, types, lists for tuples) on a meter with an invoice,
    a site corrector column and the uncertainty, and on a US-units meter."""
    from meterfix.fleet.meter import meter_inputs, meter_settings
    from meterfix.month import run_files
    from meterfix.writers.summary import build_summary, summary_json

    root = _fleet(tmp_path, with_bad=False)
    for folder in ("fv-m1", "heron-fen-m4"):
        s = meter_settings(root / folder, {})
        logs, comp, inv = meter_inputs(root / folder, s)
        r = run_files(logs, s, composition=comp, invoice=inv)
        d = build_summary(r)
        assert json.loads(summary_json(r)) == d
