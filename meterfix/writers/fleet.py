"""The fleet table: one row per meter, as CSV, JSON, a print-ready workbook and Parquet.

A row is built from the meter's JSON summary (the same fixed keys every month run writes), so the
fleet table says exactly what each meter's own outputs say. Files in the fleet's output folder:

- ``fleet_summary.csv``     SI values, the unit in every column name; deterministic bytes
- ``fleet_summary.parquet`` the same table, when pyarrow is installed
- ``fleet_summary.xlsx``    the same rows for people: totals in display units, fit to one page
                            wide, landscape, the header row repeated on every printed page,
                            fixed document properties so the same fleet gives the same bytes
- ``fleet_summary.json``    the same rows as a list (SI), written last: its presence marks a
                            complete set

Meters retried after their worker was lost have ``attempts`` > 1; meters without a result have
``status`` 'error' (bad input or settings: ``error`` names the file and the fix) or 'failed' (the
worker running them was lost every time).

The workbook is written with xlsxwriter directly (no formulas: every figure is a value, so a
viewer that does not recalculate shows the same numbers).
"""

from __future__ import annotations

import datetime as _dt
import io
import json
import math
from pathlib import Path

from .. import vocabulary as V
from ..vocabulary import flags_breakdown
from .atomic import check_target, neutralise_cell, write_bytes, write_text
from .summary import CAUTION, _clean

#: columns of the fleet table (CSV, Parquet, JSON rows), in order: SI, the unit in the name
FLEET_COLUMNS = (
    "meter_folder", "meter", "site", "status", "period_start", "period_end", "method",
    "base_preset", "base_pressure_Pa", "base_temperature_K", "gas_month", "combustion_temperature_K",
    "intervals", "flagged_intervals", "intervals_without_result", "estimated_volume_share_pct",
    "uncorrected_volume_m3", "base_volume_m3", "ideal_gas_base_volume_m3", "ideal_gas_error_pct", "energy_MJ",
    "expanded_uncertainty_pct", "expanded_energy_uncertainty_pct", "monte_carlo_check", "monte_carlo_draws",
    "invoice_compared_on", "invoice_difference_pct", "invoice_volume_difference_m3", "invoice_energy_difference_MJ",
    "invoice_exceeds_tolerance", "invoice_exceeds_uncertainty", "invoice_explained_by",
    "corrector_difference_pct", "corrector_finding",
    "flags", "notes", "attempts", "outputs", "error",
)

#: fleet-wide fixed document properties (repeatable bytes)
_FIXED_TIME = _dt.datetime(2000, 1, 1, 0, 0, 0)

_DEFAULT_UNITS = {"volume": "m3", "energy": "GJ", "pressure": "kPa", "temperature": "degC"}


# ---------------------------------------------------------------------------------------------
# rows
def _finite(v) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)


def _pct_text(v) -> str:
    return f"{v:+.3g} %" if _finite(v) else "-"


def invoice_explanation(invoice: dict) -> str:
    """What explains the invoice difference, largest first, as percent of our figure on the basis
    the invoice was compared on: 'fixed atmospheric pressure +0.08 %; not explained +1.22 %'."""
    totals = invoice.get("totals") or {}
    energy = totals.get("compared_on") == "energy"
    key, ours = ("energy_MJ", totals.get("energy_ours_MJ")) if energy else ("volume_m3", totals.get("volume_ours_m3"))
    if not _finite(ours) or not ours:
        return ""
    steps = [s for s in invoice.get("attribution") or []
             if s.get("kind") == "step" and s.get("applied") and _finite(s.get(key)) and s.get(key)]
    steps.sort(key=lambda s: -abs(s[key]))
    parts = []
    for s in steps:
        name = str(s.get("step"))
        if s.get("status") == "restatement":
            name = f"restated to the invoice's {name}"
        parts.append(f"{name} {100.0 * s[key] / ours:+.3g} %")
    return "; ".join(parts) if parts else "nothing: no difference to explain"


def corrector_finding(check: dict) -> str:
    """The site corrector's finding in words: the cause the evidence names, or that none was found."""
    findings = check.get("findings") or []
    if findings:
        best = findings[0]
        causes = best.get("description") or best.get("cause") or check.get("best") or "?"
        below = ", below the threshold" if best.get("material") is False else ""
        return f"{causes} ({_pct_text(best.get('size_pct'))} of the month{below})"
    return "tried, none found above the threshold" if check else ""


def _flags_text(flags: dict) -> str:
    return flags_breakdown(flags)


def fleet_row(meter_folder: str, summary: dict, written: dict | None = None, out_dir=None) -> dict:
    """The fleet-table row of one meter, from its JSON summary dict (SI)."""
    t = summary.get("totals") or {}
    base = summary.get("base_conditions") or {}
    unc = summary.get("uncertainty") or {}
    mc = unc.get("monte_carlo") or {}
    days = [d.get("gas_day") for d in summary.get("gas_days") or []]
    inv = summary.get("invoice")
    cc = summary.get("corrector_check")
    flags = summary.get("flags") or {}
    row = dict.fromkeys(FLEET_COLUMNS)
    gm = summary.get("gas_month") or {}
    months = sorted({str(d)[:7] for d in days if d})
    gas_month = gm.get("month") or (months[0] if len(months) == 1 else f"{months[0]}_to_{months[-1]}" if months else None)
    row.update({
        "gas_month": gas_month, "combustion_temperature_K": summary.get("combustion_reference_temperature_K"),
        "meter_folder": meter_folder, "meter": summary.get("meter"), "site": summary.get("site") or "",
        "status": "ok", "period_start": days[0] if days else None, "period_end": days[-1] if days else None,
        "method": (summary.get("method") or {}).get("name"),
        "base_preset": base.get("preset") or "", "base_pressure_Pa": base.get("pressure_Pa"),
        "base_temperature_K": base.get("temperature_K"),
        "intervals": t.get("intervals"), "flagged_intervals": t.get("flagged_intervals"),
        "intervals_without_result": t.get("intervals_without_result"),
        "estimated_volume_share_pct": t.get("estimated_volume_share_pct"),
        "uncorrected_volume_m3": t.get("uncorrected_volume_m3"), "base_volume_m3": t.get("base_volume_m3"),
        "ideal_gas_base_volume_m3": t.get("ideal_gas_base_volume_m3"),
        "ideal_gas_error_pct": t.get("ideal_gas_error_pct"), "energy_MJ": t.get("energy_MJ"),
        "expanded_uncertainty_pct": t.get("expanded_uncertainty_pct"),
        "expanded_energy_uncertainty_pct": unc.get("expanded_energy_pct"),
        "monte_carlo_check": mc.get("validation"), "monte_carlo_draws": mc.get("draws"),
        "flags": _flags_text(flags), "notes": "; ".join(summary.get("warnings") or []), "attempts": 1, "error": "",
    })
    if inv:
        it = inv.get("totals") or {}
        on = it.get("compared_on") or "volume"
        row.update({
            "invoice_compared_on": on,
            "invoice_difference_pct": it.get("energy_difference_pct" if on == "energy" else "volume_difference_pct"),
            "invoice_volume_difference_m3": it.get("volume_difference_m3"),
            "invoice_energy_difference_MJ": it.get("energy_difference_MJ"),
            "invoice_exceeds_tolerance": it.get("exceeds_tolerance"),
            "invoice_exceeds_uncertainty": it.get("exceeds_uncertainty"),
            "invoice_explained_by": invoice_explanation(inv),
        })
    if cc:
        row.update({"corrector_difference_pct": cc.get("size_pct"), "corrector_finding": corrector_finding(cc)})
    if written and written.get("summary") is not None:
        folder = Path(written["summary"]).parent
        row["outputs"] = folder.name if out_dir is None else _relative(folder, out_dir)
    return row


#: the totals of a fleet table: volumes and energy of corrected meters (SI)
TOTAL_COLUMNS = ("uncorrected_volume_m3", "base_volume_m3", "ideal_gas_base_volume_m3", "energy_MJ")


def _group_key(row: dict) -> tuple:
    def r(v):
        return round(float(v), 6) if _finite(v) else None
    return (r(row.get("base_pressure_Pa")), r(row.get("base_temperature_K")), row.get("gas_month"),
            r(row.get("combustion_temperature_K")))


def fleet_totals(rows) -> list[dict]:
    """Totals of the corrected meters, one per group of the same base conditions, gas month and
    energy reference (combustion temperature): volumes at different base conditions or of
    different months are never added. Groups in the order their first meter appears.

    Returns a list of dicts: base_pressure_Pa, base_temperature_K, base_preset, gas_month,
    combustion_temperature_K, meters (count), meter_folders, and each of TOTAL_COLUMNS (None when a
    meter of the group lacks that value).
    """
    groups: dict = {}
    for r in rows:
        if r.get("status") != "ok":
            continue
        groups.setdefault(_group_key(r), []).append(r)
    out = []
    for (pb, tb, month, tc), members in groups.items():
        g = {"base_pressure_Pa": pb, "base_temperature_K": tb, "base_preset": members[0].get("base_preset") or "",
             "gas_month": month, "combustion_temperature_K": tc, "meters": len(members),
             "meter_folders": [m.get("meter_folder") for m in members]}
        for c in TOTAL_COLUMNS:
            vals = [m.get(c) for m in members]
            g[c] = math.fsum(vals) if vals and all(_finite(v) for v in vals) else None
        out.append(g)
    return out


def _relative(folder: Path, out_dir) -> str:
    try:
        return Path(folder).resolve().relative_to(Path(out_dir).resolve()).as_posix()
    except ValueError:
        return str(folder)


def error_row(meter_folder: str, message: str, *, status: str = "error", attempts: int = 1) -> dict:
    """The row of a meter that gave no result: the message names the file and the fix."""
    row = dict.fromkeys(FLEET_COLUMNS)
    row.update({"meter_folder": meter_folder, "status": status, "error": message, "attempts": attempts,
                "flags": "", "notes": "", "outputs": ""})
    return row


# ---------------------------------------------------------------------------------------------
# files
def fleet_frame(rows):
    """The fleet table as a DataFrame: FLEET_COLUMNS in order, one row per meter."""
    import pandas as pd

    return pd.DataFrame([{c: r.get(c) for c in FLEET_COLUMNS} for r in rows], columns=list(FLEET_COLUMNS))


def fleet_csv_bytes(rows) -> bytes:
    """The fleet table as CSV bytes (SI, units in the headers; formula-like text neutralised)."""
    df = fleet_frame(rows)
    for c in df.columns:
        if df[c].dtype == object:
            df[c] = df[c].map(neutralise_cell)
    buf = io.StringIO()
    df.to_csv(buf, index=False, lineterminator="\n", float_format="%.10g")
    return buf.getvalue().encode("utf-8")


def fleet_parquet_bytes(rows) -> bytes:
    import pyarrow as pa
    import pyarrow.parquet as pq

    df = fleet_frame(rows)
    for c in df.columns:
        if df[c].dtype == object:
            df[c] = df[c].map(neutralise_cell)
    table = pa.Table.from_pandas(df, preserve_index=False)
    buf = io.BytesIO()
    pq.write_table(table, buf)
    return buf.getvalue()


def fleet_targets(out_dir) -> dict:
    """kind → path of the fleet files (Parquet only when pyarrow imports)."""
    from .tables import parquet_available

    out = Path(out_dir)
    targets = {"csv": out / "fleet_summary.csv", "workbook": out / "fleet_summary.xlsx",
               "json": out / "fleet_summary.json"}
    if parquet_available():
        targets["parquet"] = out / "fleet_summary.parquet"
    return targets


def check_fleet_targets(out_dir, *, overwrite: bool = False) -> dict:
    """Refuse existing fleet files (without ``overwrite``) before any meter is run."""
    targets = fleet_targets(out_dir)
    for p in targets.values():
        check_target(p, overwrite=overwrite)
    return targets


def write_fleet_outputs(rows, out_dir, *, overwrite: bool = False, run: dict | None = None) -> dict:
    """Write the fleet table (CSV, Parquet when available, workbook) and the JSON last.

    ``run`` describes the fleet run for the workbook's notes: ``runner`` ('local
    processes' or 'Dask cluster at ...'), ``workers``, ``workbooks`` and ``retried`` / ``failed``
    (meter folders). Every file is built in memory first and written atomically.
    """
    targets = check_fleet_targets(out_dir, overwrite=overwrite)
    run = dict(run or {})
    csv = fleet_csv_bytes(rows)
    xlsx = fleet_workbook_bytes(rows, run)
    pq = fleet_parquet_bytes(rows) if "parquet" in targets else None
    doc = [{k: r.get(k) for k in FLEET_COLUMNS} for r in rows]
    Path(out_dir).mkdir(parents=True, exist_ok=True)
    written = {"csv": write_bytes(targets["csv"], csv, overwrite=overwrite)}
    if pq is not None:
        written["parquet"] = write_bytes(targets["parquet"], pq, overwrite=overwrite)
    written["workbook"] = write_bytes(targets["workbook"], xlsx, overwrite=overwrite)
    written["json"] = write_text(targets["json"], json.dumps(_clean(doc), indent=2, sort_keys=True, allow_nan=False) + "\n",
                                 overwrite=overwrite)
    return written


# ---------------------------------------------------------------------------------------------
# the workbook
def _display_units(rows) -> dict:
    """kind → Unit: the display units every corrected meter's site file agrees on, else the defaults."""
    from ..units import parse_unit

    names = dict(_DEFAULT_UNITS)
    chosen = {tuple(sorted((r.get("_display_units") or {}).items())) for r in rows if r.get("status") == "ok"}
    if len(chosen) == 1:
        for k, v in dict(next(iter(chosen))).items():
            if k in names:
                names[k] = str(v)
    units = {}
    for kind, name in names.items():
        try:
            u = parse_unit(name, kind)
            if kind == "pressure" and u.reference == "gauge":
                raise ValueError
        except Exception:  # a unit a meter's own writer refuses: the default here
            u = parse_unit(_DEFAULT_UNITS[kind], kind)
            name = _DEFAULT_UNITS[kind]
        units[kind] = (u, name)
    return units


def _label(kind: str, name: str) -> str:
    if kind == "temperature":
        return {"degC": "°C", "degF": "°F", "degR": "°R"}.get(name, name)
    if kind == "pressure":
        return "psia" if name.lower() in ("psi", "psia") else f"{name.rstrip('a') if name.endswith(('bara', 'kPaa')) else name} abs"
    return name


def _columns(units) -> list:
    """(header, row key or callable, kind, number format, width cap) of the Meters sheet."""
    def conv(kind, key, scale=1.0):
        u = units[kind][0]

        def f(r):
            v = r.get(key)
            return float(u.from_si(v * scale)) if _finite(v) else None
        return f

    vol, en = _label("volume", units["volume"][1]), _label("energy", units["energy"][1])
    pr, te = _label("pressure", units["pressure"][1]), _label("temperature", units["temperature"][1])
    return [
        ("Meter folder", "meter_folder", "text", None, 28),
        ("Meter", "meter", "text", None, 24),
        ("Site", "site", "text", None, 24),
        ("Status", "status", "text", None, 10),
        ("First gas day", "period_start", "text", None, 12),
        ("Last gas day", "period_end", "text", None, 12),
        ("Z method", "method", "text", None, 14),
        ("Base preset", "base_preset", "text", None, 14),
        (V.GAS_MONTH, "gas_month", "text", None, 12),
        (f"Base pressure [{pr}]", conv("pressure", "base_pressure_Pa"), "num", "#,##0.000", 14),
        (f"Base temperature [{te}]", conv("temperature", "base_temperature_K"), "num", "0.00", 14),
        ("Intervals", "intervals", "num", "#,##0", 10),
        ("Intervals without result", "intervals_without_result", "num", "#,##0", 12),
        ("Estimated share of volume [%]", "estimated_volume_share_pct", "num", "0.00", 12),
        (f"Uncorrected volume [{vol} at line conditions]", conv("volume", "uncorrected_volume_m3"), "num", "#,##0", 16),
        (f"Base volume [{vol} at base]", conv("volume", "base_volume_m3"), "num", "#,##0", 16),
        (f"Base volume, ideal gas (Z = 1) [{vol} at base]", conv("volume", "ideal_gas_base_volume_m3"), "num", "#,##0", 16),
        ("Ideal-gas error [%]", "ideal_gas_error_pct", "num", "0.000", 11),
        (f"Energy [{en}]", conv("energy", "energy_MJ", 1e6), "num", "#,##0.0", 16),
        ("Expanded uncertainty, volume, k = 2 [%]", "expanded_uncertainty_pct", "num", "0.000", 13),
        ("Monte Carlo check of it", "monte_carlo_check", "text", None, 14),
        ("Invoice compared on", "invoice_compared_on", "text", None, 10),
        ("Invoice − ours [%]", "invoice_difference_pct", "num", "0.000", 11),
        ("Invoice difference explained by", "invoice_explained_by", "wrap", None, 40),
        ("Site corrector − ours [%]", "corrector_difference_pct", "num", "0.000", 11),
        ("Site corrector finding", "corrector_finding", "wrap", None, 36),
        ("Flags (intervals)", "flags", "wrap", None, 30),
        ("Notes and errors", lambda r: "; ".join(x for x in (r.get("error"), r.get("notes")) if x), "wrap", None, 48),
        ("Attempts", "attempts", "num", "0", 9),
        ("Outputs folder", "outputs", "text", None, 24),
    ]


def fleet_workbook_bytes(rows, run: dict | None = None) -> bytes:
    """The fleet workbook as bytes: sheets 'Meters' (one row per meter) and 'Notes'."""
    import xlsxwriter

    run = run or {}
    units = _display_units(rows)
    cols = _columns(units)
    buf = io.BytesIO()
    wb = xlsxwriter.Workbook(buf, {"in_memory": True, "strings_to_formulas": False, "strings_to_urls": False,
                                   "nan_inf_to_errors": False})
    wb.set_properties({"title": "meterfix fleet summary", "author": "meterfix", "created": _FIXED_TIME,
                       "comments": "Results support review and invoice queries; not an approved conversion device."})
    wb.set_custom_property("meterfix", "fleet summary")
    bold = wb.add_format({"bold": True})
    title = wb.add_format({"bold": True, "font_size": 13})
    head = wb.add_format({"bold": True, "text_wrap": True, "valign": "top", "bg_color": "#DCE6F0", "border": 1})
    wrap = wb.add_format({"text_wrap": True, "valign": "top"})
    top = wb.add_format({"valign": "top"})
    err = wb.add_format({"valign": "top", "font_color": "#9C0006", "bold": True})
    nums = {}

    def numfmt(f, bold_=False):
        key = (f, bold_)
        if key not in nums:
            nums[key] = wb.add_format({"num_format": f, "valign": "top", "bold": bold_})
        return nums[key]

    ws = wb.add_worksheet("Meters")
    ok = [r for r in rows if r.get("status") == "ok"]
    failed = len(rows) - len(ok)
    ws.write(0, 0, f"meterfix fleet: {len(rows)} meter(s), {len(ok)} corrected, {failed} without a result", title)
    ws.write(1, 0, neutralise_cell(CAUTION))
    header_row = 3
    widths = []
    for j, (name, _key, kind, fmt, cap) in enumerate(cols):
        ws.write(header_row, j, name, head)
        widths.append(min(cap, max(8, max(len(w) for w in name.split()) + 2)))
    for i, r in enumerate(rows, start=header_row + 1):
        for j, (_name, key, kind, fmt, cap) in enumerate(cols):
            v = key(r) if callable(key) else r.get(key)
            if v is None or v == "" or (isinstance(v, float) and not math.isfinite(v)):
                continue
            if kind == "num" and _finite(v):
                ws.write_number(i, j, v, numfmt(fmt))
                text = format(v, ",.3f") if fmt and "." in fmt else format(v, ",.0f")
            else:
                text = str(v)
                f = err if key == "status" and v != "ok" else (wrap if kind == "wrap" else top)
                ws.write_string(i, j, neutralise_cell(text), f)
            widths[j] = max(widths[j], min(cap, len(text) + 2))
    last = header_row + len(rows)
    # fleet totals of the corrected meters (values, not formulas: the same in every viewer), one per
    # group of the same base conditions, gas month and energy reference: never a sum across them
    groups = fleet_totals(rows)
    trow = last + 2
    if len(groups) > 1:
        ws.write_string(trow, 0, f"The corrected meters are at different base conditions, gas months or energy "
                                 f"references: {len(groups)} totals, one per group; volumes of different groups "
                                 "are not added.", bold)
        trow += 1
    pr_u, te_u = units["pressure"][0], units["temperature"][0]
    pr_l, te_l = _label("pressure", units["pressure"][1]), _label("temperature", units["temperature"][1])
    for g in groups:
        base = (f"{pr_u.from_si(g['base_pressure_Pa']):.6g} {pr_l}, {te_u.from_si(g['base_temperature_K']):.6g} {te_l}"
                if _finite(g["base_pressure_Pa"]) and _finite(g["base_temperature_K"]) else "base unknown")
        comb = (f", combustion {g['combustion_temperature_K'] - 273.15:g} °C"
                if _finite(g["combustion_temperature_K"]) else "")
        ws.write_string(trow, 0, neutralise_cell(f"Total of the {g['meters']} corrected meter(s) at {base}, gas month "
                                                 f"{g['gas_month'] or '?'}{comb}"), bold)
        members = [r for r in rows if r.get("status") == "ok" and r.get("meter_folder") in g["meter_folders"]]
        for j, (name, key, kind, fmt, cap) in enumerate(cols):
            if kind == "num" and callable(key) and ("volume" in name.lower() or name.startswith("Energy")):
                vals = [key(r) for r in members]
                if vals and all(_finite(v) for v in vals):
                    total = math.fsum(vals)
                    ws.write_number(trow, j, total, numfmt(fmt, True))
                    widths[j] = max(widths[j], min(cap + 4, len(format(total, ",.0f")) + 3))
        trow += 1
    for j, w in enumerate(widths):
        ws.set_column(j, j, w)
    ws.set_row(header_row, 45)
    ws.freeze_panes(header_row + 1, 2)
    ws.autofilter(header_row, 0, max(last, header_row), len(cols) - 1)
    ws.set_landscape()
    ws.set_paper(9)  # A4; fit to one page wide whatever the paper
    ws.fit_to_pages(1, 0)
    ws.repeat_rows(header_row)
    ws.set_margins(left=0.4, right=0.4, top=0.5, bottom=0.6)
    ws.set_footer("&L&8meterfix fleet summary&R&8page &P of &N")
    ws.print_area(0, 0, max(trow, header_row + 1), len(cols) - 1)

    notes = wb.add_worksheet("Notes")
    lines = [("meterfix fleet summary", title), ("", None), (CAUTION, wrap), ("", None)]
    lines.append((f"Runner: {run.get('runner', 'local processes')}", None))
    if run.get("workers"):
        lines.append((f"Workers: {run['workers']}", None))
    lines.append((f"Per-meter workbooks: {'written' if run.get('workbooks') else 'not written (--workbooks writes them)'}", None))
    if run.get("uncertainty"):
        lines.append((f"Uncertainty: {run['uncertainty']}", wrap))
    retried = run.get("retried") or []
    lines.append(("Meters retried after a worker was lost: " + (", ".join(retried) if retried else "none"), wrap))
    failed_ = [r["meter_folder"] for r in rows if r.get("status") != "ok"]
    lines.append(("Meters without a result: " + (", ".join(failed_) if failed_ else "none"), wrap))
    lines += [("", None), ("Units", bold),
              (f"Volumes in {units['volume'][1]}, energy in {units['energy'][1]}, base pressure in "
               f"{_label('pressure', units['pressure'][1])}, base temperature in "
               f"{_label('temperature', units['temperature'][1])} (the site files' [display_units] when every "
               "meter gives the same, else these defaults). fleet_summary.csv holds the same rows in SI, the "
               "unit in each column name.", wrap),
              ("", None), ("Columns", bold),
              ("Base volume: the month at the contract's base conditions with the meter's Z method; "
               "ideal gas: the same with Z = 1; ideal-gas error = ideal / real − 1.", wrap),
              ("Expanded uncertainty: GUM (JCGM 100:2008) with k = 2, checked by a Monte Carlo propagation "
               "(JCGM 101:2008 §8); 'agrees' when the two 95 % intervals agree within the numerical tolerance.", wrap),
              ("Invoice − ours: on the basis the invoice states (energy when billed in energy); explained by: "
               "each cause found in the evidence with its share of our figure, the rest 'not explained'.", wrap),
              ("Site corrector finding: the misconfiguration that explains the site corrector's volumes "
               "within their uncertainty, or that none was found.", wrap),
              ("Attempts: more than 1 when the meter was run again after the worker running it was lost.", wrap),
              ("Totals: over the corrected meters of the same base conditions, gas month and combustion reference "
               "temperature only; a fleet of several has one total per group, each naming its base and month.", wrap)]
    for i, (text, f) in enumerate(lines):
        if text:
            ws_f = f or top
            notes.write_string(i, 0, neutralise_cell(text), ws_f)
    notes.set_column(0, 0, 110)
    notes.set_portrait()
    notes.fit_to_pages(1, 0)
    wb.close()
    return buf.getvalue()
