"""`meterfix correct`: the month run from the command line."""

from __future__ import annotations

from pathlib import Path
from typing import List, Optional

import typer

from .app import _fail, app
from .options import setting_options
from ..errors import MeterfixError

@app.command("correct", short_help="Correct one meter's month to base conditions.")
@setting_options("correct")
def correct_command(
    logs: Optional[List[Path]] = typer.Argument(None, help="Log file(s) of one meter (CSV, TXT, XLSX, XLSM, XLS, ODS); several files are joined in time order. Default: the site file's [files] logs. Not needed with --manifest."),
    out: Path = typer.Option(..., "--out", help="Folder for the outputs (created if missing)."),
    site_file: Optional[Path] = typer.Option(None, "--site", help="Site settings TOML (its [files] table names logs, composition and invoice relative to it); options given here override it."),
    json_file: Optional[Path] = typer.Option(None, "--json", help="Also write the JSON summary to this file."),
    overwrite: bool = typer.Option(False, "--overwrite", help="Replace existing outputs."),
    manifest: Optional[Path] = typer.Option(None, "--manifest", help="Re-run a month exactly from a run manifest written earlier."),
    by: Optional[str] = typer.Option(None, "--by", help="Who closes the month (kept in the store with the closing and its edits)."),
    reason: Optional[str] = typer.Option(None, "--reason", help="Why; required when the month is already closed in the store (a new version is added)."),
    quiet: bool = typer.Option(False, "--quiet", help="No console summary."),
    settings_options: dict = None,
):
    """Correct a month of one meter's log to contract base conditions and write the outputs."""
    try:
        code = _correct(locals())
    except MeterfixError as exc:
        _fail(exc)
    raise typer.Exit(code)


def _correct(a: dict) -> int:
    from ..month import run_files
    from ..engine.settings import build_settings
    from ..errors import SettingsError

    if a.get("manifest") is not None:
        return _correct_from_manifest(a)
    from ..engine.run import _check_file

    options = {k: v for k, v in (a.get("settings_options") or {}).items() if v not in (None, [], ())}
    for key in ("composition", "invoice"):
        if options.get(key) is not None:
            _check_file(Path(options[key]))  # a mistyped file name is named before any setting is checked
    for path in [*(a.get("logs") or []), a.get("site_file")]:
        if path is not None:
            _check_file(path)
    if not a.get("logs") and a.get("site_file") is None:
        raise SettingsError("no log file given", hint="meterfix correct LOG... --out DIR, --site SITE.toml with a "
                                                      "[files] table, or --manifest FILE --out DIR")
    settings = build_settings(a.get("site_file"), options)
    logs, composition, invoice = input_files(settings, a.get("site_file"), a.get("logs"))
    from ..writers.atomic import protect_inputs

    inputs = list(logs) + [p for p in (composition, invoice, a.get("site_file")) if p]
    protect_inputs(inputs)
    from ..writers.outset import check_output_folder

    check_output_folder(a["out"], json_file=a.get("json_file"))  # every output path, before any computing
    from .console import progress_bar

    from ..store.job import Closer

    closer = Closer(options.get("store"), a.get("by"), a.get("reason"))
    run = {"logs": list(logs), "composition": composition, "gas": settings.gas,
           "invoice": invoice, "site_file": a.get("site_file"), "uncertainty": True,
           "options": {k: v for k, v in options.items() if k not in ("composition", "invoice", "gas", "store")}}
    a = dict(a, logs=logs, composition=composition, invoice=invoice, gas=settings.gas)

    def compute():
        with progress_bar(enabled=not a.get("quiet")) as progress:
            return run_files(a["logs"], settings, composition=a.get("composition"), gas=a.get("gas"),
                             invoice=a.get("invoice"), progress=progress, with_frame=True)

    def write(result):
        from ..writers import write_outputs

        return write_outputs(result, a["out"], overwrite=a.get("overwrite", False), json_file=a.get("json_file"),
                             run=run)

    site_dir = Path(a["site_file"]).resolve().parent if a.get("site_file") else None
    result, written, closing = closer.run(settings, compute, write, base_dir=site_dir)
    if not a.get("quiet"):
        from .console import print_summary

        print_summary(result, written)
        if closing is not None:
            typer.echo(f"  closed             {closing['meter']} {closing['month']} version {closing['version']} "
                       f"into {closing['store']} at {closing['closed_at']}")
    return _exit_code(result, settings.fail_on)


def input_files(settings, site_file, logs_given):
    """(logs, composition, invoice): the log files on the command line win over the site file's
    [files] logs; a [files] path is relative to the site file, an option's to the working folder."""
    from ..fleet.meter import meter_inputs

    site_dir = Path(site_file).resolve().parent if site_file is not None else Path.cwd()
    files = settings.files or {}

    def path_of(key):
        v = files.get(key)
        if not v:
            return None
        return Path(v) if settings.sources.get(f"[files] {key}") == "option" else site_dir / v

    if logs_given:
        return list(logs_given), path_of("composition"), path_of("invoice")
    if not files.get("logs"):
        from ..errors import SettingsError

        raise SettingsError("no log file given, and the site file's [files] table names none", file=site_file,
                            hint="give the log files (meterfix correct LOG... --site SITE.toml --out DIR) or add "
                                 "logs = [\"logs/*.csv\"] to the site file's [files] table")
    logs, _, _ = meter_inputs(site_dir, settings)
    return logs, path_of("composition"), path_of("invoice")


#: options that may go with --manifest (everything else is fixed by the manifest)
_WITH_MANIFEST = {"manifest", "out", "overwrite", "json_file", "quiet"}


def _correct_from_manifest(a: dict) -> int:
    """Run a month again exactly as a manifest records it."""
    from ..errors import SettingsError
    from ..writers import write_outputs
    from ..writers.atomic import protect_inputs
    from ..writers.manifest import rerun

    given = {**{k: v for k, v in a.items() if k != "settings_options"}, **(a.get("settings_options") or {})}
    extra = [k for k, v in given.items() if k not in _WITH_MANIFEST and v not in (None, False, [], ())]
    if extra:
        special = {"logs": "LOGS", "site_file": "--site"}
        names = ", ".join(special.get(k, "--" + k.replace("_", "-")) for k in sorted(extra))
        raise SettingsError(f"--manifest re-runs the month exactly as recorded; drop {names}",
                            hint="only --out, --overwrite, --json and --quiet go with --manifest")
    protect_inputs([a["manifest"]])
    from ..writers.outset import check_output_folder

    check_output_folder(a["out"], json_file=a.get("json_file"))
    result, run, man = rerun(a["manifest"])
    protect_inputs([p for p in (run["logs"] + [run.get("composition"), run.get("invoice"), run.get("site_file")]) if p])
    written = write_outputs(result, a["out"], overwrite=a.get("overwrite", False), json_file=a.get("json_file"),
                            run=run)
    if not a.get("quiet"):
        from .console import print_summary

        print_summary(result, written)
    return _exit_code(result, result.settings.fail_on)


def worst_finding_pct(result) -> float:
    """The largest finding of a run in percent: ideal-gas error (month, days, periods), invoice
    difference, and the site corrector's deviation from our recomputation."""
    import math

    worst = abs(result.totals.get("ideal_gas_error_pct") or 0.0)
    if len(result.findings):
        worst = max(worst, float(result.findings["ideal_gas_error_pct"].abs().max()))
    rec = result.reconciliation
    if rec is not None:
        for k in ("energy_difference_pct", "volume_difference_pct"):
            v = (rec.totals or {}).get(k)
            if isinstance(v, (int, float)) and math.isfinite(v):
                worst = max(worst, abs(v))
                break
    cc = result.corrector_check
    if cc is not None and isinstance(cc.size_pct, (int, float)) and math.isfinite(cc.size_pct):
        worst = max(worst, abs(cc.size_pct))
    return worst


def _exit_code(result, fail_on) -> int:
    if fail_on is None:
        return 0
    return 1 if worst_finding_pct(result) > fail_on else 0


@app.command("demo", short_help="Run an invented month through the whole job.")
def demo_command(
    folder: Path = typer.Argument(Path("meterfix-demo"), help="Folder for the demo outputs."),
    overwrite: bool = typer.Option(False, "--overwrite", help="Replace existing outputs."),
    zone: bool = typer.Option(False, "--zone", help="Instead: the balance of an invented distribution zone (two receipts, five deliveries on volume, orifice and Coriolis meters, a linepack section, one meter drifting high)."),
):
    """Run an invented month (a 40-bar industrial meter) and print where the outputs are."""
    try:
        from .console import print_summary
        from .demo import demo_folder, run_demo

        if zone:
            from .balance import run_balance
            from .demo import zone_folder

            code = run_balance(zone_folder() / "balance.toml", folder, overwrite=overwrite, quiet=True,
                               workers=2)
            typer.echo(f"  inputs (invented)  {zone_folder()}")
            raise typer.Exit(code)

        result, written = run_demo(folder, overwrite=overwrite)
        print_summary(result, written)
        typer.echo(f"  inputs (invented)  {demo_folder()}")
        from .demo import DEMO_SECOND_METER, meter_folder, run_demo_meter

        name, sub = DEMO_SECOND_METER  # an orifice meter of the same works, in a sub-folder
        typer.echo("")
        result, written = run_demo_meter(name, folder / sub, overwrite=overwrite)
        print_summary(result, written)
        typer.echo(f"  inputs (invented)  {meter_folder(name)}")
    except MeterfixError as exc:
        _fail(exc)
