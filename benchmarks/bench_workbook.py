"""The month workbook: time to write it for months of 744 to 50,000 intervals.

For each size the month is corrected once (GERG-2008, invented data), then the workbook is
written as `meterfix correct` writes it (xlsxwriter, the interval sheet streamed) and timed,
with the peak memory the writer allocates (tracemalloc, a second run). The figures of the
openpyxl writer it replaced are printed beside it as recorded on the same 2-core machine
(1.0 s at 744 intervals, 37 s at 50,000); the machines are shared, so read the ratios with the
load average printed at the top.

    python benchmarks/bench_workbook.py [--sizes 744 8760 50000]
"""

from __future__ import annotations

import argparse
import os
import tempfile
import time
import tracemalloc
from pathlib import Path

import numpy as np
import pandas as pd

from meterfix.engine.pipeline import run_month
from meterfix.engine.settings import build_settings
from meterfix.gas import Composition
from meterfix.writers import workbook as W

GAS = Composition.from_mapping({"methane": 0.93, "ethane": 0.035, "propane": 0.008, "nitrogen": 0.015,
                                "carbon_dioxide": 0.012})
#: the openpyxl writer's times [s], recorded before it was replaced (DEVELOPERS.md, issue 15)
OLD_SECONDS = {744: 1.0, 50_000: 37.0}


def month(n: int):
    idx = pd.date_range("2026-01-01 07:00", periods=n, freq="h", tz="Europe/Berlin").tz_convert("UTC")
    rng = np.random.default_rng(7)
    h = np.arange(n)
    frame = pd.DataFrame({"pressure_gauge": 39.5e5 + 1.2e5 * np.sin(h / 24 * 2 * np.pi) + 2e4 * rng.standard_normal(n),
                          "temperature_line": 285.0 + 4 * np.sin(h / 24 * 2 * np.pi) + 0.3 * rng.standard_normal(n),
                          "volume_line": 1150 + 30 * rng.standard_normal(n), "duration": 3600.0}, index=idx)
    s = build_settings(None, {"meter": "BENCH", "base": "normal-0c", "timezone": "Europe/Berlin", "elevation": "240 m",
                              "method": "gerg-2008"})
    return run_month(frame, [(None, GAS)], s)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--sizes", type=int, nargs="+", default=[744, 8760, 50_000])
    ap.add_argument("--repeat", type=int, default=3, help="timed runs per size (the best is printed)")
    ap.add_argument("--quick", action="store_true", help="744 intervals, one run (checks the benchmark runs)")
    a = ap.parse_args()
    if a.quick:
        a.sizes, a.repeat = [744], 1
    print(f"load average {os.getloadavg()[0]:.2f} {os.getloadavg()[1]:.2f} {os.getloadavg()[2]:.2f}")
    print("best of --repeat runs; 'cpu s' is this process's CPU time (what a quiet machine's wall time is close to)")
    print(f"{'intervals':>10} {'wall s':>8} {'cpu s':>7} {'cells/s':>10} {'MB':>6} {'peak MB':>8} {'old s':>6} "
          f"{'old/wall':>9} {'old/cpu':>8}")
    with tempfile.TemporaryDirectory() as tmp:
        for n in a.sizes:
            r = month(n)
            path = Path(tmp) / f"wb_{n}.xlsx"
            best = cpu = float("inf")
            for _ in range(a.repeat):
                t, c = time.perf_counter(), time.process_time()
                W.write_workbook(r, path, overwrite=True)
                best = min(best, time.perf_counter() - t)
                cpu = min(cpu, time.process_time() - c)
            tracemalloc.start()
            W.write_workbook(r, path, overwrite=True)
            peak = tracemalloc.get_traced_memory()[1] / 1e6
            tracemalloc.stop()
            cells = n * len(W.S.interval_columns(r, W.X.DisplayUnits()))
            old = OLD_SECONDS.get(n)
            ratios = f"{old / best:9.1f} {old / cpu:8.1f}" if old else ""
            print(f"{n:>10,} {best:>8.3f} {cpu:>7.3f} {cells / cpu:>10,.0f} {path.stat().st_size / 1e6:>6.1f} "
                  f"{peak:>8.0f} {(f'{old:.1f}' if old else ''):>6} {ratios}")


if __name__ == "__main__":
    main()
