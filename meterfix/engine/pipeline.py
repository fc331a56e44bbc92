"""The month run: settings + canonical log + gas analyses → a MonthResult with every intermediate.

One pipeline validates inputs once and runs the steps in order:

1. absolute line pressure (gauge + atmospheric: barometer column, fixed value or elevation);
2. the analysis in force for each interval;
3. Z at line and base conditions with the chosen method, range flags;
4. factors Fp, Ft, Zb/Zf; base volume (real gas) and the same with Z = 1; mass; energy;
5. totals by gas day, month and analysis period; ideal-gas error findings; what correcting from
   month-average pressure and temperature would have given.

Uncertainty (meterfix.uncertainty) and the checks (meterfix.checks) attach
their results to the same object.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from ..energy.month import AnalysisEnergy
from ..errors import SettingsError
from ..gas.composition import Composition
from ..gas.gross import GrossCharacterization
from ..readers.logs import LogMetadata
from ..z import IDEAL_METHOD, evaluate_z
from ..z.base import OUTSIDE, RANGE_NAMES
from ..z.registry import get_method
from . import correct as K
from .flow_meter import CORIOLIS_METER, ORIFICE_METER, VOLUME_METER
from .settings import Settings

#: molar mass of dry air [kg/mol] (ISO 6976:2016, 28.96546 g/mol; from memory)
MOLAR_MASS_AIR = 0.02896546

if TYPE_CHECKING:  # the later steps' result types, for the annotations of MonthResult only (no import at run time)
    from ..checks.corrector import CorrectorCheck
    from ..checks.invoice import InvoiceReconciliation
    from ..uncertainty import MonthUncertainty

#: interval columns written by the pipeline, with their SI unit (for writers)
INTERVAL_UNITS = {
    "duration": "s", "pressure_line": "Pa", "pressure_atm": "Pa", "temperature_line": "K",
    "volume_line": "m3", "analysis": "-", "z_line": "-", "z_base": "-", "factor_pressure": "-",
    "factor_temperature": "-", "factor_z": "-", "volume_base": "m3", "volume_base_ideal": "m3",
    "ideal_gas_error_pct": "%", "mass": "kg", "heating_value": "J/m3", "energy": "J",
    "z_range": "-", "z_reason": "-", "estimated": "-", "gas_day": "-",
    # meter kinds (engine.meter_kinds): orifice, Coriolis, calibrated volume meters, speed of sound
    "pressure_differential": "Pa", "pressure_upstream": "Pa", "density_line": "kg/m3",
    "discharge_coefficient": "-", "expansibility": "-", "reynolds_pipe": "-", "isentropic_exponent": "-",
    "viscosity": "Pa s", "volume_line_indicated": "m3", "meter_error": "%", "speed_of_sound": "m/s",
    "speed_of_sound_computed": "m/s", "speed_of_sound_deviation_pct": "%",
}
#: SI unit of each gas-day (and month) column, for the CSV headers
GAS_DAY_UNITS = {
    "intervals": "-", "hours": "h", "volume_line": "m3", "volume_base": "m3", "volume_base_ideal": "m3",
    "mass": "kg", "energy": "J", "pressure_line_mean": "Pa", "temperature_line_mean": "K",
    "estimated_intervals": "-", "flagged_intervals": "-", "ideal_gas_error_pct": "%",
    "estimated_volume_share_pct": "%",
}


@dataclass
class AnalysisInForce:
    """One gas analysis and what the run derived from it."""

    effective_from: pd.Timestamp | None
    gas: Composition | GrossCharacterization
    z_base: float = np.nan
    molar_mass: float = np.nan  # [kg/mol]
    heating_value: float = np.nan  # [J/m3] gross, real gas, at base conditions
    heating_value_source: str = ""
    density_base: float = np.nan  # [kg/m3]
    relative_density: float = np.nan  # [-] real gas, at base conditions
    wobbe_index: float = np.nan  # [J/m3] gross, at base conditions
    energy: AnalysisEnergy | None = None  # every ISO 6976 property, the edition
    heating_value_us: dict | None = None  # Btu/scf at 14.73 psia and 60 degF, dry and water-saturated


@dataclass
class MonthResult:
    """Everything a month run produced (SI throughout).

    Attributes
    ----------
    settings : Settings
    intervals : DataFrame      one row per interval (UTC index = interval end), INTERVAL_UNITS columns
                               plus the reader's flag_* columns
    gas_days : DataFrame       totals by gas day (index: gas-day date)
    months : DataFrame         totals by month of gas day
    analysis_periods : DataFrame totals by analysis in force
    totals : dict              month totals (SI, keys as in the JSON summary)
    findings : DataFrame       ideal-gas error days and contiguous periods above the threshold
    average_correction : dict  the month corrected from average p and T, and its error
    edits : DataFrame          substitutions made (from quality)
    flags : dict               count of intervals by flag kind
    analyses : list of AnalysisInForce
    method : dict              name, edition, range text
    inputs : list of dict      file names and sha256
    warnings : list of str
    uncertainty, reconciliation, corrector_check : filled by the later steps (or None)
    history : DataFrame or None  the meter's stored months (meterfix.store fills it when a store is
                               used; one row per month and version, newest last, SI with units in
                               the column names)
    gas_month : dict or None   the gas month of the run (GasMonthSelection.record(): bounds, hours
                               in the month on the site's clock, hours logged, coverage, intervals
                               left out before and after); None when the log spans several months
    """

    settings: Settings
    intervals: pd.DataFrame
    gas_days: pd.DataFrame
    months: pd.DataFrame
    analysis_periods: pd.DataFrame
    totals: dict
    findings: pd.DataFrame
    average_correction: dict
    edits: pd.DataFrame
    flags: dict
    analyses: list
    method: dict
    inputs: list[dict] = field(default_factory=list)
    # the reader's record (meterfix.readers.logs.LogMetadata); None for a frame given in memory
    log_metadata: LogMetadata | None = None
    warnings: list[str] = field(default_factory=list)
    # filled by the later steps (meterfix.uncertainty, meterfix.checks), None until they run
    uncertainty: MonthUncertainty | None = None
    reconciliation: InvoiceReconciliation | None = None
    corrector_check: CorrectorCheck | None = None
    history: pd.DataFrame | None = None
    flow_meter: dict | None = None  # the meter kind's record (engine.meter_kinds), None for a plain volume meter
    speed_of_sound_check: dict | None = None  # ultrasonic meters' speed of sound against the analysis'
    gas_month: dict | None = None  # the gas month closed and its coverage (engine.gas_month), or None


# ---------------------------------------------------------------------------------------------
def absolute_pressure(frame: pd.DataFrame, settings: Settings):
    """Absolute line pressure [Pa] and the atmospheric pressure used [Pa] for each interval."""
    n = len(frame)
    atm = None
    atm_source = None
    if "pressure_line" in frame.columns and frame["pressure_line"].notna().any() and "pressure_gauge" not in frame.columns:
        return frame["pressure_line"].to_numpy(float), np.full(n, np.nan), "absolute in the log"
    fixed = settings.atmospheric_pressure
    if fixed is None and settings.elevation is not None:
        from ..atmosphere import pressure_from_elevation

        fixed = float(pressure_from_elevation(settings.elevation))
        atm_source = f"U.S. Standard Atmosphere 1976 at {settings.elevation:g} m"
    elif fixed is not None:
        atm_source = "fixed setting"
    if settings.use_barometer and "pressure_atm" in frame.columns and frame["pressure_atm"].notna().any():
        atm = frame["pressure_atm"].to_numpy(float).copy()
        if fixed is not None:
            atm = np.where(np.isfinite(atm), atm, fixed)
        atm_source = "barometer column" + (f", gaps filled with the {atm_source}" if fixed is not None else "")
    elif fixed is not None:
        atm = np.full(n, fixed)
    if atm is None:
        raise SettingsError(
            "the log's pressure is gauge but no atmospheric pressure is known",
            hint="give --atmospheric-pressure (e.g. '14.4 psia'), --elevation (e.g. '180 m'), "
                 "or a barometer column in the log",
        )
    return frame["pressure_gauge"].to_numpy(float) + atm, atm, atm_source


def _heating_value(gas, settings: Settings):
    """Gross real-gas volumetric heating value at base conditions [J/m3] and its source text: the
    supplied value, or a gross characterisation's (an analysis' own comes from ISO 6976 in run_month)."""
    if settings.heating_value is not None:
        hv = settings.heating_value
        tref = settings.heating_value_reference_temperature
        pref = settings.heating_value_reference_pressure
        if tref is None and pref is None:
            return hv, "supplied, taken as stated at the contract base conditions"
    from .. import energy as E

    if settings.heating_value is not None:
        tref = settings.base_temperature if tref is None else tref
        pref = settings.base_pressure if pref is None else pref
        comp = gas if isinstance(gas, Composition) else None
        hv2 = E.convert_volumetric_heating_value(
            hv, composition=comp, temperature_metering_from=tref, pressure_metering_from=pref,
            temperature_metering_to=settings.base_temperature, pressure_metering_to=settings.base_pressure)
        return float(hv2), "supplied, converted to the contract base conditions"
    if isinstance(gas, GrossCharacterization) and gas.heating_value is not None:
        hv2 = E.convert_volumetric_heating_value(
            gas.heating_value, composition=None, temperature_metering_from=gas.temperature_reference_density,
            pressure_metering_from=gas.pressure_reference, temperature_metering_to=settings.base_temperature,
            pressure_metering_to=settings.base_pressure)
        return float(hv2), "gross characterisation, converted to the contract base conditions"
    return np.nan, "unknown (no composition or supplied heating value)"


def _energy_standard(in_force, settings: Settings) -> str:
    """The standard the month's heating values come from, named in every output."""
    if settings.heating_value is not None:
        return "supplied heating value"
    eds = sorted({a.energy.edition for a in in_force if a.energy is not None})
    if eds:
        return ", ".join(eds)
    if any(isinstance(a.gas, GrossCharacterization) for a in in_force):
        return "gross characterisation's heating value"
    return f"ISO 6976:{settings.energy_edition}"


def _molar_mass(gas) -> float:
    if isinstance(gas, Composition):
        return gas.molar_mass
    if isinstance(gas, GrossCharacterization):
        return gas.relative_density * MOLAR_MASS_AIR
    return np.nan


#: the categories of the z_range column (made once)
_Z_RANGE_DTYPE = pd.CategoricalDtype([RANGE_NAMES[i] for i in range(3)])


def _gas_day(index_utc: pd.DatetimeIndex, duration_s: np.ndarray, settings: Settings):
    """Gas day of each interval: the local date on which the gas day containing its start began.

    The gas day runs from ``gas_day_start`` on the site's clock to the same wall-clock hour of
    the next day, so it has 23 or 25 hours on the days the clock changes (IANA tz rules). The
    start of each interval is taken to the site's wall clock first, then the gas-day start is
    subtracted there (wall-clock arithmetic): 02:30 CEST and 02:30 CET on 25 October 2026 (Berlin,
    06:00 gas day) both belong to gas day 24 October. Subtracting a fixed duration from a time
    that still carries its zone would be absolute arithmetic, which moves the hour beside the
    change into the neighbouring gas day.

    Returns (days, codes): the distinct gas days in order (datetime.date objects) and, for every
    interval, the position of its gas day in ``days``.
    """
    start = index_utc - pd.to_timedelta(np.nan_to_num(duration_s, nan=0.0), unit="s")
    wall = start.tz_convert(settings.timezone).tz_localize(None)  # the site's wall clock, naive
    shifted = wall - pd.Timedelta(hours=settings.gas_day_start)
    day = shifted.to_numpy().astype("datetime64[D]")
    days, codes = np.unique(day, return_inverse=True)
    return days.astype(object), codes.reshape(-1)


#: columns summed by gas day, month and analysis period (NaN when a group has no value)
_SUMMED = ("duration", "volume_line", "volume_base", "volume_base_ideal", "mass", "energy")


def _grouped(values: np.ndarray, codes: np.ndarray, how: str) -> np.ndarray:
    """pandas' grouped ``sum`` (NaN when a group has no value) or ``mean`` of each column.

    pandas picks its summation by the block it is given (a plain running sum when the groups are
    contiguous and the block has no NaN, else a compensated sum), so columns with and without NaN
    go in separate blocks: every column is summed exactly as if it were grouped on its own.
    """
    out = np.full((int(codes.max()) + 1 if len(codes) else 0, values.shape[1]), np.nan)
    nan = np.isnan(values)
    has_nan = nan.any(axis=0)
    all_nan = nan.all(axis=0)  # a column without values is NaN in every group either way
    for part in (has_nan & ~all_nan, ~has_nan):
        if part.any():
            g = pd.DataFrame(values[:, part]).groupby(codes, sort=True)
            out[:, part] = (g.sum(min_count=1) if how == "sum" else g.mean()).to_numpy()
    return out


def _group_totals(cols: dict, groupings) -> list:
    """Totals of the intervals by each grouping.

    Parameters
    ----------
    cols : dict of ndarray      interval columns (SI): duration [s], volume_line, volume_base,
                                volume_base_ideal [m3], mass [kg], energy [J], pressure_line [Pa],
                                temperature_line [K], estimated, flagged (bool)
    groupings : list of (codes, keys) or (codes, keys, first, last)   codes: int array, each
                                interval's group (0..len(keys)-1, every group present); keys:
                                Index of the groups in order; first, last: dicts of further
                                columns (one value per group) put before and after the totals

    Returns
    -------
    list of DataFrame, one per grouping, indexed by its keys

    Notes
    -----
    When every grouping's groups are contiguous in time (the usual case) the groupings are
    stacked into one table of group numbers, so that one grouped sum serves them all (and the
    means where no value is missing); each group still adds its own intervals in time order, so
    the figures are those of a separate pass per grouping.
    """
    est = cols["estimated"]
    flagged = cols["flagged"]
    vb = cols["volume_base"]
    summed = np.column_stack([cols[c] for c in _SUMMED] + [np.where(est, vb, np.nan)])
    averaged = np.column_stack([cols["pressure_line"], cols["temperature_line"]])
    codes = [np.asarray(g[0], dtype=np.int64) for g in groupings]
    sizes = [len(g[1]) for g in groupings]
    offsets = np.concatenate([[0], np.cumsum(sizes)]).astype(np.int64)
    if all(len(c) < 2 or bool((np.diff(c) >= 0).all()) for c in codes):
        stacked = np.concatenate([c + off for c, off in zip(codes, offsets)])
        k = len(groupings)
        both = _grouped(np.tile(np.column_stack([summed, averaged]), (k, 1)), stacked, "sum")
        sums = both[:, :summed.shape[1]]
        # groups contiguous and no value missing: pandas' mean is its sum over the group size
        # (the same running sum); a column with gaps takes pandas' mean itself
        means = both[:, summed.shape[1]:] / np.bincount(stacked).astype(np.float64)[:, None]
        gaps = np.isnan(averaged).any(axis=0)
        if gaps.any():
            means[:, gaps] = _grouped(np.tile(averaged[:, gaps], (k, 1)), stacked, "mean")
    else:
        sums = np.concatenate([_grouped(summed, c, "sum") for c in codes])
        means = np.concatenate([_grouped(averaged, c, "mean") for c in codes])
    out = []
    for c, g, a, b in zip(codes, groupings, offsets[:-1], offsets[1:]):
        keys = g[1]
        first, last = (g[2], g[3]) if len(g) > 2 else ({}, {})
        s = sums[a:b]
        vol_b = s[:, 2]
        with np.errstate(invalid="ignore", divide="ignore"):
            err = 100.0 * (s[:, 3] / vol_b - 1.0)
            share = 100.0 * s[:, 6] / vol_b
        out.append(pd.DataFrame({
            **first,
            "intervals": np.bincount(c, minlength=len(keys)).astype(np.int64),
            "hours": np.where(np.isnan(s[:, 0]), 0.0, s[:, 0]) / 3600.0,
            "volume_line": s[:, 1],
            "volume_base": vol_b,
            "volume_base_ideal": s[:, 3],
            "mass": s[:, 4],
            "energy": s[:, 5],
            "pressure_line_mean": means[a:b, 0],
            "temperature_line_mean": means[a:b, 1],
            "estimated_intervals": np.bincount(c[est], minlength=len(keys)).astype(np.int64),
            "flagged_intervals": np.bincount(c[flagged], minlength=len(keys)).astype(np.int64),
            "ideal_gas_error_pct": err,
            "estimated_volume_share_pct": np.where(np.isnan(share), 0.0, share),
            **last,
        }, index=keys))
    return out


def _totals(cols: dict) -> dict:
    vb = cols["volume_base"]
    vi = cols["volume_base_ideal"]
    ok = np.isfinite(vb)
    vl = cols["volume_line"]
    mass, energy = cols["mass"], cols["energy"]
    t = {
        "uncorrected_volume_m3": float(np.nansum(vl)),
        "base_volume_m3": float(np.nansum(vb)),
        "ideal_gas_base_volume_m3": float(np.nansum(vi[ok])),
        "mass_kg": float(np.nansum(mass)) if np.isfinite(mass).any() else None,
        "energy_MJ": float(np.nansum(energy)) / 1e6 if np.isfinite(energy).any() else None,
        "intervals": int(len(vb)),
        "intervals_without_result": int(np.count_nonzero(~ok & np.isfinite(vl) & (vl != 0))),
        "uncorrected_volume_without_result_m3": float(np.nansum(vl[~ok])),
    }
    vbs = t["base_volume_m3"]
    t["ideal_gas_error_pct"] = 100.0 * (t["ideal_gas_base_volume_m3"] / vbs - 1.0) if vbs else None
    est = cols["estimated"]
    t["estimated_volume_share_pct"] = 100.0 * float(np.nansum(vb[est])) / vbs if vbs else 0.0
    return t


def _findings(cols: dict, index: pd.DatetimeIndex, days: pd.DataFrame, threshold: float) -> pd.DataFrame:
    """Gas days and contiguous interval periods where |ideal − real| exceeds the threshold."""
    rows = []
    vb = cols["volume_base"]
    vi = cols["volume_base_ideal"]
    en = cols["energy"]
    # sums as a pandas Series takes them (NaN left out)
    vb_sum = np.nansum(vb)
    hv_mean = np.nansum(en) / vb_sum if vb_sum else np.nan
    d_err = days["ideal_gas_error_pct"].to_numpy(float)
    with np.errstate(invalid="ignore"):
        d_over = np.flatnonzero(np.isfinite(d_err) & (np.abs(d_err) > threshold))
    if len(d_over):
        d_n = days["intervals"].to_numpy(float)
        d_vi = days["volume_base_ideal"].to_numpy(float)
        d_vb = days["volume_base"].to_numpy(float)
        d_en = days["energy"].to_numpy(float)
        for i in d_over:
            day = str(days.index[i])
            dv = d_vi[i] - d_vb[i]
            rows.append({"kind": "gas day", "start": day, "end": day, "intervals": int(d_n[i]),
                         "ideal_gas_error_pct": float(d_err[i]), "volume_impact_m3": float(dv),
                         "energy_impact_MJ": float(dv * (d_en[i] / d_vb[i] if d_vb[i] else hv_mean)) / 1e6})
    err = cols["ideal_gas_error_pct"]
    over = np.isfinite(err) & (np.abs(err) > threshold)
    if over.any():
        edges = np.diff(np.concatenate([[0], over.astype(np.int8), [0]]))
        starts = np.flatnonzero(edges == 1)
        ends = np.flatnonzero(edges == -1)
        dur = cols["duration"]
        for a, b in zip(starts, ends):
            dv = float(np.nansum(vi[a:b]) - np.nansum(vb[a:b]))
            vsum = float(np.nansum(vb[a:b]))
            hv = float(np.nansum(en[a:b])) / vsum if vsum else np.nan
            rows.append({"kind": "period", "start": (index[a] - pd.Timedelta(seconds=float(np.nan_to_num(dur[a])))).isoformat(),
                         "end": index[b - 1].isoformat(), "intervals": int(b - a),
                         "ideal_gas_error_pct": 100.0 * (float(np.nansum(vi[a:b])) / vsum - 1.0) if vsum else np.nan,
                         "volume_impact_m3": dv, "energy_impact_MJ": dv * hv / 1e6 if np.isfinite(hv) else np.nan})
    columns = ["kind", "start", "end", "intervals", "ideal_gas_error_pct", "volume_impact_m3", "energy_impact_MJ"]
    if not rows:
        return pd.DataFrame(rows, columns=columns)
    # largest volume impact first (ties in the order found, NaN last), ranked from 1
    impact = np.abs(np.array([r["volume_impact_m3"] for r in rows], dtype=float))
    order = sorted(range(len(rows)), key=lambda i: (np.isnan(impact[i]), -impact[i] if not np.isnan(impact[i]) else 0.0))
    table = {"rank": list(range(1, len(rows) + 1))}
    table.update({c: [rows[i][c] for i in order] for c in columns})
    return pd.DataFrame(table)


def _average_correction(cols: dict, analyses, settings: Settings, method: str) -> dict:
    """The month corrected from average p and T (time-weighted and volume-weighted)."""
    ok = np.isfinite(cols["volume_base"])
    d = {c: cols[c][ok] for c in ("volume_line", "volume_base", "duration", "pressure_line", "temperature_line",
                                  "analysis")}
    vl = float(np.sum(d["volume_line"]))
    real = float(np.sum(d["volume_base"]))
    out = {"interval_by_interval_m3": real}
    if vl <= 0 or not len(d["volume_line"]):
        return out
    w_time = d["duration"]
    w_vol = d["volume_line"]
    # the analysis in force for most of the volume
    which = d["analysis"]
    if (which == which[0]).all():
        main = int(which[0])
    else:
        main = int(pd.Series(w_vol).groupby(which).sum().idxmax())
    gas = analyses[main].gas
    zb = analyses[main].z_base
    for label, w in (("time_weighted", w_time), ("volume_weighted", w_vol)):
        if not np.nansum(w) > 0:
            continue
        p = float(np.average(d["pressure_line"], weights=w))
        t = float(np.average(d["temperature_line"], weights=w))
        zl = float(evaluate_z(p, t, gas, method).z) if method != IDEAL_METHOD else 1.0
        vb = float(K.volume_at_base(vl, p, t, settings.base_pressure, settings.base_temperature, zl, zb))
        out[label] = {"pressure_Pa": p, "temperature_K": t, "z_line": zl, "base_volume_m3": vb,
                      "error_pct": 100.0 * (vb / real - 1.0) if real else None}
    return out


# ---------------------------------------------------------------------------------------------
def run_month(frame: pd.DataFrame, analyses, settings: Settings, *, metadata=None, edits=None,
              flow_meter=None) -> MonthResult:
    """Correct every interval of a canonical log and total it.

    The steps of the module docstring, in order: the inputs checked, absolute line pressure, the
    analysis in force for each interval and what the run derives from it, Z at line conditions,
    the meter kind's figures, the conversion to base conditions, the interval table with its flags
    and gas days, the totals by gas day, month and analysis period, the findings and warnings.

    Parameters
    ----------
    frame : DataFrame
        Canonical log (meterfix.readers.read_log): UTC DatetimeIndex at interval end; columns
        ``pressure_line`` [Pa abs] or ``pressure_gauge`` [Pa] (+ optional ``pressure_atm``),
        ``temperature_line`` [K], ``volume_line`` [m3], ``duration`` [s], optional ``flag_*``
        booleans and ``flag_estimated``.
    analyses : list of (effective_from or None, Composition or GrossCharacterization)
        In time order; the first applies from the start of the log.
    settings : Settings
    metadata : LogMetadata, optional
    edits : DataFrame, optional   the substitution record from quality
    flow_meter : FlowMeter, optional   the meter's kind and primary element (engine.flow_meter);
                                  default ``settings.flow_meter`` when set, else a volume meter

    Returns
    -------
    MonthResult
    """
    method = _check_inputs(frame, settings)
    analyses = _analyses_in_order(analyses, method.name)
    # the same columns without the frame's attrs: pandas deep-copies a frame's attrs into every
    # column taken from it (the quality record is in them), which costs more than the column
    frame = pd.DataFrame(frame, copy=False)
    index = frame.index.copy()
    n = len(frame)
    duration = frame["duration"].to_numpy(float) if "duration" in frame.columns else np.full(n, np.nan)
    p, atm, atm_source = absolute_pressure(frame, settings)
    tl = frame["temperature_line"].to_numpy(float)
    vl = frame["volume_line"].to_numpy(float)
    which = _analysis_of_intervals(analyses, index, duration)
    in_force = [_analysis_in_force(when, gas, settings, method.name) for when, gas in analyses]
    z_line, z_range, z_reason = _z_at_line(in_force, which, p, tl, method.name)
    z_b = np.array([a.z_base for a in in_force], float)[which]              # [-]
    hv = np.array([a.heating_value for a in in_force], float)[which]        # [J/m3]
    rho_b = np.array([a.density_base for a in in_force], float)[which]      # [kg/m3]
    fm = _flow_meter_of(flow_meter, settings)
    kind = _meter_kind(fm, frame, p, tl, vl, duration, which, in_force, settings, method.name)
    if kind is not None:
        vl = kind.volume_line
    conv = _to_base(vl, p, tl, z_line, z_b, rho_b, hv, settings, kind, fm, which, in_force)
    bad = ~np.isfinite(conv["volume_base"])
    # the interval table, built in one go (column order is part of the output)
    cols = {"duration": duration, "pressure_line": p, "pressure_atm": atm, "temperature_line": tl,
            "volume_line": vl, "analysis": which, "z_line": z_line, "z_base": z_b,
            **{c: conv[c] for c in ("factor_pressure", "factor_temperature", "factor_z", "volume_base",
                                    "volume_base_ideal", "ideal_gas_error_pct", "mass")},
            "heating_value": hv, "energy": conv["energy"],
            "z_range": pd.Categorical.from_codes(z_range, dtype=_Z_RANGE_DTYPE),
            "z_reason": z_reason}
    sos_cols, sos = _speed_of_sound(fm, frame, p, tl, which, in_force, method.name, settings, index, duration)
    for extra in (kind.columns if kind is not None else {}), (sos_cols or {}):
        cols.update(extra)
    all_flags = _add_flags(cols, frame, kind, sos, z_range, z_line, bad, vl)
    day_list, day_codes = _gas_day(index, duration, settings)
    cols["gas_day"] = day_list[day_codes]
    days, months, periods = _period_totals(cols, day_list, day_codes, which, in_force)
    df = pd.DataFrame(cols, index=index)
    totals = _totals(cols)
    flags = {c[5:]: int(np.count_nonzero(cols[c])) for c in all_flags}
    findings = _findings(cols, index, days, settings.ideal_gas_threshold)
    avg = _average_correction(cols, in_force, settings, method.name) if in_force[0].gas is not None or method.name == IDEAL_METHOD else {}
    warn = _run_warnings(flags, totals, method.name, kind, sos)
    method_record = {"name": method.name, "edition": method.edition, "range": method.range_text,
                     "atmospheric_pressure_source": atm_source, "energy_standard": _energy_standard(in_force, settings)}
    if kind is not None and kind.density_source:
        method_record["density"] = kind.density_source
    inputs = list(metadata.sources or []) if metadata is not None else []
    return MonthResult(
        settings=settings, intervals=df, gas_days=days, months=months, analysis_periods=periods, totals=totals,
        findings=findings, average_correction=avg,
        edits=edits if edits is not None else pd.DataFrame(columns=["time", "what", "original", "new", "method", "reason"]),
        flags=flags, analyses=in_force, method=method_record,
        inputs=inputs, log_metadata=metadata, warnings=warn,
        flow_meter=kind.record if kind is not None else None, speed_of_sound_check=sos[0] if sos is not None else None,
    )


def _check_inputs(frame: pd.DataFrame, settings: Settings):
    """The Z method of the run, once the inputs a run needs are there (base conditions, intervals,
    the temperature and volume columns); else SettingsError naming the fix."""
    if settings.base_pressure is None or settings.base_temperature is None:
        raise SettingsError("no contract base conditions are set",
                            hint="give --base-pressure and --base-temperature, or --base PRESET")
    method = get_method(settings.method)
    if not len(frame):
        raise SettingsError("the log has no intervals", hint="check the file and the column map")
    for col in ("temperature_line", "volume_line"):
        if col not in frame.columns:
            raise SettingsError(f"the canonical log has no '{col}' column",
                                hint="map the source column with --column or the site file's [columns] table")
    return method


def _analyses_in_order(analyses, method: str) -> list:
    """The analyses (effective_from or None, gas) in time order; one without gas (None) for an
    ideal-gas run without analysis, else SettingsError."""
    analyses = list(analyses or [])
    if not analyses:
        if method != IDEAL_METHOD:
            raise SettingsError("no gas analysis is given",
                                hint="give --composition FILE (an analysis) or --gas 'methane=0.95,...'")
        analyses = [(None, None)]
    return sorted(analyses, key=lambda a: pd.Timestamp.min.tz_localize("UTC") if a[0] is None else a[0])


def _analysis_of_intervals(analyses, index: pd.DatetimeIndex, duration: np.ndarray) -> np.ndarray:
    """The analysis in force for each interval [position in ``analyses``]: the latest one whose
    effective time is at or before the interval's start (end ``index`` less ``duration`` [s])."""
    eff = np.array([np.iinfo(np.int64).min if a[0] is None else pd.Timestamp(a[0]).as_unit("ns").value
                    for a in analyses], dtype=np.int64)
    starts = (index - pd.to_timedelta(np.nan_to_num(duration), unit="s")).as_unit("ns").asi8
    which = np.searchsorted(eff, starts, side="right") - 1
    return np.clip(which, 0, len(analyses) - 1)


def _analysis_in_force(when, gas, settings: Settings, method: str) -> AnalysisInForce:
    """What the run derives from one analysis at the contract base: Zb, molar mass [kg/mol], the
    gross heating value [J/m3] and its source (ISO 6976 for a composition, unless one is supplied),
    base density [kg/m3], relative density [-] and Wobbe index [J/m3]. No gas: Zb = 1."""
    a = AnalysisInForce(when, gas)
    if gas is None:
        a.z_base = 1.0
        return a
    rb = evaluate_z(settings.base_pressure, settings.base_temperature, gas, method)
    a.z_base = float(np.asarray(rb.z).reshape(-1)[0])
    a.molar_mass = _molar_mass(gas)
    if not (isinstance(gas, Composition) and settings.heating_value is None):
        a.heating_value, a.heating_value_source = _heating_value(gas, settings)
    a.density_base = float(K.density_at_base(settings.base_pressure, settings.base_temperature,
                                             a.z_base, a.molar_mass))
    if isinstance(gas, Composition):
        _composition_energy(a, gas, settings, method)
    return a


def _composition_energy(a: AnalysisInForce, gas: Composition, settings: Settings, method: str) -> None:
    """An analysis' ISO 6976 properties at the contract base (when no heating value is supplied):
    heating value [J/m3], its US figures, relative density [-] and Wobbe index [J/m3], set on ``a``."""
    from .. import energy as E
    from ..energy.month import analysis_energy, us_heating_value

    if settings.heating_value is None:
        a.energy = analysis_energy(
            gas, temperature_combustion=settings.combustion_temperature,
            temperature_metering=settings.base_temperature, pressure_metering=settings.base_pressure,
            edition=settings.energy_edition, z_metering=a.z_base)
        a.heating_value, a.heating_value_source = float(a.energy.gross_volumetric), a.energy.source
        a.heating_value_us = us_heating_value(gas, settings.energy_edition)
    if a.energy is not None and np.isfinite(a.energy.relative_density):
        a.relative_density = float(a.energy.relative_density)
        a.wobbe_index = float(a.energy.wobbe_index)
    else:
        a.relative_density = float(E.relative_density(
            gas, temperature_metering=settings.base_temperature, pressure_metering=settings.base_pressure,
            z_metering=a.z_base, method=method))
        if np.isfinite(a.heating_value):
            a.wobbe_index = float(E.wobbe_index(a.heating_value, a.relative_density))


def _z_at_line(in_force, which, p, tl, method: str):
    """Z at line conditions of each interval with its analysis in force (1 without gas) [-], the
    method's range class (int8, RANGE_NAMES) and the reason a state is outside it."""
    n = len(which)
    z_line = np.full(n, np.nan)
    z_range = np.zeros(n, dtype=np.int8)
    z_reason = np.full(n, "", dtype=object)
    for k, a in enumerate(in_force):
        sel = which == k
        if not sel.any():
            continue
        if a.gas is None:
            z_line[sel] = 1.0
        else:
            res = evaluate_z(p[sel], tl[sel], a.gas, method, speed_of_sound=False)  # Z only
            z_line[sel] = np.broadcast_to(res.z, (int(sel.sum()),))
            z_range[sel] = np.broadcast_to(res.range_class, (int(sel.sum()),))
            z_reason[sel] = np.broadcast_to(res.reason, (int(sel.sum()),))
    return z_line, z_range, z_reason


def _flow_meter_of(flow_meter, settings: Settings):
    """The meter's kind (FlowMeter): the one given, else the settings' [flow_meter] table (SI values,
    checked together), None for a plain volume meter."""
    fm = flow_meter if flow_meter is not None else settings.flow_meter
    if isinstance(fm, dict):
        from .flow_meter import parse_flow_meter

        fm = parse_flow_meter(fm) if fm else None
    return fm


def _to_base(vl, p, tl, z_line, z_b, rho_b, hv, settings: Settings, kind, fm, which, in_force) -> dict:
    """The conversion of each interval to base conditions (AGA Report No. 7 / EN 12405-1 form,
    common practice): Fp, Ft, Zb/Zf [-], base volume Vb = V Fp Ft Zb/Zf and the same with Z = 1
    [m3], its ideal-gas error [%], mass [kg] and energy [J]. A measured mass (Coriolis, orifice)
    gives Vb = m / ρb instead. The ideal-gas figure is left out where Vb has no result."""
    pb, tb = settings.base_pressure, settings.base_temperature
    with np.errstate(invalid="ignore", divide="ignore"):
        fp = K.factor_pressure(p, pb)
        ft = K.factor_temperature(tl, tb)
        fz = z_b / z_line
        vb = vl * fp * ft * fz
        vi = vl * fp * ft
        mass = vb * rho_b
        energy = vb * hv
        if kind is not None and kind.mass is not None:
            # measured mass: base volume = mass / rho_b (the Z method's), energy = mass x Hm (ISO 6976)
            mass = kind.mass
            vb = mass / kind.density_base
            # the ideal-gas figures: rho_b(Z = 1) = Zb rho_b; an orifice's qm ~ sqrt(rho1) ~ 1/sqrt(Z1)
            vi = vb / z_b * (np.sqrt(z_line) if fm.kind == ORIFICE_METER else 1.0)
            energy = _energy_from_mass(mass, vb, hv, which, in_force)
    vi = np.where(~np.isfinite(vb), np.nan, vi)
    return {"factor_pressure": fp, "factor_temperature": ft, "factor_z": fz, "volume_base": vb,
            "volume_base_ideal": vi, "ideal_gas_error_pct": K.ideal_gas_error_pct(vi, vb), "mass": mass,
            "energy": energy}


def _speed_of_sound(fm, frame, p, tl, which, in_force, method: str, settings: Settings, index, duration):
    """The speed-of-sound check (engine.meter_kinds) when the meter has a kind or the log a
    ``speed_of_sound`` column: its interval columns and (record, flagged mask), else (None, None)."""
    if fm is None and "speed_of_sound" not in frame.columns:
        return None, None
    from .meter_kinds import speed_of_sound_check

    threshold = settings.speed_of_sound_threshold
    threshold = 0.2 if threshold is None else threshold
    return speed_of_sound_check(frame, p, tl, which, in_force, method, threshold, index, duration)


def _add_flags(cols: dict, frame, kind, sos, z_range, z_line, bad, vl) -> list:
    """Add the flag_* columns to the interval table: the reader's, the meter kind's, the speed of
    sound's, Z outside its range, no result; then ``estimated`` and ``flagged`` (any flag).
    Returns the flag columns' names in order."""
    n = len(vl)
    for c in frame.columns:
        if c.startswith("flag_"):
            cols[c] = frame[c].to_numpy(bool)
    for name, mask in (kind.flags.items() if kind is not None else ()):
        cols["flag_" + name] = mask
    if sos is not None:
        cols["flag_speed_of_sound"] = sos[1]
    cols["flag_z_outside_range"] = (z_range == OUTSIDE) & np.isfinite(z_line)
    cols["flag_no_result"] = bad & np.isfinite(vl)
    cols["estimated"] = frame["flag_estimated"].to_numpy(bool) if "flag_estimated" in frame.columns else np.zeros(n, bool)
    all_flags = [c for c in cols if c.startswith("flag_")]
    cols["flagged"] = np.logical_or.reduce([cols[c] for c in all_flags])
    return all_flags


def _period_totals(cols: dict, day_list, day_codes, which, in_force) -> list:
    """Totals by gas day, by month of gas day ('YYYY-MM') and by analysis period (with its
    effective time, Zb and heating value [J/m3]), one DataFrame each (_group_totals)."""
    ym = np.array([d.year * 12 + d.month - 1 for d in day_list], dtype=np.int64)
    month_ym, month_of_day = np.unique(ym, return_inverse=True)
    month_keys = [f"{m // 12:04d}-{m % 12 + 1:02d}" for m in month_ym]
    used, period_codes = np.unique(which, return_inverse=True)  # the analyses in force somewhere in the log
    return _group_totals(cols, [
        (day_codes, pd.Index(day_list, dtype=object, name="gas_day")),
        (month_of_day.reshape(-1)[day_codes], pd.Index(month_keys, name="month")),
        (period_codes.reshape(-1), pd.Index(used, name="analysis"),
         {"effective_from": [None if in_force[i].effective_from is None
                             else pd.Timestamp(in_force[i].effective_from).isoformat() for i in used]},
         {"z_base": [in_force[i].z_base for i in used], "heating_value": [in_force[i].heating_value for i in used]}),
    ])


def _run_warnings(flags: dict, totals: dict, method: str, kind, sos) -> list:
    """The run's warnings: intervals outside the method's range, volume without result, the meter
    kind's findings and flags, a speed of sound off the analysis'."""
    warn = []
    if flags.get("z_outside_range"):
        warn.append(f"{flags['z_outside_range']} interval(s) outside the range of {method}: see the z_range column")
    if totals["intervals_without_result"]:
        warn.append(f"{totals['intervals_without_result']} interval(s) with volume but no corrected result "
                    f"({totals['uncorrected_volume_without_result_m3']:.6g} m3 uncorrected)")
    if kind is not None:
        warn.extend(kind.findings)
        for name, mask in kind.flags.items():
            if mask.any():
                warn.append(f"{int(mask.sum())} interval(s) flagged {name}: see the flag_{name} column")
    if sos is not None and sos[0]["flagged_intervals"]:
        warn.append(f"{sos[0]['flagged_intervals']} interval(s) where the meter's speed of sound differs from the "
                    f"analysis' by more than {sos[0]['threshold_pct']:g} %: a wrong analysis, temperature or "
                    f"pressure, or a meter fault")
    return warn


def _meter_kind(fm, frame, p, tl, vl, duration, which, in_force, settings, method: str):
    """The meter kind's interval figures (engine.meter_kinds), or None for a plain volume meter."""
    if fm is None or (fm.kind == VOLUME_METER and fm.error_curve is None and fm.meter_factor is None):
        return None
    if in_force[0].gas is None and fm.kind != VOLUME_METER:
        raise SettingsError(f"a {fm.kind} meter needs a gas analysis for its density",
                            hint="give --composition FILE (an analysis) or --gas 'methane=0.95,...'")
    from . import meter_kinds as MK

    if fm.kind == ORIFICE_METER:
        return MK.orifice_kind(frame, p, tl, duration, which, in_force, settings, method, fm)
    if fm.kind == CORIOLIS_METER:
        return MK.coriolis_kind(frame, p, tl, duration, which, in_force, settings, method)
    return MK.calibrated_volume(frame, vl, duration, fm)


def _energy_from_mass(mass, vb, hv, which, in_force):
    """Energy [J] from a measured mass: m x Hm where ISO 6976 gives the mass-basis value, else Vb x Hv."""
    out = vb * hv
    for k, a in enumerate(in_force):
        props = a.energy.properties if a.energy is not None else None
        if props is None:
            continue
        sel = which == k
        out[sel] = mass[sel] * float(props.values["gross_heating_value_mass"])
    return out

