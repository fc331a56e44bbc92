"""Common result type and range classes for every Z method."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

#: range classes
NORMAL, EXTENDED, OUTSIDE = 0, 1, 2
RANGE_NAMES = {NORMAL: "normal", EXTENDED: "extended", OUTSIDE: "outside"}

#: failure reasons (value of ZResult.reason where z is NaN, '' elsewhere)
REASON_NO_GAS_ROOT = "no-gas-root"
REASON_NO_CONVERGENCE = "no-convergence"
REASON_INVALID_INPUT = "invalid-input"  # non-finite, p <= 0 or T <= 0
REASON_NOT_GAS = "not-gas"  # liquid or two-phase state (meterfix.z.phase)


@dataclass
class ZResult:
    """What a Z method returns for arrays of points (all arrays broadcast to one shape).

    Attributes
    ----------
    z : ndarray [-]                 compressibility factor; NaN where the method failed
    range_class : ndarray of int8   0 normal, 1 extended, 2 outside the method's range
    reason : ndarray of str         '' or why z is NaN (no-gas-root, no-convergence, invalid-input, not-gas)
    method : str                    registry name, e.g. 'aga8-detail'
    edition : str                   the published edition that ran
    molar_density : ndarray or None [mol/m3]
    molar_mass : float or ndarray or None [kg/mol]  (the model's own molar masses)
    speed_of_sound : ndarray or None [m/s]
    extra : dict                    method-specific intermediates (reduced properties, ...)
    """

    z: np.ndarray
    range_class: np.ndarray
    reason: np.ndarray
    method: str
    edition: str
    molar_density: np.ndarray | None = None
    molar_mass: object = None
    speed_of_sound: np.ndarray | None = None
    extra: dict = field(default_factory=dict)

    @property
    def mass_density(self):
        """Mass density [kg/m3] where molar density and molar mass are known."""
        if self.molar_density is None or self.molar_mass is None:
            return None
        return self.molar_density * self.molar_mass

    @property
    def in_range(self):
        """True where the point lies in the normal or extended range and Z is finite."""
        return (self.range_class <= EXTENDED) & np.isfinite(self.z)


def invalid_points(pressure, temperature):
    """Mask of points no method can evaluate: non-finite, p <= 0 or T <= 0."""
    p = np.asarray(pressure, dtype=float)
    t = np.asarray(temperature, dtype=float)
    with np.errstate(invalid="ignore"):
        return ~(np.isfinite(p) & np.isfinite(t) & (p > 0) & (t > 0))


def range_by_box(pressure, temperature, normal, extended=None):
    """Range class from boxes ``(p_max [Pa], t_min [K], t_max [K])`` (p_min is 0)."""
    p = np.asarray(pressure, dtype=float)
    t = np.asarray(temperature, dtype=float)
    p, t = np.broadcast_arrays(p, t)
    out = np.full(p.shape, OUTSIDE, dtype=np.int8)
    if extended is not None:
        pm, tl, th = extended
        out[(p <= pm) & (t >= tl) & (t <= th)] = EXTENDED
    pm, tl, th = normal
    out[(p <= pm) & (t >= tl) & (t <= th)] = NORMAL
    return out
