"""The settings' options of a command, made from the settings table (no option block is written twice).

``@setting_options("correct")`` adds to a typer command one option per row of
:data:`meterfix.engine.settings_table.SETTINGS` that the command takes: its name is the setting's
(``--base-pressure``), its help the table's, grouped under the table's sections in ``--help``.
The command receives them all in one dict, ``settings_options``, keyed by parameter name, ready
for :func:`meterfix.engine.settings.build_settings`.
"""

from __future__ import annotations

import functools
import inspect
from typing import List, Optional

import typer

from ..engine.settings_table import Setting, help_text, options_for

#: accepted earlier spellings of a few options (the table's name is the one shown)
_ALSO = {"--columns": ("--column",), "--site-name": ()}


def _parameter(s: Setting) -> inspect.Parameter:
    names = (s.option_name, *_ALSO.get(s.option_name, ()))
    if s.kind == "bool":
        default = typer.Option(None, f"{s.option_name}/--no-{s.option_name[2:]}", help=help_text(s),
                               rich_help_panel=s.section, show_default=False)
        annotation = Optional[bool]
    elif s.kind in ("mapping", "list"):
        default = typer.Option(None, *names, help=help_text(s), rich_help_panel=s.section, show_default=False)
        annotation = Optional[List[str]]
    else:
        default = typer.Option(None, *names, help=help_text(s), rich_help_panel=s.section, show_default=False)
        annotation = Optional[str]
    return inspect.Parameter(s.param, inspect.Parameter.KEYWORD_ONLY, default=default, annotation=annotation)


def setting_options(command: str):
    """Decorator: the command's settings options, from the table, passed as ``settings_options``."""
    table = options_for(command)

    def wrap(func):
        sig = inspect.signature(func, eval_str=True)  # real types: the wrapper has other globals
        own = [p for p in sig.parameters.values() if p.name != "settings_options"]
        taken = {p.name for p in own}
        extra = [_parameter(s) for s in table if s.param not in taken]
        names = [p.name for p in extra]

        @functools.wraps(func)
        def command_function(**kwargs):
            opts = {n: kwargs.pop(n) for n in names}
            return func(**kwargs, settings_options=opts)

        params = own + extra
        command_function.__signature__ = sig.replace(parameters=params)
        command_function.__annotations__ = {p.name: p.annotation for p in params}
        del command_function.__wrapped__  # typer reads the signature above, not the function's own
        return command_function

    return wrap
