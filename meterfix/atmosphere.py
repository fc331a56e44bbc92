"""Atmospheric pressure from elevation: U.S. Standard Atmosphere 1976 (= ISO 2533 to 32 km).

Troposphere (geopotential height H below 11 km):

    p = p0 (1 - L H / T0) ** (g0 M0 / (R* L))

with p0 = 101 325 Pa, T0 = 288.15 K, L = 0.0065 K/m, g0 = 9.806 65 m/s², M0 = 0.028 964 4 kg/mol,
R* = 8.314 32 J/(mol K) (the 1976 standard's own gas constant) and H = r0 h / (r0 + h),
r0 = 6 356 766 m.

References
----------
1. U.S. Standard Atmosphere, 1976, NOAA/NASA/USAF, equations 18 and 33a.
"""

from __future__ import annotations

import numpy as np

from .errors import InputError

_P0, _T0, _L, _G0, _M0, _RSTAR, _R0 = 101325.0, 288.15, 0.0065, 9.80665, 0.0289644, 8.31432, 6356766.0


def pressure_from_elevation(elevation, model: str = "us-1976"):
    """Standard-atmosphere pressure at a geometric elevation.

    Parameters
    ----------
    elevation : float or ndarray [m]   geometric height above mean sea level, -610 m to 11 000 m
    model : str                        only ``"us-1976"``

    Returns
    -------
    float or ndarray [Pa]
    """
    if model != "us-1976":
        raise InputError(f"unknown atmosphere model '{model}'", hint="use 'us-1976'")
    h = np.asarray(elevation, dtype=float)
    if np.any(~np.isfinite(h)) or np.any(h < -610.0) or np.any(h > 11000.0):
        raise InputError("elevation outside -610 m to 11 000 m (troposphere of the 1976 standard atmosphere)",
                         hint="check the unit of --elevation (e.g. '180 m' or '5000 ft')")
    H = _R0 * h / (_R0 + h)
    p = _P0 * (1.0 - _L * H / _T0) ** (_G0 * _M0 / (_RSTAR * _L))
    return float(p) if p.ndim == 0 else p
