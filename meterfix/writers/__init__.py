"""Writers: JSON summary, interval tables, workbook, run manifest."""

from __future__ import annotations

from pathlib import Path

from .atomic import safe_name, write_text
from .summary import build_summary, summary_json
from .tables import (parquet_available, write_edits_csv, write_gas_day_csv, write_interval_csv,
                     write_interval_parquet)


def output_stem(result) -> str:
    """'<meter>_<YYYY-MM>' (or a range of months), safe as a file name."""
    months = list(result.months.index)
    span = months[0] if len(months) == 1 else f"{months[0]}_to_{months[-1]}" if months else "empty"
    return f"{safe_name(result.settings.meter)}_{span}"


def write_outputs(result, out_dir, *, overwrite: bool = False, json_file=None, run=None,
                  workbook: bool = True) -> dict:
    """Write every output of a month run into ``out_dir``; returns {kind: path}.

    ``run`` describes how the month was run from files (see meterfix.writers.manifest); the run
    manifest ``<stem>_manifest.json`` records it with the settings and input sha256, so that
    ``meterfix correct --manifest`` can run the month again exactly.

    Outputs: ``<stem>_intervals.csv`` (and ``<stem>_intervals.parquet`` when pyarrow is
    installed), ``<stem>_gas_days.csv``, ``<stem>_edits.csv`` (the quality edit record),
    ``<stem>.xlsx``, ``<stem>_manifest.json`` and ``<stem>_summary.json``.

    ``workbook=False`` leaves the workbook out (``meterfix fleet`` without ``--workbooks``); the other
    outputs are the same.

    Everything is computed before the first file is written, and every file is written to a
    temporary name and renamed, so a failed or killed run leaves no partial output.
    """
    out = Path(out_dir)
    if out.exists() and not out.is_dir():
        from ..errors import InputError
        raise InputError("--out is a file, not a folder", file=out)
    stem = output_stem(result)
    summary = summary_json(result)
    written = {}
    write_workbook = None
    if workbook:
        try:
            from .workbook import write_workbook
        except ModuleNotFoundError as exc:
            if exc.name != "meterfix.writers.workbook":
                raise
    targets = {"summary": out / f"{stem}_summary.json", "intervals": out / f"{stem}_intervals.csv",
               "gas_days": out / f"{stem}_gas_days.csv", "edits": out / f"{stem}_edits.csv",
               "manifest": out / f"{stem}_manifest.json"}
    if parquet_available():
        targets["parquet"] = out / f"{stem}_intervals.parquet"
    if write_workbook is not None:
        targets["workbook"] = out / f"{stem}.xlsx"
    from .atomic import check_target

    for p in targets.values():
        check_target(p, overwrite=overwrite)
    from .manifest import build_manifest, manifest_json

    manifest_text = manifest_json(build_manifest(result, run, targets["manifest"], outputs=targets,
                                                 summary_text=summary))
    out.mkdir(parents=True, exist_ok=True)
    written["intervals"] = write_interval_csv(result, targets["intervals"], overwrite=overwrite)
    if "parquet" in targets:
        written["parquet"] = write_interval_parquet(result, targets["parquet"],
                                                              overwrite=overwrite)
    written["gas_days"] = write_gas_day_csv(result, targets["gas_days"], overwrite=overwrite)
    written["edits"] = write_edits_csv(result, targets["edits"], overwrite=overwrite)
    if write_workbook is not None:
        written["workbook"] = write_workbook(
            result, targets["workbook"], overwrite=overwrite, interval_csv=targets["intervals"].name,
            interval_parquet=targets["parquet"].name if "parquet" in targets else None,
            edits_csv=targets["edits"].name)
    written["manifest"] = write_text(targets["manifest"], manifest_text, overwrite=overwrite)
    # the summary is written last: its presence marks a complete set of outputs
    written["summary"] = write_text(targets["summary"], summary, overwrite=overwrite)
    if json_file is not None:
        written["json"] = write_text(json_file, summary, overwrite=True)
    return written


__all__ = ["build_summary", "summary_json", "write_outputs", "output_stem"]
