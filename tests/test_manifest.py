"""Run manifest: written beside the outputs, and `meterfix correct --manifest` re-runs the month
exactly (byte-identical JSON summary), refusing a changed or missing input."""

import hashlib
import json
import shutil
from pathlib import Path

import pytest
from typer.testing import CliRunner

from meterfix.cli import app
from meterfix.engine.settings import build_settings
from meterfix.writers.manifest import settings_from_record

FIX = Path(__file__).resolve().parents[1] / "fixtures"
STEM = "FV-M1_2026-10"


def _month(tmp_path):
    """Inputs in tmp: a short invented log, its analysis, a site file; one run into out1."""
    src = tmp_path / "inputs"
    src.mkdir()
    shutil.copy(FIX / "logs" / "fv_m1_part1.csv", src / "log.csv")
    shutil.copy(FIX / "analyses" / "fv_m1_analysis.csv", src / "analysis.csv")
    (src / "site.toml").write_text('meter = "FV-M1"\nbase = "normal-0c"\ntimezone = "Europe/Berlin"\n'
                                   'elevation = "240 m"\n', encoding="utf-8")
    r = CliRunner().invoke(app, ["correct", str(src / "log.csv"), "--composition", str(src / "analysis.csv"),
                                 "--site", str(src / "site.toml"), "--method", "gerg-2008", "--out",
                                 str(tmp_path / "out1"), "--quiet"])
    assert r.exit_code == 0, r.output
    return src, tmp_path / "out1" / f"{STEM}_manifest.json"


def test_manifest_records_settings_inputs_and_rerun_is_byte_identical(tmp_path):
    src, man_path = _month(tmp_path)
    man = json.loads(man_path.read_text())
    summary = (tmp_path / "out1" / f"{STEM}_summary.json").read_bytes()
    assert man["summary_sha256"] == hashlib.sha256(summary).hexdigest()
    assert man["method"]["name"] == "gerg-2008" and man["method"]["edition"]
    assert man["settings"]["base_pressure"] == 101325.0 and man["settings"]["sources"]["method"] == "option"
    assert man["run"]["options"] == {"method": "gerg-2008"}
    roles = {e["role"]: e for e in man["inputs"]}
    assert set(roles) == {"log", "analysis", "site_file"}
    for e in man["inputs"]:
        assert Path(e["path"]).is_absolute() and e["relative_path"].startswith("../inputs/")
        assert e["sha256"] == hashlib.sha256(Path(e["path"]).read_bytes()).hexdigest()
    r = CliRunner().invoke(app, ["correct", "--manifest", str(man_path), "--out", str(tmp_path / "out2"), "--quiet"])
    assert r.exit_code == 0, r.output
    assert (tmp_path / "out2" / f"{STEM}_summary.json").read_bytes() == summary
    # the manifest has no time stamp: the same run at the same depth gives the same bytes
    assert (tmp_path / "out2" / f"{STEM}_manifest.json").read_bytes() == man_path.read_bytes()


def test_moved_folder_reruns_from_relative_paths(tmp_path):
    src, man_path = _month(tmp_path)
    moved = tmp_path / "moved"
    moved.mkdir()
    shutil.move(str(src), moved / "inputs")
    shutil.move(str(tmp_path / "out1"), moved / "out1")
    r = CliRunner().invoke(app, ["correct", "--manifest", str(moved / "out1" / man_path.name), "--out",
                                 str(tmp_path / "out2"), "--quiet"])
    assert r.exit_code == 0, r.output
    assert (tmp_path / "out2" / f"{STEM}_summary.json").read_bytes() == \
        (moved / "out1" / f"{STEM}_summary.json").read_bytes()


def test_changed_input_is_refused_naming_the_file(tmp_path):
    src, man_path = _month(tmp_path)
    with open(src / "analysis.csv", "a", encoding="utf-8") as fh:
        fh.write("\n")
    r = CliRunner().invoke(app, ["correct", "--manifest", str(man_path), "--out", str(tmp_path / "out2")])
    assert r.exit_code == 2
    assert "analysis.csv" in r.output and "changed since the run" in r.output
    assert not (tmp_path / "out2").exists()


def test_missing_input_is_refused(tmp_path):
    src, man_path = _month(tmp_path)
    (src / "log.csv").unlink()
    r = CliRunner().invoke(app, ["correct", "--manifest", str(man_path), "--out", str(tmp_path / "out2")])
    assert r.exit_code == 2 and "log.csv" in r.output and "not found" in r.output


def test_manifest_goes_alone_and_something_must_be_given(tmp_path):
    src, man_path = _month(tmp_path)
    r = CliRunner().invoke(app, ["correct", str(src / "log.csv"), "--manifest", str(man_path), "--method", "dak",
                                 "--out", str(tmp_path / "o")])
    assert r.exit_code == 2 and "LOGS" in r.output and "--method" in r.output
    r = CliRunner().invoke(app, ["correct", "--out", str(tmp_path / "o")])
    assert r.exit_code == 2 and "no log file given" in r.output


@pytest.mark.parametrize("text, msg", [("{not json", "not valid JSON"), ('{"a": 1}', "not a meterfix run manifest"),
                                       ('{"manifest_version": 99, "settings": {}}', "version 99")])
def test_bad_manifest_files(tmp_path, text, msg):
    p = tmp_path / "m.json"
    p.write_text(text)
    r = CliRunner().invoke(app, ["correct", "--manifest", str(p), "--out", str(tmp_path / "o")])
    assert r.exit_code == 2 and msg in r.output and "m.json" in r.output


def test_month_in_memory_is_recorded_but_not_rerun(tmp_path):
    from meterfix.cli.demo import demo_month
    from meterfix.engine.pipeline import run_month
    from meterfix.writers import write_outputs

    frame, analyses = demo_month()
    s = build_settings(None, {"meter": "FV-M1", "base": "normal-0c", "timezone": "Europe/Berlin",
                              "elevation": "240 m"})
    written = write_outputs(run_month(frame, analyses, s), tmp_path / "o")
    man = json.loads(written["manifest"].read_text())
    assert man["run"] == {"kind": "memory"} and man["inputs"] == []
    r = CliRunner().invoke(app, ["correct", "--manifest", str(written["manifest"]), "--out", str(tmp_path / "p")])
    assert r.exit_code == 2 and "in memory" in r.output


def test_settings_round_trip_through_the_record():
    s = build_settings(None, {"base_pressure": "14.73 psia", "base_temperature": "60 degF", "price": "3.2 USD/MMBtu",
                              "timezone": "America/Chicago", "gas_day_start": "09:00",
                              "uncertainty": {"meter": "1 %"}})
    rec = json.loads(json.dumps(s.to_record()))
    assert settings_from_record(rec) == s
    rec["no_such_setting"] = 1
    from meterfix.errors import InputError

    with pytest.raises(InputError, match="no_such_setting"):
        settings_from_record(rec)
