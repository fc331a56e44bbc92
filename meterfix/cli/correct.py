"""`meterfix correct`: the month run from the command line."""

from __future__ import annotations

from pathlib import Path
from typing import List, Optional

import typer

from .app import _fail, app
from ..errors import MeterfixError

#: CLI option → setting name (every setting is also a site-file key of the same name)
_OPTION_SETTINGS = ("meter", "site", "base", "base_pressure", "base_temperature", "atmospheric_pressure",
                    "elevation", "timezone", "gas_day_start", "interval_label", "method", "heating_value",
                    "heating_value_reference_temperature", "heating_value_reference_pressure",
                    "combustion_temperature", "energy_edition", "ideal_gas_threshold", "substitution",
                    "max_gap_intervals", "price", "invoice_tolerance", "fail_on", "register_digits", "invoice_base",
                    "invoice_base_pressure", "invoice_base_temperature", "sheet",
                    "bidirectional", "opening_index")


def _column_map(items):
    out = {}
    for it in items or []:
        if "=" not in it:
            from ..errors import SettingsError
            raise SettingsError(f"--column '{it}' is not SOURCE=NAME",
                                hint="e.g. --column 'P1 (barg)=pressure_gauge'")
        k, v = it.rsplit("=", 1)
        out[k.strip()] = v.strip()
    return out


@app.command("correct", short_help="Correct one meter's month to base conditions.")
def correct_command(
    logs: Optional[List[Path]] = typer.Argument(None, help="Log file(s) of one meter (CSV, TXT, XLSX, XLSM, XLS, ODS); several files are joined in time order. Not needed with --manifest."),
    out: Path = typer.Option(..., "--out", help="Folder for the outputs (created if missing)."),
    site_file: Optional[Path] = typer.Option(None, "--site", help="Site settings TOML; options given here override it."),
    composition: Optional[Path] = typer.Option(None, "--composition", help="Gas-analysis file (one analysis, or a table with effective-from times)."),
    gas: Optional[str] = typer.Option(None, "--gas", help="Gas as 'methane=0.95,ethane=0.03,...' instead of --composition."),
    method: Optional[str] = typer.Option(None, "--method", help="Z method (default aga8-detail); 'meterfix methods' lists them."),
    base: Optional[str] = typer.Option(None, "--base", help="Named base conditions: us-14.73-60f, us-14.65-60f, us-14.696-60f, iso-15c, normal-0c, metric-20c."),
    base_pressure: Optional[str] = typer.Option(None, "--base-pressure", help="Contract base pressure, absolute: '14.73 psia', '101.325 kPa'."),
    base_temperature: Optional[str] = typer.Option(None, "--base-temperature", help="Contract base temperature: '60 degF', '15 degC'."),
    atmospheric_pressure: Optional[str] = typer.Option(None, "--atmospheric-pressure", help="Fixed atmospheric pressure for gauge logs: '14.4 psia', '99.2 kPa'."),
    elevation: Optional[str] = typer.Option(None, "--elevation", help="Site elevation for the standard atmosphere: '180 m', '5000 ft'."),
    timezone: Optional[str] = typer.Option(None, "--timezone", help="IANA time zone of the log's clock (default UTC), e.g. 'America/Chicago'."),
    gas_day_start: Optional[str] = typer.Option(None, "--gas-day-start", help="Local start of the gas day, e.g. '09:00' (default 06:00)."),
    interval_label: Optional[str] = typer.Option(None, "--interval-label", help="'end' (default) or 'start': which end of the interval a timestamp marks."),
    heating_value: Optional[str] = typer.Option(None, "--heating-value", help="Supplied gross heating value instead of the analysis, e.g. '38.6 MJ/m3'."),
    heating_value_reference_temperature: Optional[str] = typer.Option(None, "--heating-value-reference-temperature", help="Metering reference temperature of --heating-value."),
    heating_value_reference_pressure: Optional[str] = typer.Option(None, "--heating-value-reference-pressure", help="Metering reference pressure of --heating-value."),
    combustion_temperature: Optional[str] = typer.Option(None, "--combustion-temperature", help="Combustion reference temperature for the heating value: 0, 15, 20, 25 degC or 60 degF as ISO 6976 tabulates (default 25 degC)."),
    energy_edition: Optional[str] = typer.Option(None, "--energy-edition", help="ISO 6976 edition for energy from the analysis: 2016 (default) or 1995."),
    ideal_gas_threshold: Optional[float] = typer.Option(None, "--ideal-gas-threshold", help="Percent; |ideal − real| above it is a finding (default 0.5)."),
    substitution: Optional[str] = typer.Option(None, "--substitution", help="Fill gaps: none (default), interpolate, hold, profile."),
    max_gap_intervals: Optional[int] = typer.Option(None, "--max-gap-intervals", help="Longest gap filled, in intervals (default 3)."),
    register_digits: Optional[int] = typer.Option(None, "--register-digits", help="Digits of the meter index register (rollover at 10^n)."),
    sheet: Optional[str] = typer.Option(None, "--sheet", help="Workbook sheet holding the log (default: the one sheet holding a log)."),
    bidirectional: Optional[bool] = typer.Option(None, "--bidirectional", help="The meter measures both flow directions: negative interval volumes count (default: flagged and left out)."),
    opening_index: Optional[str] = typer.Option(None, "--opening-index", help="Meter index at the start of the first logged interval, e.g. '123456 m3', so that the first reading closes an interval."),
    column: Optional[List[str]] = typer.Option(None, "--column", help="Map a source header to a canonical name: 'SOURCE=NAME' (repeatable)."),
    meter: Optional[str] = typer.Option(None, "--meter", help="Meter name used in outputs."),
    site: Optional[str] = typer.Option(None, "--site-name", help="Site name used in outputs."),
    invoice: Optional[Path] = typer.Option(None, "--invoice", help="Supplier invoice to reconcile (CSV/XLSX)."),
    invoice_base: Optional[str] = typer.Option(None, "--invoice-base", help="Named base conditions of the invoice's volumes when the invoice does not state them (same names as --base)."),
    invoice_base_pressure: Optional[str] = typer.Option(None, "--invoice-base-pressure", help="Base pressure of the invoice's volumes when the invoice does not state it, e.g. '14.73 psia'."),
    invoice_base_temperature: Optional[str] = typer.Option(None, "--invoice-base-temperature", help="Base temperature of the invoice's volumes when the invoice does not state it, e.g. '60 degF'."),
    price: Optional[str] = typer.Option(None, "--price", help="Energy price for money impact, e.g. '3.20 USD/MMBtu'."),
    invoice_tolerance: Optional[float] = typer.Option(None, "--invoice-tolerance", help="Contract tolerance for invoice differences, percent."),
    meter_uncertainty: Optional[str] = typer.Option(None, "--meter-uncertainty", help="Meter uncertainty: '1 %' (k=2) or 'mpe 1 %'."),
    pressure_uncertainty: Optional[str] = typer.Option(None, "--pressure-uncertainty", help="Line pressure: '0.25 %' of absolute pressure or '2 kPa' (k=2), or 'mpe ...'."),
    temperature_uncertainty: Optional[str] = typer.Option(None, "--temperature-uncertainty", help="Line temperature: '0.5 K' (k=2) or 'mpe ...'."),
    atmospheric_uncertainty: Optional[str] = typer.Option(None, "--atmospheric-uncertainty", help="Atmospheric pressure: '0.5 kPa' (k=2)."),
    z_uncertainty: Optional[str] = typer.Option(None, "--z-uncertainty", help="Z method: '0.1 %' (k=2); default from the method's range."),
    json_file: Optional[Path] = typer.Option(None, "--json", help="Also write the JSON summary to this file."),
    fail_on: Optional[float] = typer.Option(None, "--fail-on", help="Exit 1 when a finding (ideal-gas, invoice or corrector error) exceeds this percent."),
    overwrite: bool = typer.Option(False, "--overwrite", help="Replace existing outputs."),
    manifest: Optional[Path] = typer.Option(None, "--manifest", help="Re-run a month exactly from a run manifest written earlier."),
    store: Optional[str] = typer.Option(None, "--store", help="Close the month into a store: a SQLite file (created if missing) or a PostgreSQL URL; also the site-file key 'store'."),
    by: Optional[str] = typer.Option(None, "--by", help="Who closes the month (kept in the store with the closing and its edits)."),
    reason: Optional[str] = typer.Option(None, "--reason", help="Why; required when the month is already closed in the store (a new version is added)."),
    quiet: bool = typer.Option(False, "--quiet", help="No console summary."),
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
    if not a.get("logs"):
        raise SettingsError("no log file given", hint="meterfix correct LOG... --out DIR, or --manifest FILE --out DIR")
    from ..engine.run import _check_file

    for path in [*a["logs"], a.get("composition"), a.get("invoice"), a.get("site_file")]:
        if path is not None:
            _check_file(path)  # a mistyped file name is named before any setting is checked
    options = {k: a.get(k) for k in _OPTION_SETTINGS}
    options["column_map"] = _column_map(a.get("column")) or None
    unc = {k: a.get(f"{k}_uncertainty") for k in ("meter", "pressure", "temperature", "atmospheric", "z")}
    options["uncertainty"] = {k: v for k, v in unc.items() if v is not None} or None
    settings = build_settings(a.get("site_file"), options)
    from ..writers.atomic import protect_inputs

    inputs = list(a["logs"]) + [p for p in (a.get("composition"), a.get("invoice"), a.get("site_file")) if p]
    protect_inputs(inputs)
    from ..writers.outset import check_output_folder

    check_output_folder(a["out"], json_file=a.get("json_file"))  # every output path, before any computing
    from .console import progress_bar

    from ..store.job import Closer

    closer = Closer(a.get("store"), a.get("by"), a.get("reason"))
    run = {"logs": list(a["logs"]), "composition": a.get("composition"), "gas": a.get("gas"),
           "invoice": a.get("invoice"), "site_file": a.get("site_file"), "uncertainty": True,
           "options": {k: v for k, v in options.items() if v is not None}}

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


#: options that may go with --manifest (everything else is fixed by the manifest)
_WITH_MANIFEST = {"manifest", "out", "overwrite", "json_file", "quiet"}


def _correct_from_manifest(a: dict) -> int:
    """Run a month again exactly as a manifest records it."""
    from ..errors import SettingsError
    from ..writers import write_outputs
    from ..writers.atomic import protect_inputs
    from ..writers.manifest import rerun

    extra = [k for k, v in a.items() if k not in _WITH_MANIFEST and v not in (None, False, [], ())]
    if extra:
        special = {"logs": "LOGS", "site_file": "--site", "site": "--site-name"}
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
):
    """Run an invented month (a 40-bar industrial meter) and print where the outputs are."""
    try:
        from .console import print_summary
        from .demo import demo_folder, run_demo

        result, written = run_demo(folder, overwrite=overwrite)
        print_summary(result, written)
        typer.echo(f"  inputs (invented)  {demo_folder()}")
    except MeterfixError as exc:
        _fail(exc)
