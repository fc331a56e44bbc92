"""The JSON summary of a month run: SI values under fixed keys, display units kept separate."""

from __future__ import annotations

import json
import math

import numpy as np

from .. import __version__
from ..gas.composition import Composition
from .source_record import log_record

CAUTION = (
    "Results support engineering review, reconciliation and invoice queries. meterfix is not a "
    "legally approved volume conversion device and no substitute for the contract's measurement "
    "provisions, the applicable legal-metrology rules, or certified equipment and licensed practice. "
    "Methods are only as good as their range: rows outside it are flagged."
)


def json_safe(obj):
    """JSON-safe, deterministic: NaN/inf → None, numpy scalars → Python, sorted dict keys later.

    Every JSON output of meterfix goes through this (and ``json.dumps(..., allow_nan=False)``):
    JSON has no NaN or Infinity, so a value that is not a finite number is written as null.
    """
    return _clean(obj)


def _clean(obj):
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
    p = a.energy.properties if a.energy is not None else None
    if p is None:
        return None
    out = {"standard": p.edition, "combustion_temperature_K": p.temperature_combustion,
           "metering_temperature_K": p.temperature_metering, "metering_pressure_Pa": p.pressure_metering,
           **p.as_dict()}
    out["units"] = {k: u for k, u in ENERGY_UNITS.items() if k in out}
    gas = a.gas
    if isinstance(gas, Composition):  # a gross characterisation has no components
        if gas.sum_as_given is not None:
            out["analysis_total_as_given"] = gas.sum_as_given
        if gas.detail:
            out["components"] = dict(gas.detail)
    if a.heating_value_us:
        out["us_practice"] = a.heating_value_us
    return out


#: gas-day column -> its JSON key with the SI unit
_GAS_DAY_KEYS = {"volume_line": "volume_line_m3", "volume_base": "volume_base_m3",
                 "volume_base_ideal": "volume_base_ideal_m3", "energy": "energy_J",
                 "ideal_gas_error_pct": "ideal_gas_error_pct"}

#: SI units of the ISO 6976 properties of an analysis (keys of Iso6976Result.as_dict)
ENERGY_UNITS = {"gross_heating_value_molar": "J/mol", "net_heating_value_molar": "J/mol",
                "gross_heating_value_mass": "J/kg", "net_heating_value_mass": "J/kg",
                "gross_heating_value_volumetric": "J/m3", "net_heating_value_volumetric": "J/m3",
                "wobbe_index_gross": "J/m3", "wobbe_index_net": "J/m3", "density": "kg/m3", "molar_mass": "kg/mol",
                "relative_density": "-", "compression_factor": "-"}


def _gas_day_records(days) -> list[dict]:
    """One dict a gas day under the JSON keys, the values as ``iterrows`` gives them (rows of the
    frame's common-dtype array), without a Series per row."""
    sub = days[list(_GAS_DAY_KEYS)]
    keys = [_GAS_DAY_KEYS[c] for c in sub.columns]
    return [{"gas_day": str(k), **dict(zip(keys, row))} for k, row in zip(sub.index, sub.to_numpy())]


def build_summary(result) -> dict:
    """The summary dict of a MonthResult (contract of DESIGN.md)."""
    s = result.settings
    t = dict(result.totals)
    unc = result.uncertainty
    t["expanded_uncertainty_pct"] = None if unc is None else unc.expanded_pct
    summary = {
        "tool": {"name": "meterfix", "version": __version__},
        "caution": CAUTION,
        "meter": s.meter,
        "site_name": s.site_name,
        "method": dict(result.method),
        "base_conditions": {"pressure_Pa": s.base_pressure, "temperature_K": s.base_temperature,
                            "preset": s.base},
        "combustion_reference_temperature_K": s.combustion_temperature,
        "gas_day": {"start_hour": s.gas_day_start, "timezone": s.timezone},
        "totals": t,
        # the gas month of the run: bounds [UTC], hours in it on the site's clock, hours logged,
        # coverage [%], intervals left out before and after (null when the log spans several months)
        "gas_month": result.gas_month,
        "average_correction": result.average_correction,
        "analyses": [{"number": i + 1, "effective_from": a.effective_from, "z_base": a.z_base, "molar_mass_kg_per_mol": a.molar_mass,
                      "heating_value_J_per_m3": a.heating_value, "heating_value_source": a.heating_value_source,
                      "relative_density": a.relative_density,
                      "wobbe_index_J_per_m3": a.wobbe_index,
                      "energy": _energy_record(a),
                      "gas": (a.gas.as_dict() if hasattr(a.gas, "as_dict") else
                              (a.gas.__dict__ if a.gas is not None else None))}
                     for i, a in enumerate(result.analyses)],
        "flags": dict(sorted(result.flags.items())),
        "findings": result.findings.to_dict(orient="records"),
        "gas_days": _gas_day_records(result.gas_days),
        "edits": int(len(result.edits)),
        "warnings": list(result.warnings),
        "inputs": list(result.inputs),
        "settings_sources": {k: v for k, v in sorted(s.sources.items()) if v != "default"},
        # what the log reader found: files, column mapping and units, every problem cell with where it is
        "log": log_record(result.log_metadata),
    }
    if result.flow_meter:
        summary["flow_meter"] = result.flow_meter  # the meter kind: orifice, Coriolis, calibrated volume meter
    if result.speed_of_sound_check:
        summary["speed_of_sound_check"] = result.speed_of_sound_check
    if unc is not None:
        summary["uncertainty"] = unc.to_summary()
    if result.reconciliation is not None:
        summary["invoice"] = result.reconciliation.to_summary()
    if result.corrector_check is not None:
        summary["corrector_check"] = result.corrector_check.to_summary()
    return _clean(summary)


def summary_json(result_or_summary) -> str:
    """Deterministic JSON text (sorted keys, fixed float repr)."""
    if isinstance(result_or_summary, dict):
        return dumps_clean(_clean(result_or_summary))
    return dumps_clean(build_summary(result_or_summary))


def dumps_clean(summary: dict) -> str:
    """The JSON text of a summary dict that is JSON-safe already (as :func:`build_summary` returns it)."""
    return json.dumps(summary, indent=2, sort_keys=True, ensure_ascii=False, allow_nan=False) + "\n"
