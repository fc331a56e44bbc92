"""Many meters on this machine: one process per worker, each running ``run_meter`` per meter.

The parent imports the month job once before the workers start; on platforms that fork, every
worker inherits those imports (and the Z method's coefficient tables) instead of importing them
again, and the same processes serve every meter. Meters are handed out one at a time as workers
free up, so a slow meter does not hold up the others, and rows come back in folder order.

A worker process that dies (killed, out of memory) takes its meter with it: the meters that had no
result yet are run again in fresh processes, up to ``max_attempts`` times in all, and the run
records which were retried; a meter still without a result after that is reported ``failed``.
"""

from __future__ import annotations

import math
import multiprocessing
from concurrent.futures import ProcessPoolExecutor, as_completed
from concurrent.futures.process import BrokenProcessPool
import time
from dataclasses import dataclass, field
from pathlib import Path

from .meter import meter_folders, meter_settings, output_folder, run_meter  # noqa: F401


@dataclass
class FleetRun:
    """What a fleet run gives: one row per meter folder (folder order) and what happened on the way.

    rows : list of dict      fleet-table rows (see ``meterfix.writers.fleet.FLEET_COLUMNS``)
    retried : list of str    meter folders run again after the worker running them was lost
    failed : list of str     meter folders without a result because their worker was lost every time
    runner : str             'local processes' or 'Dask cluster at tcp://...'
    workers : int
    """

    rows: list
    retried: list = field(default_factory=list)
    failed: list = field(default_factory=list)
    runner: str = "local processes"
    workers: int = 1


def warm() -> None:
    """Import the month job and load the default Z method's tables (once per process)."""
    from .. import month  # noqa: F401
    from .. import uncertainty  # noqa: F401
    from ..writers import fleet, manifest, summary, tables  # noqa: F401
    from ..z.registry import get_method

    get_method("aga8-detail")


def check_meter_names(dirs, options) -> None:
    """Refuse two meters whose outputs would go to the same folder (before any work is done)."""
    from ..errors import MeterfixError, SettingsError

    seen = {}
    for d in dirs:
        try:
            target = output_folder(".", meter_settings(d, options)).name
        except MeterfixError:
            continue  # reported for that meter when it runs
        if target in seen:
            raise SettingsError(f"meter folders '{seen[target]}' and '{d.name}' give the same meter name "
                                f"(outputs folder '{target}')", file=Path(d) / "site.toml",
                                hint="give each meter its own name: meter = \"...\" in its site.toml")
        seen[target] = d.name


def _context():
    methods = multiprocessing.get_all_start_methods()
    return multiprocessing.get_context("fork" if "fork" in methods else "spawn")


def run_fleet(folder, out_dir, options: dict, *, workers: int = 1, overwrite: bool = False,
              workbooks: bool = False, uncertainty=True, progress=None, max_attempts: int = 3,
              closer=None) -> FleetRun:
    """Run every meter folder of ``folder`` on this machine.

    Parameters
    ----------
    folder : path, or list of paths   a fleet folder (its sub-folders with a site.toml), or the meter
                           folders themselves (a balance's meters)
    workers : int          processes (1: in this process, one meter after the other)
    workbooks : bool       also write each meter's month workbook
    uncertainty : bool or dict   as ``meterfix.month.run_files``
    progress : callable(done, total, row), optional   called as each meter finishes
    max_attempts : int     runs of a meter whose worker process died, in all
    closer : meterfix.store.job.Closer, optional   closes each month into a store (see run_meter)
    """
    dirs = meter_folders(folder) if isinstance(folder, (str, Path)) else [Path(d) for d in folder]
    check_meter_names(dirs, options)
    kwargs = {"overwrite": overwrite, "workbooks": workbooks, "uncertainty": uncertainty, "closer": closer}
    total = len(dirs)
    rows: list = [None] * total

    def done(i, row):
        rows[i] = row
        if progress is not None:
            progress(sum(r is not None for r in rows), total, row)

    if workers <= 1 or total == 1:
        for i, d in enumerate(dirs):
            done(i, run_meter(d, out_dir, options, **kwargs))
        return FleetRun(rows, workers=1)

    warm()  # inherited by forked workers; the initializer does it under spawn
    started = math.floor(time.time())  # outputs written since are this run's (file times may be whole seconds)
    retried: list = []
    pending = list(range(total))
    for attempt in range(1, max_attempts + 1):
        if not pending:
            break
        if attempt > 1:
            retried += [dirs[i].name for i in pending if dirs[i].name not in retried]
        with ProcessPoolExecutor(max_workers=min(workers, len(pending)), mp_context=_context(),
                                 initializer=warm) as ex:
            futs = {ex.submit(run_meter, dirs[i], out_dir, options, **kwargs, replace_since=started): i
                    for i in pending}
            lost = []
            for fut in as_completed(futs):
                i = futs[fut]
                try:
                    row = fut.result()
                except BrokenProcessPool:
                    lost.append(i)
                    continue
                row["attempts"] = attempt
                done(i, row)
        pending = sorted(lost)
    from ..writers.fleet import error_row

    failed = [dirs[i].name for i in pending]
    for i in pending:
        done(i, error_row(dirs[i].name, f"the worker process running this meter was lost {max_attempts} times "
                          "(killed or out of memory); no result", status="failed", attempts=max_attempts))
    return FleetRun(rows, retried=retried, failed=failed, workers=workers)
