"""One balance: every part into a typed BalanceResult (SI throughout).

``compute_balance`` takes each meter's month (:class:`~meterfix.balance.ufg.MeterMonth`), the
linepack sections (:class:`~meterfix.balance.linepack.Linepack`), the fixed quantities and the
gas days, and returns the balance in base volume and (where every part has one) energy, its
uncertainty and verdict, the meter search and the VDI 2048-1 reconciliation of the month totals.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .reconcile import Reconciliation, reconcile
from .search import Finding, search
from .ufg import COVERAGE_FACTOR, MeterMonth, Totals, month_covariance, totals


@dataclass
class BalanceResult:
    """A closed balance.

    Attributes
    ----------
    name : str                      the system (zone, station, section)
    month : str                     gas month, YYYY-MM
    gas_days : list of str          ISO dates
    gas_day_start_hour : int        local hour the gas day starts [h]
    timezone : str
    pressure_base, temperature_base : float [Pa, K]   the balance's base conditions
    temperature_combustion : float or None [K]       the energy's combustion reference
    meters : list of MeterMonth
    fixed : list of Fixed
    linepacks : list of Linepack
    volume : Totals                 [m3 at base]
    energy : Totals or None         [J]; None when a part has no energy
    findings : list of Finding      the meter search, best first
    search_text : str
    reconciliation : Reconciliation or None   of the month totals (meters, fixed, linepack) [m3]
    notes : list of str             restatements and anything a reader must know
    """

    name: str
    month: str
    gas_days: list
    gas_day_start_hour: int
    timezone: str
    pressure_base: float
    temperature_base: float
    temperature_combustion: float | None
    meters: list
    fixed: list
    linepacks: list
    volume: Totals
    energy: Totals | None
    findings: list
    search_text: str
    reconciliation: Reconciliation | None
    notes: list = field(default_factory=list)

    @property
    def consistent(self) -> bool:
        return self.volume.consistent

    @property
    def credited(self) -> Finding | None:
        return next((f for f in self.findings if f.credited), None)

    def meter_rows(self) -> list:
        """One dict per meter: month volume, energy, uncertainties, share, reconciled value (SI)."""
        var = self.volume.month["u_ufg"] ** 2
        rec = self.reconciliation
        out = []
        for i, m in enumerate(self.meters):
            v = float(np.nansum(m.volume))
            ur = float(np.sqrt(np.nansum(np.asarray(m.u_random) ** 2)))
            us = m.u_systematic_rel * v
            row = {"name": m.name, "role": m.role, "kind": m.kind, "correlation_group": m.correlation_group,
                   "volume_m3": v, "energy_J": None if m.energy is None else float(np.nansum(m.energy)),
                   "u_random_m3": ur, "u_systematic_m3": us,
                   "expanded_uncertainty_m3": COVERAGE_FACTOR * float(np.hypot(ur, us)),
                   "share_pct": 100.0 * self.volume.meter_variance[m.name] / var if var > 0 else 0.0,
                   "days_without_result": int(np.count_nonzero(~np.isfinite(np.asarray(m.volume, float)))),
                   "source": m.source}
            if rec is not None:
                row.update({"reconciled_m3": float(rec.reconciled[i]),
                            "reconciled_expanded_uncertainty_m3": COVERAGE_FACTOR * float(rec.reconciled_uncertainty[i]),
                            "normalized_adjustment": float(rec.normalized_adjustment[i])})
            out.append(row)
        return out


def reconcile_month(meters: list, fixed: list, linepacks: list, vol: Totals) -> Reconciliation | None:
    """VDI 2048-1 reconciliation of the month totals under the balance (receipts = deliveries + own
    use + fixed + Δlinepack, no loss): meters with their full covariance, each fixed quantity and
    each linepack change as measured values with their own uncertainties."""
    if not meters:
        return None
    S_m = month_covariance(meters)
    x = [float(np.nansum(m.volume)) for m in meters]
    coef = [m.sign for m in meters]
    names = [m.name for m in meters]
    extra_var = []
    for f in fixed:
        x.append(f.volume)
        coef.append(-1.0)
        names.append(f.name)
        extra_var.append((f.volume * f.u_rel) ** 2)
    for p in linepacks:
        vb = p.volume_base
        ch = float(vb[-1] - vb[0])
        x.append(ch)
        coef.append(-1.0)
        names.append(f"linepack {p.name}")
        extra_var.append(float(p.u_random_volume[0] ** 2 + p.u_random_volume[-1] ** 2 + (ch * p.u_systematic_rel) ** 2))
    n = len(x)
    S = np.zeros((n, n))
    S[: len(meters), : len(meters)] = S_m
    for j, v in enumerate(extra_var):
        S[len(meters) + j, len(meters) + j] = v
    F = np.array([coef], float)
    if not np.any(np.diag(S) > 0):
        return None
    return reconcile(np.array(x), S, F, names=names)


def compute_balance(name: str, month: str, meters: list, fixed: list, linepacks: list, gas_days: list, *,
                    gas_day_start_hour: int = 0, timezone: str = "UTC", pressure_base: float = 101325.0,
                    temperature_base: float = 288.15, temperature_combustion: float | None = None,
                    notes: list | None = None) -> BalanceResult:
    """The balance of one system over one gas month (see the module docstring)."""
    vol = totals(meters, fixed, linepacks, gas_days)
    has_energy = (all(m.energy is not None and m.u_random_energy is not None for m in meters)
                  and all(f.energy is not None for f in fixed) and all(p.energy is not None for p in linepacks))
    en = totals(meters, fixed, linepacks, gas_days, energy=True) if has_energy and meters else None
    M = len(meters)
    findings, text = search(vol.ufg, vol.u_random_ufg, np.array([m.volume for m in meters], float).reshape(M, len(gas_days)),
                            np.array([m.sign for m in meters]), [m.name for m in meters], [m.role for m in meters],
                            gas_days)
    rec = reconcile_month(meters, fixed, linepacks, vol)
    out_notes = list(notes or [])
    if not has_energy and meters:
        out_notes.append("no energy balance: a meter, fixed quantity or linepack section has no energy")
    return BalanceResult(name=name, month=month, gas_days=list(gas_days), gas_day_start_hour=gas_day_start_hour,
                         timezone=timezone, pressure_base=pressure_base, temperature_base=temperature_base,
                         temperature_combustion=temperature_combustion, meters=list(meters), fixed=list(fixed),
                         linepacks=list(linepacks), volume=vol, energy=en, findings=findings, search_text=text,
                         reconciliation=rec, notes=out_notes)


__all__ = ["BalanceResult", "compute_balance", "reconcile_month", "MeterMonth"]
