"""Where the shipped data folders are: ``templates`` and ``fixtures``.

In an installed wheel they are the packages ``meterfix.templates`` and ``meterfix.fixtures``
(pyproject maps the top-level folders onto them). When meterfix is imported straight from a
source checkout (for example ``python -m pytest`` run in the repository, which puts the checkout
first on ``sys.path``), those packages do not exist as such, and the folders beside the
``meterfix`` source folder are used instead.
"""

from __future__ import annotations

import importlib.resources
from pathlib import Path


def data_folder(name: str) -> Path:
    """The folder of the shipped ``templates`` or ``fixtures`` data.

    Parameters
    ----------
    name : str   ``"templates"`` or ``"fixtures"``
    """
    if name not in ("templates", "fixtures"):
        raise ValueError(f"unknown data folder '{name}'")
    try:
        return Path(str(importlib.resources.files(f"meterfix.{name}")))
    except ModuleNotFoundError:
        checkout = Path(__file__).resolve().parent.parent / name
        if checkout.is_dir():
            return checkout
        raise
