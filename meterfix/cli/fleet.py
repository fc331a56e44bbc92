"""`meterfix fleet`: many meters, one folder each, on this machine or on a Dask cluster."""

from __future__ import annotations

import contextlib
import sys
import time
from pathlib import Path
from typing import Optional

import typer

from .app import _fail, app
from .options import setting_options
from ..errors import MeterfixError


@app.command("fleet", short_help="Correct many meters (a folder each) in parallel.")
@setting_options("fleet")
def fleet_command(
    folder: Path = typer.Argument(..., help="Folder with one sub-folder per meter, each holding a site.toml and its logs."),
    out: Path = typer.Option(..., "--out", help="Folder for the outputs: the fleet table (fleet_summary.xlsx/.csv/.json) and one sub-folder per meter."),
    workers: int = typer.Option(1, "--workers", min=1, help="Meters processed in parallel on this machine (processes)."),
    scheduler: Optional[str] = typer.Option(None, "--scheduler", help="Run on a Dask cluster instead: the scheduler's address, e.g. tcp://HOST:8786 (pip install \"meterfix[dask]\"). FOLDER and --out must be paths every worker sees."),
    workbooks: bool = typer.Option(False, "--workbooks", help="Also write each meter's month workbook (slower; the JSON summary and CSV tables are always written)."),
    overwrite: bool = typer.Option(False, "--overwrite", help="Replace existing outputs."),
    by: Optional[str] = typer.Option(None, "--by", help="Who closes the months (kept in the store)."),
    reason: Optional[str] = typer.Option(None, "--reason", help="Why; required for a meter whose month is already closed in the store."),
    quiet: bool = typer.Option(False, "--quiet", help="No progress; only the closing lines."),
    settings_options: dict = None,
):
    """Correct the month of many meters (one folder each) and write the fleet table."""
    try:
        from ..store.job import Closer

        options = {k: v for k, v in (settings_options or {}).items() if v not in (None, [], ())}
        store = options.pop("store", None)  # closes through the Closer, not a setting of each meter
        if store:
            from ..store import check_store, open_store

            st = open_store(store)
            check_store(st)  # before any meter is computed
            if st.kind == "sqlite":
                store = str(st.path.resolve())  # the same file from every worker, whatever its folder
        closer = Closer(store, by, reason)
        code = _fleet(folder, out, workers=workers, scheduler=scheduler, workbooks=workbooks, overwrite=overwrite,
                      quiet=quiet, options=options, closer=closer)
    except MeterfixError as exc:
        _fail(exc)
    raise typer.Exit(code)


@contextlib.contextmanager
def _progress(enabled: bool):
    """progress(done, total, row) as meters finish: a bar on a terminal, else a line every tenth of
    the fleet; a meter without a result is named at once either way."""
    if not enabled:
        yield None
        return
    state = {"next": 0.1}

    def named(row):
        if row.get("status") != "ok":
            typer.echo(f"  {row['meter_folder']}: {row['status']}: {row.get('error')}", err=True)

    if not sys.stderr.isatty():
        def plain(done, total, row):
            named(row)
            if done / total >= state["next"] or done == total:
                typer.echo(f"  {done} of {total} meters done", err=True)
                while state["next"] <= done / total:
                    state["next"] += 0.1
        yield plain
        return
    from rich.console import Console
    from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeElapsedColumn

    console = Console(stderr=True)
    with Progress(TextColumn("{task.description:<32}"), BarColumn(), MofNCompleteColumn(), TimeElapsedColumn(),
                  console=console, transient=True) as bar:
        task = bar.add_task("meters", total=None)

        def update(done, total, row):
            if row.get("status") != "ok":
                bar.console.print(f"  {row['meter_folder']}: {row['status']}: {row.get('error')}", markup=False,
                                  highlight=False)
            bar.update(task, total=total, completed=done, description=str(row.get("meter_folder"))[:32])

        yield update


def _fleet(folder, out, *, workers, scheduler, workbooks, overwrite, quiet, options, closer=None) -> int:
    from ..writers.atomic import protect_inputs
    from ..writers.fleet import check_fleet_targets, write_fleet_outputs

    options = {k: v for k, v in options.items() if v is not None}
    check_fleet_targets(out, overwrite=overwrite)  # an existing fleet table is refused before any work
    from ..fleet.meter import meter_folders

    protect_inputs([p for d in meter_folders(folder) for p in d.rglob("*") if p.is_file()])
    t0 = time.perf_counter()
    with _progress(not quiet) as progress:
        if scheduler:
            from ..fleet.dask import run_fleet_dask

            run = run_fleet_dask(folder, out, options, scheduler=scheduler, overwrite=overwrite,
                                 workbooks=workbooks, progress=progress, closer=closer)
        else:
            from ..fleet.local import run_fleet

            run = run_fleet(folder, out, options, workers=workers, overwrite=overwrite, workbooks=workbooks,
                            progress=progress, closer=closer)
    seconds = time.perf_counter() - t0
    written = write_fleet_outputs(run.rows, out, overwrite=overwrite, run={
        "runner": run.runner, "workers": run.workers, "workbooks": workbooks,
        "retried": run.retried, "failed": run.failed})
    rows = run.rows
    ok = sum(r["status"] == "ok" for r in rows)
    typer.echo(f"meterfix fleet: {ok} of {len(rows)} meters corrected in {seconds:.1f} s ({run.runner}); "
               f"fleet table {written['workbook']} (also .csv, .json)")
    from ..writers.fleet import fleet_totals

    groups = fleet_totals(rows)
    if len(groups) > 1:
        typer.echo(f"  totals: the corrected meters are at {len(groups)} different base conditions, gas months or "
                   "energy references: the fleet table shows one total per group, never their sum")
    if run.retried:
        typer.echo(f"  run again after their worker was lost: {', '.join(run.retried)}")
    bad = [r for r in rows if r["status"] != "ok"]
    for r in bad:
        typer.echo(f"  {r['meter_folder']}: {r['status']}: {r['error']}", err=True)
    typer.echo("  results support review and invoice queries; meterfix is not an approved conversion device")
    if bad:
        typer.echo(f"meterfix: error: {len(bad)} meter(s) could not be corrected (see above); "
                   "the others are written", err=True)
        return 2
    return 0
