"""Compressibility factor Z by published methods, behind one dispatcher.

``compressibility(pressure, temperature, composition, method=...)`` returns Z;
``evaluate_z`` returns the full :class:`ZResult` (range class, failure reasons, density ...).
"""

from __future__ import annotations

import warnings

import numpy as np

from ..errors import RangeWarning
from ..gas.composition import as_composition
from ..gas.gross import GrossCharacterization
from .ideal import IDEAL_METHOD
from .phase import REASON_NOT_GAS, mark_not_gas
from .base import EXTENDED, NORMAL, OUTSIDE, RANGE_NAMES, ZResult
from .registry import ZMethod, get_method, method_names, register, z_methods

DEFAULT_METHOD = "aga8-detail"


def _gas(gas, method: ZMethod):
    if isinstance(gas, GrossCharacterization):
        if method.gas_input != "gross" and method.family != "natural-gas correlation":
            from ..errors import SettingsError
            raise SettingsError(f"method '{method.name}' needs a composition, not a gross characterisation",
                                hint="use aga8-gross1 or aga8-gross2 with heating value and relative density")
        return gas
    if gas is None and method.name == IDEAL_METHOD:
        return None
    return as_composition(gas)


def evaluate_z(pressure, temperature, composition, method: str = DEFAULT_METHOD, **options) -> ZResult:
    """Z and its diagnostics for arrays of points.

    Parameters
    ----------
    pressure : float or array_like [Pa]      absolute
    temperature : float or array_like [K]
    composition : Composition, mapping of name -> mole fraction, or GrossCharacterization
    method : str                             a registry name (see ``method_names()``)

    Returns
    -------
    ZResult
        Where the state is not a single gas phase (meterfix.z.phase: a gas dominated by one
        condensable component at or above its dew point) Z is NaN with reason ``not-gas``.
    """
    m = get_method(method)
    gas = _gas(composition, m)
    p = np.asarray(pressure, dtype=float)
    t = np.asarray(temperature, dtype=float)
    res = m.evaluate(p, t, gas, **options)
    if gas is not None and not isinstance(gas, GrossCharacterization):
        # a liquid or two-phase state has no gas root worth the name: NaN, reason 'not-gas' (z/phase.py)
        res = mark_not_gas(res, p, t, gas)
    return res


def compressibility(pressure, temperature, composition=None, method: str = DEFAULT_METHOD, **options):
    """Compressibility factor Z = p v / (R T) of a gas.

    Parameters
    ----------
    pressure : float, ndarray or Series [Pa]   absolute pressure
    temperature : float, ndarray or Series [K]
    composition : mapping of component name -> mole fraction, Composition, or
        GrossCharacterization (GROSS methods)
    method : str
        ``ideal``, ``lee-kesler``, ``pitzer-virial``, ``dak``, ``hall-yarborough``,
        ``aga8-detail``, ``aga8-gross1``, ``aga8-gross2``, ``gerg-2008``.

    Returns
    -------
    float, ndarray or Series [-]
        Same kind as the input. Points outside the method's range are computed but raise a
        :class:`~meterfix.errors.RangeWarning`; points where the method fails are NaN (use
        :func:`evaluate_z` for the reasons).

    """
    import pandas as pd

    index = None
    for arg in (pressure, temperature):
        if isinstance(arg, pd.Series):
            index = arg.index
            break
    p = np.asarray(pressure, dtype=float)
    t = np.asarray(temperature, dtype=float)
    options.setdefault("speed_of_sound", False)  # Z only: the derivatives only when asked
    res = evaluate_z(p, t, composition, method, **options)
    n_out = int(np.count_nonzero(res.range_class == OUTSIDE))
    n_nan = int(np.count_nonzero(~np.isfinite(res.z)))
    if n_out or n_nan:
        warnings.warn(f"{res.method}: {n_out} point(s) outside the method's range, {n_nan} without a result",
                      RangeWarning, stacklevel=2)
    z = res.z
    if index is not None:
        return pd.Series(np.broadcast_to(z, len(index)), index=index, name="z")
    if np.ndim(z) == 0 or (p.ndim == 0 and t.ndim == 0):
        return float(np.asarray(z).reshape(-1)[0]) if np.size(z) == 1 else z
    return z


__all__ = ["IDEAL_METHOD", "compressibility", "evaluate_z", "ZResult", "ZMethod", "register", "get_method",
           "method_names", "z_methods", "REASON_NOT_GAS", "NORMAL", "EXTENDED", "OUTSIDE", "RANGE_NAMES", "DEFAULT_METHOD"]
