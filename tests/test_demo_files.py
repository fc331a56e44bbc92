"""The demo month from its shipped files: the fixtures are what their generator makes, the run goes
through reader → engine → writer with the invoice and the corrector check, its manifest re-runs
byte-identically, and the demo works from an installed wheel in a fresh environment."""

import json
import os
import shutil
import subprocess
import sys
import sysconfig
from pathlib import Path

import pytest
from openpyxl import load_workbook
from typer.testing import CliRunner

from meterfix.cli import app
from meterfix.readers import read_invoice
from meterfix.writers.tables import parquet_available

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "fixtures" / "demo"
sys.path.insert(0, str(ROOT / "fixtures"))
import make_demo  # noqa: E402


def test_committed_demo_files_are_what_the_generator_makes():
    assert make_demo.log_csv() == (DEMO / make_demo.LOG).read_text(encoding="utf-8")
    assert make_demo.analyses_csv() == (DEMO / make_demo.ANALYSES).read_text(encoding="utf-8")
    assert make_demo.SITE_TOML == (DEMO / "site.toml").read_text(encoding="utf-8")
    # the invoice is made from a month run of the files above (regenerate with fixtures/make_demo.py); its
    # figures are rounded (whole m3, 0.01 MJ/m3), so compare what it says, to a part in a million
    fresh = Path(make_demo.__file__).parent / "demo" / "_fresh_invoice.xlsx"
    try:
        fresh.write_bytes(make_demo.invoice_xlsx())
        a, _ = read_invoice(fresh)
    finally:
        fresh.unlink(missing_ok=True)
    b, _ = read_invoice(DEMO / make_demo.INVOICE)
    for col in ("volume_billed", "heating_value", "energy_billed", "amount"):
        assert a[col].to_numpy() == pytest.approx(b[col].to_numpy(), rel=1e-6), col


@pytest.fixture(scope="module")
def demo_run(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo") / "out"
    r = CliRunner().invoke(app, ["demo", str(out)])
    assert r.exit_code == 0, r.output
    return out, r.output


def test_demo_runs_the_whole_job(demo_run):
    out, text = demo_run
    names = sorted(p.name for p in out.iterdir())
    expected = ["FV-M1_2026-10.xlsx", "FV-M1_2026-10_edits.csv", "FV-M1_2026-10_gas_days.csv",
                "FV-M1_2026-10_intervals.csv", "FV-M1_2026-10_manifest.json", "FV-M1_2026-10_summary.json"]
    if parquet_available():  # the optional parquet extra
        expected.append("FV-M1_2026-10_intervals.parquet")
    assert names == sorted(expected + ["FV-O1"])  # the orifice meter beside it, in its own folder
    for n in expected:
        assert str(out / n) in text  # the console says where each output is
    orifice = sorted(p.name for p in (out / "FV-O1").iterdir())
    assert orifice == sorted(n.replace("FV-M1", "FV-O1") for n in expected)
    o = json.loads((out / "FV-O1" / "FV-O1_2026-10_summary.json").read_text())
    assert o["flow_meter"]["kind"] == "orifice" and o["flow_meter"]["standard"] == "ISO 5167-2:2003"
    assert "orifice plate, ISO 5167-2:2003" in text
    d = json.loads((out / "FV-M1_2026-10_summary.json").read_text())
    assert {i["role"] for i in d["inputs"]} == {"log", "analysis", "invoice"}
    assert d["flags"]["gap"] == 6 and d["flags"]["estimated"] == 6  # the six lost hours, interpolated
    # the site corrector was set to ideal gas (make_demo.py): the check names that cause
    assert d["corrector_check"]["best"] == "ideal-gas"
    assert d["corrector_check"]["size_pct"] == pytest.approx(d["totals"]["ideal_gas_error_pct"], abs=0.01)
    # the supplier bills 1.3 % more volume than ours (make_demo.SUPPLIER_FACTOR)
    assert d["invoice"]["totals"]["volume_difference_pct"] == pytest.approx(100 * (make_demo.SUPPLIER_FACTOR - 1),
                                                                            abs=0.01)
    wb = load_workbook(out / "FV-M1_2026-10.xlsx")
    assert {"Invoice check", "Corrector check", "Edits"} <= set(wb.sheetnames)
    ws = wb["Edits"]
    edits = [row for row in ws.iter_rows(values_only=True) if row[5] == "interpolate"]
    assert len(edits) == d["edits"]
    # edits in display units: an interpolated line temperature in degC lies between its neighbours' values
    temps = [row[3] for row in edits if row[1] == "line temperature"]
    assert [row[4] for row in edits if row[1] == "line temperature"] == ["°C"] * 6
    assert all(0.0 < t < 30.0 for t in temps)


def test_demo_manifest_reruns_byte_identically(demo_run, tmp_path):
    out, _ = demo_run
    r = CliRunner().invoke(app, ["correct", "--manifest", str(out / "FV-M1_2026-10_manifest.json"), "--out",
                                 str(tmp_path / "again"), "--quiet"])
    assert r.exit_code == 0, r.output
    assert (tmp_path / "again" / "FV-M1_2026-10_summary.json").read_bytes() == \
        (out / "FV-M1_2026-10_summary.json").read_bytes()


def test_demo_from_an_installed_wheel(tmp_path):
    """Build the wheel offline, install it alone into a fresh environment and run `meterfix demo` there."""
    src = tmp_path / "src"
    src.mkdir()
    for name in ("pyproject.toml", "README.md"):
        shutil.copy(ROOT / name, src / name)
    for name in ("meterfix", "templates", "fixtures"):
        shutil.copytree(ROOT / name, src / name, ignore=shutil.ignore_patterns("__pycache__", "*.pyc"))
    dist = tmp_path / "dist"
    subprocess.run([sys.executable, "-m", "pip", "wheel", str(src), "--no-deps", "--no-build-isolation",
                    "--no-index", "-q", "-w", str(dist)], check=True, cwd=tmp_path, capture_output=True)
    (wheel,) = dist.glob("meterfix-*.whl")
    env_dir = tmp_path / "fresh"
    subprocess.run([sys.executable, "-m", "venv", "--without-pip", str(env_dir)], check=True)
    py = env_dir / ("Scripts/python.exe" if os.name == "nt" else "bin/python")
    site = Path(subprocess.run([str(py), "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"],
                               check=True, capture_output=True, text=True).stdout.strip())
    subprocess.run([sys.executable, "-m", "pip", "install", "--no-deps", "--no-index", "-q", "--target", str(site),
                    str(wheel)], check=True, capture_output=True)
    # the dependencies (numpy, pandas, openpyxl ...) come from this environment, after the fresh one's own
    (site / "zz_dependencies.pth").write_text(sysconfig.get_paths()["purelib"] + "\n")
    run_dir = tmp_path / "elsewhere"
    run_dir.mkdir()
    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH", "PYTHONHOME")}
    code = ("import sys, meterfix; from meterfix.cli import main; "
            "assert meterfix.__file__.startswith(sys.argv[1]), meterfix.__file__; sys.exit(main(['demo', 'out']))")
    r = subprocess.run([str(py), "-c", code, str(site)], cwd=run_dir, env=env, capture_output=True, text=True,
                       timeout=300)
    assert r.returncode == 0, r.stdout + r.stderr
    assert (run_dir / "out" / "FV-M1_2026-10.xlsx").is_file()
    assert "FV-M1_2026-10_summary.json" in r.stdout and str(site) in r.stdout  # inputs shipped in the wheel
