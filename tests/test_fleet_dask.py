"""`meterfix fleet --scheduler`: a real Dask scheduler and real worker processes on 127.0.0.1.

No mock: each test starts `dask scheduler` (random port, scheduler file) and `dask worker`
processes (one thread each, no nanny, so a killed worker stays dead), runs the CLI against them,
and stops every process it started. The fleets are invented: short hourly logs of meters "Lark
Hollow 1..3", the demo meter FV-M1 and a meter whose log lacks its temperature column.
"""

from __future__ import annotations

import json
import os
import shutil
import signal
import subprocess
import sys
import threading
import time
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

pytest.importorskip("distributed")

from meterfix.cli import app  # noqa: E402
from test_fleet import broken_meter  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
FIXTURES = ROOT / "fixtures"
GAS_CSV = "Component,Mole percent [mol%]\nmethane,93\nethane,3.5\npropane,0.8\nnitrogen,1.5\ncarbon_dioxide,1.2\n"


def _env():
    env = dict(os.environ)
    env["PYTHONPATH"] = str(ROOT) + (os.pathsep + env["PYTHONPATH"] if env.get("PYTHONPATH") else "")
    return env


def _stop(procs):
    """Wait a little for processes told to shut down, then SIGTERM, then SIGKILL: none is left."""
    for sig, grace in ((None, 3), (signal.SIGTERM, 3), (signal.SIGKILL, 10)):
        if sig is not None:
            for p in procs:
                if p.poll() is None:
                    p.send_signal(sig)
        deadline = time.monotonic() + grace
        for p in procs:
            try:
                p.wait(timeout=max(0.05, deadline - time.monotonic()))
            except subprocess.TimeoutExpired:
                pass


class Cluster:
    """A scheduler and ``n`` workers, each its own process; ``stop()`` ends them all."""

    def __init__(self, tmp: Path, n: int):
        self.procs, self.workers = [], {}
        self.log = open(tmp / "dask.log", "wb")
        sfile = tmp / "scheduler.json"
        try:
            self.procs.append(subprocess.Popen(
                [sys.executable, "-m", "dask", "scheduler", "--host", "127.0.0.1", "--port", "0", "--no-dashboard",
                 "--scheduler-file", str(sfile)], stdout=self.log, stderr=subprocess.STDOUT, env=_env()))
            deadline = time.monotonic() + 40
            while not (sfile.exists() and sfile.stat().st_size):
                assert time.monotonic() < deadline and self.procs[0].poll() is None, "scheduler did not start"
                time.sleep(0.1)
            time.sleep(0.1)
            self.address = json.loads(sfile.read_text())["address"]
            for i in range(n):
                name = f"w{i}"
                self.workers[name] = subprocess.Popen(
                    [sys.executable, "-m", "dask", "worker", self.address, "--name", name, "--nthreads", "1",
                     "--no-nanny", "--no-dashboard", "--local-directory", str(tmp / name)],
                    stdout=self.log, stderr=subprocess.STDOUT, env=_env())
                self.procs.append(self.workers[name])
            from distributed import Client

            self.client = Client(self.address, timeout=30, set_as_default=False)
            self.client.wait_for_workers(n, timeout=40)
        except BaseException:
            self.stop()
            raise

    def stop(self):
        if getattr(self, "client", None) is not None:
            try:
                self.client.shutdown()  # the scheduler closes its workers and itself
            except Exception:
                pass
            self.client = None
        _stop(self.procs)
        self.log.close()


@pytest.fixture
def cluster(tmp_path):
    c = Cluster(tmp_path, 2)
    yield c
    c.stop()


def _meter(root: Path, folder: str, name: str, seed: int, hours: int = 96) -> Path:
    d = root / folder
    d.mkdir(parents=True)
    rng = np.random.default_rng(seed)
    idx = pd.date_range("2026-10-01 07:00", periods=hours, freq="h")
    pd.DataFrame({"Interval end": idx.strftime("%Y-%m-%d %H:%M"),
                  "Line pressure [bar(a)]": (30 + rng.standard_normal(hours)).round(3),
                  "Line temperature [degC]": (12 + rng.standard_normal(hours)).round(2),
                  "Uncorrected volume [m3]": (400 + 10 * rng.standard_normal(hours)).round(2)}
                 ).to_csv(d / "log.csv", index=False)
    (d / "gas.csv").write_text(GAS_CSV, encoding="utf-8")
    (d / "site.toml").write_text(f'meter = "{name}"\nbase = "iso-15c"\n[files]\nlogs = ["log.csv"]\n'
                                 'composition = "gas.csv"\n', encoding="utf-8")
    return d


def _fleet(tmp_path) -> Path:
    root = tmp_path / "fleet"
    for i in range(2):
        _meter(root, f"lark-hollow-{i + 1}", f"Lark Hollow {i + 1}", seed=i)
    shutil.copytree(FIXTURES / "demo", root / "fv-m1", ignore=shutil.ignore_patterns("*.py", "__pycache__"))
    broken_meter(root)
    return root


def test_dask_run_gives_the_local_fleet_table(cluster, tmp_path):
    root = _fleet(tmp_path)
    local, dist = tmp_path / "local", tmp_path / "dask"
    r1 = CliRunner().invoke(app, ["fleet", str(root), "--out", str(local), "--quiet"])
    r2 = CliRunner().invoke(app, ["fleet", str(root), "--out", str(dist), "--scheduler", cluster.address])
    # the bad meter is reported the same way by both runners: exit 2, its file and the missing column
    assert r1.exit_code == r2.exit_code == 2, (r1.output, r2.output)
    assert "Dask cluster at " + cluster.address in r2.output
    for r in (r1, r2):
        line = next(x for x in r.output.splitlines() if x.strip().startswith("broken-m9:"))
        assert "temperature" in line.lower() and "log.csv" in line
    # identical fleet table: the same bytes as CSV, the same rows as JSON
    assert (local / "fleet_summary.csv").read_bytes() == (dist / "fleet_summary.csv").read_bytes()
    assert json.loads((local / "fleet_summary.json").read_text()) == json.loads((dist / "fleet_summary.json").read_text())
    rows = {r["meter_folder"]: r for r in json.loads((dist / "fleet_summary.json").read_text())}
    assert {k: r["status"] for k, r in rows.items()} == {"broken-m9": "error", "fv-m1": "ok", "lark-hollow-1": "ok",
                                                        "lark-hollow-2": "ok"}
    assert all(r["attempts"] == 1 for r in rows.values())
    # the workers wrote each meter's outputs on the shared path, the same bytes as the local run
    for name in ("Lark_Hollow_2", "FV-M1"):
        a = sorted(p.name for p in (local / name).iterdir())
        assert a == sorted(p.name for p in (dist / name).iterdir()) and any(x.endswith("_summary.json") for x in a)
        for f in a:
            if f.endswith(("_summary.json", "_intervals.csv")):
                assert (local / name / f).read_bytes() == (dist / name / f).read_bytes(), f


def _feed_fifo(path: Path, data: bytes, stop: threading.Event):
    """Let the reader waiting on the named pipe go on: once a reader has it open, put a regular file
    with ``data`` in its place (later reads of the meter find that) and send ``data`` down the pipe."""
    regular = path.with_name(path.name + ".tmp")
    regular.write_bytes(data)
    try:
        with open(path, "wb") as fh:  # blocks until a reader opens the pipe
            if stop.is_set():
                return
            os.replace(regular, path)
            fh.write(data)
    except (BrokenPipeError, OSError):
        pass


def _holder(client, key_part: str):
    """The worker address holding the task whose key contains ``key_part``, or None."""
    for addr, keys in client.processing().items():
        if any(key_part in str(k) for k in keys):
            return addr
    return None


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes")
def test_meter_of_a_killed_worker_is_retried_and_reported(cluster, tmp_path):
    root = tmp_path / "fleet"
    _meter(root, "lark-hollow-1", "Lark Hollow 1", seed=0)
    slow = _meter(root, "slow-m5", "Slow M5", seed=7)
    # its gas analysis is a named pipe: the worker that runs this meter waits until the test feeds it
    (slow / "gas.csv").unlink()
    os.mkfifo(slow / "gas.csv")
    out = tmp_path / "out"
    run = subprocess.Popen([sys.executable, "-m", "meterfix", "fleet", str(root), "--out", str(out), "--scheduler",
                            cluster.address], stdout=subprocess.PIPE, stderr=subprocess.STDOUT, env=_env())
    stop = threading.Event()
    feeder = threading.Thread(target=_feed_fifo, args=(slow / "gas.csv", GAS_CSV.encode(), stop), daemon=True)
    try:
        deadline = time.monotonic() + 40
        while (first := _holder(cluster.client, "slow-m5")) is None:
            assert time.monotonic() < deadline and run.poll() is None, "the slow meter never reached a worker"
            time.sleep(0.05)
        info = cluster.client.scheduler_info(n_workers=-1)["workers"]
        name = info[first]["name"]
        cluster.workers[name].send_signal(signal.SIGKILL)  # the worker dies while it holds the meter
        cluster.workers[name].wait(timeout=10)
        while (_holder(cluster.client, "slow-m5")) in (None, first):
            assert time.monotonic() < deadline and run.poll() is None, "the meter was not given to another worker"
            time.sleep(0.05)
        feeder.start()
        output, _ = run.communicate(timeout=60)
    finally:
        stop.set()
        if run.poll() is None:
            run.kill()
            run.wait(timeout=10)
        if feeder.is_alive():
            try:  # release a feeder waiting for a reader
                fd = os.open(slow / "gas.csv", os.O_RDONLY | os.O_NONBLOCK)
                os.close(fd)
            except OSError:
                pass
            feeder.join(timeout=10)
    text = output.decode()
    assert run.returncode == 0, text
    assert "run again after their worker was lost: " in text and "slow-m5" in text
    rows = {r["meter_folder"]: r for r in json.loads((out / "fleet_summary.json").read_text())}
    assert set(rows) == {"lark-hollow-1", "slow-m5"}
    assert all(r["status"] == "ok" and r["base_volume_m3"] > 0 for r in rows.values())
    assert rows["slow-m5"]["attempts"] == 2
    assert (out / "Slow_M5").is_dir() and any(p.name.endswith("_summary.json") for p in (out / "Slow_M5").iterdir())
