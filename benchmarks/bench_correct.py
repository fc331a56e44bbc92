"""What users run: ``meterfix correct`` in a fresh process, wall time and peak memory.

1. The demo month (745 hourly intervals, analyses, invoice, site corrector column) through the
   CLI with all default outputs, in fresh processes (imports counted), several times; beside it,
   in the same run, the core path of the same month (read, quality, Z, totals: ``read_month``)
   and the month job with uncertainty and checks (``run_files``) timed in-process, and the time
   of ``import meterfix.cli`` alone.
2. With ``--rows N``: an invented one-minute log of N rows through the CLI (wall time, maximum
   resident set size of the process), uncertainty included. With
   ``--no-workbook`` that run writes every output except the workbook (the writer module is
   kept from importing, as when it is missing), to separate the workbook's share.

The processes start from meterfix's compiled bytecode, as an installed copy does (see
``compiled_env``), and the fresh-process runs are interleaved.

    python benchmarks/bench_correct.py [--repeat 5] [--rows 1000000] [--no-workbook]
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "fixtures" / "demo"
GAS = "methane=0.93,ethane=0.035,propane=0.008,nitrogen=0.015,carbon_dioxide=0.012"
#: runs the CLI with the workbook writer kept from importing (write_outputs then skips it)
NO_WORKBOOK = ("import sys; sys.modules['meterfix.writers.workbook'] = None; "
               "from meterfix.cli import main; sys.argv = ['meterfix'] + sys.argv[1:]; main()")


def demo_args(out: Path) -> list[str]:
    return ["correct", str(DEMO / "fv-m1_log_2026-10.csv"), "--site", str(DEMO / "site.toml"),
            "--composition", str(DEMO / "fv-m1_analyses_2026-10.csv"),
            "--invoice", str(DEMO / "harrowgate_invoice_2026-10.xlsx"), "--out", str(out), "--quiet"]


def compiled_env() -> dict:
    """The environment of the timed processes, meterfix's bytecode compiled first: as a user's
    install has it (pip compiles every module when it installs a package; an editable install writes
    the bytecode at its first run). A shell with PYTHONDONTWRITEBYTECODE set would otherwise
    compile every meterfix module again in every process (about 0.15-0.3 s a start), while numpy and
    pandas start from the bytecode pip wrote."""
    import compileall

    compileall.compile_dir(str(ROOT / "meterfix"), quiet=1)
    env = dict(os.environ)
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    return env


ENV = None


def timed_process(cmd: list[str]) -> float:
    t0 = time.perf_counter()
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, env=ENV)
    return time.perf_counter() - t0


def time_v(cmd: list[str]) -> tuple[float, float]:
    """(wall [s], maximum resident set size [MiB]) of a command: the largest child's peak
    (resource.getrusage), which is this command's when it is the largest run so far."""
    import resource

    t0 = time.perf_counter()
    r = subprocess.run(cmd, capture_output=True, text=True, env=ENV)
    wall = time.perf_counter() - t0
    if r.returncode != 0:
        raise RuntimeError(r.stderr[-2000:])
    return wall, resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024


def make_long_log(path: Path, rows: int) -> None:
    sys.path.insert(0, str(ROOT / "benchmarks"))
    from bench_read import make_frame

    make_frame(rows).to_csv(path, index=False)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--rows", type=int, default=0, help="also run a one-minute log of this many rows")
    ap.add_argument("--no-workbook", action="store_true", help="the long run without the workbook")
    ap.add_argument("--quick", action="store_true", help="tiny inputs, one run each (checks the benchmark runs)")
    a = ap.parse_args()
    if a.quick:
        a.repeat, a.rows = 1, a.rows or 2000
    load = os.getloadavg()
    print(f"meterfix correct: {os.cpu_count()} CPU(s), load average {load[0]:.2f} {load[1]:.2f} {load[2]:.2f}")
    py = sys.executable
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        global ENV
        ENV = compiled_env()
        timed_process([py, "-m", "meterfix", *demo_args(tmp / "warm")])  # not counted
        imports, bare, cli = [], [], []
        for k in range(a.repeat):  # interleaved, so that a change of the machine's load meets all three
            imports.append(timed_process([py, "-c", "import meterfix.cli"]))
            bare.append(timed_process([py, "-c", "import numpy, pandas"]))
            cli.append(timed_process([py, "-m", "meterfix", *demo_args(tmp / f"demo{k}")]))
        from meterfix.engine.run import read_month
        from meterfix.engine.settings import build_settings
        from meterfix.month import run_files

        settings = build_settings(DEMO / "site.toml", {})
        files = dict(composition=DEMO / "fv-m1_analyses_2026-10.csv")
        run_files([DEMO / "fv-m1_log_2026-10.csv"], settings, **files)  # warm: imports, caches
        core, job = [], []
        for _ in range(a.repeat):
            t0 = time.perf_counter()
            read_month([DEMO / "fv-m1_log_2026-10.csv"], settings, **files)
            core.append(time.perf_counter() - t0)
            t0 = time.perf_counter()
            run_files([DEMO / "fv-m1_log_2026-10.csv"], settings, invoice=DEMO / "harrowgate_invoice_2026-10.xlsx",
                      **files)
            job.append(time.perf_counter() - t0)
        rng = lambda v: f"{min(v):.2f}-{max(v):.2f} s"  # noqa: E731
        print(f"demo month (745 hourly intervals), {a.repeat} fresh processes each:")
        print(f"  import meterfix.cli                     {rng(imports)}")
        print(f"  python -c 'import numpy, pandas'        {rng(bare)}")
        ratio = min(cli) / min(bare)
        pairs = sorted(c / b for c, b in zip(cli, bare))
        print(f"  meterfix correct, all default outputs   {rng(cli)}  = {ratio:.1f}x a bare numpy + pandas start "
              f"(best of each; median of the {len(pairs)} pairs {pairs[len(pairs) // 2]:.1f}x; target 2.5x: "
              f"{'met' if ratio <= 2.5 else 'NOT met'})")
        print(f"  in-process, warm: core path (read_month) {rng(core)}; month job with uncertainty and "
              f"invoice check (run_files) {rng(job)}")
        print(f"  ratio CLI / core path {min(cli) / min(core):.0f}x (best of each)")
        load = os.getloadavg()
        print(f"  load average after: {load[0]:.2f} {load[1]:.2f} {load[2]:.2f}")
        if a.rows:
            log = tmp / f"log_{a.rows}.csv"
            make_long_log(log, a.rows)
            args = ["correct", str(log), "--gas", GAS, "--base", "normal-0c", "--timezone", "Europe/Berlin",
                    "--elevation", "240 m", "--out", str(tmp / "long"), "--quiet"]
            cmd = [py, "-c", NO_WORKBOOK, *args] if a.no_workbook else [py, "-m", "meterfix", *args]
            wall, rss = time_v(cmd)
            what = "every output but the workbook" if a.no_workbook else "all default outputs"
            load = os.getloadavg()
            print(f"{a.rows:,} one-minute rows, uncertainty included, {what}: {wall:.1f} s wall, peak "
                  f"{rss:,.0f} MiB (load average {load[0]:.2f})")


if __name__ == "__main__":
    main()
