"""Files in, MonthResult out: the reader → engine path used by the CLI and the Python API."""

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


def run_files(logs, settings: Settings, *, composition=None, gas=None, invoice=None,
              uncertainty: bool = True, progress=None) -> MonthResult:
    """Read the log file(s) of one meter and the analyses, run the month, attach later steps.

    Parameters
    ----------
    logs : path or list of paths    one meter's log, possibly in several files
    settings : Settings
    composition : path, optional    gas-analysis file
    gas : str or Composition, optional
    invoice : path, optional        supplier invoice to reconcile
    uncertainty : bool              attach the month's uncertainty (GUM budget and Monte Carlo)
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
    for extra in (composition, invoice):
        if extra is not None:
            _check_file(extra)
    if settings.meter == "meter" and settings.sources.get("meter", "default") == "default":
        settings.meter = paths[0].stem  # no meter name given: the first log's file name stands in
    step("reading the gas analyses", 0.0)
    analyses = load_analyses(settings, composition, gas)
    step(f"reading {len(paths)} log file(s)", 0.05)
    frame, meta = read_log(
        paths, timezone=settings.timezone, interval_label=settings.interval_label,
        column_map=settings.column_map or None, register_digits=settings.register_digits,
    )
    step(f"checking data quality of {len(frame):,} intervals", 0.3)
    frame, edits = quality.apply_quality(frame, policy=settings.substitution,
                                         max_gap_intervals=settings.max_gap_intervals)
    step(f"correcting {len(frame):,} intervals with {settings.method}", 0.4)
    result = run_month(frame, analyses, settings, metadata=meta, edits=edits)
    inputs = [dict(s) if isinstance(s, dict) else s for s in (getattr(meta, "sources", None) or [])]
    if composition is not None:
        inputs.append(_file_record(composition, "analysis"))
    result.inputs = inputs
    if uncertainty:
        from . import uncertainty as U

        step("uncertainty budget and Monte Carlo", 0.6)
        result.uncertainty = U.month_uncertainty(
            result, progress=None if progress is None else (lambda done, total: step(
                "uncertainty: Monte Carlo", 0.6 + 0.25 * min(1.0, done / max(total, 1)))))
    # reconcile is imported only when needed: it brings in scipy.optimize (most of a second),
    # which a month without an invoice or a site corrector does not use
    if invoice is not None:
        from . import reconcile as RC

        step("reconciling the invoice", 0.85)
        result.inputs.append(_file_record(invoice, "invoice"))
        result.reconciliation = RC.reconcile_invoice(result, _check_file(invoice))
    if "volume_corrected_site" in frame.columns:
        from . import reconcile as RC

        step("checking the site corrector", 0.9)
        result.corrector_check = RC.check_corrector(result, frame)
    step("done", 1.0)
    return result


def _file_record(path, role: str) -> dict:
    import hashlib

    p = Path(path)
    h = hashlib.sha256(p.read_bytes()).hexdigest()
    return {"file": p.name, "role": role, "sha256": h}
