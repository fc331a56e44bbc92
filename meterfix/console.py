"""Console summary of a month run (the CLI owns the terminal; the library never prints)."""

from __future__ import annotations

import typer


def _fmt(v, digits=6):
    if v is None:
        return "-"
    return f"{v:,.{digits}g}" if isinstance(v, float) else str(v)


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
        typer.echo(f"  energy               {t['energy_MJ'] / 1e3:,.3f} GJ")
    unc = result.uncertainty
    if unc is not None and getattr(unc, "expanded_pct", None) is not None:
        typer.echo(f"  expanded uncertainty {unc.expanded_pct:.3f} % (k = 2)")
    for w in result.warnings:
        typer.echo(f"  note: {w}")
    typer.echo("  outputs:")
    for kind, path in written.items():
        typer.echo(f"    {kind:<10} {path}")
