"""Invoice reconciliation: the supplier's billed periods against our month, on one basis.

Per billing period the billed volume is re-stated at our base conditions with the real-gas Z of
the gas in force at each base,

    V_ours_basis = V_billed · (p_inv / p_b) · (T_b / T_inv) · (Z_b / Z_inv)

(meterfix.engine.correct.convert_base_volume), and volume, energy and money are compared in
units and percent, against the combined uncertainty and the contract tolerance.

The attribution (meterfix.checks.attribution) explains the difference between the figures as
billed and ours, one assumption at a time. The site corrector check lives in
meterfix.checks.corrector; ``check_corrector`` is re-exported here.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..errors import InputError
from .attribution import attribute_difference, period_arrays
from .corrector import CorrectorCheck, check_corrector  # noqa: F401  (re-export)

__all__ = ["InvoiceReconciliation", "reconcile_invoice", "reconcile_frame", "check_corrector", "CorrectorCheck",
           "combined_uncertainty_pct"]


@dataclass
class InvoiceReconciliation:
    """The invoice compared with our month.

    Attributes
    ----------
    periods : DataFrame
        One row per billing period: ``period_start``, ``period_end``, ``intervals``,
        ``coverage_pct`` (share of the period's hours we have data for),
        ``volume_billed_as_stated_m3`` [m3 at the invoice's base], ``volume_billed_m3`` [m3 at our
        base], ``volume_ours_m3``, ``volume_difference_m3`` (billed − ours), ``volume_difference_pct``
        (of ours), ``energy_billed_MJ``, ``energy_ours_MJ``, ``energy_difference_MJ``,
        ``energy_difference_pct``, ``amount_billed``, ``amount_ours``, ``amount_difference``,
        ``amount_difference_pct``, ``uncertainty_pct`` (combined, expanded), ``exceeds_uncertainty``,
        ``exceeds_tolerance`` (None when unknown).
    attribution : DataFrame
        The waterfall over all periods: ``step``, ``kind`` (start, step, end), ``status`` (start,
        restatement, credited, tried, rest, end), ``applied``, ``volume_m3``, ``energy_MJ``,
        ``cumulative_volume_m3``, ``cumulative_energy_MJ``, ``parameter``, ``evidence`` (why a
        hypothesis was credited or only tried). The ``step`` rows add up exactly to end − start.
    totals : dict
    uncertainty : dict        the parts of the combined uncertainty [%]
    currency : str
    file : str or None
    warnings : list of str
    """

    periods: pd.DataFrame
    attribution: pd.DataFrame
    totals: dict
    uncertainty: dict
    currency: str = ""
    file: str | None = None
    warnings: list = field(default_factory=list)

    def to_summary(self) -> dict:
        """JSON-ready dict (SI values, MJ for energy, currency units for money)."""
        per = self.periods.copy()
        for c in ("period_start", "period_end"):
            per[c] = per[c].astype(str)
        return {
            "file": self.file,
            "currency": self.currency,
            "totals": dict(self.totals),
            "uncertainty": dict(self.uncertainty),
            "periods": per.to_dict(orient="records"),
            "attribution": self.attribution.to_dict(orient="records"),
            "attribution_order": [s for s in self.attribution["step"] if s not in ("ours", "invoice")],
            "credited": [s for s, st in zip(self.attribution["step"], self.attribution["status"]) if st == "credited"],
            "tried_not_credited": [s for s, st in zip(self.attribution["step"], self.attribution["status"])
                                   if st == "tried"],
            "warnings": list(self.warnings),
        }


def combined_uncertainty_pct(result, meter_uncertainty_pct=None) -> tuple[float | None, dict]:
    """Expanded uncertainty of an invoice difference, sqrt(U_ours² + U_meter²) [%].

    Parameters
    ----------
    result : MonthResult                 ``result.uncertainty.expanded_pct`` is ours (k = 2)
    meter_uncertainty_pct : float, optional [%]
        Expanded uncertainty of the billing side's measurement; default from the site settings'
        ``[uncertainty]`` table key ``invoice_meter_pct`` (or ``meter_pct``), else 0 (stated).

    Returns
    -------
    (float or None, dict)   None when our own uncertainty is not known
    """
    ours = result.uncertainty.expanded_pct if result.uncertainty is not None else None
    table = dict(result.settings.uncertainty)
    meter = meter_uncertainty_pct
    source = "argument"
    if meter is None:
        for key in ("invoice_meter_pct", "meter_pct"):
            if key in table:
                meter, source = float(table[key]), f"site settings [uncertainty] {key}"
                break
    if meter is None:
        meter, source = 0.0, "not given (0)"
    parts = {"ours_expanded_pct": ours, "meter_expanded_pct": float(meter), "meter_source": source}
    if ours is None:
        parts["combined_expanded_pct"] = None
        return None, parts
    comb = float(np.hypot(float(ours), float(meter)))
    parts["combined_expanded_pct"] = comb
    return comb, parts


def _pct(a, b):
    return 100.0 * a / b if b else np.nan


def reconcile_frame(result, invoice: pd.DataFrame, *, meter_uncertainty_pct=None, assumed_pressure_atm=101325.0,
                    file=None, currency="") -> InvoiceReconciliation:
    """Compare an invoice frame (meterfix.readers.invoices.read_invoice) with a month result.

    Parameters
    ----------
    result : MonthResult
    invoice : DataFrame                 as read_invoice returns it (SI)
    meter_uncertainty_pct : float, optional [%]   see combined_uncertainty_pct
    assumed_pressure_atm : float [Pa]   the fixed atmospheric pressure the attribution tries
                                        (default 101 325 Pa, the standard atmosphere at sea level)
    file : str, optional
    currency : str

    Returns
    -------
    InvoiceReconciliation
    """
    s = result.settings
    U, parts = combined_uncertainty_pct(result, meter_uncertainty_pct)
    tol = s.invoice_tolerance
    warnings = []
    rows = []
    chunks = []
    for k in range(len(invoice)):
        inv = invoice.iloc[k]
        a = period_arrays(result, inv)
        if a["n"] == 0:
            warnings.append(f"billing period {inv['period_start']} to {inv['period_end']} (row {int(inv['row'])}): "
                            "no intervals of ours fall in it")
        chunks.append(a)
        price = inv["price"] if np.isfinite(inv["price"]) else (s.price if s.price is not None
                                                                 else np.nan)
        v_ours = a["volume_ours"]
        e_ours = a["energy_ours"]
        v_b_ours_basis = float(inv["volume_billed"]) * a["conversion"]
        e_billed = a["energy_billed"]
        amount_billed = float(inv["amount"]) if np.isfinite(inv["amount"]) else e_billed * price
        amount_ours = e_ours * price
        dv = v_b_ours_basis - v_ours
        de = e_billed - e_ours
        dm = amount_billed - amount_ours
        basis_pct = _pct(de, e_ours) if np.isfinite(de) else _pct(dv, v_ours)
        rows.append({
            "period_start": inv["period_start"], "period_end": inv["period_end"], "intervals": a["n"],
            "coverage_pct": a["coverage_pct"],
            "volume_billed_as_stated_m3": float(inv["volume_billed"]), "volume_billed_m3": v_b_ours_basis,
            "volume_ours_m3": v_ours, "volume_difference_m3": dv, "volume_difference_pct": _pct(dv, v_ours),
            "energy_billed_MJ": e_billed / 1e6, "energy_ours_MJ": e_ours / 1e6, "energy_difference_MJ": de / 1e6,
            "energy_difference_pct": _pct(de, e_ours),
            "amount_billed": amount_billed, "amount_ours": amount_ours, "amount_difference": dm,
            "amount_difference_pct": _pct(dm, amount_ours),
            "uncertainty_pct": U,
            "exceeds_uncertainty": None if U is None or not np.isfinite(basis_pct) else bool(abs(basis_pct) > U),
            "exceeds_tolerance": None if tol is None or not np.isfinite(basis_pct) else bool(abs(basis_pct) > tol),
        })
    periods = pd.DataFrame(rows)
    attribution = attribute_difference(result, invoice, chunks, assumed_pressure_atm=assumed_pressure_atm,
                                       uncertainty_pct=U)
    tot = {c: float(periods[c].sum(skipna=False)) for c in ("volume_billed_m3", "volume_ours_m3", "volume_difference_m3",
                                                    "energy_billed_MJ", "energy_ours_MJ", "energy_difference_MJ",
                                                    "amount_billed", "amount_ours", "amount_difference")}
    tot["volume_difference_pct"] = _pct(tot["volume_difference_m3"], tot["volume_ours_m3"])
    tot["energy_difference_pct"] = _pct(tot["energy_difference_MJ"], tot["energy_ours_MJ"])
    tot["amount_difference_pct"] = _pct(tot["amount_difference"], tot["amount_ours"])
    basis = tot["energy_difference_pct"] if np.isfinite(tot["energy_difference_pct"]) else tot["volume_difference_pct"]
    tot["compared_on"] = "energy" if np.isfinite(tot["energy_difference_pct"]) else "volume"
    tot["exceeds_uncertainty"] = None if U is None or not np.isfinite(basis) else bool(abs(basis) > U)
    tot["tolerance_pct"] = tol
    tot["exceeds_tolerance"] = None if tol is None or not np.isfinite(basis) else bool(abs(basis) > tol)
    tot["periods"] = int(len(periods))
    tot["periods_exceeding_tolerance"] = int(sum(bool(x) for x in periods["exceeds_tolerance"] if x is not None))
    tot["periods_exceeding_uncertainty"] = int(sum(bool(x) for x in periods["exceeds_uncertainty"] if x is not None))
    end = attribution[attribution["kind"] == "end"]
    start = attribution[attribution["kind"] == "start"]
    tot["difference_as_billed_m3"] = float(end["volume_m3"].iat[0] - start["volume_m3"].iat[0])
    tot["not_explained_volume_m3"] = float(attribution.loc[attribution["step"] == "not explained", "volume_m3"].iat[0])
    tot["not_explained_energy_MJ"] = float(attribution.loc[attribution["step"] == "not explained", "energy_MJ"].iat[0])
    return InvoiceReconciliation(periods=periods, attribution=attribution, totals=tot, uncertainty=parts,
                                 currency=currency or s.currency, file=file, warnings=warnings)


def reconcile_invoice(result, invoice_path, **kw) -> InvoiceReconciliation:
    """Read an invoice file and compare it with a month result (see reconcile_frame).

    Parameters
    ----------
    result : MonthResult
    invoice_path : path             .csv or .xlsx in the meterfix invoice template layout
    """
    from ..readers.invoices import read_invoice

    s = result.settings
    df, meta = read_invoice(invoice_path, timezone=s.timezone,
                            pressure_base=s.invoice_base_pressure,
                            temperature_base=s.invoice_base_temperature)
    if not len(df):
        raise InputError("the invoice has no billing period", file=invoice_path)
    return reconcile_frame(result, df, file=meta.file, currency=meta.currency, **kw)
