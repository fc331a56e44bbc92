"""One meter of a fleet: its folder in, its outputs written, one fleet-table row out.

``run_meter`` is the pure per-meter function every fleet runner calls (local processes or a Dask
cluster): it depends only on its arguments and the files, never on the process it runs in, and it
never raises for a bad meter — the row says ``status = "error"`` with the one-line message that
``meterfix correct`` would print for the same files.

Layout of a fleet folder::

    FLEET/
      north-header/            one folder per meter
        site.toml              settings; its [files] table names the inputs (paths relative to it):
                                 logs = ["logs/*.csv"], composition = "analysis.csv", invoice = "inv.xlsx"
        logs/...
      south-header/
        site.toml
        ...

Options given on the command line apply to every meter and win over each site file.
"""

from __future__ import annotations

import glob
from pathlib import Path

from ..errors import InputError, MeterfixError, SettingsError

#: the inputs looked for when a site file has no [files] table
DEFAULT_LOG_PATTERNS = ("*.csv", "*.xlsx", "*.xls", "*.ods", "*.txt")


def meter_folders(folder) -> list[Path]:
    """Sub-folders of ``folder`` that hold a site.toml, in name order."""
    root = Path(folder)
    if not root.is_dir():
        raise InputError("fleet folder not found or not a folder", file=root)
    found = sorted(p.parent for p in root.glob("*/site.toml"))
    if not found:
        raise InputError("no meter folders found (each needs a site.toml)", file=root,
                         hint="put one folder per meter, each with a site.toml and its logs")
    return found


def meter_inputs(meter_dir: Path, settings):
    """(logs, composition or None, invoice or None) of a meter folder, from its [files] table."""
    files = settings.files or {}
    patterns = files.get("logs") or list(DEFAULT_LOG_PATTERNS)
    if isinstance(patterns, str):
        patterns = [patterns]
    logs = []
    for pat in patterns:
        logs += sorted(Path(p) for p in glob.glob(str(meter_dir / pat)))
    comp = files.get("composition")
    inv = files.get("invoice")
    comp = meter_dir / comp if comp else None
    inv = meter_dir / inv if inv else None
    logs = [p for p in logs if p not in (comp, inv) and p.name != "site.toml"]
    if not logs:
        raise SettingsError("no log files found for this meter", file=meter_dir / "site.toml",
                            hint="list them in the [files] table: logs = [\"logs/*.csv\"]")
    return logs, comp, inv


def meter_settings(meter_dir, options: dict):
    """Settings of one meter folder: its site.toml, the fleet's options winning; the folder name
    stands in for a meter without a name."""
    from ..engine.settings import build_settings

    meter_dir = Path(meter_dir)
    opts = dict(options)
    opts.setdefault("meter", None)
    settings = build_settings(meter_dir / "site.toml", opts)
    if settings.meter == "meter":
        settings.meter = meter_dir.name
    return settings


def output_folder(out_dir, settings) -> Path:
    """Where a meter's own outputs go: OUT/<meter name, safe as a file name>."""
    from ..writers.atomic import safe_name

    return Path(out_dir) / safe_name(settings.meter)


def interrupted(target: Path, stem: str) -> bool:
    """True when ``target`` holds outputs of this month without its summary: the leftovers of a run
    that was killed while writing (the summary is written last), which a new run replaces."""
    return (Path(target).is_dir() and not (Path(target) / f"{stem}_summary.json").exists()
            and any(Path(target).glob(f"{stem}*")))


def written_since(target: Path, stem: str, since: float | None) -> bool:
    """True when ``target`` holds this month's summary written at or after ``since`` [s, epoch]: the
    outputs of this same fleet run, whose row was lost with its worker, which a re-run replaces."""
    summary = Path(target) / f"{stem}_summary.json"
    return since is not None and summary.exists() and summary.stat().st_mtime >= since


def run_meter(meter_dir, out_dir, options: dict, *, overwrite: bool = False, workbooks: bool = False,
              uncertainty: bool | dict = True, closer=None, replace_since: float | None = None) -> dict:
    """Run one meter folder and write its outputs; returns its fleet-table row.

    Parameters
    ----------
    meter_dir : path       the meter's folder (site.toml and inputs)
    out_dir : path         the fleet's output folder; this meter's outputs go to a sub-folder
    options : dict         setting name → raw option value, applied to every meter
    overwrite : bool       replace existing outputs
    workbooks : bool       also write the meter's month workbook
    uncertainty : bool or dict   as ``meterfix.month.run_files``
    closer : meterfix.store.job.Closer, optional   closes the month into a store (handed down by
                           the CLI: ``closer.run(settings, compute, write, base_dir=meter_dir)``)
    replace_since : float, optional [s since the epoch]   a meter run again after its worker was
                           lost replaces outputs written since then (by this fleet run), never older ones

    Outputs of a run of the same month that was killed while writing them (no summary yet) are
    replaced: a meter run again after its worker was lost writes its complete set.

    Never raises for bad input or settings: the row's ``status`` is ``"error"`` and ``error`` holds
    the message (file, sheet, row, column and the fix, as ``meterfix correct`` prints it).
    """
    from ..writers.fleet import error_row, fleet_row

    meter_dir = Path(meter_dir)
    try:
        from ..month import run_files
        from ..writers import output_stem, write_outputs
        from ..writers.summary import build_summary

        settings = meter_settings(meter_dir, options)
        logs, comp, inv = meter_inputs(meter_dir, settings)
        run = {"logs": logs, "composition": comp, "gas": None, "invoice": inv, "site_file": meter_dir / "site.toml",
               "uncertainty": uncertainty, "options": {k: v for k, v in options.items() if v is not None}}
        target = output_folder(out_dir, settings)

        summaries = []

        def write(result):
            stem = output_stem(result)
            summaries.append(build_summary(result))  # written as the JSON summary, and the row is made from it
            return write_outputs(result, target, overwrite=overwrite or interrupted(target, stem)
                                 or written_since(target, stem, replace_since), run=run, workbook=workbooks,
                                 summary=summaries[-1])

        closing = None
        if closer is None:
            result = run_files(logs, settings, composition=comp, invoice=inv, uncertainty=uncertainty)
            written = write(result)
        else:
            result, written, closing = closer.run(
                settings, lambda: run_files(logs, settings, composition=comp, invoice=inv, uncertainty=uncertainty,
                                            with_frame=True), write, base_dir=meter_dir)
        # the row says what the meter's own summary says: the JSON-safe dict that was written
        row = fleet_row(meter_dir.name, summaries[-1], written, out_dir)
        row["flagged_intervals"] = int(result.intervals["flagged"].sum())
        row["_display_units"] = dict(settings.display_units or {})
        if closing is not None:
            row["store_month"], row["store_version"] = closing["month"], closing["version"]
        return row
    except MeterfixError as exc:
        return error_row(meter_dir.name, str(exc))
