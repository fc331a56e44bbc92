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
