"""A month of hourly data for many meters: read, corrected with aga8-detail, totalled, summarised.

Default: 1,000 meters x 744 hours (744,000 rows) as one CSV per meter in our header convention.
Prints wall time for each stage, sequential and with --workers processes, and the ratio.

    python benchmarks/bench_month.py [--meters 1000] [--workers 2] [--method aga8-detail]
"""

from __future__ import annotations

import argparse
import tempfile
import time
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

import numpy as np
import pandas as pd

GAS = "methane=0.93,ethane=0.035,propane=0.008,nitrogen=0.015,carbon_dioxide=0.012"


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


def one_meter(path: str, method: str) -> float:
    from meterfix.engine.run import run_files
    from meterfix.engine.settings import build_settings
    from meterfix.writers.summary import build_summary

    s = build_settings(None, {"base": "iso-15c", "method": method, "meter": Path(path).stem})
    r = run_files([path], s, gas=GAS, uncertainty=False)
    build_summary(r)
    return r.totals["base_volume_m3"]


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--meters", type=int, default=1000)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--method", default="aga8-detail")
    a = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        t0 = time.perf_counter()
        paths = [str(p) for p in make_logs(Path(tmp), a.meters)]
        t1 = time.perf_counter()
        print(f"generated {a.meters} logs x 744 rows in {t1 - t0:.1f} s (not counted)")
        n_seq = min(a.meters, 100)
        t0 = time.perf_counter()
        for p in paths[:n_seq]:
            one_meter(p, a.method)
        seq = (time.perf_counter() - t0) / n_seq
        print(f"sequential: {seq * 1000:.1f} ms per meter ({744 / seq:,.0f} rows/s) -> {seq * a.meters:.1f} s for {a.meters} meters")
        t0 = time.perf_counter()
        with ProcessPoolExecutor(max_workers=a.workers) as ex:
            list(ex.map(one_meter, paths, [a.method] * len(paths), chunksize=20))
        par = time.perf_counter() - t0
        print(f"{a.workers} workers: {par:.1f} s for {a.meters} meters ({a.meters * 744 / par:,.0f} rows/s); "
              f"speed-up {seq * a.meters / par:.2f}x; target <= 10 s")


if __name__ == "__main__":
    main()
