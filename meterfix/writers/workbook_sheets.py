"""Data sheets of the month workbook: intervals, gas days, analyses, findings, edits.

Each writer returns a :class:`Block` saying where its data lies, so the charts can point at it.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import date as _date, datetime as _datetime

import numpy as np
import pandas as pd

from .. import vocabulary as V
from ..vocabulary import flag_label, flag_meaning
from . import xlsx_common as X
from .xlsx_bulk import BulkColumn, BulkTable, serial_days

#: the most data rows a worksheet holds (1,048,576 rows less the header)
MAX_SHEET_ROWS = 1_048_575


@dataclass
class Block:
    """Where a table lies: sheet title, first and last data row, column letter by key."""

    sheet: str
    first_row: int
    last_row: int
    columns: dict = field(default_factory=dict)

    @property
    def rows(self) -> int:
        return max(0, self.last_row - self.first_row + 1)


def _col(values, fmt, width, key=None, kind="number"):
    """One interval-sheet column: its cells (array, or a list of texts), format, least width, block key."""
    return {"values": values, "fmt": fmt, "width": width, "key": key, "kind": kind}


def _f(a):
    return np.asarray(a, dtype=float)


def _yes(flags):
    return ["yes" if b else None for b in np.asarray(flags, dtype=bool).tolist()]


def _utc_offsets(utc, local) -> list:
    """'+02:00' per interval: local wall-clock time less UTC (each distinct offset formatted once)."""
    minutes = ((local.tz_localize(None) - utc.tz_localize(None)) // pd.Timedelta(minutes=1)).to_numpy()
    text = {}
    for m in np.unique(minutes).tolist():
        sign = "-" if m < 0 else "+"
        text[m] = f"{sign}{abs(m) // 60:02d}:{abs(m) % 60:02d}"
    return [text[m] for m in minutes.tolist()]


def _flag_label(name: str) -> str:
    return "Flag: " + name[5:].replace("_", " ")


def interval_columns(result, du: X.DisplayUnits) -> dict:
    """Header → column spec of the interval sheet (display units, converted here; times as serial days)."""
    d = result.intervals
    s = result.settings
    idx = d.index
    local = idx.tz_convert(s.timezone)
    offs = _utc_offsets(idx, local)
    pl, tl, vl = du.label("pressure"), du.label("temperature"), du.label("volume")
    el, hl, ml = du.label("energy"), du.label("heating_value"), du.label("mass")
    f = lambda c: d[c].to_numpy(float)  # noqa: E731
    gas_day = pd.DatetimeIndex(pd.to_datetime(d["gas_day"].to_numpy()))
    if gas_day.tz is not None:
        gas_day = gas_day.tz_localize(None)
    cols = {
        "Interval end [UTC]": _col(serial_days(idx.tz_localize(None)), X.FMT_DATETIME, 17, "utc", "time"),
        f"Interval end [local, {s.timezone}]": _col(serial_days(local.tz_localize(None)), X.FMT_DATETIME, 17,
                                                    "local", "time"),
        "UTC offset": _col(offs, None, 8, kind="text"),
        "Gas day": _col(np.floor(serial_days(gas_day.normalize())), X.FMT_DATE, 11, "gas_day", "date"),
        "Duration [min]": _col(f("duration") / 60.0, "0.##", 9),
        f"Line pressure [{pl}]": _col(_f(du.convert("pressure", f("pressure_line"))), X.FMT_PRESSURE, 13, "pressure"),
        f"Atmospheric pressure [{pl}]": _col(_f(du.convert("pressure", f("pressure_atm"))), X.FMT_PRESSURE, 13),
        f"Line temperature [{tl}]": _col(_f(du.convert("temperature", f("temperature_line"))), X.FMT_TEMPERATURE,
                                         12, "temperature"),
        f"Uncorrected volume [{vl}]": _col(_f(du.convert("volume", f("volume_line"))), X.FMT_VOLUME_FINE, 13),
        "Analysis no.": _col(d["analysis"].to_numpy(float) + 1, "0", 8),
        "Zf at line [-]": _col(f("z_line"), X.FMT_Z, 10, "z_line"),
        "Zb at base [-]": _col(f("z_base"), X.FMT_Z, 10, "z_base"),
        "Fp = pf/pb [-]": _col(f("factor_pressure"), X.FMT_FACTOR, 10),
        "Ft = Tb/Tf [-]": _col(f("factor_temperature"), X.FMT_FACTOR, 10),
        "Zb/Zf = Fpv² [-]": _col(f("factor_z"), X.FMT_FACTOR, 10, "factor_z"),
        "Fpv [-]": _col(np.sqrt(f("factor_z")), X.FMT_FACTOR, 10),
        f"{V.BASE_VOLUME} [{vl} at base]": _col(_f(du.convert("volume", f("volume_base"))),
                                                           X.FMT_VOLUME_FINE, 15, "volume_base"),
        f"{V.BASE_VOLUME_IDEAL} [{vl} at base]": _col(_f(du.convert("volume", f("volume_base_ideal"))),
                                                                X.FMT_VOLUME_FINE, 15, "volume_base_ideal"),
        "Ideal-gas error [%]": _col(f("ideal_gas_error_pct"), X.FMT_PCT, 10, "error"),
        f"Mass [{ml}]": _col(_f(du.convert("mass", f("mass"))), X.FMT_VOLUME_FINE, 13),
        f"Heating value, gross [{hl}]": _col(_f(du.convert("heating_value", f("heating_value"))), X.FMT_HV, 11),
        f"Energy [{el}]": _col(_f(du.convert("energy", f("energy"))), X.FMT_ENERGY, 13, "energy"),
        "Z range": _col([str(x) for x in d["z_range"]], None, 9, kind="text"),
        "Z note": _col([X.cell_value(str(x)) or None for x in d["z_reason"]], None, 12, kind="text"),
        "Estimated": _col(_yes(d["estimated"].to_numpy(bool)), None, 9, kind="text"),
    }
    cols.update(_meter_kind_columns(d, du))
    for c in [c for c in d.columns if c.startswith("flag_")]:
        cols[_flag_label(c)] = _col(_yes(d[c].to_numpy(bool)), None, 10, c, kind="text")
    cc = result.corrector_check
    if cc is not None and cc.intervals is not None and len(cc.intervals) == len(d):
        iv = cc.intervals
        cols[f"Site corrector volume [{vl} at its base]"] = _col(
            _f(du.convert("volume", iv["theirs"].to_numpy(float))), X.FMT_VOLUME_FINE, 15, "corrector")
        cols["Site corrector ÷ ours [-]"] = _col(iv["ratio"].to_numpy(float), X.FMT_FACTOR, 10, "ratio")
        cols["Fitted ratio, best explanation [-]"] = _col(iv["fitted_ratio"].to_numpy(float), X.FMT_FACTOR,
                                                          12, "fitted_ratio")
    return cols


def _meter_kind_columns(d, du) -> dict:
    """The meter kinds' interval columns that are present (orifice, calibration, speed of sound)."""
    Q = V.QUANTITY_LABELS
    pl, vl = du.label("pressure"), du.label("volume")
    spec = [
        ("pressure_differential", f"{Q['pressure_differential']} [mbar]", None, X.FMT_PRESSURE),
        ("pressure_upstream", f"Upstream pressure [{pl}]", "pressure", X.FMT_PRESSURE),
        ("density_line", "Density at line [kg/m3]", None, X.FMT_FACTOR),
        ("discharge_coefficient", "Discharge coefficient C [-]", None, X.FMT_FACTOR),
        ("expansibility", "Expansibility ε [-]", None, X.FMT_FACTOR),
        ("reynolds_pipe", "Reynolds number Re_D [-]", None, "0"),
        ("isentropic_exponent", "Isentropic exponent κ [-]", None, X.FMT_FACTOR),
        ("viscosity", "Viscosity [µPa s]", None, X.FMT_FACTOR),
        ("volume_line_indicated", f"Indicated volume [{vl}]", "volume", X.FMT_VOLUME_FINE),
        ("meter_error", f"{Q['meter_error']} [%]", None, X.FMT_PCT),
        ("speed_of_sound", f"{Q['speed_of_sound']}, meter [m/s]", None, X.FMT_FACTOR),
        ("speed_of_sound_computed", "Speed of sound, equation of state [m/s]", None, X.FMT_FACTOR),
        ("speed_of_sound_deviation_pct", "Speed of sound deviation [%]", None, X.FMT_PCT),
    ]
    out = {}
    for name, header, kind, fmt in spec:
        if name not in d.columns:
            continue
        v = d[name].to_numpy(float)
        v = du.convert(kind, v) if kind else v * {"viscosity": 1e6, "pressure_differential": 0.01}.get(name, 1.0)
        out[header] = _col(_f(v), fmt, 13)
    return out


def write_intervals(ws, result, du, *, interval_csv=None, max_rows=MAX_SHEET_ROWS) -> Block | None:
    """The interval table (streamed, see :mod:`.xlsx_bulk`), or a note saying where it is when the
    month has more intervals than the sheet is to hold."""
    n = len(result.intervals)
    if n > max_rows:
        r = X.section(ws, 1, "Intervals")
        where = interval_csv or "the interval CSV written beside this workbook"
        X.note(ws, r + 1, f"This month has {n:,} intervals, more than this workbook holds in a sheet ({max_rows:,} "
                          f"rows). The interval table is in the file '{where}' beside this workbook, with the same "
                          "columns in SI units. The charts show gas-day means instead of intervals.", span=8)
        ws.cell(r + 3, 1, "Interval table file").font = X.LABEL_FONT
        ws.cell(r + 3, 2, X.cell_value(str(where)))
        X.set_widths(ws, {1: 22, 2: 60})
        return None
    cols = interval_columns(result, du)
    headers = list(cols)
    X.write_header(ws, 1, 1, headers, height=45)
    ws.bulk = BulkTable([BulkColumn(h, c["kind"], c["values"], c["fmt"], c["width"]) for h, c in cols.items()],
                        first_row=2)
    block = Block(ws.title, 2, n + 1)
    for j, (h, c) in enumerate(cols.items(), start=1):
        if c["key"]:
            block.columns[c["key"]] = X.get_column_letter(j)
        block.columns[h] = X.get_column_letter(j)
    ws.freeze = (2, 2)
    ws.autofilter = (1, 1, n + 1, len(headers))
    ws.fit_width = False
    ws.repeat_rows = (1, 1)
    ws.repeat_cols = (1, 2)
    return block


# ---------------------------------------------------------------------------------------------
def gas_day_table(result, du) -> pd.DataFrame:
    """Gas-day totals in display units, with the volume-weighted Zb/Zf of each day."""
    g = result.gas_days
    vl, el, pl, tl, ml = (du.label(k) for k in ("volume", "energy", "pressure", "temperature", "mass"))
    t = pd.DataFrame(index=g.index)
    t["Gas day"] = [pd.Timestamp(x).date() for x in g.index]
    t["Intervals"] = g["intervals"].to_numpy(int)
    t["Hours"] = g["hours"].to_numpy(float)
    t[f"Uncorrected volume [{vl}]"] = du.convert("volume", g["volume_line"].to_numpy(float))
    t[f"{V.BASE_VOLUME} [{vl} at base]"] = du.convert("volume", g["volume_base"].to_numpy(float))
    t[f"{V.BASE_VOLUME_IDEAL} [{vl} at base]"] = du.convert("volume", g["volume_base_ideal"].to_numpy(float))
    t[f"Ideal − real [{vl}]"] = du.convert("volume", (g["volume_base_ideal"] - g["volume_base"]).to_numpy(float))
    t["Ideal-gas error [%]"] = g["ideal_gas_error_pct"].to_numpy(float)
    t[f"Mass [{ml}]"] = du.convert("mass", g["mass"].to_numpy(float))
    t[f"Energy [{el}]"] = du.convert("energy", g["energy"].to_numpy(float))
    t[f"Mean line pressure [{pl}]"] = du.convert("pressure", g["pressure_line_mean"].to_numpy(float))
    t[f"Mean line temperature [{tl}]"] = du.convert("temperature", g["temperature_line_mean"].to_numpy(float))
    with np.errstate(invalid="ignore", divide="ignore"):
        t["Zb/Zf, volume-weighted [-]"] = (g["volume_base"] / g["volume_base_ideal"]).to_numpy(float)
    t["Estimated intervals"] = g["estimated_intervals"].to_numpy(int)
    t["Flagged intervals"] = g["flagged_intervals"].to_numpy(int)
    t["Estimated volume share [%]"] = g["estimated_volume_share_pct"].to_numpy(float)
    unc = result.uncertainty
    gd = unc.gas_days if unc is not None else None
    if gd is not None and len(gd):
        gd = gd.copy()
        gd.index = [pd.Timestamp(x).date() for x in gd.index]
        key = [pd.Timestamp(x).date() for x in g.index]
        t["Expanded uncertainty, volume [%]"] = gd["expanded_pct"].reindex(key).to_numpy(float)
        if "expanded_energy_pct" in gd:
            t["Expanded uncertainty, energy [%]"] = gd["expanded_energy_pct"].reindex(key).to_numpy(float)
    return t


_GD_FORMATS = {"Gas day": X.FMT_DATE, "Intervals": X.FMT_INT, "Hours": "0.##", "Ideal-gas error [%]": X.FMT_PCT,
               "Zb/Zf, volume-weighted [-]": X.FMT_FACTOR, "Estimated intervals": X.FMT_INT,
               "Flagged intervals": X.FMT_INT, "Estimated volume share [%]": X.FMT_PCT2}


def _gd_format(h):
    if h in _GD_FORMATS:
        return _GD_FORMATS[h]
    if h.startswith("Expanded"):
        return X.FMT_PCT
    if h.startswith("Mean line pressure"):
        return X.FMT_PRESSURE
    if h.startswith("Mean line temperature"):
        return X.FMT_TEMPERATURE
    return X.FMT_VOLUME


def write_gas_days(ws, result, du) -> Block:
    t = gas_day_table(result, du)
    headers = list(t.columns)
    fmts = [_gd_format(h) for h in headers]
    rows = list(t.itertuples(index=False, name=None))
    end = X.write_table(ws, 1, 1, headers, rows, fmts)
    ws.height(1, 60)
    block = Block(ws.title, 2, end - 1)
    for j, h in enumerate(headers, start=1):
        block.columns[h] = X.get_column_letter(j)
        ws.widths[j] = max(ws.widths.get(j, 0.0), 11 if j == 1 else 12)
    # month row(s) from result.months, below a blank row
    m = result.months
    r = end + 1
    for key, row in m.iterrows():
        vals = {"Gas day": f"Month {key}", "Intervals": row["intervals"], "Hours": row["hours"],
                headers[3]: du.scalar("volume", row["volume_line"]), headers[4]: du.scalar("volume", row["volume_base"]),
                headers[5]: du.scalar("volume", row["volume_base_ideal"]),
                headers[6]: du.scalar("volume", row["volume_base_ideal"] - row["volume_base"]),
                "Ideal-gas error [%]": row["ideal_gas_error_pct"], headers[8]: du.scalar("mass", row["mass"]),
                headers[9]: du.scalar("energy", row["energy"]), "Estimated intervals": row["estimated_intervals"],
                "Flagged intervals": row["flagged_intervals"],
                "Estimated volume share [%]": row["estimated_volume_share_pct"]}
        for j, h in enumerate(headers, start=1):
            if h in vals:
                c = ws.cell(row=r, column=j, value=X.cell_value(vals[h]))
                c.font = X.LABEL_FONT
                c.fill = X.MONTH_FILL
                c.border = X.CELL_BORDER
                if h != "Gas day":
                    c.number_format = fmts[j - 1]
        block.columns[f"month:{key}"] = r
        r += 1
    ws.freeze = (2, 2)
    ws.repeat_rows = (1, 1)
    return block


# ---------------------------------------------------------------------------------------------
def write_analyses(ws, result, du) -> None:
    """One column per analysis in force: composition [mol %], Zb, molar mass, heating value."""
    s = result.settings
    r = X.section(ws, 1, "Gas analyses in force")
    an = result.analyses
    comps = []
    for a in an:
        g = a.gas
        if g is not None and hasattr(g, "as_dict"):
            for k in g.as_dict():
                if k not in comps:
                    comps.append(k)
    headers = ["Quantity", "Unit"] + [f"Analysis {i + 1}" for i in range(len(an))]
    rows = []

    def when(a):
        if a.effective_from is None:
            return "start of log"
        return pd.Timestamp(a.effective_from).tz_convert(s.timezone).tz_localize(None).to_pydatetime()

    rows.append([f"{V.EFFECTIVE_FROM} (local)", s.timezone] + [when(a) for a in an])
    for c in comps:
        rows.append([c.replace("_", "-"), "mol %"] + [
            100.0 * float(a.gas.as_dict().get(c, 0.0)) if (a.gas is not None and hasattr(a.gas, "as_dict")) else None
            for a in an])
    rows.append(["Zb at base conditions", "-"] + [a.z_base for a in an])
    rows.append(["Molar mass", "g/mol"] + [1000.0 * a.molar_mass for a in an])
    rows.append(["Density at base conditions", "kg/m3"] + [a.density_base for a in an])
    rows.append(["Heating value, gross, at base", du.label("heating_value")] +
                [du.scalar("heating_value", a.heating_value) for a in an])
    rows.append(["Heating value source", ""] + [a.heating_value_source for a in an])
    per = result.analysis_periods
    if len(per):
        vl, el = du.label("volume"), du.label("energy")
        rows.append(["Intervals in force", "-"] + [per["intervals"].get(i) for i in range(len(an))])
        rows.append([V.BASE_VOLUME, f"{vl} at base"] +
                    [du.scalar("volume", per["volume_base"].get(i)) for i in range(len(an))])
        rows.append(["Energy", el] + [du.scalar("energy", per["energy"].get(i)) for i in range(len(an))])
        rows.append(["Ideal-gas error", "%"] + [per["ideal_gas_error_pct"].get(i) for i in range(len(an))])
    X.write_header(ws, r, 1, headers)
    rr = r + 1
    for row in rows:
        for j, v in enumerate(row, start=1):
            c = ws.cell(row=rr, column=j, value=X.cell_value(v))
            c.border = X.CELL_BORDER
            if j > 2 and isinstance(c.value, float):
                c.number_format = X.FMT_Z if row[0].startswith("Zb") else ("#,##0.000" if abs(c.value) >= 1 else "0.0000")
            elif j > 2 and hasattr(c.value, "hour"):
                c.number_format = X.FMT_DATETIME
        rr += 1
    X.set_widths(ws, {1: 32, 2: 12, **{j: 22 for j in range(3, 3 + len(an))}})
    X.wrap_rows(ws, r + 1, rr - 1, range(3, 3 + len(an)))


# ---------------------------------------------------------------------------------------------
def flag_periods(result) -> pd.DataFrame:
    """Contiguous runs of each flag: kind, first and last interval end (UTC), intervals."""
    d = result.intervals
    rows = []
    for c in [c for c in d.columns if c.startswith("flag_")] + (["estimated"] if "estimated" in d else []):
        on = d[c].to_numpy(bool)
        if not on.any():
            continue
        edges = np.diff(np.concatenate([[0], on.astype(np.int8), [0]]))
        for a, b in zip(np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)):
            rows.append({"kind": flag_label(c),
                         "first": d.index[a], "last": d.index[b - 1], "intervals": int(b - a)})
    return pd.DataFrame(rows, columns=["kind", "first", "last", "intervals"])




def _when(text, tz, end=False):
    """A finding's start/end: a gas-day date stays a date; an ISO time becomes local time."""
    t = str(text)
    if len(t) == 10:
        return pd.Timestamp(t).date()
    ts = pd.Timestamp(t)
    if ts.tzinfo is None:
        ts = ts.tz_localize("UTC")
    return ts.tz_convert(tz).tz_localize(None).to_pydatetime()


def write_findings(ws, result, du) -> int:
    s = result.settings
    vl, el = du.label("volume"), du.label("energy")
    r = X.section(ws, 1, f"Ideal-gas error: gas days and periods above {s.ideal_gas_threshold:g} %")
    r = X.note(ws, r, "Where the site or the supplier corrected with Z = 1 (ideal gas), its corrected volume differs "
                      "from the real-gas one by the error shown. Negative impact: Z = 1 gives less volume than real gas. "
                      f"Periods are contiguous runs of intervals above the threshold; times are local ({s.timezone}): "
                      "a period runs from the start of its first interval to the end of its last.", span=8)
    f = result.findings
    headers = ["Rank", "Kind", "From", "To", "Intervals", "Ideal-gas error [%]", f"Volume impact [{vl} at base]",
               f"Energy impact [{el}]"]
    rows = [[x["rank"], x["kind"], _when(x["start"], s.timezone), _when(x["end"], s.timezone, end=True), x["intervals"],
             x["ideal_gas_error_pct"],
             du.scalar("volume", x["volume_impact_m3"]), du.scalar("energy", 1e6 * x["energy_impact_MJ"])
             if x["energy_impact_MJ"] is not None and np.isfinite(x["energy_impact_MJ"]) else None]
            for _, x in f.iterrows()] if len(f) else []
    r = X.write_table(ws, r + 1, 1, headers, rows,
                      [X.FMT_INT, None, X.FMT_DATETIME, X.FMT_DATETIME, X.FMT_INT, X.FMT_PCT, X.FMT_VOLUME, X.FMT_ENERGY])
    for rr in range(r - len(rows), r):
        for cc in (3, 4):
            c = ws.cell(rr, cc)
            if isinstance(c.value, _date) and not isinstance(c.value, _datetime):
                c.number_format = X.FMT_DATE
    if not rows:
        ws.cell(row=r, column=1, value="No gas day or period above the threshold.").font = X.NOTE_FONT
        r += 1
    r = X.section(ws, r + 1, "Quality flags: intervals by kind")
    fl = result.flags
    rows = [[flag_label(k), v, flag_meaning(k)] for k, v in sorted(fl.items()) if k != "estimated"]
    n_est = int(result.intervals["estimated"].sum()) if "estimated" in result.intervals else 0
    rows.append([flag_label("estimated"), n_est, flag_meaning("estimated")])
    r0 = r
    r = X.write_table(ws, r, 1, ["Flag", "Intervals", "Meaning"], rows, [None, X.FMT_INT, None])
    for rr in range(r0, r):
        ws.merge(rr, 3, rr, 7)
    r = X.section(ws, r + 1, f"Flagged periods (interval ends, local time {s.timezone})")
    fp = flag_periods(result)
    rows = [[x["kind"], x["first"].tz_convert(s.timezone).tz_localize(None).to_pydatetime(),
             x["last"].tz_convert(s.timezone).tz_localize(None).to_pydatetime(), x["intervals"]]
            for _, x in fp.iterrows()]
    r = X.write_table(ws, r, 1, ["Flag", "First interval end", "Last interval end", "Intervals"], rows,
                      [None, X.FMT_DATETIME, X.FMT_DATETIME, X.FMT_INT])
    if not rows:
        ws.cell(row=r, column=1, value="No flagged intervals.").font = X.NOTE_FONT
        r += 1
    if result.warnings:
        r = X.section(ws, r + 1, "Warnings of the run")
        for w in result.warnings:
            r = X.note(ws, r, str(w), span=8)
    X.set_widths(ws, {1: 16, 2: 12, 3: 18, 4: 18, 5: 11, 6: 14, 7: 18, 8: 16})
    return r


#: edit record column → (label, kind of quantity for the display unit)
EDIT_WHAT = {"pressure_gauge": ("line pressure, gauge", "pressure_gauge"), "pressure_line": ("line pressure", "pressure"),
             "pressure_atm": ("atmospheric pressure", "pressure"), "temperature_line": ("line temperature", "temperature"),
             "volume_line": ("uncorrected volume", "volume")}


def _edit_value(du, kind, v):
    if v is None or isinstance(v, str) or kind is None:
        return v
    try:
        f = float(v)
    except (TypeError, ValueError):
        return v
    if not np.isfinite(f):
        return None
    return float(du.convert("pressure" if kind == "pressure_gauge" else kind, f))


def _edit_unit(du, kind):
    if kind is None:
        return ""
    if kind == "pressure_gauge":
        return du.label("pressure").replace(" abs", " gauge").replace("psia", "psig")
    return du.label(kind)


def write_edits(ws, result, du=None) -> int:
    du = du or X.DisplayUnits.for_settings(result.settings)
    r = X.section(ws, 1, "Edits: values substituted by the run")
    r = X.note(ws, r, f"Substitution policy: {result.settings.substitution}. Raw values are never overwritten; "
                      "every substituted value is listed here with its original (empty: there was none). Times are "
                      f"interval ends, local time ({result.settings.timezone}).", span=7)
    e = result.edits
    headers = ["Interval end", "What", "Original", "New", "Unit", "Method", "Reason"]
    cols = ["time", "what", "original", "new", "method", "reason"]
    extra = [c for c in e.columns if c not in cols]
    headers += extra
    rows = []
    for _, x in e.iterrows():
        t = x.get("time")
        if isinstance(t, pd.Timestamp):
            t = (t.tz_convert(result.settings.timezone).tz_localize(None) if t.tzinfo else t).to_pydatetime()
        label, kind = EDIT_WHAT.get(str(x.get("what")), (x.get("what"), None))
        rows.append([t, label, _edit_value(du, kind, x.get("original")), _edit_value(du, kind, x.get("new")),
                     _edit_unit(du, kind), x.get("method"), x.get("reason")] + [x.get(c) for c in extra])
    r = X.write_table(ws, r + 1, 1, headers, rows,
                      [X.FMT_DATETIME, None, "#,##0.000", "#,##0.000"] + [None] * (len(headers) - 4))
    if not rows:
        ws.cell(row=r, column=1, value="No values were substituted.").font = X.NOTE_FONT
        r += 1
    X.set_widths(ws, {1: 18, 2: 24, 3: 14, 4: 14, 5: 12, 6: 14, 7: 40})
    return r
