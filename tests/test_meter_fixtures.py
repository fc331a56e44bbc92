"""The shipped meter folders of other kinds (fixtures/meters): what their generator makes, and the zone
they make with the demo meter (FV-M1 = FV-O1 + FV-C1 + 1 %, by construction in fixtures/make_meters.py)."""

from __future__ import annotations

import json
import sys
from pathlib import Path

import pytest
from typer.testing import CliRunner

from meterfix.cli import app

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "fixtures"))

import make_meters  # noqa: E402


def test_committed_meter_folders_are_what_the_generator_makes():
    for rel, text in make_meters.files().items():
        assert (make_meters.OUT / rel).read_text(encoding="utf-8") == text, rel


def test_fleet_of_the_meter_folders_and_the_demo_zone(tmp_path):
    r = CliRunner().invoke(app, ["fleet", str(make_meters.OUT), "--out", str(tmp_path / "fleet"), "--quiet"])
    assert r.exit_code == 0, r.output
    got = {}
    for p in (tmp_path / "fleet").glob("*/*_summary.json"):
        d = json.loads(p.read_text())
        got[d["meter"]] = d
    assert set(got) == {"FV-O1", "FV-C1"}
    assert got["FV-O1"]["flow_meter"]["kind"] == "orifice" and got["FV-C1"]["flow_meter"]["kind"] == "coriolis"
    m1 = make_meters._receipts().totals["base_volume_m3"]
    delivered = sum(got[m]["totals"]["base_volume_m3"] for m in got)
    # 62 % + 37 %: the logs' rounding (0.001 mbar, 0.01 kg, 0.01 K, 1e-4 bar) moves it by far less than 0.01 %
    assert delivered / m1 == pytest.approx(SHARE := make_meters.SHARE_ORIFICE + make_meters.SHARE_CORIOLIS, rel=1e-4)
    assert SHARE == pytest.approx(0.99)


@pytest.mark.parametrize("folder,meter,kind", [("fv-o1", "FV-O1", "orifice"), ("fv-c1", "FV-C1", "coriolis")])
def test_each_kind_through_correct_the_store_and_verify(tmp_path, folder, meter, kind):
    """`meterfix correct` end to end (summary JSON, CSVs, workbook), closed into a store, and `meterfix verify`
    recomputing the month from the stored raw records with the stored [flow_meter] settings."""
    from openpyxl import load_workbook

    store = tmp_path / "months.sqlite"
    out = tmp_path / "out"
    r = CliRunner().invoke(app, ["correct", "--site", str(make_meters.OUT / folder / "site.toml"), "--out", str(out),
                                 "--store", str(store), "--by", "test", "--quiet"])
    assert r.exit_code == 0, r.output
    d = json.loads(next(out.glob("*_summary.json")).read_text())
    assert d["flow_meter"]["kind"] == kind and "own molar mass" in d["method"]["density"]
    assert d["totals"]["mass_kg"] > 0 and d["uncertainty"]["expanded_pct"] > 0
    # the month's coverage counts the hours of the meter's own reading (differential pressure, mass), not of a
    # volume column these kinds do not log: the shipped logs hold every hour of October (745, the clock change)
    assert d["gas_month"]["hours_logged"] == d["gas_month"]["hours_in_month"] == 745
    assert d["uncertainty"]["monte_carlo"]["validation"].startswith(("agrees", "differs"))
    head = next(out.glob("*_intervals.csv")).read_text().splitlines()[0].split(",")
    assert "mass [kg]" in head and "density_line [kg/m3]" in head
    if kind == "orifice":
        assert {"pressure_differential [Pa]", "discharge_coefficient", "expansibility", "reynolds_pipe"} <= set(head)
        budget = {row["input"] for row in d["uncertainty"]["budget"]} if isinstance(d["uncertainty"].get("budget"), list) \
            else set()
        assert not budget or {"orifice discharge coefficient C", "orifice expansibility factor"} <= budget
    wb = load_workbook(next(out.glob("*.xlsx")), read_only=True)
    headers = [c.value for c in next(wb["Intervals"].iter_rows(min_row=1, max_row=1))]
    assert "Density at line [kg/m3]" in headers
    assert ("Discharge coefficient C [-]" in headers) == (kind == "orifice")
    v = CliRunner().invoke(app, ["verify", "--store", str(store), "--meter", meter, "--month", "2026-10"])
    assert v.exit_code == 0 and "verified" in v.output, v.output
