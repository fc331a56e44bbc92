"""The state of a gas from any two of pressure, temperature and molar volume, by any Z method.

p v = Z(p, T) R T. Given p and T, Z follows directly. Given p and v, or T and v, the missing
property is found by a bracketed Illinois (modified false position) iteration run over all
points together, calling the chosen method on whole arrays: no per-point Python loop and no
scipy call per point. Where the method has no gas-phase result anywhere near the wanted
state (the gas would be liquid, or beyond the method), the point is NaN with a reason.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..constants import R
from ..errors import SettingsError
from ..gas.composition import Composition, as_composition
from ..gas.gross import GrossCharacterization
from .base import (OUTSIDE, REASON_INVALID_INPUT, REASON_NO_CONVERGENCE, REASON_NO_GAS_ROOT)
from .registry import ZMethod, get_method
from .ideal import IDEAL_METHOD

_RTOL = 1e-13       # relative residual in molar volume that counts as solved
_ACCEPT = 1e-10     # largest relative residual still accepted after the iteration limit
_MAX_BRACKET = 60
_MAX_ITER = 200


@dataclass
class StateResult:
    """A gas state solved from two of p, T, v (arrays broadcast to one shape).

    Attributes
    ----------
    pressure : ndarray [Pa]               absolute
    temperature : ndarray [K]
    molar_volume : ndarray [m3/mol]
    z : ndarray [-]                       NaN where no gas-phase solution exists
    reduced_pressure : ndarray [-]        p / Ppc, Kay's rule pseudo-critical (see Notes)
    reduced_temperature : ndarray [-]     T / Tpc
    pseudo_reduced_volume : ndarray [-]   v Ppc / (R Tpc)
    range_class : ndarray of int8         0 normal, 1 extended, 2 outside the method's range
    reason : ndarray of str               '' or why the point has no result
    method : str
    edition : str
    molar_mass : float or None [kg/mol]
    solved_for : str                      'z', 'temperature' or 'pressure'

    Notes
    -----
    The reduced properties here use Kay's rule on the component table (true critical
    constants, no quantum or Wichert–Aziz correction) so that they compare across methods;
    for a GrossCharacterization, Sutton's pseudo-criticals from the relative density. The
    method's own reduced properties, where it has them, are in its ZResult ``extra``.
    """

    pressure: np.ndarray
    temperature: np.ndarray
    molar_volume: np.ndarray
    z: np.ndarray
    reduced_pressure: np.ndarray
    reduced_temperature: np.ndarray
    pseudo_reduced_volume: np.ndarray
    range_class: np.ndarray
    reason: np.ndarray
    method: str
    edition: str
    molar_mass: object = None
    solved_for: str = "z"


def _model_volume(method: ZMethod, gas, pressure, temperature, **options):
    """Molar volume [m3/mol] the method gives at (p, T), with its ZResult."""
    res = method.evaluate(pressure, temperature, gas, **options)
    z = np.asarray(res.z, dtype=float)
    if res.molar_density is not None:
        with np.errstate(divide="ignore", invalid="ignore"):
            v = 1.0 / np.asarray(res.molar_density, dtype=float)
        v = np.where(np.isfinite(z), v, np.nan)
    else:
        with np.errstate(divide="ignore", invalid="ignore"):
            v = z * R * temperature / pressure
    return np.broadcast_to(v, np.broadcast(pressure, temperature).shape), res


def _solve_positive(residual, x0, active, nan_low: bool):
    """Root of an increasing residual(x) for x > 0, all points at once.

    ``residual(x) -> r`` (relative, increasing in x); NaN means 'no gas-phase result here' and
    lies on the low side (``nan_low``) or the high side of the root. Returns (x, reason).
    """
    shape = x0.shape
    lo = np.full(shape, np.nan)
    hi = np.full(shape, np.nan)
    flo = np.full(shape, np.nan)
    fhi = np.full(shape, np.nan)
    nan_seen = np.zeros(shape, dtype=bool)

    f0 = residual(x0)
    neg = f0 < 0
    pos = f0 > 0
    isnan = ~np.isfinite(f0)
    exact = active & (f0 == 0)
    lo = np.where(neg, x0, lo)
    flo = np.where(neg, f0, flo)
    hi = np.where(pos, x0, hi)
    fhi = np.where(pos, f0, fhi)
    if nan_low:
        lo = np.where(isnan, x0, lo)
    else:
        hi = np.where(isnan, x0, hi)
    nan_seen |= isnan

    # 1. bracket: expand geometrically towards the missing side
    for _ in range(_MAX_BRACKET):
        need_hi = active & ~exact & np.isnan(hi)
        need_lo = active & ~exact & np.isnan(lo)
        if not (need_hi.any() or need_lo.any()):
            break
        trial = np.where(need_hi, np.where(np.isnan(lo), x0, lo) * 2.0,
                         np.where(need_lo, np.where(np.isnan(hi), x0, hi) * 0.5, x0))
        f = residual(trial)
        fn = ~np.isfinite(f)
        for need in (need_hi, need_lo):
            m_neg = need & (f < 0)
            m_pos = need & (f > 0)
            m_nan = need & fn
            lo = np.where(m_neg, trial, lo)
            flo = np.where(m_neg, f, flo)
            hi = np.where(m_pos, trial, hi)
            fhi = np.where(m_pos, f, fhi)
            if nan_low:
                lo = np.where(m_nan, trial, lo)
                flo = np.where(m_nan, np.nan, flo)
            else:
                hi = np.where(m_nan, trial, hi)
                fhi = np.where(m_nan, np.nan, fhi)
            nan_seen |= m_nan
            x_hit = need & (f == 0)
            exact |= x_hit
            x0 = np.where(x_hit, trial, x0)
    bracketed = active & ~exact & np.isfinite(lo) & np.isfinite(hi)

    # 2. Illinois iteration; bisection while one end has no result (NaN)
    x = np.where(exact, x0, np.nan)
    best = np.where(exact, x0, np.nan)
    fbest = np.where(exact, 0.0, np.inf)
    side = np.zeros(shape, dtype=np.int8)  # which end was replaced last: -1 lo, +1 hi
    done = ~bracketed
    for _ in range(_MAX_ITER):
        if done.all():
            break
        with np.errstate(invalid="ignore", divide="ignore"):
            secant = lo - flo * (hi - lo) / (fhi - flo)
        use_secant = np.isfinite(flo) & np.isfinite(fhi) & (secant > lo) & (secant < hi)
        c = np.where(use_secant, secant, 0.5 * (lo + hi))
        c = np.where(done, np.where(np.isfinite(best), best, x0), c)
        f = residual(c)
        fin = np.isfinite(f)
        better = ~done & fin & (np.abs(f) < fbest)
        best = np.where(better, c, best)
        fbest = np.where(better, np.abs(f), fbest)
        go_lo = ~done & ((fin & (f < 0)) | (~fin & nan_low))
        go_hi = ~done & ((fin & (f > 0)) | (~fin & ~nan_low))
        nan_seen |= ~done & ~fin
        # Illinois: halve the stagnant end's residual when the same end moves twice
        fhi = np.where(go_lo & (side == -1), fhi * 0.5, fhi)
        flo = np.where(go_hi & (side == 1), flo * 0.5, flo)
        lo = np.where(go_lo, c, lo)
        flo = np.where(go_lo, np.where(fin, f, np.nan), flo)
        hi = np.where(go_hi, c, hi)
        fhi = np.where(go_hi, np.where(fin, f, np.nan), fhi)
        side = np.where(go_lo, -1, np.where(go_hi, 1, side)).astype(np.int8)
        solved = ~done & fin & (np.abs(f) <= _RTOL)
        narrow = ~done & (hi - lo <= 4e-16 * hi)
        done |= solved | narrow
    ok = active & np.isfinite(best) & (fbest <= _ACCEPT)
    x = np.where(ok, best, np.nan)
    reason = np.full(shape, "", dtype=object)
    failed = active & ~ok
    reason[failed & nan_seen] = REASON_NO_GAS_ROOT
    reason[failed & ~nan_seen] = REASON_NO_CONVERGENCE
    return x, reason


def _reference_criticals(gas):
    if isinstance(gas, GrossCharacterization):
        from .correlations import pseudo_critical_sutton
        tpc, ppc = pseudo_critical_sutton(gas.relative_density)
        return float(tpc), float(ppc)
    tpc, ppc, _ = gas.pseudo_critical_kay()
    return tpc, ppc


def solve_state(gas, method, pressure=None, temperature=None, molar_volume=None, **options) -> StateResult:
    """Solve p v = Z(p, T) R T for the one of p, T, v not given.

    .. math:: p\\,v = Z(p, T)\\,R\\,T

    Parameters
    ----------
    gas : Composition, mapping of name -> mole fraction, 'name=x,...' string, or
        GrossCharacterization (for the methods that take one)
    method : str or ZMethod            a registry name (``lee-kesler``, ``aga8-detail`` ...)
    pressure : float or ndarray [Pa], optional       absolute
    temperature : float or ndarray [K], optional
    molar_volume : float or ndarray [m3/mol], optional
    **options : passed to the method (e.g. ``mixing="lee-kesler"``)

    Exactly two of ``pressure``, ``temperature``, ``molar_volume`` must be given.

    Returns
    -------
    StateResult

    Raises
    ------
    SettingsError   when not exactly two of the three are given

    Notes
    -----
    The molar volume is the method's own, 1/molar_density of its ZResult (an equation of state
    with its own gas constant stays consistent), else Z R T / p with the exact R.
    At fixed p the gas-phase molar volume rises with T; at fixed T it falls with p. The
    solver brackets the root geometrically from the ideal-gas estimate (T = p v / R or
    p = R T / v) and refines it by the Illinois method to a relative residual of 1e-13 in v.
    A trial state where the method has no gas-phase result counts as lying on the condensed
    side (too cold, or too high a pressure); a state that cannot be bracketed on the gas side
    is NaN with reason ``no-gas-root``.
    """
    given = [x is not None for x in (pressure, temperature, molar_volume)]
    if sum(given) != 2:
        raise SettingsError("give exactly two of --pressure, --temperature, --volume",
                            hint=f"got {sum(given)}: pressure, temperature and molar volume are linked "
                                 "by p v = Z R T, so two fix the third")
    m = method if isinstance(method, ZMethod) else get_method(method)
    if not isinstance(gas, (GrossCharacterization, Composition)) and not (gas is None and m.name == IDEAL_METHOD):
        gas = as_composition(gas)
    if isinstance(gas, GrossCharacterization) and m.gas_input != "gross" and m.family != "natural-gas correlation":
        raise SettingsError(f"method '{m.name}' needs a composition, not a gross characterisation",
                            hint="use aga8-gross1, aga8-gross2, dak or hall-yarborough with relative density")

    arrays = [np.asarray(a, dtype=float) for a in (pressure, temperature, molar_volume) if a is not None]
    shape = np.broadcast_shapes(*(a.shape for a in arrays))

    def full(a):
        return None if a is None else np.broadcast_to(np.asarray(a, dtype=float), shape).copy()

    p, t, v = full(pressure), full(temperature), full(molar_volume)
    with np.errstate(invalid="ignore"):
        bad = np.zeros(shape, dtype=bool)
        for a in (p, t, v):
            if a is not None:
                bad |= ~(np.isfinite(a) & (a > 0))
    solved_for = "z"
    reason = np.full(shape, "", dtype=object)
    if v is None:
        v, res = _model_volume(m, gas, np.where(bad, 1e5, p), np.where(bad, 300.0, t), **options)
        v = np.where(bad, np.nan, v)
        reason = np.where(bad, REASON_INVALID_INPUT, np.asarray(res.reason, dtype=object))
    else:
        vs = np.where(bad, 1.0, v)
        if t is None:
            solved_for = "temperature"
            ps = np.where(bad, 1e5, p)

            def residual(x):  # (v_model(p, T) - v) / v rises with T
                vm, _ = _model_volume(m, gas, ps, x, **options)
                return vm / vs - 1.0

            t, why = _solve_positive(residual, ps * vs / R, ~bad, nan_low=True)
        else:
            solved_for = "pressure"
            ts = np.where(bad, 300.0, t)

            def residual(x):  # (v - v_model(p, T)) / v rises with p
                vm, _ = _model_volume(m, gas, x, ts, **options)
                return 1.0 - vm / vs

            p, why = _solve_positive(residual, R * ts / vs, ~bad, nan_low=False)
        reason = np.where(bad, REASON_INVALID_INPUT, why)
        v = np.where(np.isfinite(p) & np.isfinite(t), v, np.nan)

    ok = ~bad & np.isfinite(p) & np.isfinite(t) & np.isfinite(v)
    pe = np.where(ok, p, 1e5)
    te = np.where(ok, t, 300.0)
    res = m.evaluate(pe, te, gas, **options)
    if gas is not None and not isinstance(gas, GrossCharacterization):
        # a liquid or two-phase state is no gas state (meterfix.z.phase): NaN with reason 'not-gas'
        from .phase import REASON_NOT_GAS, mark_not_gas

        res = mark_not_gas(res, pe, te, gas)
        liquid = ok & np.broadcast_to(np.asarray(res.reason, dtype=object) == REASON_NOT_GAS, shape)
        ok = ok & ~liquid
        reason = np.where(liquid, REASON_NOT_GAS, reason)
    with np.errstate(invalid="ignore", divide="ignore"):
        z = np.where(ok, p * v / (R * te), np.nan)
        if res.molar_density is not None:  # the method's own Z where it keeps its own R
            z = np.where(ok, np.broadcast_to(res.z, shape), np.nan)
    rng = np.where(ok, np.broadcast_to(res.range_class, shape), OUTSIDE).astype(np.int8)
    reason = np.where(ok & (reason == ""), np.broadcast_to(np.asarray(res.reason, dtype=object), shape), reason)
    reason = np.where(~ok & (reason == ""), REASON_NO_GAS_ROOT, reason)
    p = np.where(ok, p, np.nan if solved_for == "pressure" else p)
    t = np.where(ok, t, np.nan if solved_for == "temperature" else t)

    tpc, ppc = _reference_criticals(gas) if gas is not None else (np.nan, np.nan)
    if isinstance(gas, GrossCharacterization):
        from .correlations import MOLAR_MASS_AIR
        molar_mass = gas.relative_density * MOLAR_MASS_AIR
    else:
        molar_mass = None if gas is None else gas.molar_mass
    with np.errstate(invalid="ignore", divide="ignore"):
        return StateResult(
            pressure=p, temperature=t, molar_volume=v, z=z,
            reduced_pressure=p / ppc, reduced_temperature=t / tpc,
            pseudo_reduced_volume=v * ppc / (R * tpc),
            range_class=rng, reason=reason.astype(str), method=m.name, edition=m.edition,
            molar_mass=molar_mass, solved_for=solved_for,
        )


__all__ = ["StateResult", "solve_state"]
