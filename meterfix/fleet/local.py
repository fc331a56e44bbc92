"""Many meters: one sub-folder per meter, processed in parallel, with a fleet summary.

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
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

from ..errors import InputError, MeterfixError, SettingsError


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


def _inputs(meter_dir: Path, settings):
    files = settings.files or {}
    patterns = files.get("logs") or ["*.csv", "*.xlsx", "*.xls", "*.ods", "*.txt"]
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


def run_meter(meter_dir, out_dir, options: dict, overwrite: bool = False) -> dict:
    """Run one meter folder; returns a fleet-summary row (never raises for bad input)."""
    from ..writers import write_outputs
    from ..month import run_files
    from ..engine.settings import build_settings

    meter_dir = Path(meter_dir)
    row = {"meter_folder": meter_dir.name}
    try:
        opts = dict(options)
        opts.setdefault("meter", None)
        settings = build_settings(meter_dir / "site.toml", opts)
        if settings.meter == "meter":
            settings.meter = meter_dir.name
        logs, comp, inv = _inputs(meter_dir, settings)
        result = run_files(logs, settings, composition=comp, invoice=inv)
        from ..writers.atomic import safe_name

        written = write_outputs(result, Path(out_dir) / safe_name(settings.meter), overwrite=overwrite)
        t = result.totals
        unc = result.uncertainty
        row.update({
            "meter": settings.meter, "status": "ok", "intervals": t["intervals"],
            "uncorrected_volume_m3": t["uncorrected_volume_m3"], "base_volume_m3": t["base_volume_m3"],
            "ideal_gas_base_volume_m3": t["ideal_gas_base_volume_m3"], "ideal_gas_error_pct": t["ideal_gas_error_pct"],
            "energy_MJ": t["energy_MJ"], "expanded_uncertainty_pct": getattr(unc, "expanded_pct", None),
            "flagged_intervals": int(result.intervals["flagged"].sum()), "method": result.method["name"],
            "summary": str(written.get("summary")),
        })
    except MeterfixError as exc:
        row.update({"status": "error", "error": str(exc)})
    return row


def run_fleet(folder, out_dir, options: dict, *, workers: int = 1, overwrite: bool = False) -> list[dict]:
    """Run every meter folder; ``workers`` > 1 uses that many processes."""
    dirs = meter_folders(folder)
    if workers <= 1 or len(dirs) == 1:
        return [run_meter(d, out_dir, options, overwrite) for d in dirs]
    with ProcessPoolExecutor(max_workers=workers) as ex:
        futs = [ex.submit(run_meter, d, out_dir, options, overwrite) for d in dirs]
        return [f.result() for f in futs]
