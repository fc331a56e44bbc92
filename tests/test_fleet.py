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
        c = root / "broken-m9"
        c.mkdir()
        (c / "log.csv").write_text("Interval end,Line pressure [bar(g)],Uncorrected volume [m3]\n"
                                   "2026-10-01 07:00,30,100\n", encoding="utf-8")
        (c / "site.toml").write_text('base = "normal-0c"\nelevation = "100 m"\n[files]\nlogs = ["log.csv"]\n',
                                     encoding="utf-8")
    return root


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
    assert CliRunner().invoke(app, ["fleet", str(root), "--out", str(par), "--workers", "2"]).exit_code == 0
    a = json.loads((seq / "fleet_summary.json").read_text())
    b = json.loads((par / "fleet_summary.json").read_text())
    strip = lambda rows: [{k: v for k, v in r.items() if k != "summary"} for r in rows]  # noqa: E731
    assert strip(a) == strip(b)


def test_fleet_refuses_existing_summary_without_overwrite(tmp_path):
    root = _fleet(tmp_path, with_bad=False)
    out = tmp_path / "out"
    assert CliRunner().invoke(app, ["fleet", str(root), "--out", str(out)]).exit_code == 0
    again = CliRunner().invoke(app, ["fleet", str(root), "--out", str(out)])
    assert again.exit_code == 2 and "already exists" in again.output
