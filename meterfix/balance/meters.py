"""Each meter's month as the balance takes it: from its JSON summary (written by ``correct`` or
``fleet``, or kept in the store), restated to the balance's base conditions where they differ.

The summary carries per gas day the base volume and energy (``gas_days``), per gas day the random
standard uncertainty and for the month the systematic one (``uncertainty.gas_days[].
random_standard_uncertainty_m3`` / ``_J``, ``uncertainty.systematic_standard_uncertainty_pct`` /
``_energy_pct``), the base conditions, the combustion reference and the gas day (start hour, zone).

Restating a base volume to other base conditions (p_b, T_b) → (p_b', T_b') keeps the amount of
gas: V' = V (p_b / p_b') (T_b' / T_b) (Z_b' / Z_b), with Z at both bases from the month's method and
analysis (the first analysis of the month; the summary says which). Energy does not change with
the volume's base; a different combustion reference would change it, and is refused.
"""

from __future__ import annotations

import numpy as np

from ..errors import SettingsError
from .ufg import MeterMonth


def _gas_of(summary: dict):
    from ..gas.composition import Composition

    for a in summary.get("analyses") or []:
        g = a.get("gas") or {}
        fr = {k: v for k, v in g.items() if isinstance(v, (int, float)) and not isinstance(v, bool) and v}
        if fr:
            try:
                return Composition.from_mapping({k: float(v) for k, v in fr.items()})
            except Exception:  # not a composition (a gross characterization): no restatement possible
                return None
    return None


def z_at_base(summary: dict, pressure: float, temperature: float) -> float:
    """Z of the meter's gas at (pressure [Pa], temperature [K]) by the meter's method."""
    from ..z import evaluate_z

    gas = _gas_of(summary)
    method = (summary.get("method") or {}).get("name") or "aga8-detail"
    if gas is None:
        raise SettingsError(f"meter {summary.get('meter')}: its summary holds no analysis to restate its base volume",
                            hint="give the meter the balance's base conditions in its site.toml")
    return float(np.asarray(evaluate_z(np.array([pressure]), np.array([temperature]), gas, method,
                                       speed_of_sound=False).z, float)[0])


def meter_month(summary: dict, *, name: str, role: str, gas_days: list, correlation_group=None,
                pressure_base: float | None = None, temperature_base: float | None = None, source: str = "",
                file=None) -> MeterMonth:
    """A MeterMonth from a meter's summary over the balance's ``gas_days``.

    A gas day of the balance that the meter's table does not hold is NaN (no result that day);
    days of the meter outside the balance's month are left out.

    Raises
    ------
    SettingsError   the summary has no uncertainty (the month ran without it), or cannot be restated
    """
    unc = summary.get("uncertainty")
    if not unc or unc.get("systematic_standard_uncertainty_pct") is None:
        raise SettingsError(f"meter {name}: its month has no random/systematic uncertainty split (run without its "
                            "uncertainty, or by an older meterfix)", file=file,
                            hint="run the meter's month again with this meterfix (uncertainty on)")
    days = {d["gas_day"]: d for d in summary.get("gas_days") or []}
    udays = {d["gas_day"]: d for d in unc.get("gas_days") or []}
    D = len(gas_days)

    def col(table, *keys):  # the first key present: summaries before the one-name rename used the bare names
        def one(row):
            v = next((row[k] for k in keys if row.get(k) is not None), None)
            return np.nan if v is None else float(v)
        return np.array([one(table.get(g) or {}) for g in gas_days])

    vol = col(days, "volume_base_m3", "volume_base")
    en = col(days, "energy_J", "energy")
    ur = col(udays, "random_standard_uncertainty_m3")
    ure = col(udays, "random_standard_uncertainty_J")
    us = float(unc["systematic_standard_uncertainty_pct"]) / 100.0
    use = unc.get("systematic_standard_uncertainty_energy_pct")
    notes = []
    kind = (summary.get("flow_meter") or {}).get("kind") or "volume"
    base = summary.get("base_conditions") or {}
    pb, tb = float(base.get("pressure_Pa")), float(base.get("temperature_K"))
    if pressure_base is not None and (abs(pb - pressure_base) > 1e-6 or abs(tb - temperature_base) > 1e-9):
        z0 = z_at_base(summary, pb, tb)
        z1 = z_at_base(summary, pressure_base, temperature_base)
        f = (pb / pressure_base) * (temperature_base / tb) * (z1 / z0)
        vol, ur = vol * f, ur * f
        from ..writers.xlsx_common import DisplayUnits

        du = DisplayUnits.for_base(pressure_base, temperature_base)
        notes.append(f"restated from its base {du.base_text(pb, tb)} to the balance's "
                     f"{du.base_text(pressure_base, temperature_base)} (factor {f:.6f}, Z at base {z0:.6f} → {z1:.6f})")
    has_e = bool(np.any(np.isfinite(en))) and use is not None
    return MeterMonth(name=name, role=role, gas_days=list(gas_days), volume=vol, energy=en if has_e else None,
                      u_random=np.where(np.isfinite(vol), np.nan_to_num(ur), np.nan), u_systematic_rel=us,
                      u_random_energy=np.nan_to_num(ure) if has_e else None,
                      u_systematic_energy_rel=float(use) / 100.0 if has_e else None,
                      correlation_group=correlation_group, kind=kind, source=source, notes=notes) if D else None
