"""`meterfix fleet` as users run it, beside the core path of the same meters, in one run.

Makes N invented meter folders (hourly month, "Lark Hollow" meters: a log CSV, a gas analysis and a
site.toml each), then times, on the same meters:

- core     meterfix.engine.run.read_month per meter (read, quality, Z, totals), in a pool of
           --workers processes whose imports are done before the clock starts
- fleet    `python -m meterfix fleet FOLDER --out OUT --workers W --quiet` as a subprocess: the
           CLI end to end with its default outputs (fleet table; per meter the JSON summary,
           interval, gas-day and edit CSVs and the run manifest), interpreter start and imports
           counted
- fleet --workbooks   the same with each meter's month workbook
- run_fleet without the month's uncertainty (Python API, same pool): what the fleet machinery
  itself costs, to tell it apart from the uncertainty budget and Monte Carlo

and prints wall times, ratios to the core path, the 1,000-meter figure each gives at the rate
measured (targets: <= 60 s without workbooks, <= 3 min with them; ratio <= 3x), where one meter's
time goes (in this process, one meter after the other), and the load average before and after
(the machine is shared: compare ratios, not seconds).

    python benchmarks/bench_fleet.py [--meters 40] [--workers 2] [--hours 744] [--no-workbooks]
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
GAS_CSV = "Component,Mole percent [mol%]\nmethane,93\nethane,3.5\npropane,0.8\nnitrogen,1.5\ncarbon_dioxide,1.2\n"


def make_fleet(folder: Path, meters: int, hours: int) -> list[Path]:
    """N meter folders of invented hourly data: 25-45 bar(a), a daily temperature swing, 400-700 m3/h."""
    idx = pd.date_range("2026-10-01 07:00", periods=hours, freq="h")
    stamp = idx.strftime("%Y-%m-%d %H:%M")
    rng = np.random.default_rng(15)
    dirs = []
    for m in range(meters):
        d = folder / f"lark-hollow-{m:04d}"
        d.mkdir(parents=True)
        p = 25 + 20 * rng.random() + 0.5 * rng.standard_normal(hours)
        t = 10 + 5 * np.sin(np.arange(hours) / 24 * 2 * np.pi) + rng.standard_normal(hours)
        v = 400 + 300 * rng.random() + 20 * rng.standard_normal(hours)
        pd.DataFrame({"Interval end": stamp, "Line pressure [bar(a)]": p.round(4),
                      "Line temperature [degC]": t.round(3), "Uncorrected volume [m3]": v.round(3)}
                     ).to_csv(d / "log.csv", index=False)
        (d / "gas.csv").write_text(GAS_CSV, encoding="utf-8")
        (d / "site.toml").write_text(f'meter = "Lark Hollow {m:04d}"\nbase = "iso-15c"\n[files]\n'
                                     'logs = ["log.csv"]\ncomposition = "gas.csv"\n', encoding="utf-8")
        dirs.append(d)
    return dirs


def _warm() -> None:
    from meterfix.fleet.local import warm

    warm()


def core_meter(meter_dir: str) -> float:
    """The core path of one meter (settings as the fleet reads them); its base volume [m3]."""
    from meterfix.engine.run import read_month
    from meterfix.fleet.meter import meter_inputs, meter_settings

    d = Path(meter_dir)
    settings = meter_settings(d, {})
    logs, comp, _ = meter_inputs(d, settings)
    return read_month(logs, settings, composition=comp).totals["base_volume_m3"]


def time_core(dirs, workers: int) -> float:
    with ProcessPoolExecutor(max_workers=workers, initializer=_warm) as ex:
        list(ex.map(_warm_and_wait, range(workers)))  # every worker started and imported
        t0 = time.perf_counter()
        list(ex.map(core_meter, [str(d) for d in dirs]))
        return time.perf_counter() - t0


def _warm_and_wait(_):
    time.sleep(0.2)


def time_cli(folder: Path, out: Path, workers: int, workbooks: bool) -> float:
    import compileall

    compileall.compile_dir(str(ROOT / "meterfix"), quiet=1)  # as an installed copy starts (bench_correct.py)
    env = dict(os.environ)
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    env["PYTHONPATH"] = str(ROOT) + (os.pathsep + env["PYTHONPATH"] if env.get("PYTHONPATH") else "")
    cmd = [sys.executable, "-m", "meterfix", "fleet", str(folder), "--out", str(out), "--workers", str(workers),
           "--quiet"] + (["--workbooks"] if workbooks else [])
    t0 = time.perf_counter()
    r = subprocess.run(cmd, env=env, capture_output=True, text=True)
    wall = time.perf_counter() - t0
    if r.returncode != 0:
        raise SystemExit(f"fleet run failed ({r.returncode}):\n{r.stdout}\n{r.stderr}")
    return wall


def time_api_without_uncertainty(folder: Path, out: Path, workers: int) -> float:
    """The fleet runner through the Python API with the month's uncertainty left out: what the
    fleet's own machinery (pool, per-meter text outputs, rows) costs beside the core path."""
    from meterfix.fleet.local import run_fleet

    t0 = time.perf_counter()
    run = run_fleet(folder, out, {}, workers=workers, uncertainty=False)
    wall = time.perf_counter() - t0
    assert all(r["status"] == "ok" for r in run.rows)
    return wall


def split_one(meter_dir: Path, out: Path) -> dict:
    """Seconds of each step of one meter's fleet run, in this process."""
    from meterfix import uncertainty as U
    from meterfix.engine.run import read_month_with_frame
    from meterfix.fleet.meter import meter_inputs, meter_settings
    from meterfix.writers import write_outputs
    from meterfix.writers.fleet import fleet_row
    from meterfix.writers.summary import build_summary
    from meterfix.writers.workbook import write_workbook

    s = {}
    t = time.perf_counter()
    settings = meter_settings(meter_dir, {})
    logs, comp, _ = meter_inputs(meter_dir, settings)
    result, _frame = read_month_with_frame(logs, settings, composition=comp)
    s["core (read, quality, Z, totals)"] = time.perf_counter() - t
    t = time.perf_counter()
    result.uncertainty = U.month_uncertainty(result)
    s["uncertainty (GUM + Monte Carlo)"] = time.perf_counter() - t
    t = time.perf_counter()
    summary = build_summary(result)  # once, as run_meter does: written, and the row is made from it
    s["summary (the JSON dict)"] = time.perf_counter() - t
    t = time.perf_counter()
    written = write_outputs(result, out / meter_dir.name, workbook=False, overwrite=True, summary=summary)
    s["text outputs (JSON, CSVs, Parquet, manifest)"] = time.perf_counter() - t
    t = time.perf_counter()
    fleet_row(meter_dir.name, summary, written)
    s["fleet row"] = time.perf_counter() - t
    t = time.perf_counter()
    write_workbook(result, out / f"{meter_dir.name}.xlsx", overwrite=True)
    s["month workbook (--workbooks only)"] = time.perf_counter() - t
    s["_draws"] = result.uncertainty.monte_carlo.get("draws")
    return s


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--meters", type=int, default=40)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--hours", type=int, default=744)
    ap.add_argument("--no-workbooks", action="store_true", help="skip the --workbooks run")
    ap.add_argument("--quick", action="store_true", help="2 meters of 48 hours (checks the benchmark runs)")
    a = ap.parse_args()
    if a.quick:
        a.meters, a.hours, a.no_workbooks = 2, 48, True
    sys.path.insert(0, str(ROOT))
    print(f"load average before: {' '.join(f'{x:.2f}' for x in os.getloadavg())}  ({os.cpu_count()} cores)")
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        t0 = time.perf_counter()
        dirs = make_fleet(tmp / "fleet", a.meters, a.hours)
        print(f"{a.meters} invented meters x {a.hours} hourly intervals made in {time.perf_counter() - t0:.1f} s "
              "(not counted)")
        core = time_core(dirs, a.workers)
        fleet = time_cli(tmp / "fleet", tmp / "out", a.workers, workbooks=False)
        books = None if a.no_workbooks else time_cli(tmp / "fleet", tmp / "out-wb", a.workers, workbooks=True)
        bare = time_api_without_uncertainty(tmp / "fleet", tmp / "out-api", a.workers)
        n = a.meters
        import collections
        import json

        rows = json.loads((tmp / "out" / "fleet_summary.json").read_text())
        verdicts = collections.Counter(str(r.get("monte_carlo_check")).split(":")[0] for r in rows)
        trials = [r.get("monte_carlo_draws") or 0 for r in rows]
        print(f"Monte Carlo verdicts of the {len(rows)} meters: {dict(verdicts)}; trials {min(trials):,}-"
              f"{max(trials):,} per meter")
        print(f"\n{'':34s}{'wall s':>9s}{'ms/meter':>10s}{'x core':>8s}{'1,000 meters':>14s}  target")
        rows = [("core path (read_month), pool", core, None), ("meterfix fleet (CLI)", fleet, "<= 60 s, <= 3x core")]
        if books is not None:
            rows.append(("meterfix fleet --workbooks (CLI)", books, "<= 180 s"))
        rows.append(("run_fleet API, no uncertainty", bare, "(the split)"))
        for label, wall, target in rows:
            print(f"{label:34s}{wall:9.2f}{1000 * wall / n:10.1f}{wall / core:8.1f}{1000 * wall / n:13.0f}s  "
                  f"{target or ''}")
        # where one meter's time goes (one after the other, in this process; imports done first)
        _warm()
        split_one(dirs[0], tmp / "split")
        parts = [split_one(d, tmp / "split") for d in dirs[1:4] or dirs[:1]]
        draws = parts[0].pop("_draws")
        for p in parts[1:]:
            p.pop("_draws")
        keys = list(parts[0])
        mean = {k: sum(p[k] for p in parts) / len(parts) for k in keys}
        whole = sum(v for k, v in mean.items() if "workbook" not in k)
        print(f"\none meter, in this process (mean of {len(parts)}; Monte Carlo trials {draws}):")
        for k in keys:
            share = f"{100 * mean[k] / whole:5.1f} % of a default run" if "workbook" not in k else ""
            print(f"  {k:38s}{1000 * mean[k]:9.1f} ms  {share}")
    print(f"load average after: {' '.join(f'{x:.2f}' for x in os.getloadavg())}")


if __name__ == "__main__":
    main()
