"""The month workbook: one .xlsx per meter-month with an overview, the data sheets and native charts.

Sheets (in order): Overview, Charts, Gas days, Intervals, Analyses, Findings, Edits, Uncertainty,
Invoice check / Corrector check when the run has them, and Source data (what the log reader read
and every problem row it met, with file, sheet, row and column). Values are converted from SI to the
display units of the site file's ``[display_units]`` table at this edge (default kPa absolute,
°C, m3, GJ, MJ/m3, kg); every header names its unit.

The Intervals sheet holds up to :data:`MAX_INTERVAL_ROWS` intervals (200,000: a month at 15 s
intervals; a worksheet could take 1,048,575, but no one reads or prints that many rows, and
writing them would cost about a minute). A longer table stays in the CSV (and Parquet) written
beside the workbook (``interval_csv``), the Intervals sheet and the Overview say so, and the
time-series charts plot gas-day means.

The file is written through :mod:`meterfix.writers.atomic` (temporary file, then rename) with
xlsxwriter (the interval sheet streamed, :mod:`.xlsx_bulk`); the document properties and zip
entries carry fixed times, so the same result gives the same bytes.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd

from .. import __version__
from .. import vocabulary as V
from ..engine.flow_meter import CORIOLIS_METER, ORIFICE_METER
from . import workbook_charts as C
from . import workbook_checks as K
from . import workbook_history as H
from . import workbook_sheets as S
from .settings_view import setting_rows
from . import workbook_source as R
from . import xlsx_common as X
from .atomic import atomic_path
from .summary import CAUTION

#: rows of data a worksheet can hold; the interval table goes to CSV above it (tests lower it)
MAX_INTERVAL_ROWS = 200_000

SHEET_GUIDE = (
    ("Overview", "month totals, method, base conditions, settings and input files"),
    ("Charts", "pressure and temperature, Zb/Zf, daily volumes and ideal-gas error"),
    ("Gas days", "totals by gas day, then the month"),
    ("Intervals", "every interval with its factors and flags"),
    ("Analyses", "the gas analyses in force and what they gave"),
    ("Findings", "ideal-gas error days and periods, quality flags, warnings"),
    ("Edits", "values substituted by the run"),
    ("Uncertainty", "expanded uncertainty and its budget"),
    ("Invoice check", "the supplier's invoice against our month (when given)"),
    ("Corrector check", "the site corrector's volume against ours (when logged)"),
    ("Source data", "the log files as read: how each column was understood, and every unreadable cell, row left "
                    "out or differing duplicate with its file, sheet, row and column"),
    ("History", "this meter's stored months, newest last (when the run keeps a store)"),
)

def _setting_text(v):
    if isinstance(v, (dict, list)):
        return json.dumps(v, sort_keys=True, ensure_ascii=False) if v else ""
    return v


def _long_row(ws, r, label, text):
    """A label and a long text spread over columns B:D, wrapped, with room for its lines."""
    ws.cell(r, 1, label).font = X.LABEL_FONT
    c = ws.cell(r, 2, X.cell_value(text))
    c.alignment = X.TOP_WRAP
    ws.merge(r, 2, r, 4)
    for j in range(1, 5):
        ws.cell(r, j).border = X.CELL_BORDER
    ws.cell(r, 1).alignment = X.TOP
    return r + 1


def _short(v):
    """Floats to 10 significant digits for display (the manifest keeps them exact)."""
    if isinstance(v, float):
        return float(f"{v:.10g}")
    return v


def _meter_kind_rows(ws, r, result, du):
    """The meter kind (orifice, Coriolis, calibration) and the speed-of-sound check on the Overview."""
    fm = result.flow_meter or {}
    if fm.get("kind") == ORIFICE_METER:
        r = _long_row(ws, r, "Meter", f"orifice plate, {fm['standard']}, {fm['taps']} taps, static tap {fm['static_tap']}")
        r = _row(ws, r, "Pipe diameter D", 1000.0 * fm["pipe_diameter_m"], "mm", "0.000",
                 f"at {fm['diameters_at_K'] - 273.15:g} °C")
        r = _row(ws, r, "Bore diameter d", 1000.0 * fm["bore_diameter_m"], "mm", "0.000", f"beta {fm['beta']:.4f}")
        r = _long_row(ws, r, "Density", result.method.get("density") or "")
        av = fm.get("differential_pressure_averaging") or {}
        if av.get("root_mean_column"):
            r = _row(ws, r, "Mean dp instead of mean sqrt(dp)", av.get("mean_dp_error_pct"), "%", X.FMT_PCT,
                     "the log's interval mean of sqrt(dp) is used")
        elif av.get("month_mean_error_pct") is not None:
            r = _row(ws, r, "Month from its mean dp", av["month_mean_error_pct"], "%", X.FMT_PCT,
                     "the log has interval means of dp, not of sqrt(dp): each interval's flow is overstated by "
                     "the dp fluctuation within it")
    elif fm.get("kind") == CORIOLIS_METER:
        r = _long_row(ws, r, "Meter", "Coriolis: base volume = mass / base density (AGA Report No. 11 practice)")
        r = _long_row(ws, r, "Density", result.method.get("density") or "")
    elif fm.get("meter_error_correction_pct") is not None:
        r = _row(ws, r, "Meter error correction", fm["meter_error_correction_pct"], "%", X.FMT_PCT, fm["calibration"])
    sc = result.speed_of_sound_check
    if sc:
        r = _row(ws, r, "Speed of sound beyond threshold", sc["flagged_intervals"], "intervals", X.FMT_INT,
                 f"of {sc['compared_intervals']} compared with {sc['method']}; threshold {sc['threshold_pct']:g} %, "
                 f"largest {sc['largest_deviation_pct']:+.3f} %" if sc.get("largest_deviation_pct") is not None else "")
    return r


def _row(ws, r, label, value, unit="", fmt=None, note=""):
    ws.cell(row=r, column=1, value=label).font = X.LABEL_FONT
    c = ws.cell(row=r, column=2, value=X.cell_value(value))
    if fmt and isinstance(c.value, (int, float)) and not isinstance(c.value, bool):
        c.number_format = fmt
    c.alignment = X.align("right") if isinstance(c.value, (int, float)) else X.align("left")
    ws.cell(row=r, column=3, value=unit)
    if note:
        ws.cell(row=r, column=4, value=X.cell_value(note)).font = X.NOTE_FONT
    for j in range(1, 5):
        ws.cell(row=r, column=j).border = X.CELL_BORDER
    return r + 1


def _month_label(result) -> str:
    months = [str(m) for m in result.months.index]
    return months[0] if len(months) == 1 else (f"{months[0]} to {months[-1]}" if months else "")


def write_overview(ws, result, du, *, interval_csv=None, intervals_in_sheet=True, interval_parquet=None,
                   edits_csv=None) -> dict:
    """The first sheet: what a reader needs before any table. Returns row numbers by label."""
    s = result.settings
    t = result.totals
    at = {}
    ws.cell(row=1, column=1, value=X.cell_value(f"Month report: meter {s.meter}, {_month_label(result)}")).font = \
        X.TITLE_FONT
    ws.cell(row=2, column=1, value=X.cell_value(f"Site: {s.site_name or '(not named)'}    ·    meterfix {__version__}"))
    # the caution, prominent: merged, amber, framed
    ws.cell(row=3, column=1, value="CAUTION").font = X.CAUTION_FONT
    ws.cell(row=3, column=1).fill = X.CAUTION_FILL
    c = ws.cell(row=4, column=1, value=CAUTION)
    c.font = X.CAUTION_FONT
    c.fill = X.CAUTION_FILL
    c.alignment = X.TOP_WRAP
    ws.merge(3, 1, 3, 4)
    ws.merge(4, 1, 7, 4)
    for rr in range(3, 8):
        for cc in range(1, 5):
            ws.cell(row=rr, column=cc).border = X.CAUTION_BORDER
            ws.cell(row=rr, column=cc).fill = X.CAUTION_FILL
    for rr in range(4, 8):
        ws.height(rr, 20)
    at["caution"] = 4

    vl, el, hl, ml = du.label("volume"), du.label("energy"), du.label("heating_value"), du.label("mass")
    r = X.section(ws, 9, "Month totals")
    X.write_header(ws, r, 1, ["Quantity", "Value", "Unit", "Note"], height=None)
    r += 1
    vb, vi = t.get("base_volume_m3"), t.get("ideal_gas_base_volume_m3")
    unc = result.uncertainty
    e_mj = t.get("energy_MJ")
    lines = [
        ("Uncorrected volume", du.scalar("volume", t.get("uncorrected_volume_m3")), f"{vl} at line conditions",
         X.FMT_VOLUME, "sum of the meter's interval volumes"),
        (V.BASE_VOLUME, du.scalar("volume", vb), f"{vl} at base", X.FMT_VOLUME,
         f"Z at line and base from {result.method.get('name')}"),
        (V.BASE_VOLUME_IDEAL, du.scalar("volume", vi), f"{vl} at base", X.FMT_VOLUME,
         "what a corrector set to ideal gas gives"),
        ("Difference, ideal − real", du.scalar("volume", (vi - vb) if vb is not None and vi is not None else None),
         f"{vl} at base", X.FMT_VOLUME, ""),
        ("Ideal-gas error", t.get("ideal_gas_error_pct"), "%", X.FMT_PCT, "100 (ideal / real − 1)"),
        ("Mass", du.scalar("mass", t.get("mass_kg")), ml, X.FMT_VOLUME, ""),
        ("Energy, gross", du.scalar("energy", None if e_mj is None else e_mj * 1e6), el, X.FMT_ENERGY,
         f"combustion reference {s.combustion_temperature - 273.15:g} °C"),
        ("Mean heating value, gross", du.scalar("heating_value", e_mj * 1e6 / vb) if (e_mj and vb) else None,
         f"{hl} at base", X.FMT_HV, "energy / base volume"),
        ("Expanded uncertainty, base volume", unc.expanded_pct if unc is not None else None, "%",
         X.FMT_PCT, f"k = {unc.coverage_factor:g}" if unc is not None else "not computed"),
        ("Expanded uncertainty, energy", unc.expanded_energy_pct if unc is not None else None, "%",
         X.FMT_PCT, "" if unc is not None else "not computed"),
        ("Intervals", t.get("intervals"), "", X.FMT_INT, ""),
        ("Flagged intervals", int(result.intervals["flagged"].sum()) if "flagged" in result.intervals else None, "",
         X.FMT_INT, "see Findings"),
        ("Intervals without result (volume but no base volume)", t.get("intervals_without_result"), "", X.FMT_INT, ""),
        ("Uncorrected volume of the intervals without result", du.scalar("volume", t.get("uncorrected_volume_without_result_m3")),
         f"{vl} at line conditions", X.FMT_VOLUME, "not in the corrected totals"),
        ("Estimated share of base volume", t.get("estimated_volume_share_pct"), "%", X.FMT_PCT2, "see Edits"),
    ]
    for label, value, unit, fmt, note in lines:
        at[label] = r
        r = _row(ws, r, label, value, unit, fmt, note)

    avg = result.average_correction or {}
    if any(k in avg for k in ("time_weighted", "volume_weighted")):
        r = X.section(ws, r + 1, "Correction from month-average pressure and temperature (for comparison)")
        for key, text in (("time_weighted", "time-weighted"), ("volume_weighted", "volume-weighted")):
            if key in avg:
                a = avg[key]
                at[f"average {key}"] = r
                r = _row(ws, r, f"{V.BASE_VOLUME}, {text} averages", du.scalar("volume", a.get("base_volume_m3")),
                         f"{vl} at base", X.FMT_VOLUME,
                         f"error {a.get('error_pct', float('nan')):+.3f} % against interval by interval")

    r = X.section(ws, r + 1, "Method and base conditions")
    m = result.method
    r = _row(ws, r, "Z method", m.get("name"))
    r = _long_row(ws, r, "Edition", m.get("edition"))
    r = _long_row(ws, r, "Range of the method", m.get("range"))
    r = _long_row(ws, r, "Atmospheric pressure", m.get("atmospheric_pressure_source") or "")
    at["base pressure"] = r
    r = _row(ws, r, "Base pressure", du.scalar("pressure", s.base_pressure), du.label("pressure"), "#,##0.000",
             s.base or "")
    at["base temperature"] = r
    r = _row(ws, r, "Base temperature", du.scalar("temperature", s.base_temperature), du.label("temperature"), "0.00")
    r = _long_row(ws, r, "Energy standard", m.get("energy_standard") or "")
    r = _row(ws, r, "Combustion reference temperature", s.combustion_temperature - 273.15, "°C", "0.00")
    r = _row(ws, r, "Gas day", f"starts {s.gas_day_start:02d}:00 local time", s.timezone)
    gm = result.gas_month
    if gm:
        left = gm["intervals_before_month"] + gm["intervals_after_month"]
        r = _long_row(ws, r, V.GAS_MONTH, f"{gm['month']}: {gm['hours_logged']:g} of {gm['hours_in_month']:g} hours "
                      f"logged ({gm['coverage_pct']:.4g} %)" + (f"; {left} interval(s) outside it left out" if left else ""))
    r = _meter_kind_rows(ws, r, result, du)
    if result.reconciliation is not None:
        rt = result.reconciliation.totals
        pct = rt.get("energy_difference_pct") if rt.get("compared_on") == "energy" else rt.get("volume_difference_pct")
        r = _row(ws, r, V.INVOICE_MINUS_OURS, pct, "%", X.FMT_PCT, f"on {rt.get('compared_on')}; see Invoice check")
    if result.corrector_check is not None:
        cc = result.corrector_check
        best = cc.best
        r = _row(ws, r, "Site corrector − ours", cc.size_pct, "%", X.FMT_PCT,
                 ("likely: " + K._cause_text(best["cause"])) if best else "no misconfiguration found")
    csv_text = "the interval table also as CSV, SI units in the column names" if interval_csv else ""
    if not intervals_in_sheet:
        csv_text = "too many intervals for a sheet: the interval table is in this file"
    if csv_text:
        at["interval file"] = r
        r = _row(ws, r, "Interval table file", interval_csv, "", None, csv_text)
    if interval_parquet:
        at["interval parquet"] = r
        r = _row(ws, r, "Interval table, Parquet", interval_parquet, "", None,
                 "the same table for data tools (time as a UTC timestamp, full precision)")
    if edits_csv:
        at["edits file"] = r
        r = _row(ws, r, "Edit record file", edits_csv, "", None, "every substituted value, SI units (see Edits)")

    r = X.section(ws, r + 1, "Input files")
    recs = [rec for rec in (result.inputs or []) if isinstance(rec, dict)]
    if recs:
        X.write_header(ws, r, 1, ["File", "Role and how it was read", "sha256", ""], height=None)
        ws.merge(r, 3, r, 4)
        at["inputs"] = r + 1
        r += 1
        for rec in recs:
            details = "; ".join(f"{k.replace('_', ' ')} {_setting_text(v)!s}" for k, v in rec.items()
                                if k not in ("file", "role", "sha256") and v not in (None, ""))
            ws.cell(row=r, column=1, value=X.cell_value(rec.get("file")))
            ws.cell(row=r, column=2, value=X.cell_value(str(rec.get("role", "")) + (f" ({details})" if details else "")))
            ws.cell(row=r, column=3, value=X.cell_value(rec.get("sha256")))
            ws.merge(r, 3, r, 4)
            for j in range(1, 5):
                ws.cell(row=r, column=j).border = X.CELL_BORDER
            r += 1
        first_input = at["inputs"]
    else:
        ws.cell(row=r, column=1, value="No input files (data given in memory).").font = X.NOTE_FONT
        r += 1
        first_input = None

    r = X.section(ws, r + 1, "Settings of this run (site-file names, display units; the manifest keeps SI)")
    rows = setting_rows(s, X.DisplayUnits.for_settings(s))
    at["settings"] = r + 1
    r = X.write_table(ws, r, 1, ["Setting", "Value", "Unit", "Source"], rows)
    settings_rows = (at["settings"], r - 1)
    if result.warnings:
        r = X.section(ws, r + 1, "Warnings")
        for w in result.warnings:
            r = X.note(ws, r, w, span=4)
    r = X.section(ws, r + 1, "Sheets of this workbook")
    present = set(ws.book.sheetnames)
    for name, text in SHEET_GUIDE:
        if name in present:
            r = _long_row(ws, r, name, text)
    X.set_widths(ws, {1: 44, 2: 34, 3: 22, 4: 60})
    if first_input is not None:
        X.wrap_rows(ws, first_input, first_input + len(recs) - 1, [1, 2])
    X.wrap_rows(ws, *settings_rows, [2])
    return at


# ---------------------------------------------------------------------------------------------
def time_span(result, daily=False):
    """(first, last) local datetime of the month, for the time axes of the charts."""
    d = result.intervals
    s = result.settings
    if daily:
        days = [pd.Timestamp(x) for x in result.gas_days.index]
        return (days[0].to_pydatetime(), (days[-1] + pd.Timedelta(days=1)).to_pydatetime()) if days else None
    if not len(d):
        return None
    first = d.index[0] - pd.Timedelta(seconds=float(np.nan_to_num(d["duration"].iat[0])))
    local = pd.DatetimeIndex([first, d.index[-1]]).tz_convert(s.timezone).tz_localize(None)
    return local[0].to_pydatetime(), local[1].to_pydatetime()


def build_workbook(result, *, interval_csv=None, max_rows=None, interval_parquet=None, edits_csv=None):
    """The month workbook laid out as an :class:`~.xlsx_common.Book` (not saved), and where things are."""
    max_rows = MAX_INTERVAL_ROWS if max_rows is None else max_rows
    du = X.DisplayUnits.for_settings(result.settings)
    wb = X.Book(title=f"meterfix month report {result.settings.meter} {_month_label(result)}",
                subject="gas volumes and energy at contract base conditions")
    ov = wb.create_sheet("Overview")
    charts = wb.create_sheet("Charts")
    gd_ws = wb.create_sheet("Gas days")
    iv_ws = wb.create_sheet("Intervals")
    an_ws = wb.create_sheet("Analyses")
    fi_ws = wb.create_sheet("Findings")
    ed_ws = wb.create_sheet("Edits")
    un_ws = wb.create_sheet("Uncertainty")
    layout = {}
    iv_block = S.write_intervals(iv_ws, result, du, interval_csv=interval_csv, max_rows=max_rows)
    gd_block = S.write_gas_days(gd_ws, result, du)
    layout["intervals"] = iv_block
    layout["gas_days"] = gd_block
    S.write_analyses(an_ws, result, du)
    S.write_findings(fi_ws, result, du)
    S.write_edits(ed_ws, result, du)
    layout["uncertainty"] = K.write_uncertainty(un_ws, result)
    if result.reconciliation is not None:
        layout["invoice"] = K.write_invoice(wb.create_sheet("Invoice check"), result, du)
    if result.corrector_check is not None:
        K.write_corrector(wb.create_sheet("Corrector check"), result, du, iv_ws, iv_block,
                          span=time_span(result))
    layout["source"] = R.write_source_data(wb.create_sheet("Source data"), result)
    history = result.history
    if history is not None and len(history):
        layout["history"] = H.write_history(wb.create_sheet("History"), result, history)
    layout["overview"] = write_overview(ov, result, du, interval_csv=interval_csv,
                                        intervals_in_sheet=iv_block is not None, interval_parquet=interval_parquet,
                                        edits_csv=edits_csv)

    # the month's charts on one sheet, two to a printed page
    r = X.section(charts, 1, f"Meter {result.settings.meter}, {_month_label(result)}")
    daily = iv_block is None
    src_ws, src_block = (gd_ws, gd_block) if daily else (iv_ws, iv_block)
    span = time_span(result, daily=daily)
    x_title = f"Gas day ({_month_label(result)}, starting {result.settings.gas_day_start:02d}:00 local time, {result.settings.timezone})"
    step = 16
    if gd_block.rows:
        days_err = list(result.gas_days["ideal_gas_error_pct"].astype(float))
        made = [C.pressure_temperature_chart(src_ws, src_block, du, daily=daily, span=span, clock=result.settings.timezone),
                C.z_ratio_chart(src_ws, src_block, daily=daily, span=span, clock=result.settings.timezone),
                C.daily_volume_chart(gd_ws, gd_block, du, x_title),
                C.daily_error_chart(gd_ws, gd_block, days_err, x_title)]
        for i, ch in enumerate(made):
            ch.height = 7.5
            C.place(charts, ch, f"A{r + 1 + i * step}")
            if i % 2 == 1:
                charts.row_breaks.append(r + (i + 1) * step - 1)
    charts.repeat_rows = (1, 1)
    layout["span"] = span
    return wb, layout


def write_workbook(result, path, *, overwrite: bool = False, interval_csv=None, max_rows=None,
                   interval_parquet=None, edits_csv=None):
    """Write the month workbook atomically; returns the path.

    Parameters
    ----------
    result : MonthResult
    path : path of the .xlsx
    overwrite : bool          replace an existing file (never an input)
    interval_csv : str, optional
        Name of the interval CSV written beside the workbook; named on the Overview, and where
        the interval table is when it does not fit in a worksheet.
    max_rows : int, optional  the row limit of the interval sheet (default MAX_INTERVAL_ROWS)
    interval_parquet : str, optional  name of the interval Parquet file beside it (when written)
    edits_csv : str, optional         name of the edit record CSV beside it
    """
    wb, _ = build_workbook(result, interval_csv=interval_csv, max_rows=max_rows,
                           interval_parquet=interval_parquet, edits_csv=edits_csv)
    with atomic_path(path, overwrite=overwrite) as tmp:
        wb.save(tmp)
    return Path(path)

