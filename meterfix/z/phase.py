"""Is the state a single gas phase? A check for gases dominated by one condensable component.

Every Z method here solves for the gas (low-density) root of its equation of state. Below the
dew point that root still exists as a metastable vapour, so a liquid or two-phase state gets a
plausible-looking Z (pure CO2 at 51 bar(a), 11.5 degC is a liquid; the vapour root gives 0.52).
This module marks such states ``not-gas`` so that they have no result.

The check
---------
For a gas whose largest component j is condensable at T (T below its critical temperature) and
makes up at least ``DOMINANT_FRACTION`` of the moles, the dew-point pressure is estimated by
Raoult's law with the other components taken as non-condensing,

    p_dew(T) = p_sat,j(T) / x_j,

and a state with p >= p_dew is not a single gas phase (two-phase, or liquid above the bubble
point). p_sat,j is the Wagner equation in its original form (McGarry 1983, coefficients as
compiled in the ``chemicals`` library, table ``Psat_data_WagnerMcGarry``),

    ln(p_sat / p_c) = (A tau + B tau^1.5 + C tau^3 + D tau^6) / T_r,   tau = 1 - T_r,

and for hydrogen sulfide (not in that table) the corresponding-states equation of Ambrose &
Walton (1989) with the critical constants and acentric factor of meterfix.gas.components.

Limits (also printed by ``meterfix methods``)
---------------------------------------------
- Only gases with one condensable component of at least 90 mol %: CO2 streams, LPG, pure
  hydrocarbons, nitrogen or methane below their critical temperature. Natural gas (methane
  above its critical temperature of 190.6 K) is never flagged: its hydrocarbon and water dew
  points (retrograde condensation of the heavy traces) are not checked.
- Raoult's law is an estimate; near the critical point of the mixture, and for impurities that
  condense more easily than j (which lower the true dew point), it may flag a state a little
  early or late. Above the critical temperature of j nothing is flagged (dense phase is one
  phase; the methods' own ranges apply).
- Below the Wagner equations' lowest temperature (about the triple point) the extrapolated
  vapour pressure is used; the solid's vapour pressure is lower, so solid states may be missed.

References
----------
1. Wagner, W. (1973), Cryogenics 13, 470: the vapour-pressure equation; coefficients of
   McGarry, J. (1983), Ind. Eng. Chem. Process Des. Dev. 22, 313, via the ``chemicals`` package
   (Bell et al., Chemical Engineering Design Library), ``chemicals.vapor_pressure``.
2. Ambrose, D. and Walton, J. (1989), Pure Appl. Chem. 61, 1395.
3. Raoult's law for the dew point of an ideal mixture (common practice, textbook).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from ..gas.components import COMPONENTS, NAMES

TABLE_BY_NAME = {c.name: c for c in COMPONENTS}

from .base import REASON_NOT_GAS  # noqa: E402

#: a component "dominates" the gas from this mole fraction on [mol/mol]
DOMINANT_FRACTION = 0.90

#: Wagner (original form) coefficients: name -> (A, B, C, D, Tc [K], Pc [Pa], Tmin [K]);
#: chemicals 1.5.2 ``Psat_data_WagnerMcGarry`` (McGarry 1983), checked against it in tests/test_phase.py
WAGNER_MCGARRY = {
    "methane": (-6.00435, 1.1885, -0.834082, -1.22833, 190.53, 4596420.0, 91.0),
    "nitrogen": (-6.09676, 1.1367, -1.04072, -1.93306, 126.2, 3399610.0, 63.0),
    "carbon_dioxide": (-6.95626, 1.19695, -3.12614, 2.99448, 304.15, 7374990.0, 217.0),
    "ethane": (-6.34307, 1.0163, -1.19116, -2.03539, 305.42, 4869710.0, 133.0),
    "propane": (-6.67833, 1.15437, -1.64984, -2.70017, 369.82, 4255760.0, 145.0),
    "isobutane": (-6.95579, 1.5009, -2.52717, -1.49776, 408.14, 3658010.0, 165.0),
    "n_butane": (-6.88709, 1.15157, -1.99873, -3.13003, 425.18, 3790620.0, 170.0),
    "isopentane": (-7.12727, 1.38996, -2.54302, -2.45657, 460.43, 3385900.0, 220.0),
    "n_pentane": (-7.28936, 1.53679, -3.08367, -1.02456, 469.74, 3378620.0, 195.0),
    "n_hexane": (-7.5165, 1.54797, -3.38541, -2.36767, 507.9, 3036170.0, 220.0),
    "n_heptane": (-7.67468, 1.37068, -3.5362, -3.20243, 540.1, 2732370.0, 240.0),
    "n_octane": (-7.87867, 1.32514, -3.78494, -4.44565, 568.81, 2482820.0, 260.0),
    "n_nonane": (-8.2448, 1.57885, -4.38155, -4.04412, 594.6, 2310200.0, 343.0),
    "n_decane": (-8.56523, 1.97756, -5.81971, -0.299824, 617.6, 2107600.0, 368.0),
    "hydrogen": (-5.57929, 2.60012, -0.85506, 1.70503, 33.19, 1309600.0, 14.0),
    "oxygen": (-6.28275, 1.73619, -1.81349, -0.0253645, 154.7, 5089870.0, 54.0),
    "carbon_monoxide": (-6.20798, 1.27885, -1.34533, -2.56842, 132.91, 3501150.0, 71.0),
    "water": (-7.76451, 1.45838, -2.7758, -1.23303, 647.35, 22122300.0, 275.0),
    "helium": (-3.97466, 1.00074, 1.50056, -0.430197, 5.2, 230029.0, 2.0),
    "argon": (-5.90501, 1.12627, -0.767869, -1.62721, 150.651, 4857990.0, 84.0),
}

#: the limits of the check, as ``meterfix methods`` prints them
LIMITS_TEXT = (
    "Phase check (every method): a state is 'not-gas' (no result) when one condensable component makes up "
    f"at least {DOMINANT_FRACTION:.0%} of the gas and the pressure is at or above its dew point by Raoult's law, "
    "p_sat(T)/x, with p_sat from the Wagner equation (McGarry 1983 coefficients via the chemicals library; "
    "Ambrose-Walton 1989 for H2S). Not checked: hydrocarbon and water dew points of natural gas, mixtures "
    "without a dominant condensable component, solids below the triple point. Raoult's law is an estimate "
    "near the mixture's critical point.")


def vapour_pressure(name: str, temperature) -> np.ndarray:
    """Saturation pressure of a pure component [Pa]; NaN at or above its critical temperature.

    Parameters
    ----------
    name : str                      canonical component name (meterfix.gas.components)
    temperature : float or ndarray [K]
    """
    t = np.asarray(temperature, dtype=float)
    if name in WAGNER_MCGARRY:
        a, b, c, d, tc, pc, _ = WAGNER_MCGARRY[name]
        tr = t / tc
        tau = 1.0 - tr
        with np.errstate(invalid="ignore", divide="ignore"):
            ln_pr = (a * tau + b * tau**1.5 + c * tau**3 + d * tau**6) / tr
    else:  # Ambrose & Walton (1989) corresponding states
        comp = TABLE_BY_NAME[name]
        tc, pc, w = comp.critical_temperature, comp.critical_pressure, comp.acentric_factor
        tr = t / tc
        tau = 1.0 - tr
        with np.errstate(invalid="ignore", divide="ignore"):
            f0 = (-5.97616 * tau + 1.29874 * tau**1.5 - 0.60394 * tau**2.5 - 1.06841 * tau**5) / tr
            f1 = (-5.03365 * tau + 1.11505 * tau**1.5 - 5.41217 * tau**2.5 - 7.46628 * tau**5) / tr
            f2 = (-0.64771 * tau + 2.41539 * tau**1.5 - 4.26979 * tau**2.5 + 3.25259 * tau**5) / tr
            ln_pr = f0 + w * f1 + w * w * f2
    with np.errstate(over="ignore", invalid="ignore"):
        out = pc * np.exp(ln_pr)
    return np.where((t > 0) & (t < tc), out, np.nan)


def critical_temperature(name: str) -> float:
    """Critical temperature the vapour-pressure equation of ``name`` uses [K]."""
    if name in WAGNER_MCGARRY:
        return WAGNER_MCGARRY[name][4]
    return TABLE_BY_NAME[name].critical_temperature


@lru_cache(maxsize=256)
def _dominant(fractions_bytes: bytes):
    x = np.frombuffer(fractions_bytes, dtype=float)
    j = int(np.argmax(x))
    if x[j] < DOMINANT_FRACTION:
        return None
    return NAMES[j], float(x[j])


def not_gas(pressure, temperature, composition) -> np.ndarray:
    """Mask of states that are not a single gas phase (see the module docstring for the limits).

    Parameters
    ----------
    pressure : float or ndarray [Pa]     absolute
    temperature : float or ndarray [K]
    composition : Composition

    Returns
    -------
    ndarray of bool, the broadcast shape of pressure and temperature
    """
    p = np.asarray(pressure, dtype=float)
    t = np.asarray(temperature, dtype=float)
    shape = np.broadcast_shapes(p.shape, t.shape)
    fr = np.ascontiguousarray(composition.fractions, dtype=float)
    dom = _dominant(fr.tobytes())
    if dom is None:
        return np.zeros(shape, dtype=bool)
    name, x = dom
    tc = critical_temperature(name)
    if t.size == 0 or not np.nanmin(t) < tc:  # nothing below the critical temperature: nothing to check
        return np.zeros(shape, dtype=bool)
    with np.errstate(invalid="ignore"):
        mask = p >= vapour_pressure(name, t) / x  # NaN (T >= Tc, bad input) compares False
    return np.broadcast_to(mask, shape)


def mark_not_gas(result, pressure, temperature, composition):
    """The ZResult with Z set to NaN and reason ``not-gas`` where the state is not a single gas phase."""
    mask = not_gas(pressure, temperature, composition)
    if not mask.any():
        return result
    z = np.array(result.z, dtype=float, copy=True)
    z, mask = np.broadcast_arrays(z, mask)
    z = np.where(mask, np.nan, z)
    reason = np.broadcast_to(np.asarray(result.reason, dtype=object), z.shape)
    result.z = z
    result.reason = np.where(mask, REASON_NOT_GAS, reason).astype(object)
    if result.molar_density is not None:
        result.molar_density = np.where(mask, np.nan, result.molar_density)
    if result.speed_of_sound is not None:
        result.speed_of_sound = np.where(mask, np.nan, result.speed_of_sound)
    return result


__all__ = ["not_gas", "mark_not_gas", "vapour_pressure", "REASON_NOT_GAS", "DOMINANT_FRACTION", "LIMITS_TEXT",
           "WAGNER_MCGARRY"]
