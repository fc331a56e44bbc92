"""The balance's outputs: ``<name>_<month>_balance.json`` (SI), ``<name>_<month>_balance_days.csv``
and the balance workbook ``<name>_<month>_balance.xlsx`` (Balance, Daily with a chart of the daily
UFG and its ±U band, Meters, Findings), written as a complete set or nothing
(:class:`meterfix.writers.outset.OutputSet`).
"""

from __future__ import annotations

import csv
import json
from pathlib import Path

from .. import __version__
from ..writers.summary import CAUTION, _clean
from .compute import BalanceResult
from .ufg import COVERAGE_FACTOR

#: daily CSV columns (SI: m3 at the balance's base, J)
DAY_COLUMNS = ["gas_day", "receipts_m3", "deliveries_m3", "own_use_m3", "fixed_m3", "linepack_change_m3", "ufg_m3",
               "ufg_pct", "ufg_expanded_uncertainty_m3", "ufg_energy_J", "ufg_energy_expanded_uncertainty_J"]


def stem(result: BalanceResult) -> str:
    from ..writers.atomic import safe_name

    return f"{safe_name(result.name, 'balance')}_{result.month}"


def _pct(a, b):
    return 100.0 * a / b if b else None


def balance_summary(result: BalanceResult, *, closing: dict | None = None) -> dict:
    """The balance as a JSON-ready dict in SI (m3 at the balance's base, J, K, Pa)."""
    v = result.volume
    e = result.energy
    m = v.month
    rec = result.reconciliation
    days = []
    for i, g in enumerate(result.gas_days):
        d = {"gas_day": g, "receipts_m3": v.receipts[i], "deliveries_m3": v.deliveries[i], "own_use_m3": v.own_use[i],
             "fixed_m3": v.fixed[i], "linepack_change_m3": v.linepack_change[i], "ufg_m3": v.ufg[i],
             "ufg_pct": _pct(v.ufg[i], v.receipts[i]), "ufg_expanded_uncertainty_m3": COVERAGE_FACTOR * v.u_ufg[i]}
        if e is not None:
            d["ufg_energy_J"] = e.ufg[i]
            d["ufg_energy_expanded_uncertainty_J"] = COVERAGE_FACTOR * e.u_ufg[i]
        days.append(d)
    out = {
        "tool": {"name": "meterfix", "version": __version__},
        "caution": CAUTION,
        "name": result.name, "month": result.month,
        "gas_day": {"start_hour": result.gas_day_start_hour, "timezone": result.timezone},
        "base_conditions": {"pressure_Pa": result.pressure_base, "temperature_K": result.temperature_base},
        "combustion_reference_temperature_K": result.temperature_combustion,
        "receipts_m3": m["receipts"], "deliveries_m3": m["deliveries"], "own_use_m3": m["own_use"],
        "fixed_m3": m["fixed"], "linepack_change_m3": m["linepack_change"], "ufg_m3": m["ufg"],
        "fixed_standard_uncertainty_m3": m["u_fixed"], "linepack_change_standard_uncertainty_m3": m["u_linepack"],
        "ufg_pct": v.ufg_pct, "ufg_standard_uncertainty_m3": m["u_ufg"], "ufg_expanded_uncertainty_m3": v.expanded,
        "coverage_factor": COVERAGE_FACTOR, "consistent": v.consistent, "ufg_standard_uncertainties": v.sigmas,
        "energy": None if e is None else {
            "receipts_J": e.month["receipts"], "deliveries_J": e.month["deliveries"], "own_use_J": e.month["own_use"],
            "fixed_J": e.month["fixed"], "linepack_change_J": e.month["linepack_change"], "ufg_J": e.month["ufg"],
            "ufg_pct": e.ufg_pct, "ufg_expanded_uncertainty_J": e.expanded, "consistent": e.consistent},
        "days": days,
        "meters": result.meter_rows(),
        "linepack": [{"name": p.name, "opening_m3": float(p.volume_base[0]), "closing_m3": float(p.volume_base[-1]),
                      "change_m3": float(p.volume_base[-1] - p.volume_base[0]),
                      "opening_mol": float(p.amount_mol[0]), "closing_mol": float(p.amount_mol[-1]),
                      "z_opening": float(p.z[0]), "z_closing": float(p.z[-1]), "z_base": p.z_base,
                      "pressure_opening_Pa": float(p.pressure[0]), "pressure_closing_Pa": float(p.pressure[-1]),
                      "temperature_opening_K": float(p.temperature[0]), "temperature_closing_K": float(p.temperature[-1])}
                     for p in result.linepacks],
        "fixed": [{"name": f.name, "volume_m3": f.volume, "standard_uncertainty_pct": 100.0 * f.u_rel,
                   "gas_day": f.gas_day} for f in result.fixed],
        "findings": [{"meter": f.meter, "role": f.role, "bias_pct": f.bias_pct, "from_gas_day": f.from_gas_day,
                      "evidence": f.evidence, "credited": f.credited, "delta_bic": f.delta_bic,
                      "effect_m3": f.effect_m3, "bias_expanded_uncertainty_pct": f.bias_expanded_uncertainty_pct}
                     for f in result.findings],
        "search": result.search_text,
        "reconciliation": None if rec is None else {
            "method": "VDI 2048 Blatt 1 (2000): weighted least squares under the balance constraint, full covariance",
            "chi2": rec.chi2, "chi2_limit": rec.chi2_limit, "degrees_of_freedom": rec.dof, "passed": rec.passed,
            "meters": [{"name": n, "measured_m3": float(rec.measured[i]), "reconciled_m3": float(rec.reconciled[i]),
                        "measured_expanded_uncertainty_m3": COVERAGE_FACTOR * float(rec.standard_uncertainty[i]),
                        "reconciled_expanded_uncertainty_m3": COVERAGE_FACTOR * float(rec.reconciled_uncertainty[i]),
                        "normalized_adjustment": float(rec.normalized_adjustment[i])} for i, n in enumerate(rec.names)]},
        "notes": list(result.notes),
    }
    if closing is not None:
        out["closing"] = dict(closing)
    return _clean(out)


def balance_json(summary: dict) -> str:
    return json.dumps(_clean(summary), indent=2, sort_keys=True, ensure_ascii=False) + "\n"


def write_days_csv(summary: dict, path) -> None:
    with open(path, "w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow(DAY_COLUMNS)
        for d in summary["days"]:
            w.writerow(["" if d.get(c) is None else (d[c] if c == "gas_day" else repr(float(d[c]))) for c in DAY_COLUMNS])


# --------------------------------------------------------------------------- workbook
def build_workbook(summary: dict):
    """The balance workbook as a :class:`meterfix.writers.xlsx_common.Book`: the labels of
    meterfix.vocabulary, volumes and energy in the display units of the balance's base (m3 and GJ;
    Mcf and MMBtu on a US base), every volume at base."""
    import datetime as _dt

    from .. import vocabulary as V
    from ..writers import xlsx_common as X
    from ..writers.workbook_charts import ChartSpec, Ref

    bc = summary["base_conditions"]
    du = X.DisplayUnits.for_base(bc["pressure_Pa"], bc["temperature_K"])
    vl, el = f"{du.label('volume')} {V.AT_BASE}", du.label("energy")

    def vol(v):
        return du.scalar("volume", v)

    def en(v):
        return du.scalar("energy", v)

    book = X.Book(title=f"{summary['name']} balance {summary['month']}", subject="system balance (meterfix)")
    ws = book.create_sheet("Balance")
    r = X.section(ws, 1, f"{summary['name']}: balance of {V.GAS_MONTH.lower()} {summary['month']}")
    r = X.note(ws, r, f"{V.BASE_CONDITIONS} {du.base_text(bc['pressure_Pa'], bc['temperature_K'])}; gas day from "
               f"{summary['gas_day']['start_hour']:02d}:00 ({summary['gas_day']['timezone']}). "
               f"{V.UFG} = {V.RECEIPTS.lower()} − {V.DELIVERIES.lower()} − {V.OWN_USE.lower()} − "
               f"{V.FIXED_QUANTITIES.lower()} − {V.LINEPACK_CHANGE.lower()}. Uncertainties are expanded (k = 2) "
               "from each meter's GUM budget.", span=4)
    r += 1
    e = summary.get("energy") or {}
    rows = [(V.RECEIPTS, summary["receipts_m3"], e.get("receipts_J")),
            (V.DELIVERIES, summary["deliveries_m3"], e.get("deliveries_J")),
            (V.OWN_USE, summary["own_use_m3"], e.get("own_use_J")),
            (V.FIXED_QUANTITIES, summary["fixed_m3"], e.get("fixed_J")),
            (V.LINEPACK_CHANGE, summary["linepack_change_m3"], e.get("linepack_change_J")),
            (V.UFG_LONG, summary["ufg_m3"], e.get("ufg_J")),
            (f"{V.UFG}, {V.EXPANDED_UNCERTAINTY[0].lower()}{V.EXPANDED_UNCERTAINTY[1:]}",
             summary["ufg_expanded_uncertainty_m3"], e.get("ufg_expanded_uncertainty_J"))]
    r = X.write_table(ws, r, 1, ["Quantity", f"{V.BASE_VOLUME} [{vl}]", f"{V.ENERGY} [{el}]"],
                      [(a, vol(b), en(c)) for a, b, c in rows], [None, X.FMT_VOLUME, X.FMT_ENERGY])
    r += 1
    verdict = ("consistent: the UFG lies within its expanded uncertainty" if summary["consistent"] else
               "not consistent: the UFG lies outside its expanded uncertainty")
    rec = summary["reconciliation"]
    top = r
    r = X.write_table(ws, r, 1, ["Result", "Value"], [
        ("Meters", V.meters_text(summary["meters"])),
        (V.UFG_OF_RECEIPTS, summary["ufg_pct"]),
        (f"{V.UFG} in standard uncertainties", summary["ufg_standard_uncertainties"]),
        (V.VERDICT, verdict),
        (V.WHICH_METER, summary["search"]),
        ("Reconciliation χ² (95 % limit)", None if not rec else f"{rec['chi2']:.3g} ({rec['chi2_limit']:.3g})")],
        [None, "0.00"])
    X.wrap_rows(ws, top + 1, r - 1, [2])
    r += 1
    for n in summary["notes"]:
        r = X.note(ws, r, n, span=4)
    X.note(ws, r + 1, summary["caution"], span=4)
    X.set_widths(ws, {"A": 34, "B": 44, "C": 18, "D": 18})

    dws = book.create_sheet("Daily")
    headers = ["Gas day", f"{V.RECEIPTS} [{vl}]", f"{V.DELIVERIES} [{vl}]", f"{V.OWN_USE} [{vl}]",
               f"{V.FIXED_QUANTITIES} [{vl}]", f"{V.LINEPACK_CHANGE} [{vl}]", f"{V.UFG} [{vl}]",
               f"{V.UFG_OF_RECEIPTS} [%]", f"{V.UFG} − U [{vl}]", f"{V.UFG} + U [{vl}]", f"U (k = 2) [{vl}]"]
    drows = [(_dt.date.fromisoformat(d["gas_day"]), vol(d["receipts_m3"]), vol(d["deliveries_m3"]),
              vol(d["own_use_m3"]), vol(d["fixed_m3"]), vol(d["linepack_change_m3"]), vol(d["ufg_m3"]), d["ufg_pct"],
              vol(d["ufg_m3"] - d["ufg_expanded_uncertainty_m3"]), vol(d["ufg_m3"] + d["ufg_expanded_uncertainty_m3"]),
              vol(d["ufg_expanded_uncertainty_m3"])) for d in summary["days"]]
    last = X.write_table(dws, 1, 1, headers, drows, [X.FMT_DATE] + [X.FMT_VOLUME] * 6 + [X.FMT_PCT2]
                         + [X.FMT_VOLUME] * 3) - 1
    X.wrap_rows(dws, 1, 1, range(1, len(headers) + 1))
    dws.freeze = (2, 2)
    X.set_widths(dws, {c: 14 for c in "ABCDEFGHIJK"})
    if last >= 2:
        ch = ChartSpec("scatter", "straight", f"Daily {V.UFG} and its expanded uncertainty (k = 2)",
                       x_axis={"name": "Gas day", "num_format": "dd mmm", "major_gridlines": {"visible": False},
                               "label_position": "low"},
                       y_axis={"name": f"{V.UFG} [{vl}]", "major_gridlines": {"visible": True}})
        ch.height_cm = 7.0   # under a month's 31 rows on one landscape page
        x = Ref("Daily", "A", 2, last)
        ch.series = [{"name": V.UFG, "x": x, "y": Ref("Daily", "G", 2, last), "colour": "1F4E79", "width": 2.25},
                     {"name": f"{V.UFG} − U", "x": x, "y": Ref("Daily", "I", 2, last), "colour": "A6A6A6",
                      "width": 1.0},
                     {"name": f"{V.UFG} + U", "x": x, "y": Ref("Daily", "J", 2, last), "colour": "A6A6A6",
                      "width": 1.0}]
        dws.add_chart(ch, f"A{last + 3}")   # under the table: the sheet prints one page wide, legibly

    mws = book.create_sheet("Meters")
    mrows = [(m["name"], V.ROLES.get(m["role"], m["role"]), V.METER_KINDS.get(m.get("kind") or "volume", m.get("kind")),
              m.get("correlation_group") or "", vol(m["volume_m3"]), en(m.get("energy_J")),
              vol(m["expanded_uncertainty_m3"]), m["share_pct"], vol(m.get("reconciled_m3")),
              vol(m.get("reconciled_expanded_uncertainty_m3")), m.get("normalized_adjustment"), m["source"])
             for m in summary["meters"]]
    X.write_table(mws, 1, 1, ["Meter", "Role", "Kind", "Correlation group", f"{V.BASE_VOLUME}, month [{vl}]",
                              f"{V.ENERGY} [{el}]", f"U (k = 2) [{vl}]", f"Share of the {V.UFG} variance [%]",
                              f"{V.RECONCILED} [{vl}]", f"{V.RECONCILED} U (k = 2) [{vl}]",
                              f"{V.NORMALIZED_ADJUSTMENT} [-]", "Month from"],
                  mrows, [None, None, None, None, X.FMT_VOLUME, X.FMT_ENERGY, X.FMT_VOLUME, X.FMT_PCT2, X.FMT_VOLUME,
                          X.FMT_VOLUME, X.FMT_FACTOR, None])
    X.wrap_rows(mws, 1, 1, range(1, 13))
    X.set_widths(mws, {"A": 30, "B": 9, "C": 14, "D": 11, "E": 14, "F": 12, "G": 11, "H": 12, "I": 14, "J": 13,
                       "K": 13, "L": 24})
    mws.freeze = (2, 2)

    fws = book.create_sheet("Findings")
    r = X.section(fws, 1, f"{V.WHICH_METER}: the daily {V.UFG} fitted to one meter reading high or low from a gas day")
    r = X.note(fws, r, summary["search"], span=6)
    r += 1
    frows = [(f["meter"], V.ROLES.get(f["role"], f["role"]), f["bias_pct"], f.get("bias_expanded_uncertainty_pct"),
              f["from_gas_day"], f["delta_bic"], "credited" if f["credited"] else "tried, not credited", f["evidence"])
             for f in summary["findings"]]
    X.write_table(fws, r, 1, ["Meter", "Role", "Reads high by [%]", "U (k = 2) [%]", "From gas day",
                              "ΔBIC against no meter [-]", "Status", "Evidence"], frows,
                  [None, None, X.FMT_PCT2, X.FMT_PCT2, None, "0.0", None, None])
    X.wrap_rows(fws, r + 1, r + len(frows), [8])
    X.set_widths(fws, {"A": 32, "B": 10, "C": 12, "D": 10, "E": 12, "F": 12, "G": 18, "H": 70})
    return book


def write_balance_outputs(summary: dict, out_dir, *, overwrite: bool = False, workbook: bool = True) -> dict:
    """Write the balance's JSON, daily CSV and workbook as one set; returns {kind: path}."""
    from ..writers.outset import OutputSet, check_output_folder

    out = Path(out_dir)
    check_output_folder(out)
    st = f"{_safe(summary['name'])}_{summary['month']}"
    names = {"balance": f"{st}_balance.json", "days": f"{st}_balance_days.csv"}
    if workbook:
        names["workbook"] = f"{st}_balance.xlsx"
    book = build_workbook(summary) if workbook else None
    text = balance_json(summary)
    with OutputSet(out, overwrite=overwrite) as outs:
        outs.check_finals(names.values())
        tmp = {k: outs.path(n) for k, n in names.items()}
        write_days_csv(summary, tmp["days"])
        if book is not None:
            book.save(tmp["workbook"])
        tmp["balance"].write_text(text, encoding="utf-8")
        outs.commit()
    return {k: out / n for k, n in names.items()}


def _safe(name):
    from ..writers.atomic import safe_name

    return safe_name(name, "balance")


def read_days(path) -> list:
    """The daily CSV back as dicts (tests, and users' scripts)."""
    with open(path, newline="", encoding="utf-8") as fh:
        return [{k: (v if k == "gas_day" or v == "" else float(v)) for k, v in row.items()} for row in csv.DictReader(fh)]


__all__ = ["balance_summary", "balance_json", "write_balance_outputs", "build_workbook", "DAY_COLUMNS", "read_days"]
