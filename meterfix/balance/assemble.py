"""From a checked balance file and each meter's month summary to the BalanceResult.

The rules of a balance (refused with one line naming the meter or section and the fix): one
gas month and one gas day (start hour and zone) for every meter; every gas day of the month with
a result for every meter; one combustion reference for the energy; base volumes restated to the
balance's base where a meter's differs (said in the notes); a linepack log covering both month
boundaries.
"""

from __future__ import annotations

import calendar
from collections import Counter
from datetime import datetime, timedelta
from zoneinfo import ZoneInfo

import numpy as np

from ..errors import SettingsError
from .compute import BalanceResult, compute_balance
from .config import BalanceConfig
from .linepack import at_boundaries, linepack, read_linepack_log
from .meters import _gas_of, meter_month
from .ufg import Fixed


def month_days(month: str) -> list:
    y, m = (int(x) for x in month.split("-"))
    return [f"{y:04d}-{m:02d}-{d:02d}" for d in range(1, calendar.monthrange(y, m)[1] + 1)]


def boundaries(month: str, start_hour: int, timezone: str) -> np.ndarray:
    """UTC instants of the gas-day starts of the month and the end of its last gas day."""
    y, m = (int(x) for x in month.split("-"))
    zone = ZoneInfo(timezone)
    first = datetime(y, m, 1)
    n = calendar.monthrange(y, m)[1]
    out = []
    for k in range(n + 1):
        local = (first + timedelta(days=k)).replace(hour=start_hour, tzinfo=zone)
        out.append(np.datetime64(local.astimezone(ZoneInfo("UTC")).replace(tzinfo=None), "ns"))
    return np.array(out, "datetime64[ns]")


def gas_month_of(summary: dict) -> str | None:
    """The month most of a meter's gas days fall in."""
    c = Counter(d["gas_day"][:7] for d in summary.get("gas_days") or [])
    return c.most_common(1)[0][0] if c else None


def assemble(cfg: BalanceConfig, summaries: dict, *, month: str | None = None) -> BalanceResult:
    """The balance of ``cfg`` over its month.

    Parameters
    ----------
    cfg : BalanceConfig
    summaries : dict   meter entry name → (summary dict, source text)
    month : str, optional   YYYY-MM (wins over the file's)
    """
    file = cfg.file
    notes = []
    mo = month or cfg.month
    months = {e.name: gas_month_of(summaries[e.name][0]) for e in cfg.meters}
    if mo is None:
        found = set(months.values())
        if len(found) != 1 or None in found:
            listed = ", ".join(f"{k} {v}" for k, v in months.items())
            raise SettingsError(f"the meters' logs are not of one gas month ({listed})", file=file,
                                hint="give month = \"YYYY-MM\" in the balance file or --month")
        mo = found.pop()
        notes.append(f"gas month {mo}: the month of every meter's log")
    days = month_days(mo)
    first = cfg.meters[0]
    gd0 = summaries[first.name][0].get("gas_day") or {}
    for e in cfg.meters:
        s = summaries[e.name][0]
        gd = s.get("gas_day") or {}
        if gd != gd0:
            raise SettingsError(f"meter '{e.name}': its gas day ({gd.get('start_hour')}:00 {gd.get('timezone')}) is not "
                                f"meter '{first.name}''s ({gd0.get('start_hour')}:00 {gd0.get('timezone')})", file=file,
                                hint="a balance adds meters over one gas day: set gas_day_start and timezone alike "
                                     "in their site.toml")
        have = {d["gas_day"] for d in s.get("gas_days") or []
                if d.get("volume_base_m3", d.get("volume_base")) is not None}
        missing = [d for d in days if d not in have]
        if len(missing) == len(days):
            raise SettingsError(f"meter '{e.name}' has no result for gas month {mo}", file=file,
                                hint="give the meter's logs of that month, or leave it out of the balance")
        if missing:
            more = f" and {len(missing) - 3} more" if len(missing) > 3 else ""
            raise SettingsError(f"meter '{e.name}' has no result for gas day {', '.join(missing[:3])}{more} of {mo}",
                                file=file, hint="complete the meter's logs for the whole gas month (a balance adds "
                                "every meter over every gas day)")
    tc = {e.name: summaries[e.name][0].get("combustion_reference_temperature_K") for e in cfg.meters}
    if len({round(v, 6) for v in tc.values() if v is not None}) > 1:
        a, b = list(tc.items())[0], next((k, v) for k, v in tc.items() if v != list(tc.values())[0])
        raise SettingsError(f"meter '{b[0]}' gives energy at a {b[1] - 273.15:g} °C combustion reference, meter "
                            f"'{a[0]}' at {a[1] - 273.15:g} °C", file=file,
                            hint="a balance adds energy at one reference: set combustion_temperature alike in the "
                                 "meters' site.toml")
    t_comb = next(iter(tc.values()))
    from ..units import parse_unit
    from ..writers.xlsx_common import DisplayUnits

    if cfg.pressure_base is None:
        b = summaries[first.name][0]["base_conditions"]
        pb, tb = float(b["pressure_Pa"]), float(b["temperature_K"])
        notes.append(f"base conditions {DisplayUnits.for_base(pb, tb).base_text(pb, tb)}: those of meter "
                     f"'{first.name}'")
    else:
        pb, tb = cfg.pressure_base, cfg.temperature_base
    du = DisplayUnits.for_base(pb, tb)
    meters = []
    restated = {}   # one note for the meters restated alike: {text: [names]}
    for e in cfg.meters:
        s, source = summaries[e.name]
        m = meter_month(s, name=e.name, role=e.role, gas_days=days, correlation_group=e.correlation_group,
                        pressure_base=pb, temperature_base=tb, source=source, file=file)
        for n in m.notes:
            if n.startswith("restated from its base"):
                restated.setdefault(n, []).append(e.name)
            else:
                notes.append(f"meter '{e.name}' {n}")
        wo = (s.get("totals") or {}).get("intervals_without_result") or 0
        if wo:
            notes.append(f"meter '{e.name}': {wo} interval(s) without a result are not in its month (see its summary)")
        meters.append(m)
    for n, names in restated.items():
        if len(names) == 1:
            notes.append(f"meter '{names[0]}' {n}")
        else:
            who = ", ".join(f"'{x}'" for x in names[:-1]) + f" and '{names[-1]}'"
            notes.append(f"meters {who} {n.replace('restated from its base', 'restated from their base', 1)}")
    # heating value of the fixed quantities: the receipts' month average (said so)
    rec = [m for m in meters if m.role == "receipt" and m.energy is not None]
    hv_r = (sum(np.nansum(m.energy) for m in rec) / sum(np.nansum(m.volume) for m in rec)) if rec else None
    fixed = [Fixed(f.name, f.volume, f.u_rel, f.gas_day, None if hv_r is None else f.volume * hv_r) for f in cfg.fixed]
    for f in cfg.fixed:
        if f.gas_day is not None and f.gas_day not in days:
            raise SettingsError(f"fixed quantity '{f.name}': gas day {f.gas_day} is not in gas month {mo}", file=file,
                                hint="give a gas day of the balance's month, or leave gas_day out")
    if fixed and hv_r is not None:
        notes.append(f"fixed quantities in energy at the receipts' month heating value {du.exact('heating_value', hv_r)}")
    start_hour, tz = int(gd0.get("start_hour", 0)), gd0.get("timezone", "UTC")
    bounds = boundaries(mo, start_hour, tz)
    lps = []
    for lp in cfg.linepacks:
        times, p, t = read_linepack_log(lp.pressure_log, timezone=lp.timezone or tz,
                                        atmospheric_pressure=lp.atmospheric_pressure, sheet=lp.sheet)
        pb_ = at_boundaries(times, p, bounds, what="pressure", file=lp.pressure_log)
        tb_ = at_boundaries(times, t, bounds, what="temperature", file=lp.pressure_log)
        if isinstance(lp.composition, str):
            s = summaries[lp.composition][0]
            gas = _gas_of(s)
            m = next(x for x in meters if x.name == lp.composition)
            hv = float(np.nansum(m.energy) / np.nansum(m.volume)) if m.energy is not None else None
            what = f"the analysis of meter '{lp.composition}'"
            if gas is None:
                raise SettingsError(f"linepack '{lp.name}': meter '{lp.composition}' has no composition to apply",
                                    file=file, hint="give the section an analysis file as composition")
        else:
            from ..energy.month import analysis_energy
            from ..readers.analyses import read_analyses

            gas = read_analyses(lp.composition)[0][1]
            hv = None
            if t_comb is not None:
                hv = analysis_energy(gas, temperature_combustion=t_comb, temperature_metering=tb,
                                     pressure_metering=pb).gross_volumetric
            what = f"the analysis in {lp.composition.name}"
        lps.append(linepack(lp.name, bounds, pb_, tb_, volume=lp.volume, gas=gas, method=cfg.method, pressure_base=pb,
                            temperature_base=tb, heating_value=hv, u_volume_rel=lp.u_volume_rel,
                            u_pressure_rel=lp.u_pressure_rel, u_temperature=lp.u_temperature))
        geo = f"{lp.volume:.6g} m3" + ("" if du.names["volume"] == "m3" else
                                        f" ({float(parse_unit('ft3', 'volume').from_si(lp.volume)):,.0f} ft3)")
        notes.append(f"linepack '{lp.name}': {geo} geometric, Z by {cfg.method} with {what}")
    return compute_balance(cfg.name, mo, meters, fixed, lps, days, gas_day_start_hour=start_hour, timezone=tz,
                           pressure_base=pb, temperature_base=tb, temperature_combustion=t_comb, notes=notes)
