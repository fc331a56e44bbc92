"""The console printout of `meterfix balance`, in the words and units of `meterfix correct`'s:
the labels of meterfix.vocabulary, the display units of the balance's base (kPa abs, °C, m3, GJ;
psia, °F, Mcf, MMBtu on a US base), every volume at base, figures rounded to their uncertainty as
GUM §7.2.6 says."""

from __future__ import annotations

import textwrap

import typer

from .. import vocabulary as V
from .console import _Display, _finite, _lc, _num, _unc

#: the column where values start, and the widest line before a text wraps under it
_LABEL = 21
_WIDTH = 100


def _line(label: str, text: str, echo, *, bare: bool = False) -> None:
    """'  label                text', the text wrapped under itself past _WIDTH characters; ``bare``:
    the text from the left margin ('  note: ...')."""
    head = "  " if bare else ("  " + f"{label:<{_LABEL - 1}} " if label else " " * (2 + _LABEL))
    hang = " " * (len(head) + (2 if bare else 0))
    lines = textwrap.wrap(text, width=_WIDTH - len(head), break_on_hyphens=False, break_long_words=False) or [""]
    echo(head + lines[0])
    for ln in lines[1:]:
        echo(hang + ln)


def _signed(text: str, v) -> str:
    return ("+" if _finite(v) and v > 0 else "") + text


def print_balance(s: dict, written: dict, *, runner: str, seconds=(0.0, 0.0), closing=None, from_store=None,
                  echo=typer.echo) -> None:
    from ..writers.xlsx_common import DisplayUnits

    bc = s["base_conditions"]
    du = DisplayUnits.for_base(bc["pressure_Pa"], bc["temperature_K"])
    d = _Display(units=du)
    U = s["ufg_expanded_uncertainty_m3"]

    def vol(v, u=None):  # a base volume [m3] rounded to its standard uncertainty u [m3], in the display unit
        return f"{d.text('volume', v, u if _finite(u) and u > 0 else None)} {V.AT_BASE}" if _finite(v) else "-"

    echo(f"meterfix balance: {s['name']}, {_lc(V.GAS_MONTH)} {s['month']}")
    meters = s.get("meters") or []
    how = f"months {runner}" if runner.startswith("from ") else f"months run on {runner}"
    _line("meters", f"{V.meters_text(meters)}; {how} in {seconds[0]:.1f} s, "
                    f"balance {seconds[1]:.2f} s", echo)
    _line(_lc(V.BASE_CONDITIONS), du.base_text(bc["pressure_Pa"], bc["temperature_K"])
          + f"; gas day from {s['gas_day']['start_hour']:02d}:00 ({s['gas_day']['timezone']})", echo)
    if from_store:
        _line("", "months from the store: " + ", ".join(f"{p['meter']} v{p['version']}" for p in from_store), echo,
              bare=True)
    # each part rounded to the UFG's standard uncertainty (the figure they make up), fixed and linepack to their own
    u_row = U / 2 if _finite(U) else None
    for label, key, u in ((V.RECEIPTS, "receipts_m3", u_row), (V.DELIVERIES, "deliveries_m3", u_row),
                          (V.OWN_USE, "own_use_m3", u_row),
                          (V.FIXED_QUANTITIES, "fixed_m3", s.get("fixed_standard_uncertainty_m3")),
                          (V.LINEPACK_CHANGE, "linepack_change_m3", s.get("linepack_change_standard_uncertainty_m3"))):
        if key in ("own_use_m3", "fixed_m3") and not s[key]:
            continue
        text = vol(s[key], u)
        _line(_lc(label), _signed(text, s[key]) if key == "linepack_change_m3" else text, echo)
    pct = s.get("ufg_pct")
    u_pct = 100 * U / s["receipts_m3"] if _finite(U) and s["receipts_m3"] else None
    u_vol = abs(d.value("volume", U)) if _finite(U) else None
    _line(V.UFG, f"{_num(d.value('volume', s['ufg_m3']), u_vol)} ± {_unc(u_vol)} {d.names['volume']} {V.AT_BASE} "
                 "(k = 2)"
          + (f"; {_signed(_num(pct, u_pct), pct)} % of receipts" if _finite(pct) else ""), echo)
    e = s.get("energy")
    if e:
        ue = e["ufg_expanded_uncertainty_J"]
        u_e = abs(d.value("energy", ue)) if _finite(ue) else None
        _line(f"{V.UFG} in {_lc(V.ENERGY)}", f"{_num(d.value('energy', e['ufg_J']), u_e)} ± {_unc(u_e)} "
              f"{d.names['energy']} (k = 2)", echo)
    sig = f"{s['ufg_standard_uncertainties']:.2f}"
    if s["consistent"]:
        _line(_lc(V.VERDICT), f"consistent: the UFG is within its expanded uncertainty ({sig} standard "
                              "uncertainties from zero)", echo)
    else:
        _line(_lc(V.VERDICT), f"NOT consistent: the UFG is {sig} standard uncertainties from zero, more than the "
                              "meters' uncertainty explains", echo)
    kinds = {m["name"]: m.get("kind") or "volume" for m in meters}
    credited = next((f for f in s["findings"] if f["credited"]), None)
    if credited:
        what = f"{V.ROLES.get(credited['role'], credited['role'])}, {V.METER_KINDS.get(kinds.get(credited['meter']), '')}"
        b, ub = credited["bias_pct"], credited.get("bias_expanded_uncertainty_pct")
        size = (f"{_signed(_num(b, ub / 2), b)} % ± {_unc(ub)} % (k = 2)" if _finite(ub) and ub > 0
                else f"{_signed(f'{b:.2f}', b)} %")
        _line(_lc(V.WHICH_METER), f"{credited['meter']} ({what.rstrip(', ')}) reads {size} from gas day "
              f"{credited['from_gas_day']}", echo)
        _line("", f"evidence: {credited['evidence']}", echo)
        _line("", f"its error put {_signed(vol(credited['effect_m3'], U / 2), credited['effect_m3'])} "
                  "into the month's UFG" + ("; found in the shape of the daily UFG: the month's total alone is within "
                                            "its uncertainty" if s["consistent"] else ""), echo)
    else:
        _line(_lc(V.WHICH_METER), s["search"], echo)
    tried = [f["meter"] for f in s["findings"] if not f["credited"]]
    if tried and credited:
        more = f" and {len(tried) - 6} more" if len(tried) > 6 else ""
        _line("", f"tried, not credited: {', '.join(tried[:6])}{more}", echo)
    rec = s.get("reconciliation")
    if rec:
        _line("reconciliation", f"VDI 2048-1: χ² {rec['chi2']:.3g} against the 95 % limit {rec['chi2_limit']:.3g} "
                                f"({'passed' if rec['passed'] else 'failed'})", echo)
        worst = sorted((m for m in rec["meters"] if _finite(m["normalized_adjustment"])),
                       key=lambda m: -m["normalized_adjustment"])[:3]
        if rec["degrees_of_freedom"] == 1:
            _line("", "one balance constraint: every normalized adjustment equals √χ², so this tests whether the "
                      "balance closes, not which meter (the meter search above says which)", echo)
        for m in worst[: 1 if rec["degrees_of_freedom"] == 1 else 3]:
            flag = "; above 1.96: a gross error?" if m["normalized_adjustment"] > 1.96 else ""
            _line("", f"{m['name']}: measured {vol(m['measured_m3'], m['measured_expanded_uncertainty_m3'] / 2)}, "
                      f"{_lc(V.RECONCILED)} {vol(m['reconciled_m3'], m['reconciled_expanded_uncertainty_m3'] / 2)}, "
                      f"{_lc(V.NORMALIZED_ADJUSTMENT)} {m['normalized_adjustment']:.2f}{flag}", echo)
    for n in s.get("notes") or []:
        _line("", f"note: {n}", echo, bare=True)
    if closing:
        _line("", f"closed into {closing['store']} as balance version {closing['version']} ({closing['closed_at']})",
              echo, bare=True)
    echo("  meterfix supports review and invoice queries; it is not an approved conversion device and")
    echo("  defers to the contract, legal-metrology rules and licensed practice.")
    echo("  outputs:")
    for kind, path in written.items():
        echo(f"    {kind:<11} {path}" + ("  (each meter's month, as `meterfix fleet` writes it)" if kind == "meters" else ""))
