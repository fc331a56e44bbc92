"""The console printout of `meterfix balance` (plain words, a unit on every number, figures
rounded to their uncertainty as GUM §7.2.6 says)."""

from __future__ import annotations

import typer

from .console import _finite, _num, _unc


def _m3(v, u=None) -> str:
    return f"{_num(v, u)} m3" if _finite(v) else "-"


def print_balance(s: dict, written: dict, *, runner: str, seconds=(0.0, 0.0), closing=None, from_store=None,
                  echo=typer.echo) -> None:
    U = s["ufg_expanded_uncertainty_m3"]
    bc = s["base_conditions"]
    echo(f"meterfix balance: {s['name']}, gas month {s['month']}  ({len(s['meters'])} meters; meters {runner}, "
         f"{seconds[0]:.1f} s; balance {seconds[1]:.2f} s)")
    echo(f"  base conditions {bc['pressure_Pa'] / 1000:.3f} kPa (absolute), {bc['temperature_K'] - 273.15:.2f} °C; "
         f"gas day from {s['gas_day']['start_hour']:02d}:00 {s['gas_day']['timezone']}")
    if from_store:
        echo("  months from the store: " + ", ".join(f"{p['meter']} v{p['version']}" for p in from_store))
    u_row = U / 2 if _finite(U) else None
    for label, key, u in (("receipts", "receipts_m3", u_row), ("deliveries", "deliveries_m3", u_row),
                          ("own use", "own_use_m3", u_row),
                          ("fixed quantities", "fixed_m3", s.get("fixed_standard_uncertainty_m3")),
                          ("linepack change", "linepack_change_m3", s.get("linepack_change_standard_uncertainty_m3"))):
        if key == "own_use_m3" and not s[key]:
            continue
        echo(f"  {label:<20} {_m3(s[key], u if _finite(u) and u > 0 else None)}")
    pct = s.get("ufg_pct")
    echo(f"  UFG                  {_m3(s['ufg_m3'], U)} ± {_unc(U)} m3 (k = 2)"
         + (f"   {'+' if pct > 0 else ''}{_num(pct, 100 * U / s['receipts_m3'] if s['receipts_m3'] else None)} % of receipts"
            if _finite(pct) else ""))
    e = s.get("energy")
    if e:
        echo(f"  UFG energy           {_num(e['ufg_J'] / 1e9, e['ufg_expanded_uncertainty_J'] / 1e9)} GJ "
             f"± {_unc(e['ufg_expanded_uncertainty_J'] / 1e9)} GJ (k = 2)")
    if s["consistent"]:
        echo(f"  verdict              consistent: the UFG is within its expanded uncertainty "
             f"({_num(s['ufg_standard_uncertainties'], 0.01)} standard uncertainties from zero)")
    else:
        echo(f"  verdict              NOT consistent: the UFG is {_num(s['ufg_standard_uncertainties'], 0.01)} standard "
             "uncertainties from zero, outside what the meters' uncertainty explains")
    credited = next((f for f in s["findings"] if f["credited"]), None)
    if credited:
        echo(f"  which meter          {credited['meter']} ({credited['role'].replace('_', ' ')}) reads "
             f"{'+' if credited['bias_pct'] > 0 else ''}{credited['bias_pct']:.2f} % "
             f"from gas day {credited['from_gas_day']}")
        echo(f"                       evidence: {credited['evidence']}")
        echo(f"                       its error put {_m3(credited['effect_m3'], U / 2)}"
             " into the month's UFG")
    else:
        echo(f"  which meter          {s['search']}")
    tried = [f["meter"] for f in s["findings"] if not f["credited"]]
    if tried and credited:
        more = f" and {len(tried) - 6} more" if len(tried) > 6 else ""
        echo(f"    tried, not credited: {', '.join(tried[:6])}{more}")
    rec = s.get("reconciliation")
    if rec:
        echo(f"  reconciliation       VDI 2048-1: χ² {rec['chi2']:.3g} against the 95 % limit {rec['chi2_limit']:.3g} "
             f"({'passed' if rec['passed'] else 'failed'})")
        worst = sorted((m for m in rec["meters"] if _finite(m["normalized_adjustment"])),
                       key=lambda m: -m["normalized_adjustment"])[:3]
        if rec["degrees_of_freedom"] == 1:
            echo("    one balance constraint: every normalized adjustment equals √χ², so the test says whether the "
                 "balance closes, not which meter; the meter search above says which")
        for m in worst[: 1 if rec["degrees_of_freedom"] == 1 else 3]:
            flag = "  above 1.96: a gross error?" if m["normalized_adjustment"] > 1.96 else ""
            echo(f"    {m['name']:<28} measured {_m3(m['measured_m3'], m['measured_expanded_uncertainty_m3'] / 2)}, "
                 f"reconciled {_m3(m['reconciled_m3'], m['reconciled_expanded_uncertainty_m3'] / 2)}, normalized "
                 f"adjustment {m['normalized_adjustment']:.2f}{flag}")
    for n in s.get("notes") or []:
        echo(f"  note: {n}")
    if closing:
        echo(f"  closed into {closing['store']} as balance version {closing['version']} ({closing['closed_at']})")
    echo("  meterfix supports review and invoice queries; it is not an approved conversion device and")
    echo("  defers to the contract, legal-metrology rules and licensed practice.")
    echo("  outputs:")
    for kind, path in written.items():
        echo(f"    {kind:<11} {path}")
