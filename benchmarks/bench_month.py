"""A month of hourly data for many meters: read, corrected with aga8-detail, totalled, summarised.

Default: 1,000 meters x 744 hours (744,000 rows) as one CSV per meter in our header convention.
Prints wall time per meter, sequential and with --workers processes, and the ratio; and where
the time of a meter goes, stage by stage:

- read     the log file(s) to the canonical interval frame (meterfix.readers.read_log)
- quality  flags, gaps and substitution (meterfix.engine.quality.apply_quality)
- engine   Z, base volumes, energy and the totals by gas day, month and analysis
           (meterfix.engine.pipeline.run_month, and the later steps run_files attaches)
- summary  the JSON summary dict (meterfix.writers.summary.build_summary)
- other    settings, the gas analysis and file checks

The stages are timed on the real path (meterfix.engine.run.run_files through its progress
callback), not on a copy of it.

    python benchmarks/bench_month.py [--meters 1000] [--workers 2] [--method aga8-detail]
"""

from __future__ import annotations

import argparse
import os
import tempfile
import time
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

import numpy as np
import pandas as pd

GAS = "methane=0.93,ethane=0.035,propane=0.008,nitrogen=0.015,carbon_dioxide=0.012"
STAGES = ("read", "quality", "engine", "summary", "other")


def make_logs(folder: Path, meters: int, hours: int = 744) -> list[Path]:
    idx = pd.date_range("2026-10-01 01:00", periods=hours, freq="h")
    stamp = idx.strftime("%Y-%m-%d %H:%M")
    rng = np.random.default_rng(1)
    paths = []
    for m in range(meters):
        p = 30 + 10 * rng.random() + 0.5 * rng.standard_normal(hours)
        t = 10 + 5 * np.sin(np.arange(hours) / 24 * 2 * np.pi) + rng.standard_normal(hours)
        v = 500 + 100 * rng.random() + 20 * rng.standard_normal(hours)
        df = pd.DataFrame({"Timestamp": stamp, "Pressure [bar(a)]": p.round(4), "Temperature [degC]": t.round(3),
                           "Volume [m3]": v.round(3)})
        path = folder / f"meter_{m:04d}.csv"
        df.to_csv(path, index=False)
        paths.append(path)
    return paths


def _stage_of(text: str) -> str | None:
    """The stage a progress message of run_files opens (None: the stage goes on)."""
    if text.startswith("reading") and "log file" in text:
        return "read"
    if text.startswith("checking data quality"):
        return "quality"
    if text.startswith("correcting"):
        return "engine"
    if text == "done":
        return "done"
    return None


def one_meter(path: str, method: str) -> tuple[float, dict]:
    """Base volume [m3] of one meter's month and the seconds spent in each stage."""
    from meterfix.month import run_files
    from meterfix.engine.settings import build_settings
    from meterfix.writers.summary import build_summary

    marks = []

    def progress(text, fraction):
        stage = _stage_of(text)
        if stage is not None:
            marks.append((stage, time.perf_counter()))

    t0 = time.perf_counter()
    s = build_settings(None, {"base": "iso-15c", "method": method, "meter": Path(path).stem})
    r = run_files([path], s, gas=GAS, uncertainty=False, progress=progress)
    t1 = time.perf_counter()
    build_summary(r)
    t2 = time.perf_counter()
    spent = dict.fromkeys(STAGES, 0.0)
    for (stage, a), (_, b) in zip(marks, marks[1:] + [("done", t1)]):
        if stage in spent:
            spent[stage] += b - a
    spent["summary"] = t2 - t1
    spent["other"] = (t2 - t0) - sum(spent[k] for k in ("read", "quality", "engine", "summary"))
    return r.totals["base_volume_m3"], spent


def _breakdown(stage_seconds: list[dict], label: str) -> str:
    total = {k: sum(d[k] for d in stage_seconds) / len(stage_seconds) for k in STAGES}
    whole = sum(total.values())
    parts = "  ".join(f"{k} {total[k] * 1000:5.1f} ms ({100 * total[k] / whole:3.0f} %)" for k in STAGES)
    return f"{label:<12s} {parts}  | {whole * 1000:.1f} ms per meter"


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--meters", type=int, default=1000)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--method", default="aga8-detail")
    ap.add_argument("--quick", action="store_true", help="4 meters (checks the benchmark runs)")
    a = ap.parse_args()
    if a.quick:
        a.meters = 4
    print(f"load average {' '.join(f'{x:.2f}' for x in os.getloadavg())}")
    with tempfile.TemporaryDirectory() as tmp:
        t0 = time.perf_counter()
        paths = [str(p) for p in make_logs(Path(tmp), a.meters)]
        t1 = time.perf_counter()
        print(f"generated {a.meters} logs x 744 rows in {t1 - t0:.1f} s (not counted)")
        n_seq = min(a.meters, 100)
        one_meter(paths[0], a.method)  # imports and first-call set-up, not counted
        t0 = time.perf_counter()
        seq_stages = [one_meter(p, a.method)[1] for p in paths[:n_seq]]
        seq = (time.perf_counter() - t0) / n_seq
        print(f"sequential: {seq * 1000:.1f} ms per meter ({744 / seq:,.0f} rows/s) -> {seq * a.meters:.1f} s for {a.meters} meters")
        t0 = time.perf_counter()
        with ProcessPoolExecutor(max_workers=a.workers) as ex:
            par_stages = [d for _, d in ex.map(one_meter, paths, [a.method] * len(paths), chunksize=20)]
        par = time.perf_counter() - t0
        print(f"{a.workers} workers: {par:.1f} s for {a.meters} meters ({a.meters * 744 / par:,.0f} rows/s); "
              f"speed-up {seq * a.meters / par:.2f}x; target <= 10 s")
        print("where a meter's time goes (mean per meter):")
        print(_breakdown(seq_stages, "sequential"))
        print(_breakdown(par_stages, f"{a.workers} workers"))


if __name__ == "__main__":
    main()
