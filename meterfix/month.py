"""The month job of one meter: files in, MonthResult out, with its uncertainty and checks.

This stage sits above the engine, the uncertainty and the checks and composes them; the CLI, the
fleet runners and the Python API call ``run_files``.
"""

from __future__ import annotations

from .engine.run import _check_file, file_record, load_analyses, read_month, read_month_with_frame  # noqa: F401
from .engine.pipeline import MonthResult  # noqa: F401  (re-exported for users of the month job)
from .engine.flow_meter import CORIOLIS_METER, ORIFICE_METER
from .engine.settings import Settings


def run_files(logs, settings: Settings, *, composition=None, gas=None, invoice=None,
              uncertainty: bool = True, progress=None, with_frame: bool = False):
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
    with_frame : bool               also return the quality-checked interval frame the engine ran
                                    on (the store keeps its records): ``(result, frame)``

    Returns
    -------
    MonthResult, or (MonthResult, DataFrame) with ``with_frame``
    """
    def step(text, fraction):
        if progress is not None:
            progress(text, fraction)

    if invoice is not None:
        _check_file(invoice)
    result, frame = read_month_with_frame(logs, settings, composition=composition, gas=gas, progress=progress)
    if uncertainty:
        from . import uncertainty as U

        step("uncertainty budget and Monte Carlo", 0.6)
        result.uncertainty = U.month_uncertainty(
            result, progress=None if progress is None else (lambda done, total: step(
                "uncertainty: Monte Carlo", 0.6 + 0.25 * min(1.0, done / max(total, 1)))))
    # the checks are imported only when needed (a month without an invoice or a site corrector
    # does not use them)
    if invoice is not None:
        from .checks import invoice as RC

        step("reconciling the invoice", 0.85)
        result.inputs.append(file_record(invoice, "invoice"))
        result.reconciliation = RC.reconcile_invoice(result, _check_file(invoice))
    kind = (result.flow_meter or {}).get("kind")
    if "volume_corrected_site" in frame.columns and kind in (ORIFICE_METER, CORIOLIS_METER):
        # the causes it tries are those of a volume meter's PTZ conversion (checks/corrector_models.py)
        result.warnings.append(f"the site's corrected volume is not checked for a {kind} meter: the corrector check "
                               "models the conversion of a volume meter's reading")
    elif "volume_corrected_site" in frame.columns:
        from .checks import corrector as CC

        step("checking the site corrector", 0.9)
        result.corrector_check = CC.check_corrector(result, frame)
    step("done", 1.0)
    return (result, frame) if with_frame else result
