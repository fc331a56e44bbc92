"""Speed of the generalized-chart methods and the state solver on a month of one-minute points.

Prints wall time per method for N points (default 44,640 = 31 days x 1,440 minutes) and the
ratio to the closed-form Pitzer virial form; then the state solver (p, v -> T) on the same points.

    python benchmarks/bench_generalized.py [--points 44640]
"""

from __future__ import annotations

import argparse
import os
import time

import numpy as np

from meterfix.constants import R
from meterfix.gas.composition import Composition
from meterfix.z.correlations import METHODS as CORRELATIONS
from meterfix.z.generalized import METHODS as GENERALIZED
from meterfix.z.state import solve_state

GAS = "methane=0.93,ethane=0.035,propane=0.008,nitrogen=0.015,carbon_dioxide=0.012"


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--points", type=int, default=44640)
    ap.add_argument("--quick", action="store_true", help="1,000 points (checks the benchmark runs)")
    a = ap.parse_args()
    n = 1000 if a.quick else a.points
    print(f"load average {' '.join(f'{x:.2f}' for x in os.getloadavg())}")
    rng = np.random.default_rng(1)
    p = rng.uniform(1e5, 1e7, n)
    t = rng.uniform(260.0, 320.0, n)
    gas = Composition.parse(GAS)
    times = {}
    for m in GENERALIZED + CORRELATIONS:
        t0 = time.perf_counter()
        m.evaluate(p, t, gas)
        times[m.name] = time.perf_counter() - t0
    base = times["pitzer-virial"]
    for name, s in times.items():
        print(f"{name:16s} {s * 1e3:8.1f} ms for {n} points  ({s / base:6.1f} x pitzer-virial)")
    v = R * t / p
    for m in GENERALIZED + CORRELATIONS:
        t0 = time.perf_counter()
        solve_state(gas, m, pressure=p, molar_volume=v)
        s = time.perf_counter() - t0
        print(f"state p,v -> T {m.name:16s} {s * 1e3:8.1f} ms ({s / times[m.name]:5.1f} x one Z evaluation)")


if __name__ == "__main__":
    main()
