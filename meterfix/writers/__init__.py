"""Writers: JSON summary, interval tables, workbook, run manifest."""

from __future__ import annotations

from pathlib import Path

from .atomic import safe_name, write_text
from .summary import build_summary, summary_json
from .tables import parquet_available


def output_stem(result) -> str:
    """'<meter>_<YYYY-MM>' (or a range of months), safe as a file name."""
    months = list(result.months.index)
    span = months[0] if len(months) == 1 else f"{months[0]}_to_{months[-1]}" if months else "empty"
    return f"{safe_name(result.settings.meter)}_{span}"


def write_outputs(result, out_dir, *, overwrite: bool = False, json_file=None, run=None,
                  workbook: bool = True, summary: dict | None = None) -> dict:
    """Write every output of a month run into ``out_dir``; returns {kind: path}.

    ``run`` describes how the month was run from files (see meterfix.writers.manifest); the run
    manifest ``<stem>_manifest.json`` records it with the settings and input sha256, so that
    ``meterfix correct --manifest`` can run the month again exactly.

    Outputs: ``<stem>_intervals.csv`` (and ``<stem>_intervals.parquet`` when pyarrow is
    installed), ``<stem>_gas_days.csv``, ``<stem>_edits.csv`` (the quality edit record),
    ``<stem>.xlsx``, ``<stem>_manifest.json`` and ``<stem>_summary.json`` (and ``json_file``,
    a copy of the summary, when given).

    ``workbook=False`` leaves the workbook out (``meterfix fleet`` without ``--workbooks``); the other
    outputs are the same. ``summary`` is the result's :func:`build_summary` when the caller has
    built it already (the fleet row is made from the same dict), else it is built here.

    Each table is built once (the interval table serves the CSV and the Parquet file), and every
    file of the set is flushed to disk once, when the set is committed.

    The set is complete or absent (:mod:`meterfix.writers.outset`): everything is computed
    first, the files are written into a temporary folder beside ``out_dir`` under a lock on
    ``out_dir``, then moved into place, the summary last. Files are readable as the umask allows.
    An operating-system error (read-only folder, full disk, a file in the way) raises
    :class:`~meterfix.errors.OutputError` and leaves no output.
    """
    from .outset import OutputSet, os_error

    out = Path(out_dir)
    stem = output_stem(result)
    from .summary import dumps_clean
    from .tables import (edits_csv_bytes, gas_day_csv_bytes, interval_columns, interval_csv_bytes,
                         interval_parquet_of)

    summary = dumps_clean(build_summary(result) if summary is None else summary)
    write_workbook = None
    if workbook:
        try:
            from .workbook import write_workbook
        except ModuleNotFoundError as exc:
            if exc.name != "meterfix.writers.workbook":
                raise
    names = {"summary": f"{stem}_summary.json", "intervals": f"{stem}_intervals.csv",
             "gas_days": f"{stem}_gas_days.csv", "edits": f"{stem}_edits.csv", "manifest": f"{stem}_manifest.json"}
    if parquet_available():
        names["parquet"] = f"{stem}_intervals.parquet"
    if write_workbook is not None:
        names["workbook"] = f"{stem}.xlsx"
    targets = {k: out / n for k, n in names.items()}
    from .atomic import check_target
    from .manifest import build_manifest, manifest_json

    for p in targets.values():
        check_target(p, overwrite=overwrite)  # before any work; again under the lock below
    if json_file is not None:
        check_target(json_file, overwrite=True)
    manifest_text = manifest_json(build_manifest(result, run, targets["manifest"], outputs=targets,
                                                 summary_text=summary))
    try:
        with OutputSet(out, overwrite=overwrite) as outs:
            outs.check_finals(names.values())
            cols = interval_columns(result)  # once for both files; each file's bytes freed when written
            outs.write(names["intervals"], interval_csv_bytes(result, cols))
            if "parquet" in names:
                outs.write(names["parquet"], interval_parquet_of(result, cols))
            del cols
            outs.write(names["gas_days"], gas_day_csv_bytes(result))
            outs.write(names["edits"], edits_csv_bytes(result))
            if write_workbook is not None:
                write_workbook(result, outs.path(names["workbook"]), interval_csv=names["intervals"],
                               interval_parquet=names.get("parquet"), edits_csv=names["edits"])
            outs.write(names["manifest"], manifest_text.encode("utf-8"))
            outs.write(names["summary"], summary.encode("utf-8"))
            if json_file is not None:
                write_text(outs.outside(json_file), summary, overwrite=True)
            outs.commit()
    except OSError as exc:
        raise os_error(exc, out) from None
    written = dict(targets)
    if json_file is not None:
        written["json"] = Path(json_file)
    return written


__all__ = ["build_summary", "summary_json", "write_outputs", "output_stem"]
