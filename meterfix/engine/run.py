"""Files in, MonthResult out: the core path (reader → quality → engine) of one meter's month."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import InputError, SettingsError
from .pipeline import MonthResult, run_month
from .settings import Settings


def _check_file(path) -> Path:
    p = Path(path)
    if not p.exists():
        raise InputError("file not found", file=p, hint="check the path")
    if p.is_dir():
        raise InputError("is a folder, not a file", file=p, hint="give the log file(s) inside it")
    return p


def load_analyses(settings: Settings, composition=None, gas=None):
    """Analyses in force as a list of (effective_from or None, gas)."""
    from ..gas.composition import Composition

    if composition is not None and gas is not None:
        raise SettingsError("give --composition or --gas, not both")
    if gas is not None:
        return [(None, gas if isinstance(gas, Composition) else Composition.parse(str(gas)))]
    if composition is not None:
        from ..readers import read_analyses

        return read_analyses(_check_file(composition), timezone=settings.timezone)
    return []


def read_month(logs, settings: Settings, *, composition=None, gas=None, progress=None) -> MonthResult:
    """Read the log file(s) of one meter and the analyses, check quality and run the month.

    The core path: reader, quality, Z and totals. Uncertainty and the checks against other
    parties' figures are attached by ``meterfix.month.run_files``, the stage above.
    """
    return read_month_with_frame(logs, settings, composition=composition, gas=gas, progress=progress)[0]


def read_month_with_frame(logs, settings: Settings, *, composition=None, gas=None, progress=None):
    """``read_month``, also returning the quality-checked interval frame the checks read.

    Parameters
    ----------
    logs : path or list of paths    one meter's log, possibly in several files
    settings : Settings
    composition : path, optional    gas-analysis file
    gas : str or Composition, optional
    progress : callable, optional   ``progress(stage: str, fraction: float)`` as the run goes on
    """
    from ..readers import read_log
    from . import quality

    def step(text, fraction):
        if progress is not None:
            progress(text, fraction)

    paths = [_check_file(p) for p in ([logs] if isinstance(logs, (str, Path)) else list(logs))]
    if not paths:
        raise SettingsError("no log file given", hint="meterfix correct LOG... --out DIR")
    if composition is not None:
        _check_file(composition)
    if settings.meter == "meter" and settings.sources.get("meter", "default") == "default":
        settings.meter = paths[0].stem  # no meter name given: the first log's file name stands in
    step("reading the gas analyses", 0.0)
    analyses = load_analyses(settings, composition, gas)
    step(f"reading {len(paths)} log file(s)", 0.05)
    frame, meta = read_log(
        paths, timezone=settings.timezone, interval_label=settings.interval_label,
        column_map=settings.columns or None, register_digits=settings.register_digits,
        sheet=settings.sheet, opening_index=settings.opening_index,
        timezone_given=(settings.sources or {}).get("timezone", "default") != "default",
        overlap=settings.overlap,
    )
    step(f"checking data quality of {len(frame):,} intervals", 0.3)
    frame, edits = quality.apply_quality(frame, policy=settings.substitution,
                                         max_gap_intervals=settings.max_gap_intervals,
                                         bidirectional=settings.bidirectional)
    for b in (frame.attrs.get("quality") or {}).get("breaks", []):
        meta.notes.append(f"break in the log from {b['from']} to {b['to']} ({b['seconds'] / 86400:.3g} days, "
                          f"{b['intervals']} intervals): too long to fill with rows; nothing is counted for it")
    frame, edits, selection = _one_gas_month(frame, edits, settings)
    step(f"correcting {len(frame):,} intervals with {settings.method}", 0.4)
    result = run_month(frame, analyses, settings, metadata=meta, edits=edits)
    _gas_month_notes(result, frame, selection, settings)
    if "flag_negative_volume" in frame and frame["flag_negative_volume"].any():
        neg = frame["flag_negative_volume"].to_numpy(bool)
        raw = frame["volume_line_raw"].to_numpy(float) if "volume_line_raw" in frame else frame["volume_line"].to_numpy(float)
        if settings.bidirectional:
            result.warnings.append(f"{int(neg.sum())} interval(s) with negative volume (reverse flow, "
                                   f"{float(raw[neg].sum()):.6g} m3) counted: the meter is declared bidirectional")
        else:
            result.warnings.append(f"{int(neg.sum())} interval(s) with negative volume ({float(raw[neg].sum()):.6g} m3) "
                                   "left out of the totals (see the edit record); declare a bidirectional meter "
                                   "with --bidirectional if it is reverse flow")
    inputs = [dict(s) if isinstance(s, dict) else s for s in (meta.sources or [])]
    if composition is not None:
        inputs.append(file_record(composition, "analysis"))
    result.inputs = inputs
    return result, frame


def _one_gas_month(frame, edits, settings: Settings):
    """The intervals of the gas month ``settings.month`` (all of them without one): (frame, edits,
    GasMonthSelection or None)."""
    from .gas_month import select_gas_month

    month = settings.month
    if not month:
        return frame, edits, None
    sel = select_gas_month(frame, month, timezone=settings.timezone, gas_day_start=settings.gas_day_start,
                           interval_label=settings.interval_label)
    if not len(sel.frame):
        first, last = frame.index[0].tz_convert(settings.timezone), frame.index[-1].tz_convert(settings.timezone)
        raise InputError(f"the log has no interval in gas month {sel.month} (it runs from {first:%Y-%m-%d %H:%M} "
                         f"to {last:%Y-%m-%d %H:%M} {settings.timezone})",
                         hint="check --month, or give the logs of that month")
    kept = sel.frame
    kept.attrs = dict(frame.attrs)
    if edits is not None and len(edits):
        t = pd.to_datetime(edits["time"], utc=True)
        edits = edits[t.isin(kept.index).to_numpy()].reset_index(drop=True)
    return kept, edits, sel


def _gas_month_notes(result, frame, selection, settings: Settings) -> None:
    """The gas month's coverage on the result; notes for logs touching several months and for a
    likely mislabelled daily log."""
    from .gas_month import likely_midnight_mislabel, select_gas_month

    months = [str(m) for m in result.months.index]
    if selection is None and len(months) == 1:
        try:
            selection = select_gas_month(frame, months[0], timezone=settings.timezone,
                                         gas_day_start=settings.gas_day_start)
        except InputError:
            selection = None  # an interval crosses the month's bound: no coverage to state
    if selection is not None:
        result.gas_month = selection.record()
        if selection.hours_logged < selection.hours_in_month - 1e-9:
            from .gas_month import logged_mask

            iv = result.intervals
            dur = np.nan_to_num(iv["duration"].to_numpy(float)) / 3600.0
            not_logged = ~logged_mask(frame)
            est = not_logged & iv["estimated"].to_numpy(bool)
            none = not_logged & ~np.isfinite(iv["volume_base"].to_numpy(float))
            absent = selection.hours_in_month - float(dur.sum())
            parts = [f"{float(dur[est].sum()):g} h substituted (estimated)" if est.any() else "",
                     f"{float(dur[none].sum()):g} h without a result" if none.any() else "",
                     f"{absent:g} h not in the log" if absent > 1e-9 else ""]
            result.warnings.append(
                f"the log covers {selection.hours_logged:g} of the {selection.hours_in_month:g} hours of gas month "
                f"{selection.month} ({selection.coverage_pct:.4g} %): " + ", ".join(p for p in parts if p))
    elif len(months) > 1:
        hours = result.months["hours"].to_numpy(float)
        main = months[int(np.argmax(hours))]
        result.warnings.append(
            f"the log touches {len(months)} gas months ({', '.join(months)}): the outputs are named "
            f"{months[0]}_to_{months[-1]}; close one gas month with --month {main} (or the site key month)")
    if likely_midnight_mislabel(frame, settings.timezone, settings.gas_day_start, settings.interval_label):
        result.warnings.append(
            f"daily rows stamped at 00:00 are read as interval ends while the gas day starts at "
            f"{settings.gas_day_start:02d}:00: each row straddles two gas days (likely mislabelled); if the rows "
            "are calendar days give --gas-day-start 00:00, if each stamp starts a gas day give --interval-label start")


def file_record(path, role: str) -> dict:
    import hashlib

    p = Path(path)
    h = hashlib.sha256(p.read_bytes()).hexdigest()
    return {"file": p.name, "role": role, "sha256": h}
