"""The meter kinds as users run them: ``meterfix correct`` on the shipped orifice and Coriolis meter
folders (fixtures/meters, 745 hourly intervals, every default output, fresh processes), beside the
demo's volume meter in the same run; the core path of each (``read_month``, in-process, warm); and
the ISO 5167-2 mass flow vectorised against the outside peer, `fluids`' solver called row by row.

    python benchmarks/bench_kinds.py [--repeat 3] [--rows 100000]
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
METERS = ROOT / "fixtures" / "meters"
DEMO = ROOT / "fixtures" / "demo"


def timed(cmd) -> float:
    t0 = time.perf_counter()
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL)
    return time.perf_counter() - t0


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--rows", type=int, default=100_000, help="rows of the vectorised mass-flow comparison")
    a = ap.parse_args()
    load = os.getloadavg()
    print(f"meter kinds: {os.cpu_count()} CPU(s), load average {load[0]:.2f} {load[1]:.2f} {load[2]:.2f}")
    from meterfix.engine.run import read_month
    from meterfix.engine.settings import build_settings

    sites = {"volume (FV-M1, demo)": DEMO / "site.toml", "orifice (FV-O1)": METERS / "fv-o1" / "site.toml",
             "coriolis (FV-C1)": METERS / "fv-c1" / "site.toml"}
    with tempfile.TemporaryDirectory() as tmp:
        for label, site in sites.items():
            cli = [timed([sys.executable, "-m", "meterfix", "correct", "--site", str(site), "--out",
                          str(Path(tmp) / f"{site.parent.name}{k}"), "--quiet"]) for k in range(a.repeat)]
            s = build_settings(site, {})
            logs = [site.parent / p for p in s.files["logs"]]
            comp = site.parent / s.files["composition"]
            read_month(logs, s, composition=comp)  # warm
            core = []
            for _ in range(a.repeat):
                t0 = time.perf_counter()
                read_month(logs, s, composition=comp)
                core.append(time.perf_counter() - t0)
            print(f"  {label:22s} meterfix correct {min(cli):.2f}-{max(cli):.2f} s; core path "
                  f"{1000 * min(core):.0f} ms; ratio {min(cli) / min(core):.0f}x")
    from fluids.flow_meter import differential_pressure_meter_solver

    from meterfix.meters.orifice_iso5167 import mass_flow_iso5167_2_2003

    rng = np.random.default_rng(1)
    n = a.rows
    p1, dp = rng.uniform(2e6, 7e6, n), rng.uniform(500.0, 40000.0, n)
    t0 = time.perf_counter()
    mass_flow_iso5167_2_2003(dp, 40.0, p1, 0.20272, 0.1016, 1.1e-5, 1.3, "flange")
    ours = n / (time.perf_counter() - t0)
    m = min(n, 3000)
    t0 = time.perf_counter()
    for i in range(m):
        differential_pressure_meter_solver(D=0.20272, D2=0.1016, P1=p1[i], P2=p1[i] - dp[i], rho=40.0, mu=1.1e-5,
                                           k=1.3, meter_type="ISO 5167 orifice", taps="flange")
    peer = m / (time.perf_counter() - t0)
    print(f"  ISO 5167-2 mass flow, {n:,} rows: meterfix.meters {ours / 1e6:.2f} M rows/s; fluids solver row by "
          f"row {peer / 1e3:.1f} k rows/s; ratio {ours / peer:.0f}x")


if __name__ == "__main__":
    main()
