"""Files in, MonthResult out: the core path (reader → quality → engine) of one meter's month."""

from __future__ import annotations

from pathlib import Path

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
    )
    step(f"checking data quality of {len(frame):,} intervals", 0.3)
    frame, edits = quality.apply_quality(frame, policy=settings.substitution,
                                         max_gap_intervals=settings.max_gap_intervals,
                                         bidirectional=settings.bidirectional)
    for b in (frame.attrs.get("quality") or {}).get("breaks", []):
        meta.notes.append(f"break in the log from {b['from']} to {b['to']} ({b['seconds'] / 86400:.3g} days, "
                          f"{b['intervals']} intervals): too long to fill with rows; nothing is counted for it")
    step(f"correcting {len(frame):,} intervals with {settings.method}", 0.4)
    result = run_month(frame, analyses, settings, metadata=meta, edits=edits)
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


def file_record(path, role: str) -> dict:
    import hashlib

    p = Path(path)
    h = hashlib.sha256(p.read_bytes()).hexdigest()
    return {"file": p.name, "role": role, "sha256": h}
