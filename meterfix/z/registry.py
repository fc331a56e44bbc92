"""Registry of Z methods with their published edition, inputs, range and uncertainty.

Adding a method: write a module in ``meterfix/z/`` with a pure vectorized function returning a
:class:`~meterfix.z.base.ZResult`, declare a :class:`ZMethod` for it in a module-level list
``METHODS``, and add the module name to ``_BUILTIN_MODULES`` below (see DEVELOPERS.md).
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from ..errors import SettingsError
from .base import EXTENDED, NORMAL, OUTSIDE

_BUILTIN_MODULES = ["ideal_method", "generalized", "correlations", "aga8_detail", "aga8_gross", "gerg2008"]


@dataclass(frozen=True)
class ZMethod:
    """A registered Z method.

    Attributes
    ----------
    name : str            registry name (``aga8-detail``)
    edition : str         the published method and edition that runs
    evaluate : callable   ``evaluate(pressure [Pa], temperature [K], gas, **options) -> ZResult``
    gas_input : str       ``"composition"`` or ``"gross"`` (accepts a GrossCharacterization, or a
                          Composition from which the characterisation is derived)
    family : str          ``ideal``, ``generalized chart``, ``natural-gas correlation``,
                          ``equation of state``
    range_text : str      the validity range in words, for reports
    uncertainty_pct : dict  expanded (k = 2) relative uncertainty of Z in percent, by range
                          class (0 normal, 1 extended); ``None`` for outside
    uncertainty_source : str where those figures come from
    """

    name: str
    edition: str
    evaluate: Callable
    gas_input: str = "composition"
    family: str = "equation of state"
    range_text: str = ""
    uncertainty_pct: dict = field(default_factory=dict)
    uncertainty_source: str = ""


_REGISTRY: dict[str, ZMethod] = {}
_LOADED = False


def register(method: ZMethod) -> ZMethod:
    """Add a method to the registry (a later registration with the same name replaces it)."""
    _REGISTRY[method.name] = method
    return method


_IMPORTED: set[str] = set()


def _load_builtins(until: str | None = None):
    """Import the built-in method modules in their order and register their methods; with
    ``until``, stop at the module that registers that name (a month through AGA8 DETAIL does not
    import GERG-2008 and its coefficient tables, about 20 ms of every start)."""
    global _LOADED
    if _LOADED or (until is not None and until in _REGISTRY):
        return
    for mod in _BUILTIN_MODULES:
        if mod in _IMPORTED:
            continue
        _IMPORTED.add(mod)
        try:
            m = importlib.import_module(f"meterfix.z.{mod}")
        except ModuleNotFoundError as exc:  # a method family not shipped in this build
            if exc.name != f"meterfix.z.{mod}":
                raise
            continue
        for method in getattr(m, "METHODS", []):
            register(method)
        if until is not None and until in _REGISTRY:
            return
    _LOADED = True


def method_names() -> list[str]:
    """Names of every registered method."""
    _load_builtins()
    return list(_REGISTRY)


def get_method(name: str) -> ZMethod:
    """Look a method up by name; an unknown name lists the valid ones."""
    key = str(name).strip().lower().replace("_", "-")
    aliases = {"detail": "aga8-detail", "aga8": "aga8-detail", "gerg": "gerg-2008", "gerg2008": "gerg-2008",
               "gross1": "aga8-gross1", "gross2": "aga8-gross2", "lk": "lee-kesler", "hy": "hall-yarborough"}
    key = aliases.get(key, key)
    _load_builtins(until=key)  # an unknown name loads every module: the hint names them all
    if key not in _REGISTRY:
        raise SettingsError(f"unknown Z method '{name}'", hint="valid methods: " + ", ".join(_REGISTRY))
    return _REGISTRY[key]


def z_methods(pressure, temperature, gas) -> list[str]:
    """Methods whose range holds every given point for this gas (normal or extended)."""
    _load_builtins()
    valid = []
    p = np.atleast_1d(np.asarray(pressure, float))
    t = np.atleast_1d(np.asarray(temperature, float))
    for name, m in _REGISTRY.items():
        try:
            res = m.evaluate(p, t, gas)
        except Exception:  # noqa: BLE001 - a method that cannot take this gas is simply not valid
            continue
        if np.all(res.range_class <= EXTENDED) and np.all(np.isfinite(res.z)):
            valid.append(name)
    return valid


__all__ = ["ZMethod", "register", "get_method", "method_names", "z_methods", "NORMAL", "EXTENDED", "OUTSIDE"]
