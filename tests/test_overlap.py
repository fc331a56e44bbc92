"""Two exports of one meter that overlap: identical rows de-duplicated, differing rows refused
unless --overlap says which export wins. Expected totals are sums of the rows written here."""

from __future__ import annotations

import pytest

from meterfix.errors import InputError
from meterfix.readers import read_log

HEADER = "Interval end,P [bar(g)],T [degC],Volume [m3]\n"


def _write(path, hours, volume):
    path.write_text(HEADER + "".join(f"2026-06-01 {h:02d}:00,30,11,{volume(h)}\n" for h in hours))
    return path


def test_identical_overlap_is_deduplicated(tmp_path):
    a = _write(tmp_path / "a.csv", range(1, 13), lambda h: 100)
    b = _write(tmp_path / "b.csv", range(9, 19), lambda h: 100)
    f, m = read_log([a, b], timezone="Europe/Berlin")
    # 01:00..18:00: 18 intervals of 100 m3; the four shared hours (09..12) counted once
    assert len(f) == 18 and f["volume_line"].sum() == 1800.0 and m.identical_overlap_rows == 4
    assert not f["flag_duplicate"].any()


def test_differing_overlap_refused_naming_both_files(tmp_path):
    a = _write(tmp_path / "a.csv", range(1, 13), lambda h: 100)
    b = _write(tmp_path / "b.csv", range(9, 19), lambda h: 101 if 10 <= h <= 12 else 100)  # re-export, 10..12 corrected
    with pytest.raises(InputError) as e:
        read_log([a, b], timezone="Europe/Berlin")
    msg = str(e.value)
    # first differing interval: 10:00 CEST = 08:00 UTC; a.csv row 11 (header row 1, 01:00 is row 2), b.csv row 3
    assert "3 interval(s)" in msg and "a.csv row 11" in msg and "b.csv row 3" in msg
    assert "2026-06-01T08:00:00+00:00" in msg
    assert "--overlap later" in e.value.hint and "--overlap earlier" in e.value.hint


@pytest.mark.parametrize("choice,total", [("later", 1800.0 + 3.0), ("earlier", 1800.0)])
def test_overlap_choice_keeps_that_files_rows(tmp_path, choice, total):
    a = _write(tmp_path / "a.csv", range(1, 13), lambda h: 100)
    b = _write(tmp_path / "b.csv", range(9, 19), lambda h: 101 if 10 <= h <= 12 else 100)
    f, m = read_log([a, b], timezone="Europe/Berlin", overlap=choice)
    # 18 intervals; later: 10..12 at 101 (b), 13..18 at 100 (b's own) -> 1800 + 3
    assert len(f) == 18 and f["volume_line"].sum() == pytest.approx(total)
    assert any(f"--overlap {choice}" in n for n in m.notes)
    assert len(m.duplicates) == 3 and f["flag_duplicate"].sum() == 3
    kept = {d["kept"].split()[0] for d in m.duplicates}
    assert kept == {"b.csv" if choice == "later" else "a.csv"}


def test_cli_refuses_then_records_the_choice_in_manifest_and_store(tmp_path):
    import json
    import sqlite3

    from typer.testing import CliRunner

    from meterfix.cli import app

    a = _write(tmp_path / "a.csv", range(1, 13), lambda h: 100)
    b = _write(tmp_path / "b.csv", range(9, 19), lambda h: 101 if 10 <= h <= 12 else 100)
    args = ["correct", str(a), str(b), "--gas", "methane=0.95,ethane=0.03,nitrogen=0.02", "--base", "101.325kPa-0C",
            "--elevation", "100 m", "--timezone", "Europe/Berlin", "--quiet"]
    r = CliRunner().invoke(app, [*args, "--out", str(tmp_path / "o1")])
    assert r.exit_code == 2 and "a.csv row 11 and b.csv row 3" in r.output and "--overlap later" in r.output
    assert not (tmp_path / "o1").exists() or not any((tmp_path / "o1").iterdir())
    store = tmp_path / "s.sqlite"
    r = CliRunner().invoke(app, [*args, "--out", str(tmp_path / "o2"), "--overlap", "later", "--store", str(store)])
    assert r.exit_code == 0, r.output
    summary = json.loads(next((tmp_path / "o2").glob("*_summary.json")).read_text())
    assert summary["totals"]["uncorrected_volume_m3"] == pytest.approx(1803.0)
    man = json.loads(next((tmp_path / "o2").glob("*_manifest.json")).read_text())
    assert "later" in json.dumps(man) and '"overlap"' in json.dumps(man)
    with sqlite3.connect(store) as c:
        settings = json.loads(c.execute("SELECT settings_json FROM mf_closings").fetchone()[0])
    assert settings["overlap"] == "later"
