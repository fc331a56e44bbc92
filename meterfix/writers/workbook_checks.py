"""Sheets of the month workbook for the checks: uncertainty budget, invoice, site corrector."""

from __future__ import annotations

import math

import numpy as np

from . import workbook_charts as C
from . import xlsx_common as X

BUDGET_HEADERS = (
    ("input", "Input", None, 30), ("value", "Value", "#,##0.####", 12), ("unit", "Unit", None, 9),
    ("uncertainty", "Uncertainty (as stated)", None, 18),
    ("standard_uncertainty_pct", "Standard uncertainty [%]", "0.0000", 13),
    ("distribution", "Distribution", None, 13), ("type", "Type (A/B)", None, 9),
    ("correlation", "Correlation", None, 13), ("sensitivity", "Sensitivity coefficient [-]", "0.0000", 13),
    ("contribution_pct", "Contribution to u(V) [%]", "0.0000", 13),
    ("share_pct", "Share of the variance [%]", "0.0", 12),
    ("interval_contribution_pct", "Contribution, one interval [%]", "0.0000", 13),
    ("is_default", "Default value", None, 9), ("setting", "Setting name", None, 13), ("source", "Source", None, 60),
)
_UNIT_KINDS = {"Pa": "pressure", "K": "temperature", "m3": "volume", "J": "energy", "J/m3": "heating_value"}


def _budget_value(du, value, unit):
    """An SI budget value in the display unit of its kind: (value, unit label)."""
    kind = _UNIT_KINDS.get(str(unit))
    if kind is None or value is None or (isinstance(value, float) and not math.isfinite(value)):
        return value, unit
    return du.scalar(kind, value), du.label(kind)


def _kv(ws, r, label, value, unit="", fmt=None):
    ws.cell(row=r, column=1, value=label).font = X.LABEL_FONT
    c = ws.cell(row=r, column=2, value=X.cell_value(value))
    if fmt and isinstance(c.value, (int, float)) and not isinstance(c.value, bool):
        c.number_format = fmt
    if unit:
        ws.cell(row=r, column=3, value=unit)
    return r + 1


def _yes_no(v):
    if v is None:
        return "not known"
    return "yes" if bool(v) else "no"


def write_uncertainty(ws, result) -> dict:
    """The month's expanded uncertainty and its budget, readable input by input."""
    unc = result.uncertainty
    r = X.section(ws, 1, "Uncertainty of the month's base volume and energy")
    if unc is None:
        X.note(ws, r, "No uncertainty was computed for this run.", span=6)
        X.set_widths(ws, {1: 34})
        return {}
    k = unc.coverage_factor
    r = X.note(ws, r, f"Expanded uncertainties with coverage factor k = {k:g} (about 95 % coverage for a normal "
                      "distribution), following the GUM. Each input's sensitivity coefficient multiplies its standard "
                      "uncertainty; the contributions combine in quadrature (systematic inputs do not average out "
                      "over the month).", span=8)
    r += 1
    r = _kv(ws, r, "Expanded uncertainty, base volume", unc.expanded_pct, "%", "0.000")
    r = _kv(ws, r, "Expanded uncertainty, energy", unc.expanded_energy_pct, "%", "0.000")
    r = _kv(ws, r, "Coverage factor k", k, "", "0.00")
    du = X.DisplayUnits.for_settings(result.settings)
    mc = unc.monte_carlo or {}
    if mc:
        r = _kv(ws, r, "Monte Carlo check: draws", mc.get("draws"), "", X.FMT_INT)
        r = _kv(ws, r, "Monte Carlo expanded uncertainty", mc.get("expanded_pct"), "%", "0.000")
        ci = mc.get("coverage_interval_m3")
        if ci is not None and len(ci) == 2:
            r = _kv(ws, r, "Monte Carlo coverage interval, low", du.scalar("volume", ci[0]),
                    f"{du.label('volume')} at base", X.FMT_VOLUME)
            r = _kv(ws, r, "Monte Carlo coverage interval, high", du.scalar("volume", ci[1]),
                    f"{du.label('volume')} at base", X.FMT_VOLUME)
        r = _kv(ws, r, "Monte Carlo agrees with the GUM budget", _yes_no(mc.get("gum_agrees")),
                f"within {mc.get('tolerance_pct'):g} %" if mc.get("tolerance_pct") is not None else "")
    r = X.section(ws, r + 1, "Budget of the month's base volume")
    b = unc.budget
    where = {}
    if b is not None and len(b):
        cols = [h for h in BUDGET_HEADERS if h[0] in b.columns]
        extra = [c for c in b.columns if c not in {h[0] for h in BUDGET_HEADERS}]
        headers = [h[1] for h in cols] + extra
        fmts = [h[2] for h in cols] + [None] * len(extra)
        rows = []
        du = X.DisplayUnits.for_settings(result.settings)
        keys = [h[0] for h in cols] + extra
        for _, x in b.iterrows():
            rec = {k: x[k] for k in keys}
            if "value" in rec and "unit" in rec:
                rec["value"], rec["unit"] = _budget_value(du, rec["value"], rec["unit"])
            if "is_default" in rec and isinstance(rec["is_default"], (bool, np.bool_)):
                rec["is_default"] = "yes" if rec["is_default"] else "no"
            rows.append([rec[k] for k in keys])
        first = r + 1
        end = X.write_table(ws, r, 1, headers, rows, fmts)
        ws.height(r, 48)
        where = {"first": first, "last": end - 1}
        for j, h in enumerate(cols, start=1):
            ws.widths[j] = max(ws.widths.get(j, 0.0), h[3])
        ws.widths[1] = max(ws.widths.get(1, 0.0), 34)
        X.wrap_rows(ws, first, end - 1, [j for j, h in enumerate(cols, start=1) if h[0] in ("source", "uncertainty",
                                                                                          "input")])
        if "share_pct" in b.columns and "input" in b.columns:
            share_col = X.get_column_letter([h[0] for h in cols].index("share_pct") + 1)
            ch = C.share_chart(ws, first, end - 1, "A", share_col)
            C.place(ws, ch, f"A{end + 2}")
    else:
        ws.cell(row=r, column=1, value="The budget is empty.").font = X.NOTE_FONT
    return where


# ---------------------------------------------------------------------------------------------
def write_invoice(ws, result, du) -> dict:
    """The supplier's invoice against our month: totals, periods, attribution and its waterfall."""
    rec = result.reconciliation
    t = rec.totals
    vl, el = du.label("volume"), du.label("energy")
    cur = rec.currency or "currency"
    r = X.section(ws, 1, "Invoice against our month")
    r = X.note(ws, r, "Billed volumes are re-stated at our contract base conditions with the real-gas Z of the gas in "
                      "force before comparing. Difference = invoice − ours. The waterfall explains the difference one "
                      "assumption at a time; 'not explained' is the rest.", span=8)
    r += 1
    r = _kv(ws, r, "Invoice file", rec.file or "")
    r = _kv(ws, r, "Compared on", t.get("compared_on"))
    r = _kv(ws, r, "Billed volume, at our base", du.scalar("volume", t.get("volume_billed_m3")), vl, X.FMT_VOLUME)
    r = _kv(ws, r, "Base volume, ours", du.scalar("volume", t.get("volume_ours_m3")), f"{vl} at base", X.FMT_VOLUME)
    r = _kv(ws, r, "Volume difference", du.scalar("volume", t.get("volume_difference_m3")), vl, X.FMT_VOLUME)
    r = _kv(ws, r, "Volume difference", t.get("volume_difference_pct"), "%", X.FMT_PCT)
    r = _kv(ws, r, "Billed energy", du.scalar("energy", _mj(t.get("energy_billed_MJ"))), el, X.FMT_ENERGY)
    r = _kv(ws, r, "Our energy", du.scalar("energy", _mj(t.get("energy_ours_MJ"))), el, X.FMT_ENERGY)
    r = _kv(ws, r, "Energy difference", du.scalar("energy", _mj(t.get("energy_difference_MJ"))), el, X.FMT_ENERGY)
    r = _kv(ws, r, "Energy difference", t.get("energy_difference_pct"), "%", X.FMT_PCT)
    r = _kv(ws, r, "Amount billed", t.get("amount_billed"), cur, "#,##0.00")
    r = _kv(ws, r, "Amount from our energy", t.get("amount_ours"), cur, "#,##0.00")
    r = _kv(ws, r, "Amount difference", t.get("amount_difference"), cur, "#,##0.00")
    comb = rec.uncertainty.get("combined_expanded_pct") if rec.uncertainty else None
    r = _kv(ws, r, "Combined expanded uncertainty", comb, "%", X.FMT_PCT)
    r = _kv(ws, r, "Difference exceeds the uncertainty", _yes_no(t.get("exceeds_uncertainty")))
    r = _kv(ws, r, "Contract tolerance", t.get("tolerance_pct"), "%", X.FMT_PCT2)
    r = _kv(ws, r, "Difference exceeds the tolerance", _yes_no(t.get("exceeds_tolerance")))
    for w in rec.warnings:
        r = X.note(ws, r, w, span=8)

    r = X.section(ws, r + 1, "Billing periods")
    p = rec.periods
    headers = ["Period start", "Period end", "Our intervals", "Coverage [%]", f"Billed as stated [{vl} at invoice base]",
               f"Invoice [{vl} at our base]", f"Ours [{vl} at base]", f"Difference [{vl}]", "Difference [%]",
               f"Billed energy [{el}]", f"Our energy [{el}]", "Energy difference [%]", f"Amount billed [{cur}]",
               f"Amount ours [{cur}]", "Exceeds uncertainty", "Exceeds tolerance"]
    rows = [[x["period_start"], x["period_end"], x["intervals"], x["coverage_pct"],
             du.scalar("volume", x["volume_billed_as_stated_m3"]), du.scalar("volume", x["volume_billed_m3"]),
             du.scalar("volume", x["volume_ours_m3"]), du.scalar("volume", x["volume_difference_m3"]),
             x["volume_difference_pct"], du.scalar("energy", _mj(x["energy_billed_MJ"])),
             du.scalar("energy", _mj(x["energy_ours_MJ"])), x["energy_difference_pct"], x["amount_billed"],
             x["amount_ours"], _yes_no(x["exceeds_uncertainty"]), _yes_no(x["exceeds_tolerance"])]
            for _, x in p.iterrows()]
    r = X.write_table(ws, r, 1, headers, rows,
                      [X.FMT_DATE, X.FMT_DATE, X.FMT_INT, X.FMT_PCT2] + [X.FMT_VOLUME] * 4 +
                      [X.FMT_PCT, X.FMT_ENERGY, X.FMT_ENERGY, X.FMT_PCT, "#,##0.00", "#,##0.00", None, None])

    # attribution table, then the waterfall's helper columns beside it
    on_energy = t.get("compared_on") == "energy"
    kind_unit = ("energy", el) if on_energy else ("volume", vl)
    a = rec.attribution
    r = X.section(ws, r + 1, f"Attribution of the difference ({'energy' if on_energy else 'volume'}), step by step")
    head = ["Step", "Applied", f"Volume [{vl}]", f"Energy [{el}]", f"Cumulative volume [{vl}]",
            f"Cumulative energy [{el}]", "What was assumed"]
    rows = [[x["step"], "yes" if x["applied"] else "no", du.scalar("volume", x["volume_m3"]),
             du.scalar("energy", _mj(x["energy_MJ"])), du.scalar("volume", x["cumulative_volume_m3"]),
             du.scalar("energy", _mj(x["cumulative_energy_MJ"])), x["parameter"]] for _, x in a.iterrows()]
    first = r + 1
    end = X.write_table(ws, r, 1, head, rows, [None, None, X.FMT_VOLUME, X.FMT_ENERGY, X.FMT_VOLUME, X.FMT_ENERGY,
                                                None])
    # the waterfall charts the difference from our figure: it starts at zero (ours), each step
    # moves it, the last bar is invoice − ours; bars compare sizes, so the axis includes zero
    values = [du.scalar(kind_unit[0], x["energy_MJ"] * 1e6 if on_energy else x["volume_m3"]) or 0.0
              for _, x in a.iterrows()]
    kinds = list(a["kind"])
    ours = next((v for v, k in zip(values, kinds) if k == "start"), 0.0)
    values = [v - ours if k in ("start", "end") else v for v, k in zip(values, kinds)]
    parts = C.waterfall_parts(list(a["step"]), kinds, values)
    hc = 9  # helper table in columns I..O, same rows as the attribution
    names = ["Waterfall: bar", "base (helper, not drawn)", "total", "increase", "increase (below zero)", "decrease",
             "decrease (below zero)"]
    X.write_header(ws, r, hc, names)
    keys = list(C.WATERFALL_PARTS)
    for i, (_, x) in enumerate(a.iterrows()):
        ws.cell(first + i, hc, X.cell_value(x["step"]))
        for j, k in enumerate(keys, start=1):
            c = ws.cell(first + i, hc + j, float(parts[k][i]))
            c.number_format = X.FMT_VOLUME
    cols = {"label": X.get_column_letter(hc), **{k: X.get_column_letter(hc + 1 + j) for j, k in enumerate(keys)}}
    what = "Energy" if on_energy else "Volume"
    ch = C.waterfall_chart(ws, first, end - 1, cols, "From our figure to the invoice, step by step",
                           f"{what} difference from ours [{kind_unit[1]}]")
    C.place(ws, ch, f"A{end + 2}")
    X.set_widths(ws, {1: 34, 2: 18, 3: 15, 4: 15, 5: 16, 6: 16, 7: 30, 8: 14, 9: 24, 10: 14, 11: 14, 12: 12,
                      13: 14, 14: 12, 15: 14, 16: 12})
    X.wrap_rows(ws, first, end - 1, [7])
    return {"first": first, "last": end - 1, "columns": cols}


def _mj(v):
    return None if v is None or (isinstance(v, float) and not math.isfinite(v)) else v * 1e6


def _params_text(p: dict) -> str:
    out = []
    for k, v in (p or {}).items():
        out.append(f"{k} = {v:.6g}" if isinstance(v, (int, float, np.floating)) else f"{k} = {v}")
    return "; ".join(out)


CAUSE_TEXT = {
    "ideal-gas": "corrector set to ideal gas (Z = 1)", "fpv-not-squared": "Fpv applied instead of Fpv² = Zb/Zf",
    "fixed-z": "a fixed Zb/Zf instead of one computed from p and T", "base-pressure": "another base pressure",
    "base-temperature": "another base temperature", "atmospheric-pressure": "another atmospheric pressure",
    "fixed-temperature": "a fixed gas temperature",
}


def _cause_text(name: str) -> str:
    return " and ".join(CAUSE_TEXT.get(c, c) for c in name.split("+"))


def write_corrector(ws, result, du, data_ws=None, interval_block=None, span=None) -> int:
    """The site corrector's own corrected volume against ours, and the likely misconfiguration."""
    cc = result.corrector_check
    vl, el = du.label("volume"), du.label("energy")
    r = X.section(ws, 1, "Site corrector against our correction")
    r = X.note(ws, r, "The site corrector's own corrected volume is compared with ours interval by interval; each "
                      "candidate misconfiguration is fitted and scored. Findings are explanations that beat 'no "
                      "misconfiguration' and whose month effect exceeds the threshold.", span=8)
    r += 1
    tot = cc.totals or {}
    r = _kv(ws, r, "Intervals compared", tot.get("intervals_compared"), "", X.FMT_INT)
    r = _kv(ws, r, "Corrector volume", du.scalar("volume", tot.get("volume_corrector_m3")), vl, X.FMT_VOLUME)
    r = _kv(ws, r, "Base volume, ours", du.scalar("volume", tot.get("volume_ours_m3")), f"{vl} at base", X.FMT_VOLUME)
    r = _kv(ws, r, "Corrector − ours", du.scalar("volume", tot.get("volume_difference_m3")), vl, X.FMT_VOLUME)
    r = _kv(ws, r, "Corrector − ours", cc.size_pct, "%", X.FMT_PCT)
    r = _kv(ws, r, "Energy difference", du.scalar("energy", _mj(tot.get("energy_difference_MJ"))), el, X.FMT_ENERGY)
    if tot.get("money_difference") is not None:
        r = _kv(ws, r, "Money difference", tot.get("money_difference"), result.settings.currency, "#,##0.00")
    r = _kv(ws, r, "Threshold of a finding", cc.threshold_pct, "%", X.FMT_PCT2)
    best = cc.best
    r = _kv(ws, r, "Most likely explanation", _cause_text(best["cause"]) if best else "none above the threshold")
    for w in cc.warnings:
        r = X.note(ws, r, w, span=8)
    r = X.section(ws, r + 1, "Findings (best first)")
    head = ["Explanation", "Cause code", "Month effect [%]", f"Volume impact [{vl}]", f"Energy impact [{el}]", "R²",
            "RMS residual [%]", "Fitted settings"]
    rows = [[f"{f.get('rank')}. {_cause_text(f['cause'])}", f["cause"], f["size_pct"],
             du.scalar("volume", f.get("volume_impact_m3")), du.scalar("energy", _mj(f.get("energy_impact_MJ"))),
             f["r2"], f["rms_residual_pct"], _params_text(f.get("parameters"))] for f in cc.findings]
    fm = [None, None, X.FMT_PCT, X.FMT_VOLUME, X.FMT_ENERGY, "0.0000", "0.0000", None]
    r = X.write_table(ws, r, 1, head, rows, fm)
    if not rows:
        ws.cell(row=r, column=1, value="No misconfiguration explains a difference above the threshold.").font = X.NOTE_FONT
        r += 1
    r = X.section(ws, r + 1, "Every explanation tried (lower score is better)")
    head = ["Explanation", "Cause code", "Month effect [%]", "BIC (lower is better)", "", "R²", "RMS residual [%]", "Fitted settings"]
    rows = [[_cause_text(c["cause"]) if c["cause"] != "none" else "no misconfiguration", c["cause"], c["size_pct"],
             c["score"], None, c["r2"], c["rms_residual_pct"], _params_text(c.get("parameters"))] for c in cc.candidates]
    r = X.write_table(ws, r, 1, head, rows, [None, None, X.FMT_PCT, "0.0", None, "0.0000", "0.0000", None])
    if data_ws is not None and interval_block is not None and "ratio" in interval_block.columns:
        C.place(ws, C.corrector_ratio_chart(data_ws, interval_block, span, clock=result.settings.timezone), f"A{r + 2}")
    X.set_widths(ws, {1: 48, 2: 30, 3: 14, 4: 16, 5: 16, 6: 9, 7: 13, 8: 70})
    X.wrap_rows(ws, 3, r - 1, [1, 2, 8])
    return r
