"""`meterfix properties`: calorific values, density, relative density and Wobbe index of one gas by ISO 6976."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Optional

import typer

from ..constants import T0
from ..errors import MeterfixError
from .app import _fail, app

#: display unit and scale from SI of each property (the table; JSON stays SI)
_DISPLAY = {
    "molar_mass": ("molar mass", "g/mol", 1e3), "compression_factor": ("compression factor Z", "-", 1.0),
    "gross_heating_value_molar": ("gross heating value, molar", "kJ/mol", 1e-3),
    "net_heating_value_molar": ("net heating value, molar", "kJ/mol", 1e-3),
    "gross_heating_value_mass": ("gross heating value, mass", "MJ/kg", 1e-6),
    "net_heating_value_mass": ("net heating value, mass", "MJ/kg", 1e-6),
    "gross_heating_value_volumetric": ("gross heating value, volumetric", "MJ/m3", 1e-6),
    "net_heating_value_volumetric": ("net heating value, volumetric", "MJ/m3", 1e-6),
    "density": ("density", "kg/m3", 1.0), "relative_density": ("relative density", "-", 1.0),
    "wobbe_index_gross": ("Wobbe index, gross", "MJ/m3", 1e-6), "wobbe_index_net": ("Wobbe index, net", "MJ/m3", 1e-6),
}


@app.command("properties", short_help="Heating values, density, relative density, Wobbe index by ISO 6976.")
def properties_command(
    composition: Optional[Path] = typer.Option(None, "--composition", help="A gas-analysis file (CSV/XLSX) with one analysis; a 'Standard uncertainty' column and a correlation matrix (one column per component) are used when present."),
    gas: Optional[str] = typer.Option(None, "--gas", help="Mole fractions, e.g. 'methane=0.95,ethane=0.03,nitrogen=0.02' (percent also accepted)."),
    combustion_temperature: str = typer.Option(..., "--combustion-temperature", help="Combustion reference temperature: 0, 15, 15.55 (60 degF), 20 or 25 degC."),
    metering_temperature: str = typer.Option(..., "--heating-value-reference-temperature", "--metering-temperature", help="Metering reference temperature of the heating value (the setting heating_value_reference_temperature): 0, 15, 15.55 (60 degF) or 20 degC."),
    metering_pressure: str = typer.Option("101.325 kPa", "--heating-value-reference-pressure", "--metering-pressure", help="Metering reference pressure of the heating value, absolute, 90-110 kPa (default 101.325 kPa)."),
    edition: str = typer.Option("2016", "--energy-edition", "--edition", help="ISO 6976 edition (the setting energy_edition): 2016 (default) or 1995."),
    as_json: bool = typer.Option(False, "--json", help="Print SI values as JSON instead of a table."),
):
    """Properties of one gas from its composition, by ISO 6976:2016 (or 1995), with Annex B uncertainties."""
    try:
        _properties(composition, gas, combustion_temperature, metering_temperature, metering_pressure, edition, as_json)
    except MeterfixError as exc:
        _fail(exc)


def _gas(composition, gas):
    from ..errors import CompositionError, SettingsError
    from ..gas.composition import Composition

    if bool(gas) == bool(composition):
        raise SettingsError("give --gas or --composition (one of them)",
                            hint="e.g. --gas 'methane=0.95,ethane=0.03,nitrogen=0.02'")
    if gas:
        return Composition.parse(gas, allow_no_z=True)
    from ..readers import read_analyses

    analyses = read_analyses(composition)
    if len(analyses) != 1:
        raise CompositionError(f"the file holds {len(analyses)} analyses; properties takes one", file=composition,
                               hint="give a file with one analysis (Component | Mole percent), or use --gas")
    g = analyses[0][1]
    if not isinstance(g, Composition):
        raise CompositionError("the file is a gross characterisation, not a composition", file=composition,
                               hint="ISO 6976 needs the analysis: one row per component with its mole percent")
    return g


def _properties(composition, gas, t1_text, t2_text, p2_text, edition, as_json):
    from ..energy import iso6976 as I
    from ..energy.month import detail_vector
    from ..errors import SettingsError
    from ..units import parse_quantity

    g = _gas(composition, gas)
    t1 = parse_quantity(t1_text, "temperature").value
    t2 = parse_quantity(t2_text, "temperature").value
    pq = parse_quantity(p2_text, "pressure")
    if pq.is_gauge:
        raise SettingsError("the metering pressure is absolute; got a gauge unit", hint="write e.g. '101.325 kPa'")
    ed = str(edition).replace("ISO 6976:", "").strip()
    x, u, r = detail_vector(g, ed)
    res = I.properties(x, temperature_combustion=t1, temperature_metering=t2, pressure_metering=pq.value,
                       edition=ed, u_x=u if ed == "2016" else None, correlation=r)
    if u is not None and ed != "2016":
        g = type(g)(g.fractions, g.sum_as_given, g.notes + ("uncertainties given but not used: ISO 6976:1995 "
                                                            "states none for its component values",))
    if as_json:
        out = res.as_dict()
        from ..writers.summary import json_safe

        typer.echo(json.dumps(json_safe(out), indent=2, sort_keys=False, allow_nan=False))
        return
    typer.echo(f"meterfix properties  {res.edition}: combustion {t1 - T0:g} degC, metering "
               f"{t2 - T0:.4g} degC and {pq.value / 1000:.6g} kPa")
    typer.echo(f"  analysis total as given  {g.sum_as_given * 100:.6g} mol% (normalised to 100 %)")
    for n in g.notes:
        if "for Z" not in n and "energy only" not in n:  # the Z methods play no part here
            typer.echo(f"  note: {n}")
    unc = res.standard_uncertainty
    head = f"  {'':34} {'value':>14}  {'unit':<7}" + ("  u (k = 1)" if unc else "")
    typer.echo(head)
    for k in I.KEYS:
        label, unit, f = _DISPLAY[k]
        line = f"  {label:<34} {res.values[k] * f:>14.6f}  {unit:<7}"
        if unc:
            line += f"  {unc[k] * f:.6f}"
        typer.echo(line)
    typer.echo("  Results support review and invoice queries; meterfix is not an approved conversion device.")
