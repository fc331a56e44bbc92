"""Console summary of a month run (the CLI owns the terminal; the library never prints)."""

from __future__ import annotations

import contextlib
import math
import sys

import numpy as np
import typer

from .. import vocabulary as V
from ..engine.flow_meter import CORIOLIS_METER, ORIFICE_METER
from ..vocabulary import flags_breakdown


@contextlib.contextmanager
def progress_bar(enabled: bool = True):
    """A progress bar on the terminal (stderr) while a month runs; yields ``progress(text, fraction)``
    or None when stderr is not a terminal (files, pipes, tests) or ``enabled`` is False."""
    if not enabled or not sys.stderr.isatty():
        yield None
        return
    from rich.console import Console
    from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn

    with Progress(TextColumn("{task.description:<44}"), BarColumn(), TimeElapsedColumn(),
                  console=Console(stderr=True), transient=True) as bar:
        task = bar.add_task("starting", total=1.0)

        def update(text: str, fraction: float) -> None:
            bar.update(task, description=text, completed=fraction)

        yield update


def _lc(label: str) -> str:
    """A label of the vocabulary as the console writes it, first letter small."""
    return label[:1].lower() + label[1:]


def _finite(v) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)


def _num(v, u=None, sig=6) -> str:
    """``v`` with no more digits than its uncertainty ``u`` supports (same unit as v).

    The uncertainty is kept to two significant digits and the value rounded to the same decimal
    place (JCGM 100:2008, GUM §7.2.6); without an uncertainty, ``sig`` significant digits."""
    if not _finite(v):
        return "-"
    v = float(v)
    if _finite(u) and u > 0:
        place = math.floor(math.log10(float(u))) - 1  # the second significant digit of u
    elif v != 0:
        place = math.floor(math.log10(abs(v))) - (sig - 1)
    else:
        return "0"
    if place >= 0:
        return f"{round(v / 10**place) * 10**place:,.0f}"
    return f"{v:,.{-place}f}"


def _unc(u) -> str:
    """An uncertainty to two significant digits (GUM §7.2.6)."""
    return _num(u, u if _finite(u) and u > 0 else None)


def _residual(v) -> str:
    return "< 0.001 %" if _finite(v) and v < 1e-3 else f"{_unc(v)} %"


def _pct(v, u=None) -> str:
    return f"{'+' if _finite(v) and v > 0 else ''}{_num(v, u, sig=3)} %"


class _Display:
    """The run's display units (the workbook's: site file ``[display_units]``, US units for a US
    base); SI in, text out."""

    KINDS = ("volume", "energy", "pressure", "temperature")

    def __init__(self, settings=None, *, units=None):
        """From a run's settings, or from ``units`` (a DisplayUnits: a balance's, on its base)."""
        from ..errors import SettingsError
        from ..units import parse_unit
        from ..writers.xlsx_common import DisplayUnits

        du = units
        if du is None:
            try:
                du = DisplayUnits.for_settings(settings)
            except SettingsError:  # a bad display unit is refused by the writers; fall back here
                du = DisplayUnits(None)
        self.du = du
        self.units = {k: parse_unit(du.names[k], k) for k in self.KINDS}
        self.names = {k: du.label(k) for k in self.KINDS}

    def value(self, kind, si):
        return float(self.units[kind].from_si(float(si))) if _finite(si) else float("nan")

    def exact(self, kind, si):
        """'14.73 psia': a stated value (a base condition) to six significant digits, no trailing zeros."""
        return self.du.exact(kind, si)

    def text(self, kind, si, u_si=None):
        """'35,890,000 m3': the value in the display unit, rounded to its uncertainty [same SI unit]."""
        u = None
        if _finite(u_si) and _finite(si):
            u = abs(self.value(kind, si + u_si) - self.value(kind, si))
        return f"{_num(self.value(kind, si), u)} {self.names[kind]}"


def _print_reading(result) -> None:
    """How the log was read: per file (and sheet) one line per column, header → quantity [unit]
    (canonical name); columns not used; what the reader decided (notes)."""
    meta = result.log_metadata
    if meta is None:
        return
    from ..writers.source_record import _file_columns

    sources = {s.get("file"): s for s in (meta.sources or [])}
    ignored = meta.ignored_columns or {}
    for key, cols in _file_columns(meta).items():
        src = sources.get(key.split(" (from row")[0], {})
        where = key + (f", sheet '{src['sheet']}'" if src.get("sheet") else "")
        typer.echo(f"  columns of {where}:")
        for name, c in cols.items():
            unit = f" [{c['unit']}]" if c.get("unit") else ""
            typer.echo(f"    '{c['header']}' → {c['meaning']}{unit} ({name})")
        if ignored.get(key):
            typer.echo("    not used: " + ", ".join(f"'{h}'" for h in ignored[key]))
    vf = meta.volume_from
    if vf:
        typer.echo(f"  volume from          {vf}")
    oi = meta.opening_index
    if oi is not None and "index" in vf:
        typer.echo(f"  opening index        {oi:,.6g} m3 (the reading that opens the log; "
                   "--opening-index sets the one before the first row)")
    dropped = meta.dropped_rows or []
    if dropped:
        first = "; ".join(f"{d.get('file')} row {d.get('row')} '{d.get('value')}' ({d.get('reason')})" for d in dropped[:3])
        typer.echo(f"  {V.ROWS_LEFT_OUT:<20} {len(dropped)} (their intervals have no result): {first}"
                   + (" ..." if len(dropped) > 3 else ""))
    for note in (meta.notes or [])[:12]:
        typer.echo(f"  reader: {note}")
    extra = len(meta.notes or []) - 12
    if extra > 0:
        typer.echo(f"  reader: ... {extra} more note(s) in the summary JSON and the Source data sheet")


def _print_without_result(result) -> None:
    """Name the intervals without a result (first few): volume unknown, or no corrected value."""
    iv = result.intervals
    if not len(iv) or "volume_base" not in iv:
        return
    vb = iv["volume_base"].to_numpy(float)
    vl = iv["volume_line"].to_numpy(float)
    none = ~np.isfinite(vb)
    if not none.any():
        return
    no_vol = none & ~np.isfinite(vl)
    no_res = none & np.isfinite(vl)
    tz = result.settings.timezone
    for mask, what in ((no_res, f"{V.INTERVALS_WITHOUT_RESULT}: volume but no base volume (pressure, "
                                "temperature or Z unknown)"),
                       (no_vol, "intervals without volume (gap, unreadable cell, row left out)")):
        k = int(mask.sum())
        if k:
            first = ", ".join(ts.tz_convert(tz).strftime("%Y-%m-%d %H:%M") for ts in iv.index[mask][:3])
            typer.echo(f"  {what}: {k}; first interval ends {first} ({tz})" + (" ..." if k > 3 else ""))


def _print_meter_kind(result) -> None:
    """One line for the meter kind (orifice, Coriolis, calibration) and one for the speed-of-sound check."""
    fm = result.flow_meter or {}
    mass = result.totals.get("mass_kg")
    if fm.get("kind") == ORIFICE_METER:
        typer.echo(f"  meter                orifice plate, {fm['standard']}, {fm['taps']} taps, beta {fm['beta']:.4f}; "
                   f"mass {_num(mass / 1000.0)} t")
    elif fm.get("kind") == CORIOLIS_METER:
        typer.echo(f"  meter                Coriolis: mass {_num(mass / 1000.0)} t; base volume = mass / base density")
    elif fm.get("meter_error_correction_pct") is not None:
        typer.echo(f"  meter error correction {fm['meter_error_correction_pct']:+.2f} % ({fm['calibration']})")
    sc = result.speed_of_sound_check
    if sc:
        largest = sc.get("largest_deviation_pct")
        typer.echo(f"  speed of sound       {sc['compared_intervals']} intervals compared with {sc['method']}, "
                   f"{sc['flagged_intervals']} beyond {sc['threshold_pct']:g} %"
                   + (f" (largest {largest:+.2f} %)" if largest is not None else ""))


def print_summary(result, written: dict) -> None:
    t = result.totals
    s = result.settings
    du = _Display(s)
    unc = result.uncertainty
    u_rel = unc.expanded_pct if unc is not None else None
    u_rel = u_rel / 100.0 if _finite(u_rel) else None
    u_erel = unc.expanded_energy_pct if unc is not None else None
    u_erel = u_erel / 100.0 if _finite(u_erel) else u_rel

    def vol(v):  # a month volume [m3] with the month's relative uncertainty
        return du.text("volume", v, abs(v) * u_rel if (u_rel and _finite(v)) else None)

    typer.echo(f"meterfix: {s.meter}  method {result.method['name']} ({result.method['edition']})")
    typer.echo(f"  base conditions      {du.exact('pressure', s.base_pressure)}, "
               f"{du.exact('temperature', s.base_temperature)}" + (f"   (preset {s.base})" if s.base else ""))
    _print_reading(result)
    gm = result.gas_month
    if gm:
        typer.echo(f"  {_lc(V.GAS_MONTH):<20} {gm['month']}: {gm['hours_logged']:g} of {gm['hours_in_month']:g} hours "
                   f"logged ({gm['coverage_pct']:.4g} %)"
                   + (f"; left out: {gm['intervals_before_month']} interval(s) before, "
                      f"{gm['intervals_after_month']} after" if gm['intervals_before_month'] or gm['intervals_after_month']
                      else ""))
    flagged = int(result.intervals["flagged"].sum())
    kinds = flags_breakdown({k: v for k, v in result.flags.items() if k != "estimated"})
    typer.echo(f"  intervals            {t['intervals']}  (flagged {flagged}" + (f": {kinds}" if kinds else "") + ")")
    _print_meter_kind(result)
    if (result.flow_meter or {}).get("kind") in (ORIFICE_METER, CORIOLIS_METER):
        # measured as mass: the volume at line conditions is mass / density at line
        typer.echo(f"  {_lc(V.UNCORRECTED_VOLUME):<20} {vol(t['uncorrected_volume_m3'])} at line conditions "
                   "(mass / density at line)")
    else:
        typer.echo(f"  {_lc(V.UNCORRECTED_VOLUME):<20} {vol(t['uncorrected_volume_m3'])} at line conditions")
    typer.echo(f"  {_lc(V.BASE_VOLUME):<20} {vol(t['base_volume_m3'])} {V.AT_BASE}")
    # the ideal-gas error is the difference of two corrections of the same data: the Z method's own
    # uncertainty bounds its digits
    from ..z.registry import get_method

    try:
        u_z = (get_method(result.method["name"]).uncertainty_pct or {}).get(0) or 0.1
    except Exception:  # noqa: BLE001 - a method no longer registered: the common 0.1 %
        u_z = 0.1
    typer.echo(f"  {_lc(V.BASE_VOLUME_IDEAL)}\n  {'':<20} {vol(t['ideal_gas_base_volume_m3'])} {V.AT_BASE}   "
               f"{_lc(V.IDEAL_GAS_ERROR)} "
               f"{_pct(t.get('ideal_gas_error_pct'), u_z)}")
    if t.get("energy_MJ") is not None:
        e = t["energy_MJ"] * 1e6
        std = result.method.get("energy_standard")
        typer.echo(f"  energy               {du.text('energy', e, abs(e) * u_erel if u_erel else None)}"
                   + (f"   ({std})" if std else ""))
    if u_rel is not None:
        typer.echo(f"  expanded uncertainty {_unc(100 * u_rel)} % (k = 2); figures above are rounded to it")
    rec = result.reconciliation
    if rec is not None:
        rt = rec.totals or {}
        u = (rec.uncertainty or {}).get("combined_expanded_pct")
        u = u if _finite(u) else None
        typer.echo(f"  invoice              {len(rec.periods)} period(s); {_lc(V.INVOICE_MINUS_OURS)} "
                   f"{_pct(rt.get('volume_difference_pct'), u)} of volume"
                   + (f", {_pct(rt.get('energy_difference_pct'), u)} of energy"
                      if _finite(rt.get("energy_difference_pct")) else ""))
        verdict = []
        if u is not None:
            verdict.append(("exceeds" if rt.get("exceeds_uncertainty") else "within")
                           + f" the combined uncertainty ±{_unc(u)} %")
        if _finite(rt.get("tolerance_pct")):
            verdict.append(("exceeds" if rt.get("exceeds_tolerance") else "within")
                           + f" the contract tolerance ±{rt['tolerance_pct']:g} %")
        if verdict:
            typer.echo("    " + "; ".join(verdict))
        att = rec.attribution
        if len(att):
            u_v = abs(rt.get("volume_ours_m3") or 0.0) * u / 100.0 if u is not None else None
            tiny = 1e-6 * abs(rt.get("volume_ours_m3") or 0.0)
            shown = att[(att["kind"] == "step") & (att["volume_m3"].abs() > tiny)
                        & att["step"].isin(["base pressure", "base temperature"])]
            for _, r in shown.iterrows():
                typer.echo(f"    {'restated to the invoice ' + r['step']:<44} "
                           f"{'+' if r['volume_m3'] > 0 else ''}{du.text('volume', r['volume_m3'], u_v)}")
            status = att["status"] if "status" in att.columns else att["applied"].map(
                lambda a: "credited" if a else "tried")
            for (_, r), st in zip(att.iterrows(), status):
                if r["kind"] != "step" or r["step"] in ("base pressure", "base temperature"):
                    continue
                if r["step"] == "not explained":
                    label = V.NOT_EXPLAINED
                elif st == "credited":
                    label = f"explained by {r['step']}"
                else:
                    continue
                if r["volume_m3"] == 0 and label == V.NOT_EXPLAINED:
                    continue
                typer.echo(f"    {label:<44} {'+' if r['volume_m3'] > 0 else ''}"
                           f"{du.text('volume', r['volume_m3'], u_v)}")
            tried = [r["step"] for (_, r), st in zip(att.iterrows(), status) if st == "tried"]
            if tried:
                typer.echo(f"    tried, not credited: {', '.join(tried)}")
        cov = rec.periods["coverage_pct"] if "coverage_pct" in rec.periods else None
        if cov is not None and len(cov) and _finite(float(cov.min())) and float(cov.min()) < 99.5:
            typer.echo(f"    note: our log covers only {float(cov.min()):.3g} % of a billed period's hours: "
                       "the difference includes the hours without our data")
        for w in rec.warnings:
            typer.echo(f"    note: {w}")
    cc = result.corrector_check
    if cc is not None:
        u_c = cc.threshold_pct if _finite(cc.threshold_pct) else None
        if _finite(cc.size_pct):
            typer.echo(f"  site corrector       {_pct(cc.size_pct, u_c)} against ours over the month")
        else:
            typer.echo("  site corrector       not compared")
        material = [f for f in cc.findings if f.get("material", True)]
        minor = [f for f in cc.findings if not f.get("material", True)]
        if material:
            best = material[0]
            typer.echo(f"    likely cause: {best.get('description', best['cause'])} ({_pct(best.get('size_pct'), u_c)} "
                       f"of the month, fit residual {_residual(best.get('rms_residual_pct'))} rms)")
            tie = [f.get("description", f["cause"]) for f in material[1:]
                   if _finite(f.get("rms_residual_pct")) and _finite(best.get("rms_residual_pct"))
                   and f["rms_residual_pct"] <= 2 * best["rms_residual_pct"] + 1e-6]
            if tie:
                typer.echo(f"    fits as well: {', '.join(tie)} (the data cannot tell these apart)")
        for f in minor:
            typer.echo(f"    below the {cc.threshold_pct:g} % threshold, strongly evidenced: "
                       f"{f.get('description', f['cause'])} ({_pct(f.get('size_pct'), u_c)})")
        if not cc.findings and not (cc.totals or {}).get("column_suspect"):
            typer.echo("    no misconfiguration found with evidence")
        for w in cc.warnings:
            typer.echo(f"    note: {w}")
    _print_without_result(result)
    for w in result.warnings:
        typer.echo(f"  note: {w}")
    typer.echo("  meterfix supports review and invoice queries; it is not an approved conversion device and")
    typer.echo("  defers to the contract, legal-metrology rules and licensed practice.")
    typer.echo("  outputs:")
    for kind, path in written.items():
        typer.echo(f"    {kind:<11} {path}")
