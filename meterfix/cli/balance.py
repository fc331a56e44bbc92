"""`meterfix balance`: a system's month — every meter's month (the fleet machinery, or the store),
then the balance (meterfix.balance), its outputs, and the store."""

from __future__ import annotations

import json
import time
from pathlib import Path
from typing import Optional

import typer

from .app import _fail, app
from .options import setting_options
from ..errors import MeterfixError, SettingsError


@app.command("balance", short_help="Close a system's balance: receipts, deliveries, own use, linepack, UFG.")
@setting_options("balance")
def balance_command(
    balance_file: Path = typer.Argument(..., metavar="BALANCE.toml", help="The balance file: its meters (folders as `meterfix fleet` reads them) and roles, linepack sections and fixed quantities."),
    out: Path = typer.Option(..., "--out", help="Folder for the balance's outputs (workbook, JSON, daily CSV) and, under meters/, each meter's outputs."),
    month: Optional[str] = typer.Option(None, "--month", help="Gas month YYYY-MM (wins over the balance file's 'month'; else the month the meters' logs agree on)."),
    workers: int = typer.Option(1, "--workers", min=1, help="Meters run in parallel on this machine (processes)."),
    scheduler: Optional[str] = typer.Option(None, "--scheduler", help="Run the meters on a Dask cluster: the scheduler's address, tcp://HOST:8786."),
    store: Optional[str] = typer.Option(None, "--store", help="Close every meter's month and the balance into this store (SQLite file or PostgreSQL URL)."),
    from_store: Optional[str] = typer.Option(None, "--from-store", help="Take each meter's latest closed version of the month from this store instead of running it."),
    by: Optional[str] = typer.Option(None, "--by", help="Who closes (kept in the store)."),
    reason: Optional[str] = typer.Option(None, "--reason", help="Why; required to close a balance or a month that is already closed."),
    overwrite: bool = typer.Option(False, "--overwrite", help="Replace existing outputs."),
    quiet: bool = typer.Option(False, "--quiet", help="No progress lines."),
    settings_options: dict = None,
):
    """Receipts against deliveries, own use, fixed quantities and linepack change; the UFG with its
    uncertainty; which meter, on evidence; the VDI 2048 reconciliation."""
    try:
        options = {k: v for k, v in (settings_options or {}).items() if v not in (None, [], ())}
        code = run_balance(balance_file, out, month=month, workers=workers, scheduler=scheduler, store=store,
                           from_store=from_store, by=by, reason=reason, overwrite=overwrite, quiet=quiet,
                           options=options)
    except MeterfixError as exc:
        _fail(exc)
    raise typer.Exit(code)


def _month_option(text):
    import re

    if text is not None and not re.fullmatch(r"\d{4}-(0[1-9]|1[0-2])", text):
        raise SettingsError(f"--month '{text}' is not a gas month", hint="write --month YYYY-MM, e.g. 2026-10")
    return text


def _run_meters(cfg, out, *, workers, scheduler, store, by, reason, overwrite, quiet, options=None):
    """Every meter's month through the fleet machinery; {entry name: (summary, source text)}."""
    from ..fleet.meter import meter_settings
    from ..store.job import Closer

    if store:
        from ..store import check_store, open_store

        st = open_store(store)
        check_store(st)
        if st.kind == "sqlite":
            store = str(st.path.resolve())
    closer = Closer(store, by, reason) if store else None
    options = dict(options or {})
    for e in cfg.meters:   # names the meter folder that cannot be read, before any work
        meter_settings(e.folder, options)
    folders = [e.folder for e in cfg.meters]
    meters_out = Path(out) / "meters"

    def progress(done, total, row):
        if not quiet and (done == total or done % max(1, total // 10) == 0):
            typer.echo(f"  {done} of {total} meters run", err=True)

    if scheduler:
        from ..fleet.dask import run_fleet_dask

        run = run_fleet_dask(folders, meters_out, options, scheduler=scheduler, overwrite=overwrite, progress=progress,
                             closer=closer)
    else:
        from ..fleet.local import run_fleet

        run = run_fleet(folders, meters_out, options, workers=workers, overwrite=overwrite, progress=progress, closer=closer)
    got = {}
    for e, row in zip(cfg.meters, run.rows):
        if row.get("status") != "ok":
            raise SettingsError(f"meter '{e.name}' has no result for the month: {row.get('error')}", file=cfg.file,
                                hint="fix that meter's inputs, or leave it out of the balance")
        # the summary this run wrote: the newest in the meter's output folder
        found = sorted((Path(meters_out) / row["outputs"]).glob("*_summary.json"), key=lambda p: p.stat().st_mtime_ns)
        summary = json.loads(found[-1].read_text(encoding="utf-8"))
        src = f"run ({run.runner})"
        if row.get("store_version"):
            src += f", closed as version {row['store_version']}"
        got[e.name] = (summary, src)
    return got, run


def _from_store(cfg, target, month, options=None):
    from ..fleet.meter import meter_settings
    from ..store import open_store
    from ..store.balances import latest_meter_summary

    st = open_store(target)
    got, parts = {}, []
    for e in cfg.meters:
        meter = meter_settings(e.folder, dict(options or {})).meter
        found = latest_meter_summary(st, meter, month)
        if found is None:
            raise SettingsError(f"meter '{e.name}' ({meter}) has no closed month{' ' + month if month else ''} in the "
                                f"store", file=cfg.file, hint="close it first (meterfix balance --store, or fleet "
                                                              "--store), or run without --from-store")
        summary, version, mo, h = found
        got[e.name] = (summary, f"store version {version} of {mo}")
        parts.append({"meter": meter, "month": mo, "version": version, "closing_hash": h})
    return got, parts, st


def _check_linepack_logs(cfg, month, options):
    """Read every linepack log now, and with the month known check it covers both month boundaries
    on the first meter's gas day, so that a bad log stops the run before any meter is run."""
    from ..balance.assemble import boundaries
    from ..balance.linepack import at_boundaries, read_linepack_log
    from ..fleet.meter import meter_settings

    if not cfg.linepacks:
        return
    s = meter_settings(cfg.meters[0].folder, dict(options or {}))
    for lp in cfg.linepacks:
        times, p, t = read_linepack_log(lp.pressure_log, timezone=lp.timezone or s.timezone,
                                        atmospheric_pressure=lp.atmospheric_pressure, sheet=lp.sheet)
        if month:
            at_boundaries(times, p, boundaries(month, int(s.gas_day_start), s.timezone), what="pressure",
                          file=lp.pressure_log)


def run_balance(balance_file, out, *, month=None, workers=1, scheduler=None, store=None, from_store=None, by=None,
                reason=None, overwrite=False, quiet=False, options=None, echo=typer.echo) -> int:
    """The balance of ``balance_file`` (see the command); ``options``: per-meter settings applied to
    every meter (as ``meterfix fleet`` applies them). Returns the exit code."""
    from ..balance.assemble import assemble
    from ..balance.config import read_balance_config
    from ..balance.writers import balance_json, balance_summary, write_balance_outputs
    from ..writers.atomic import protect_inputs
    from ..writers.outset import check_output_folder

    month = _month_option(month)
    options = dict(options or {})
    from ..engine.settings_table import options_for

    if (month or None) and any(s.name == "month" for s in options_for("balance")):
        options["month"] = month   # once the month run selects one gas month (issue 21), every meter runs that one
    if store and from_store:
        raise SettingsError("--store and --from-store go separately", hint="--from-store reads closed months; "
                            "--store runs and closes them")
    if (by or reason) and not (store or from_store):
        raise SettingsError("--by and --reason go with a store", hint="add --store FILE_OR_URL, or drop them")
    cfg = read_balance_config(balance_file, month=month)
    check_output_folder(out)
    if not overwrite:   # an earlier run's outputs: said as such, before any meter is run
        from ..errors import InputError

        earlier = sorted(Path(out).glob("*_balance.json"))
        if not from_store:   # the meters' months are written under meters/ too
            earlier += sorted(Path(out).glob("meters/*/*_summary.json"))
        if earlier:
            raise InputError("output already exists", file=earlier[0],
                             hint="pass --overwrite or choose another --out folder")
    protect_inputs([Path(balance_file)] + [p for e in cfg.meters for p in e.folder.rglob("*") if p.is_file()]
                   + [lp.pressure_log for lp in cfg.linepacks])
    _check_linepack_logs(cfg, month or cfg.month, options)   # before any meter is run
    if store and (month or cfg.month):
        from ..store import open_store
        from ..store.balances import plan_balance

        plan_balance(open_store(store), cfg.name, month or cfg.month, reason)  # before any meter is run
    t0 = time.perf_counter()
    if from_store:
        summaries, parts, st = _from_store(cfg, from_store, month or cfg.month, options)
        runner = f"from the store {st.name}"
    else:
        summaries, run = _run_meters(cfg, out, workers=workers, scheduler=scheduler, store=store, by=by, reason=reason,
                                     overwrite=overwrite, quiet=quiet, options=options)
        parts = [{"meter": s[0].get("meter"), "month": None, "how": s[1]} for s in summaries.values()]
        runner = run.runner
    t_meters = time.perf_counter() - t0
    result = assemble(cfg, summaries, month=month)
    t_bal = time.perf_counter() - t0 - t_meters
    closing = None
    st = None
    if store or from_store:
        from ..store import open_store
        from ..store.balances import close_balance, plan_balance

        st = open_store(store or from_store)
        if store:
            version = plan_balance(st, result.name, result.month, reason)
            closing = {"store_version": version}
    summary = balance_summary(result, closing=closing)
    written = write_balance_outputs(summary, out, overwrite=overwrite)
    if store:
        parts = [{"meter": s.get("meter"), "month": result.month, "how": src} for s, src in summaries.values()]
        figures = {k: summary[k] for k in ("receipts_m3", "deliveries_m3", "own_use_m3", "fixed_m3", "linepack_change_m3",
                                           "ufg_m3", "ufg_pct", "ufg_expanded_uncertainty_m3", "consistent")}
        figures["credited"] = next((f["meter"] for f in summary["findings"] if f["credited"]), None)
        try:
            row = close_balance(st, name=result.name, month=result.month, figures=figures, parts=parts,
                                summary_text=balance_json(summary), by=by, reason=reason)
        except BaseException:
            for p in written.values():
                Path(p).unlink(missing_ok=True)
            raise
        closing = {"version": row["version"], "closed_at": row["closed_at"], "store": st.name}
    from .balance_console import print_balance

    shown = dict(written)
    if not from_store:
        shown["meters"] = Path(out) / "meters"   # each meter's outputs, as `meterfix fleet` writes them
    print_balance(summary, shown, runner=runner, seconds=(t_meters, t_bal), closing=closing,
                  from_store=parts if from_store else None, echo=echo)
    return 0
