"""Many meters on a Dask distributed cluster: the same ``run_meter`` per meter, on its workers.

Start a cluster (``pip install "meterfix[dask]"`` on every machine)::

    dask scheduler                              # prints its address, tcp://HOST:8786
    dask worker tcp://HOST:8786                 # on each machine that should work
    meterfix fleet FLEET --out OUT --scheduler tcp://HOST:8786

FLEET and OUT must be paths every worker sees (a shared file system, mounted at the same path):
each worker reads its meters' files and writes their outputs itself; only the fleet-table rows
travel back to this process, which writes the fleet table.

Each meter is one task (``pure=False``: a re-run reads the files again). A meter with bad input
returns its error row exactly as in a local run. When a worker dies while it holds meters, the
scheduler gives them to other workers (Dask's own rescheduling, up to its ``allowed-failures``
setting, 3 by default); the scheduler counts those losses per task, and the row's ``attempts``
says how many times the meter was started. A meter whose workers were lost more often than Dask
allows comes back ``failed``. Dask is imported only here, only when ``--scheduler`` is given.
"""

from __future__ import annotations

import math
import time
import uuid
from pathlib import Path

from ..errors import SettingsError
from .local import FleetRun, check_meter_names, meter_folders
from .meter import run_meter


def _client(scheduler: str, timeout: float):
    try:
        from dask.distributed import Client
    except ImportError:
        raise SettingsError("--scheduler needs Dask distributed, which is not installed",
                            hint='pip install "meterfix[dask]"') from None
    try:
        return Client(scheduler, timeout=timeout, set_as_default=False)
    except (OSError, TimeoutError) as exc:
        raise SettingsError(f"cannot reach the Dask scheduler at {scheduler} ({type(exc).__name__})",
                            hint="start it with 'dask scheduler' and give its address, e.g. tcp://HOST:8786") from None


def _lost_counts(dask_scheduler=None, keys=()):
    """On the scheduler: how many times a worker died while holding each task."""
    out = {}
    for k in keys:
        ts = dask_scheduler.tasks.get(k)
        out[k] = int(getattr(ts, "suspicious", 0) or 0) if ts is not None else 0
    return out


def task_key(folder_name: str, token: str) -> str:
    """The Dask key of a meter's task: 'meterfix-meter-<folder>-<run token>'."""
    return f"meterfix-meter-{folder_name}-{token}"


def run_fleet_dask(folder, out_dir, options: dict, *, scheduler: str, overwrite: bool = False,
                   workbooks: bool = False, uncertainty=True, progress=None, connect_timeout: float = 20.0,
                   closer=None) -> FleetRun:
    """Run every meter folder of ``folder`` on the Dask cluster at ``scheduler``.

    Parameters as :func:`meterfix.fleet.local.run_fleet`; ``scheduler`` is the scheduler's
    address (``tcp://HOST:PORT``). Paths are sent as absolute paths.
    """
    from dask.distributed import as_completed
    from distributed.scheduler import KilledWorker

    from ..writers.fleet import error_row

    dirs = [Path(d).resolve() for d in (meter_folders(folder) if isinstance(folder, (str, Path)) else folder)]
    check_meter_names(dirs, options)
    out = Path(out_dir).resolve()
    client = _client(scheduler, connect_timeout)
    token = uuid.uuid4().hex[:12]
    try:
        workers = len(client.scheduler_info(n_workers=-1).get("workers", {}))
        futures = {}
        started = math.floor(time.time())  # a meter run again after its worker died replaces this run's outputs
        for i, d in enumerate(dirs):
            fut = client.submit(run_meter, str(d), str(out), dict(options), overwrite=overwrite, workbooks=workbooks,
                                uncertainty=uncertainty, closer=closer, replace_since=started,
                                key=task_key(d.name, token), pure=False)
            futures[fut] = i
        rows: list = [None] * len(dirs)
        failed = []
        finished = 0
        for fut in as_completed(list(futures), loop=client.loop):
            i = futures[fut]
            try:
                row = fut.result()
            except KilledWorker:
                row = error_row(dirs[i].name, "the Dask workers running this meter were lost as often as the "
                                "scheduler allows (allowed-failures); no result", status="failed")
                failed.append(dirs[i].name)
            except Exception as exc:  # a failure that is not bad input: reported on its row, not hidden
                row = error_row(dirs[i].name, f"{type(exc).__name__} on the Dask worker: {exc}", status="failed")
                failed.append(dirs[i].name)
            rows[i] = row
            finished += 1
            if progress is not None:
                progress(finished, len(dirs), row)
        lost = client.run_on_scheduler(_lost_counts, keys=[f.key for f in futures])
        retried = []
        for fut, i in futures.items():
            n = lost.get(fut.key, 0)
            if n and rows[i]["status"] != "failed":
                rows[i]["attempts"] = n + 1
            if n:
                retried.append(dirs[i].name)
        return FleetRun(rows, retried=sorted(retried), failed=sorted(failed),
                        runner=f"Dask cluster at {scheduler}", workers=workers)
    finally:
        client.close()
