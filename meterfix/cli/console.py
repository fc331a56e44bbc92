"""Console summary of a month run (the CLI owns the terminal; the library never prints)."""

from __future__ import annotations

import contextlib
import math
import sys

import typer


def _fmt(v, digits=6):
    if v is None:
        return "-"
    return f"{v:,.{digits}g}" if isinstance(v, float) else str(v)


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


def _finite(v) -> bool:
    return isinstance(v, (int, float)) and math.isfinite(v)


def print_summary(result, written: dict) -> None:
    t = result.totals
    s = result.settings
    typer.echo(f"meterfix: {s.meter}  method {result.method['name']} ({result.method['edition']})")
    typer.echo(f"  base conditions      {s.pressure_base / 1e3:.4f} kPa, {s.temperature_base - 273.15:.2f} degC")
    typer.echo(f"  intervals            {t['intervals']}  (flagged: {int(result.intervals['flagged'].sum())})")
    typer.echo(f"  uncorrected volume   {t['uncorrected_volume_m3']:,.2f} m3")
    typer.echo(f"  base volume (real)   {t['base_volume_m3']:,.2f} m3")
    typer.echo(f"  base volume (Z = 1)  {t['ideal_gas_base_volume_m3']:,.2f} m3   ideal-gas error "
               f"{_fmt(t.get('ideal_gas_error_pct'), 4)} %")
    if t.get("energy_MJ") is not None:
        std = result.method.get("energy_standard")
        typer.echo(f"  energy               {t['energy_MJ'] / 1e3:,.3f} GJ" + (f"   ({std})" if std else ""))
    unc = result.uncertainty
    if unc is not None and getattr(unc, "expanded_pct", None) is not None:
        typer.echo(f"  expanded uncertainty {unc.expanded_pct:.3f} % (k = 2)")
    rec = result.reconciliation
    if rec is not None:
        rt = rec.totals or {}
        dv = rt.get("volume_difference_pct")
        typer.echo(f"  invoice              {len(rec.periods)} period(s); billed − ours "
                   f"{_fmt(dv, 4)} % of volume"
                   + (f", {_fmt(rt.get('energy_difference_pct'), 4)} % of energy"
                      if _finite(rt.get("energy_difference_pct")) else ""))
        u = (rec.uncertainty or {}).get("combined_expanded_pct")
        verdict = []
        if _finite(u):
            verdict.append(("exceeds" if rt.get("exceeds_uncertainty") else "within")
                           + f" the combined uncertainty ±{u:.3g} %")
        if _finite(rt.get("tolerance_pct")):
            verdict.append(("exceeds" if rt.get("exceeds_tolerance") else "within")
                           + f" the contract tolerance ±{rt['tolerance_pct']:.3g} %")
        if verdict:
            typer.echo("    " + "; ".join(verdict))
        att = rec.attribution
        steps = att[(att["kind"] == "step") & att["applied"].astype(bool) & (att["volume_m3"].abs() > 0)] \
            if len(att) else None
        if steps is not None and len(steps):
            top = steps.reindex(steps["volume_m3"].abs().sort_values(ascending=False).index).head(3)
            for _, r in top.iterrows():
                label = "not explained" if r["step"] == "unexplained" else f"explained by {r['step']}"
                typer.echo(f"    {label:<40} {r['volume_m3']:+,.1f} m3")
    cc = result.corrector_check
    if cc is not None:
        typer.echo(f"  site corrector       {_fmt(cc.size_pct, 4)} % against ours over the month")
        if cc.findings:
            best = cc.findings[0]
            typer.echo(f"    likely cause: {best['cause']} ({_fmt(best.get('size_pct'), 4)} % of the month, "
                       f"fit residual {_fmt(best.get('rms_residual_pct'), 2)} % rms)")
            tie = [f["cause"] for f in cc.findings[1:]
                   if _finite(f.get("rms_residual_pct")) and _finite(best.get("rms_residual_pct"))
                   and f["rms_residual_pct"] <= 2 * best["rms_residual_pct"] + 1e-6]
            if tie:
                typer.echo(f"    fits as well: {', '.join(tie)} (the data cannot tell these apart)")
        if not cc.findings:
            typer.echo("    no misconfiguration found above the threshold")
    for w in result.warnings:
        typer.echo(f"  note: {w}")
    typer.echo("  outputs:")
    for kind, path in written.items():
        typer.echo(f"    {kind:<11} {path}")
