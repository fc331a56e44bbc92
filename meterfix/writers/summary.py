"""The JSON summary of a month run: SI values under fixed keys, display units kept separate."""

from __future__ import annotations

import json
import math

import numpy as np

from .. import __version__
from .source_record import log_record

CAUTION = (
    "Results support engineering review, reconciliation and invoice queries. meterfix is not a "
    "legally approved volume conversion device and no substitute for the contract's measurement "
    "provisions, the applicable legal-metrology rules, or certified equipment and licensed practice. "
    "Methods are only as good as their range: rows outside it are flagged."
)


def _clean(obj):
    """JSON-safe, deterministic: NaN/inf → None, numpy scalars → Python, sorted dict keys later."""
    if isinstance(obj, dict):
        return {str(k): _clean(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_clean(v) for v in obj]
    if isinstance(obj, (np.floating, float)):
        v = float(obj)
        return None if not math.isfinite(v) else v
    if isinstance(obj, (np.integer,)):
        return int(obj)
    if isinstance(obj, (np.bool_,)):
        return bool(obj)
    if hasattr(obj, "isoformat"):
        return obj.isoformat()
    return obj


def _energy_record(a):
    """Every ISO 6976 property of an analysis in SI, the edition and reference conditions (or None)."""
    e = getattr(a, "energy", None)
    p = getattr(e, "properties", None)
    if p is None:
        return None
    out = {"standard": p.edition, "combustion_temperature_K": p.temperature_combustion,
           "metering_temperature_K": p.temperature_metering, "metering_pressure_Pa": p.pressure_metering,
           **p.as_dict()}
    gas = getattr(a, "gas", None)
    if getattr(gas, "sum_as_given", None) is not None:
        out["analysis_total_as_given"] = gas.sum_as_given
    if getattr(gas, "detail", None):
        out["components"] = dict(gas.detail)
    if getattr(a, "heating_value_us", None):
        out["us_practice"] = a.heating_value_us
    return out


def build_summary(result) -> dict:
    """The summary dict of a MonthResult (contract of DESIGN.md)."""
    s = result.settings
    t = dict(result.totals)
    unc = result.uncertainty
    t["expanded_uncertainty_pct"] = None if unc is None else getattr(unc, "expanded_pct", None)
    summary = {
        "tool": {"name": "meterfix", "version": __version__},
        "caution": CAUTION,
        "meter": s.meter,
        "site": s.site_name,
        "method": dict(result.method),
        "base_conditions": {"pressure_Pa": s.base_pressure, "temperature_K": s.base_temperature,
                            "preset": s.base},
        "combustion_reference_temperature_K": s.combustion_temperature,
        "totals": t,
        "average_correction": result.average_correction,
        "analyses": [{"effective_from": a.effective_from, "z_base": a.z_base, "molar_mass_kg_per_mol": a.molar_mass,
                      "heating_value_J_per_m3": a.heating_value, "heating_value_source": a.heating_value_source,
                      "relative_density": getattr(a, "relative_density", None),
                      "wobbe_index_J_per_m3": getattr(a, "wobbe_index", None),
                      "energy": _energy_record(a),
                      "gas": (a.gas.as_dict() if hasattr(a.gas, "as_dict") else
                              (a.gas.__dict__ if a.gas is not None else None))}
                     for a in result.analyses],
        "flags": dict(sorted(result.flags.items())),
        "findings": result.findings.to_dict(orient="records"),
        "gas_days": [{"gas_day": str(k), **{c: v for c, v in r.items()}} for k, r in
                     result.gas_days[["volume_line", "volume_base", "volume_base_ideal", "energy",
                                      "ideal_gas_error_pct"]].iterrows()],
        "edits": int(len(result.edits)),
        "warnings": list(result.warnings),
        "inputs": list(result.inputs),
        "settings_sources": {k: v for k, v in sorted(s.sources.items()) if v != "default"},
        # what the log reader found: files, column mapping and units, every problem cell with where it is
        "log": log_record(getattr(result, "log_metadata", None)),
    }
    if getattr(result, "flow_meter", None):
        summary["flow_meter"] = result.flow_meter  # the meter kind: orifice, Coriolis, calibrated volume meter
    if getattr(result, "speed_of_sound_check", None):
        summary["speed_of_sound_check"] = result.speed_of_sound_check
    if unc is not None and hasattr(unc, "to_summary"):
        summary["uncertainty"] = unc.to_summary()
    if result.reconciliation is not None and hasattr(result.reconciliation, "to_summary"):
        summary["invoice"] = result.reconciliation.to_summary()
    if result.corrector_check is not None and hasattr(result.corrector_check, "to_summary"):
        summary["corrector_check"] = result.corrector_check.to_summary()
    return _clean(summary)


def summary_json(result_or_summary) -> str:
    """Deterministic JSON text (sorted keys, fixed float repr)."""
    d = result_or_summary if isinstance(result_or_summary, dict) else build_summary(result_or_summary)
    return json.dumps(_clean(d), indent=2, sort_keys=True, ensure_ascii=False) + "\n"
