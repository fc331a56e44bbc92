"""`meterfix balance` on the invented demo zone (fixtures/zone, made by fixtures/make_zone.py):
the meter drifting 2 % high from 14 November is found with its bias and onset; the outputs are a
complete set with the keys of the contract; the store keeps meter months and balance versions
(SQLite, and PostgreSQL when METERFIX_TEST_POSTGRES_URL is set); bad balance files exit 2 with
one line and write nothing."""

from __future__ import annotations

import csv
import json
import shutil

import numpy as np
import pytest
from typer.testing import CliRunner

from meterfix.balance.writers import DAY_COLUMNS
from meterfix.cli import app
from meterfix.cli.demo import zone_folder
from test_store import _pg_database  # a new database on the test server, dropped afterwards
from test_zone_fixture import expected_ufg, make_zone

STEM = "Brackenfold_zone_2026-11"


def _run(*args):
    return CliRunner().invoke(app, [str(a) for a in args])


@pytest.fixture(scope="module")
def zone(tmp_path_factory):
    root = tmp_path_factory.mktemp("zone")
    shutil.copytree(zone_folder(), root / "zone")
    return root / "zone"


@pytest.fixture(scope="module", params=["sqlite", "postgresql"])
def closed(request, zone, tmp_path_factory):
    """The zone's balance run once and closed into a store: (store, out folder, console text)."""
    tmp = tmp_path_factory.mktemp("closed")
    if request.param == "sqlite":
        store = str(tmp / "zone.sqlite")
        gen = None
    else:
        gen = _pg_database()
        store = next(gen)
    out = tmp / "out"
    r = _run("balance", zone / "balance.toml", "--out", out, "--workers", "2", "--store", store, "--by", "T. Quill",
             "--quiet")
    assert r.exit_code == 0, r.output
    yield store, out, r.output
    if gen is not None:
        gen.close()


def test_demo_zone_finds_the_drifting_meter(closed):
    store, out, text = closed
    s = json.loads((out / f"{STEM}_balance.json").read_text(encoding="utf-8"))
    for key in ("receipts_m3", "deliveries_m3", "own_use_m3", "fixed_m3", "linepack_change_m3", "ufg_m3", "ufg_pct",
                "ufg_expanded_uncertainty_m3", "consistent", "days", "findings", "reconciliation"):
        assert key in s, key
    assert len(s["days"]) == 30 and {"gas_day", "ufg_m3", "ufg_expanded_uncertainty_m3"} <= set(s["days"][0])
    credited = [f for f in s["findings"] if f["credited"]]
    assert len(credited) == 1
    f = credited[0]
    # the invented truth: BF-D3 reads 2 % high from gas day 2026-11-14 (fixtures/make_zone.py)
    assert f["meter"] == "BF-D3 Kestrel mill" and f["from_gas_day"] == "2026-11-14"
    assert f["bias_pct"] == pytest.approx(2.0, abs=0.3)
    # the true 2 % lies within the fit's expanded uncertainty (k = 2) at the found onset
    assert abs(f["bias_pct"] - 100 * make_zone.DRIFT) <= f["bias_expanded_uncertainty_pct"] < 1.0
    assert {"meter", "bias_pct", "from_gas_day", "evidence"} <= set(f)
    # by construction (the generator's true flows balance exactly): the UFG is the meters' errors, the
    # mill's 2 % among them; the logs' rounding moves it by less than 1e-5 of the receipts
    _, truth = make_zone.build()
    _, month = expected_ufg(truth)
    assert s["ufg_m3"] == pytest.approx(month, abs=1e-5 * s["receipts_m3"])
    mill = truth["meters"]["BF-D3"]
    drift_effect = -float((mill["measured"] - mill["true"]).sum())
    noise = make_zone.NOISE * np.sqrt(sum(float((m["true"] ** 2).sum()) for m in truth["meters"].values()))
    assert abs(s["ufg_m3"] - drift_effect) < 4 * noise   # the rest is the meters' hourly noise
    assert s["consistent"]   # 2 % of one small delivery stays within the zone's uncertainty: found by its shape
    # the Coriolis and the orifice meter: their month as the generator measured it, to 1e-6
    kinds = {}
    for p in (out / "meters").glob("*/*_summary.json"):
        m = json.loads(p.read_text(encoding="utf-8"))
        kinds[m["meter"]] = (m.get("flow_meter") or {}).get("kind", "volume")
    assert kinds["BF-D4"] == "coriolis" and kinds["BF-D5"] == "orifice" and kinds["BF-D3"] == "volume"
    rows = {m["name"].split()[0]: m for m in s["meters"]}
    for mid in ("BF-D4", "BF-D5"):
        assert rows[mid]["volume_m3"] == pytest.approx(truth["meters"][mid]["measured"].sum(), rel=1e-6)
    rec = s["reconciliation"]
    assert {"chi2", "chi2_limit", "meters"} <= set(rec)
    assert {"name", "measured_m3", "reconciled_m3", "normalized_adjustment"} <= set(rec["meters"][0])
    # the fixed quantity on its day, the restated meter said so, the caution on the console
    assert s["days"][7]["fixed_m3"] == pytest.approx(1200.0)
    assert any("restated" in n and "BF-D4" in n for n in s["notes"])
    flat = " ".join(text.split())   # the console wraps long lines
    assert "not an approved conversion device" in flat
    assert "BF-D3 Kestrel mill (delivery, volume meter) reads +2.15 % ± 0.32 % (k = 2) from gas day 2026-11-14" in flat
    # the daily CSV and the workbook
    with open(out / f"{STEM}_balance_days.csv", newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    assert list(rows[0]) == DAY_COLUMNS and len(rows) == 30
    assert float(rows[3]["ufg_m3"]) == pytest.approx(s["days"][3]["ufg_m3"], rel=1e-12)
    from openpyxl import load_workbook

    wb = load_workbook(out / f"{STEM}_balance.xlsx")
    assert wb.sheetnames == ["Balance", "Daily", "Meters", "Findings"]
    assert len(wb["Daily"]._charts) == 1
    # each meter's outputs as fleet writes them
    assert len(list((out / "meters").glob("*/*_summary.json"))) == 7


def test_from_store_takes_the_closed_months_and_history_shows_the_balance(closed, zone, tmp_path):
    store, out, _ = closed
    s1 = json.loads((out / f"{STEM}_balance.json").read_text(encoding="utf-8"))
    r = _run("balance", zone / "balance.toml", "--out", tmp_path / "again", "--from-store", store)
    assert r.exit_code == 0, r.output
    assert "months from the store: BF-R1 v1" in r.output
    s2 = json.loads((tmp_path / "again" / f"{STEM}_balance.json").read_text(encoding="utf-8"))
    assert s2["ufg_m3"] == pytest.approx(s1["ufg_m3"], rel=1e-12)
    h = _run("history", "--store", store)
    assert h.exit_code == 0, h.output
    assert "Brackenfold zone 2026-11 v1" in h.output and "BF-D3 Kestrel mill credited" in h.output
    j = json.loads(_run("history", "--store", store, "--json").output)
    assert j["balances"][0]["version"] == 1 and j["balances"][0]["closed_by"] == "T. Quill"
    assert len(j["balances"][0]["meters"]) == 7


def test_closing_again_needs_a_reason_and_keeps_both(closed, zone, tmp_path):
    store, _, _ = closed
    r = _run("balance", zone / "balance.toml", "--out", tmp_path / "o1", "--store", store, "--quiet")
    assert r.exit_code == 2 and "balance 'Brackenfold zone' 2026-11 is already closed" in r.output
    assert not (tmp_path / "o1").exists()   # refused before any meter was run
    r = _run("balance", zone / "balance.toml", "--out", tmp_path / "o2", "--store", store, "--quiet",
             "--reason", "vent estimate revised", "--by", "T. Quill")
    assert r.exit_code == 0, r.output
    assert "balance version 2" in r.output
    j = json.loads(_run("history", "--store", store, "--json").output)
    versions = [b["version"] for b in j["balances"]]
    assert versions == [1, 2] and j["balances"][1]["reason"] == "vent estimate revised"


def _edit(zone, tmp_path, old, new):
    d = tmp_path / "z"
    shutil.copytree(zone, d)
    p = d / "balance.toml"
    text = p.read_text(encoding="utf-8")
    assert old in text
    p.write_text(text.replace(old, new, 1), encoding="utf-8")
    return p


@pytest.mark.parametrize("old,new,words", [
    ('role = "delivery"', 'role = "export"', "role 'export' is not one of receipt, delivery, own_use"),
    ('name = "BF-R2 Corrie intake"', 'name = "BF-R1 Tarnside intake"', "is named twice"),
    ('folder = "meters/BF-D2"', 'folder = "linepack"', "is not a meter (no site.toml in it)"),
    ('month = "2026-11"', 'month = "2026-13"', "is not a gas month"),
])
def test_bad_balance_files_exit_2_with_one_line(zone, tmp_path, old, new, words):
    p = _edit(zone, tmp_path, old, new)
    out = tmp_path / "out"
    r = _run("balance", p, "--out", out)
    assert r.exit_code == 2
    lines = [ln for ln in r.output.strip().splitlines() if ln.strip()]
    assert len(lines) == 1 and words in lines[0] and "Traceback" not in r.output
    assert str(p.name) in lines[0] or "balance.toml" in lines[0]
    assert not out.exists()


def test_linepack_log_short_of_the_month_and_month_without_result(closed, zone, tmp_path):
    store, _, _ = closed
    d = tmp_path / "z"
    shutil.copytree(zone, d)
    log = d / "linepack" / "brackenfold_main_2026-11.csv"
    lines = log.read_text(encoding="utf-8").splitlines()
    log.write_text("\n".join(lines[:-30]) + "\n", encoding="utf-8")   # stops 30 hours before the month's end
    r = _run("balance", d / "balance.toml", "--out", tmp_path / "o", "--from-store", store)
    assert r.exit_code == 2 and "does not cover both month boundaries" in r.output
    assert not (tmp_path / "o").exists()
    # a month the store does not hold (a balance without the section, whose log is of November)
    text = (d / "balance.toml").read_text(encoding="utf-8")
    (d / "no_lp.toml").write_text(text.split("[[linepack]]")[0] + "[[fixed]]" + text.split("[[fixed]]")[1],
                                  encoding="utf-8")
    r = _run("balance", d / "no_lp.toml", "--out", tmp_path / "o", "--from-store", store, "--month", "2026-12")
    assert r.exit_code == 2 and "has no closed month 2026-12" in r.output


def test_meter_without_a_result_exits_2(zone, tmp_path):
    d = tmp_path / "z"
    shutil.copytree(zone, d)
    (d / "meters" / "BF-D2" / "bf-d2_log_2026-11.csv").write_text("nothing here\n", encoding="utf-8")
    text = (d / "balance.toml").read_text(encoding="utf-8")
    keep = text.split("[[meters]]")
    # a balance of one receipt and the broken delivery (quick to run)
    small = keep[0] + "[[meters]]" + keep[1] + "[[meters]]" + keep[4].split("[[linepack]]")[0]
    (d / "small.toml").write_text(small, encoding="utf-8")
    r = _run("balance", d / "small.toml", "--out", tmp_path / "o")
    assert r.exit_code == 2 and "BF-D2 Sladeburn village' has no result for the month" in r.output
    assert not list((tmp_path / "o").glob("*_balance*"))


def test_balance_on_a_dask_cluster_gives_the_local_result(closed, zone, tmp_path):
    """The meters' months on a real scheduler and two worker processes (tests/test_fleet_dask.py's
    Cluster): the same balance as the local run."""
    pytest.importorskip("distributed")
    from test_fleet_dask import Cluster

    _, out_local, _ = closed
    c = Cluster(tmp_path, 2)
    try:
        r = _run("balance", zone / "balance.toml", "--out", tmp_path / "dask", "--scheduler", c.address, "--quiet")
    finally:
        c.stop()
    assert r.exit_code == 0, r.output
    assert "Dask cluster at" in r.output
    a = json.loads((out_local / f"{STEM}_balance.json").read_text(encoding="utf-8"))
    b = json.loads((tmp_path / "dask" / f"{STEM}_balance.json").read_text(encoding="utf-8"))
    assert b["ufg_m3"] == pytest.approx(a["ufg_m3"], rel=1e-12)
    assert [f["meter"] for f in b["findings"] if f["credited"]] == ["BF-D3 Kestrel mill"]


@pytest.mark.parametrize("key,value,words", [
    ("gas_day_start", '"07:00"', "is not meter 'BF-R1 Tarnside intake''s"),
    ("combustion_temperature", '"15 degC"', "combustion reference"),
])
def test_meters_of_another_gas_day_or_energy_reference_exit_2(zone, tmp_path, key, value, words):
    d = tmp_path / "z"
    shutil.copytree(zone, d)
    site = d / "meters" / "BF-D2" / "site.toml"
    text = site.read_text(encoding="utf-8")
    lines = [ln for ln in text.splitlines() if not ln.startswith(key)]
    at = lines.index("[uncertainty]")
    site.write_text("\n".join(lines[:at] + [f"{key} = {value}"] + lines[at:]) + "\n", encoding="utf-8")
    text = (d / "balance.toml").read_text(encoding="utf-8")
    keep = text.split("[[meters]]")
    (d / "small.toml").write_text(keep[0] + "[[meters]]" + keep[1] + "[[meters]]" + keep[4].split("[[linepack]]")[0],
                                  encoding="utf-8")
    r = _run("balance", d / "small.toml", "--out", tmp_path / "o", "--quiet")
    assert r.exit_code == 2 and words in r.output, r.output
    assert not list((tmp_path / "o").glob("*_balance*"))


def test_console_and_workbook_speak_the_vocabulary_in_the_base_units(closed, zone, tmp_path):
    """The balance's console and workbook use the labels of meterfix.vocabulary and the display units of
    the balance's base, as `meterfix correct` does: kPa abs, °C, m3 at base, GJ; on a US base (14.73 psia,
    60 degF) psia, °F, Mcf at base, MMBtu. The JSON stays SI under its contract keys."""
    from openpyxl import load_workbook

    from meterfix import vocabulary as V

    store, out, text = closed
    assert "  base conditions      101.325 kPa abs, 0 °C; gas day from 06:00 (Europe/Berlin)" in text
    for label in (V.RECEIPTS, V.DELIVERIES, V.FIXED_QUANTITIES, V.LINEPACK_CHANGE):
        line = next(ln for ln in text.splitlines() if ln.startswith(f"  {label.lower():<20} "))
        assert line.endswith(" m3 at base"), line
    assert "5 volume meters, 1 orifice plate, 1" in text
    s = json.loads((out / f"{STEM}_balance.json").read_text(encoding="utf-8"))
    assert {m["name"].split()[0]: m["kind"] for m in s["meters"]} == {
        "BF-R1": "volume", "BF-R2": "volume", "BF-D1": "volume", "BF-D2": "volume", "BF-D3": "volume",
        "BF-D4": "coriolis", "BF-D5": "orifice"}
    wb = load_workbook(out / f"{STEM}_balance.xlsx")
    ws = wb["Balance"]
    cells = [c for row in ws.iter_rows(values_only=True) for c in row if c is not None]
    assert f"{V.BASE_VOLUME} [m3 {V.AT_BASE}]" in cells and f"{V.ENERGY} [GJ]" in cells
    for label in (V.RECEIPTS, V.DELIVERIES, V.OWN_USE, V.FIXED_QUANTITIES, V.LINEPACK_CHANGE, V.UFG_LONG):
        assert label in cells
    kinds = [r[2] for r in wb["Meters"].iter_rows(min_row=2, values_only=True)]
    assert sorted(set(kinds)) == ["Coriolis meter", "orifice plate", "volume meter"]
    # the same months on a US base
    p = _edit(zone, tmp_path, 'base_pressure = "101.325 kPa"\nbase_temperature = "0 degC"',
              'base_pressure = "14.73 psia"\nbase_temperature = "60 degF"')
    r = _run("balance", p, "--out", tmp_path / "us", "--from-store", store)
    assert r.exit_code == 0, r.output
    assert "  base conditions      14.73 psia, 60 °F;" in r.output
    receipts = next(ln for ln in r.output.splitlines() if ln.startswith("  receipts "))
    assert receipts.endswith(" Mcf at base") and "MMBtu (k = 2)" in r.output
    us = json.loads((tmp_path / "us" / f"{STEM}_balance.json").read_text(encoding="utf-8"))
    # Mcf = 1000 ft3 = 28.316846592 m3 (NIST SP 811, ft = 0.3048 m exactly); shown rounded to the UFG's u
    shown = float(receipts.split()[1].replace(",", ""))
    assert shown == pytest.approx(us["receipts_m3"] / 28.316846592, abs=us["ufg_expanded_uncertainty_m3"] / 28.3)
    flat = " ".join(r.output.split())   # the console wraps long lines
    assert "restated from their base 14.6959 psia, 32 °F to the balance's 14.73 psia, 60 °F" in flat
    assert "meter 'BF-D4 Fennick kiln works' restated from its base 14.6959 psia, 59 °F" in flat
    wb = load_workbook(tmp_path / "us" / f"{STEM}_balance.xlsx")
    cells = [c for row in wb["Balance"].iter_rows(values_only=True) for c in row if c is not None]
    assert f"{V.BASE_VOLUME} [Mcf {V.AT_BASE}]" in cells and f"{V.ENERGY} [MMBtu]" in cells


def test_running_again_into_the_same_folder_says_so(closed, zone):
    """An earlier run's outputs in --out: one line naming the file and the fix, before any meter is run
    (not a meter 'without a result')."""
    _, out, _ = closed
    r = _run("balance", zone / "balance.toml", "--out", out)
    lines = [ln for ln in r.output.strip().splitlines() if ln.strip()]
    assert r.exit_code == 2 and len(lines) == 1, r.output
    assert "output already exists" in lines[0] and "--overwrite" in lines[0] and "no result" not in lines[0]
