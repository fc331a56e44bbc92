"""Command line: a thin typer layer over the Python API.

Exit codes: 0 success; 1 run finished with findings above ``--fail-on``; 2 bad input or settings
(one line naming file, sheet, row, column and what to do; never a traceback).
"""

from __future__ import annotations

import json
import sys
from pathlib import Path
from typing import List, Optional

import typer

from ..constants import PSI, T0
from ..errors import MeterfixError

from .app import _fail, app  # noqa: F401  (the application; commands register on it)


def _gas_from_options(gas: Optional[str], composition: Optional[Path]):
    from ..gas.composition import Composition

    if gas and composition:
        from ..errors import SettingsError
        raise SettingsError("give --gas or --composition, not both")
    if gas:
        return Composition.parse(gas)
    if composition:
        from ..readers import read_analyses

        analyses = read_analyses(composition)
        return analyses[0][1]
    return None


# ---------------------------------------------------------------------------------------------
@app.command("z", short_help="Z, density and reduced properties at one state.")
def z_command(
    gas: Optional[str] = typer.Option(None, "--gas", help="Mole fractions, e.g. 'methane=0.95,ethane=0.03,nitrogen=0.02' (percent also accepted)."),
    composition: Optional[Path] = typer.Option(None, "--composition", help="A gas-analysis file (CSV/XLSX) instead of --gas."),
    method: str = typer.Option("aga8-detail", "--method", help="Z method (default aga8-detail): ideal, lee-kesler, pitzer-virial, dak, hall-yarborough, aga8-detail, aga8-gross1, aga8-gross2, gerg-2008."),
    pressure: Optional[str] = typer.Option(None, "--pressure", help="Pressure with unit: '600 psia', '40 bar(a)'; gauge needs --atmospheric-pressure."),
    temperature: Optional[str] = typer.Option(None, "--temperature", help="Temperature with unit: '60 degF', '15 degC', '288.15 K'."),
    volume: Optional[str] = typer.Option(None, "--volume", help="Specific volume 'm3/kg' or 'ft3/lb', or molar volume 'm3/mol'."),
    atmospheric_pressure: Optional[str] = typer.Option(None, "--atmospheric-pressure", help="For a gauge --pressure, e.g. '14.4 psia'."),
    as_json: bool = typer.Option(False, "--json", help="Print SI values as JSON instead of a table."),
):
    """Z of a gas at one state: give any two of --pressure, --temperature, --volume."""
    try:
        _z(gas, composition, method, pressure, temperature, volume, atmospheric_pressure, as_json)
    except MeterfixError as exc:
        _fail(exc)


def _parse_volume(text: str, molar_mass: float):
    """'0.05 m3/kg' → molar volume [m3/mol]."""
    import re

    from ..errors import UnitError
    from ..units import parse_unit

    m = re.match(r"^\s*([-+]?[\d.]+(?:[eE][-+]?\d+)?)\s*(.+?)\s*/\s*(kg|lb|mol|kmol|lbmol)\s*$", text)
    if not m:
        raise UnitError(f"'{text}' is not a specific or molar volume",
                        hint="write e.g. '0.05 m3/kg', '0.8 ft3/lb' or '0.0004 m3/mol'")
    v = float(m.group(1)) * parse_unit(m.group(2), "volume").scale
    per = m.group(3)
    if per == "kg":
        return v * molar_mass
    if per == "lb":
        return v / 0.45359237 * molar_mass
    if per == "mol":
        return v
    if per == "kmol":
        return v / 1000.0
    return v / 453.59237  # lbmol


def _z(gas, composition, method, pressure, temperature, volume, atmospheric_pressure, as_json):
    from ..errors import SettingsError
    from ..units import parse_quantity, to_absolute
    from ..z.base import RANGE_NAMES
    from ..z.registry import get_method
    from ..z.state import solve_state

    given = [x is not None for x in (pressure, temperature, volume)]
    if sum(given) != 2:
        raise SettingsError("give exactly two of --pressure, --temperature, --volume",
                            hint=f"got {sum(given)}")
    m = get_method(method)
    g = _gas_from_options(gas, composition)
    if g is None:
        raise SettingsError("no gas given", hint="give --gas 'methane=0.95,ethane=0.03,nitrogen=0.02' or --composition FILE")
    atm = parse_quantity(atmospheric_pressure, "pressure").value if atmospheric_pressure else None
    p = t = vm = None
    if pressure is not None:
        q = parse_quantity(pressure, "pressure")
        raw = float(q.unit.from_si(q.value)) if q.unit.offset == 0 else q.value
        p = float(to_absolute(raw, q.unit, atm, name="--pressure"))
        if p <= 0:
            raise SettingsError(f"--pressure '{pressure}' is not above zero absolute")
    if temperature is not None:
        t = parse_quantity(temperature, "temperature").value
    molar_mass = g.molar_mass if hasattr(g, "molar_mass") else None
    if volume is not None:
        vm = _parse_volume(volume, molar_mass)
    st = solve_state(g, m.name, pressure=p, temperature=t, molar_volume=vm)
    import numpy as np

    def f(x):
        v = float(np.asarray(x).reshape(-1)[0])
        return v

    z = f(st.z)
    if not np.isfinite(z):
        reason = str(np.asarray(st.reason).reshape(-1)[0]) or "no solution"
        raise SettingsError(f"{m.name} gives no gas-phase result at this state ({reason})",
                            hint="check the pressure and temperature; the gas may be liquid or beyond the method")
    mm = molar_mass
    out = {
        "z": z,
        "pressure_Pa": f(st.pressure),
        "temperature_K": f(st.temperature),
        "molar_volume_m3_per_mol": f(st.molar_volume),
        "specific_volume_m3_per_kg": f(st.molar_volume) / mm,
        "density_kg_per_m3": mm / f(st.molar_volume),
        "molar_mass_kg_per_mol": mm,
        "specific_gas_constant_J_per_kg_K": 8.31446261815324 / mm,
        "reduced_pressure": f(st.reduced_pressure),
        "reduced_temperature": f(st.reduced_temperature),
        "pseudo_reduced_volume": f(st.pseudo_reduced_volume),
        "method": m.name,
        "edition": m.edition,
        "range": RANGE_NAMES[int(np.asarray(st.range_class).reshape(-1)[0])],
        "in_range": bool(int(np.asarray(st.range_class).reshape(-1)[0]) <= 1),
    }
    if as_json:
        from ..writers.summary import json_safe

        typer.echo(json.dumps(json_safe(out), indent=2, allow_nan=False))
        return
    rows = [
        ("Z", f"{out['z']:.6f}", ""),
        ("pressure", f"{out['pressure_Pa'] / 1e3:.4f} kPa", f"{out['pressure_Pa'] / PSI:.3f} psia"),
        ("temperature", f"{out['temperature_K']:.3f} K", f"{out['temperature_K'] - T0:.3f} degC"),
        ("specific volume", f"{out['specific_volume_m3_per_kg']:.6g} m3/kg", ""),
        ("density", f"{out['density_kg_per_m3']:.6g} kg/m3", ""),
        ("molar mass", f"{out['molar_mass_kg_per_mol'] * 1000:.4f} g/mol", ""),
        ("specific gas constant", f"{out['specific_gas_constant_J_per_kg_K']:.4f} J/(kg K)", ""),
        ("reduced pressure p/Pc", f"{out['reduced_pressure']:.4f}", "Kay's rule pseudo-critical"),
        ("reduced temperature T/Tc", f"{out['reduced_temperature']:.4f}", "Kay's rule pseudo-critical"),
        ("pseudo-reduced volume v/(R Tc/Pc)", f"{out['pseudo_reduced_volume']:.4f}", ""),
        ("method", m.name, m.edition),
        ("range", out["range"], m.range_text),
    ]
    w = max(len(r[0]) for r in rows)
    for name, val, note in rows:
        typer.echo(f"  {name:<{w}}  {val:<22} {note}".rstrip())
    if not out["in_range"]:
        typer.echo(f"  warning: this state is outside the range of {m.name}; treat Z with caution")


@app.command("methods", short_help="Z methods, editions and validity ranges.")
def methods_command():
    """List the Z methods with their edition and validity range."""
    from ..meters.density import density_basis
    from ..z.registry import get_method, method_names

    for name in method_names():
        m = get_method(name)
        typer.echo(f"{name:<16} {m.edition}")
        if m.range_text:
            typer.echo(f"{'':<16} range: {m.range_text}")
        typer.echo(f"{'':<16} orifice and Coriolis meters: {density_basis(m)}")
    import textwrap

    from ..z.phase import LIMITS_TEXT

    typer.echo("")
    typer.echo("\n".join(textwrap.wrap(LIMITS_TEXT, 100)))


#: the blank templates shipped in meterfix.templates, in the order they are written
TEMPLATE_FILES = ("log.xlsx", "analyses.xlsx", "invoice.xlsx", "site.toml")


@app.command("template", short_help="Blank log, analysis and invoice workbooks, site file.")
def template_command(
    folder: Path = typer.Argument(..., help="Folder to write the blank templates into (created if missing)."),
    overwrite: bool = typer.Option(False, "--overwrite", help="Replace template files already in the folder."),
):
    """Write blank templates: a log workbook, a gas-analysis workbook, an invoice workbook and a site file."""
    try:
        for path in write_templates(folder, overwrite=overwrite):
            typer.echo(str(path))
    except MeterfixError as exc:
        _fail(exc)


def write_templates(folder, *, overwrite: bool = False) -> list:
    """Copy the shipped templates into ``folder``; every file checked before the first is written."""
    from ..errors import InputError
    from ..writers.atomic import check_target, write_bytes

    out = Path(folder)
    if out.exists() and not out.is_dir():
        raise InputError("is a file, not a folder", file=out, hint="give a folder for the templates")
    from ..resources import data_folder

    src = data_folder("templates")
    targets = [out / name for name in TEMPLATE_FILES]
    for t in targets:
        try:
            check_target(t, overwrite=overwrite)
        except InputError as exc:
            raise InputError(exc.message, file=t, hint="pass --overwrite or choose another folder") from None
    return [write_bytes(t, src.joinpath(t.name).read_bytes(), overwrite=overwrite) for t in targets]


# ---------------------------------------------------------------------------------------------
def main(argv: Optional[List[str]] = None) -> int:
    """Console entry point; never lets a traceback reach the user for our own errors, nor a
    library's warning (what the user must know is in the run's own notes and flags)."""
    import warnings

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            app(args=argv, standalone_mode=True)
    except SystemExit as exc:
        return int(exc.code or 0) if isinstance(exc.code, int) else (0 if exc.code is None else 2)
    except MeterfixError as exc:
        typer.echo(f"meterfix: error: {exc}", err=True)
        return 2
    except OSError as exc:  # an operating-system error no command turned into a message: one line, no traceback
        from ..writers.outset import os_error

        typer.echo(f"meterfix: error: {os_error(exc, what='file system error')}", err=True)
        return 2
    return 0


from . import correct  # noqa: E402,F401  (registers 'correct' and the commands built on it)
from . import fleet  # noqa: E402,F401  (registers 'fleet')
from . import properties  # noqa: E402,F401  (registers 'properties')
from . import store  # noqa: E402,F401  (registers 'history' and 'verify')
from . import balance  # noqa: E402,F401  (registers 'balance')

if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
