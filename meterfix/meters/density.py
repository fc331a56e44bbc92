"""Line and base density from a Z method, so that density and Z agree.

Where a method gives its own molar density and molar mass (AGA8 DETAIL and GROSS with
R = 8.31451 J/(mol K) and AGA8's molar-mass table; GERG-2008 with R = 8.314472 J/(mol K) and its
own table), the mass density is theirs: rho = D · M. Other methods (correlations) give only Z:
rho = p M / (Z R T) with R of the 2019 SI and the analysis' molar mass. ``density_source`` says
which ran.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..constants import R
from ..z import evaluate_z


def density_basis(method) -> str:
    """How the meter kinds get density from a Z method (``meterfix methods`` prints it).

    Parameters
    ----------
    method : ZMethod   a method of the registry
    """
    from ..z.aga8_detail_mixture import R_DETAIL
    from ..z.aga8_gross import R as R_GROSS
    from ..z.gerg2008_mixture import R_GERG

    own = {"aga8-detail": f"R = {R_DETAIL} J/(mol K) and AGA8's molar masses",
           "aga8-gross1": f"R = {R_GROSS} J/(mol K), M from the relative density",
           "aga8-gross2": f"R = {R_GROSS} J/(mol K), M from the relative density",
           "gerg-2008": f"R = {R_GERG} J/(mol K) and GERG-2008's molar masses"}
    if method.name in own:
        return f"density = its molar density x molar mass ({own[method.name]})"
    return f"density = p M / (Z R T), R = {R:.7g} J/(mol K) (2019 SI), M of the analysis"


@dataclass
class GasState:
    """Density and related properties of a gas at arrays of (p, T) (SI, one shape).

    density [kg/m3], z [-], speed_of_sound [m/s] or None, isentropic_exponent [-] or None
    (kappa = w^2 rho / p), range_class (int8), reason (str), source (text for `methods`).
    """

    density: np.ndarray
    z: np.ndarray
    speed_of_sound: np.ndarray | None
    isentropic_exponent: np.ndarray | None
    range_class: np.ndarray
    reason: np.ndarray
    source: str


def gas_state(pressure, temperature, gas, method: str, *, molar_mass: float = np.nan,
              speed_of_sound: bool = False) -> GasState:
    """Density, Z and (optionally) speed of sound and isentropic exponent by a Z method.

    Parameters
    ----------
    pressure : float or ndarray [Pa]      absolute
    temperature : float or ndarray [K]
    gas : Composition or GrossCharacterization
    method : str                          a Z method of the registry
    molar_mass : float [kg/mol]           used only where the method gives no molar mass
    speed_of_sound : bool                 also compute w and kappa (methods that have them)

    Returns
    -------
    GasState
    """
    p = np.asarray(pressure, float)
    t = np.asarray(temperature, float)
    res = evaluate_z(p, t, gas, method, speed_of_sound=speed_of_sound)
    z = np.broadcast_to(np.asarray(res.z, float), np.broadcast(p, t).shape)
    if res.molar_density is not None and res.molar_mass is not None:
        rho = np.asarray(res.molar_density, float) * res.molar_mass
        source = (f"{res.method} molar density times its own molar mass "
                  f"({res.edition}; the gas constant and molar masses of that standard)")
    else:
        with np.errstate(invalid="ignore", divide="ignore"):
            rho = p * molar_mass / (z * R * t)
        source = f"p M / (Z R T): Z by {res.method}, R of the 2019 SI, the analysis' molar mass"
    w = kappa = None
    if speed_of_sound and res.speed_of_sound is not None:
        w = np.asarray(res.speed_of_sound, float)
        with np.errstate(invalid="ignore"):
            kappa = w * w * rho / p
    return GasState(np.broadcast_to(rho, z.shape), z, w, kappa, np.asarray(res.range_class), np.asarray(res.reason),
                    source)
