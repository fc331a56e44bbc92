"""The typer application every command module registers on, and the one way a command fails."""

from __future__ import annotations

import typer

from ..errors import MeterfixError

app = typer.Typer(
    name="meterfix",
    help="Gas volumes and energy at contract base conditions, with real-gas Z.\n\n"
         "Start with 'meterfix demo'. Results support review and invoice queries; meterfix is not "
         "an approved conversion device.",
    no_args_is_help=True,
    add_completion=False,
    pretty_exceptions_enable=False,
    rich_markup_mode=None,
)


def _fail(exc: MeterfixError) -> None:
    typer.echo(f"meterfix: error: {exc}", err=True)
    raise typer.Exit(2)
