"""Ideal gas: Z = 1 exactly, at any pressure and temperature.

Used as the comparison case (what a corrector set to ideal gas computes), never as a
recommendation at pressure.
"""

from __future__ import annotations

import numpy as np

from .base import NORMAL, REASON_INVALID_INPUT, ZResult, invalid_points

#: the method name of the ideal gas law (Z = 1), named wherever a step treats it apart
IDEAL_METHOD = "ideal"
EDITION = "ideal gas law, Z = 1"


def z_ideal(pressure, temperature, composition=None) -> ZResult:
    """Ideal-gas compressibility, Z = 1.

    Parameters
    ----------
    pressure : float or ndarray [Pa]
    temperature : float or ndarray [K]
    composition : ignored

    Returns
    -------
    ZResult
    """
    p, t = np.broadcast_arrays(np.asarray(pressure, float), np.asarray(temperature, float))
    bad = invalid_points(p, t)
    z = np.where(bad, np.nan, 1.0)
    reason = np.where(bad, REASON_INVALID_INPUT, "")
    rng = np.full(p.shape, NORMAL, dtype=np.int8)
    from ..constants import R
    with np.errstate(divide="ignore", invalid="ignore"):
        rho = p / (R * t)
    molar_mass = None if composition is None else composition.molar_mass
    return ZResult(z, rng, reason, IDEAL_METHOD, EDITION, molar_density=np.where(bad, np.nan, rho),
                   molar_mass=molar_mass)
