"""AGA8 GROSS: Z of natural gases from heating value, relative density and diluents.

The GROSS characterization method of AGA Report No. 8 Part 1 (2017): a virial equation
Z = 1 + B(T) D + C(T) D^2 (D in mol/L) of a three-component mixture (an equivalent hydrocarbon
CH, nitrogen, carbon dioxide) whose hydrocarbon coefficients depend on the molar gross heating
value H_CH of the equivalent hydrocarbon. The gas is described by

* method 1: volumetric gross heating value, relative density and CO2;
* method 2: relative density, N2 and CO2;
* or a full composition (H_CH from the component heating values at 25 degC).

The reference conditions of relative density (``temperature_reference_density``,
``pressure_reference``) and heating value (``temperature_reference_combustion``) are explicit
fields of :class:`~meterfix.gas.gross.GrossCharacterization`. R = 8.31451 J/(mol K) and the
molar masses of the DETAIL characterization, as in the standard.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from ..errors import CompositionError
from ..gas.composition import Composition, as_composition
from ..gas.gross import GrossCharacterization
from .aga8_detail import NORMAL_COMPOSITION, NORMAL_RANGE, _GROUPS
from .base import NORMAL, OUTSIDE, REASON_INVALID_INPUT, REASON_NO_CONVERGENCE, REASON_NO_GAS_ROOT, ZResult, invalid_points
from .registry import ZMethod
from .tables import aga8_gross_coefficients as G

EDITION_1 = "AGA Report No. 8 Part 1 (2017), GROSS characterization method 1 (HV, relative density, CO2)"
EDITION_2 = "AGA Report No. 8 Part 1 (2017), GROSS characterization method 2 (relative density, N2, CO2)"
EDITION_COMPOSITION = "AGA Report No. 8 Part 1 (2017), GROSS characterization from composition"

R = G.R_GROSS
_M = np.array(G.MOLAR_MASS_GROSS_G_PER_MOL)
_HN = np.array(G.GROSS_MOLAR_HV_25C_KJ)
_M_N2, _M_CO2 = _M[1], _M[2]

#: characterisation limits of the normal range (AGA8 1992/1994 table of gas characteristics,
#: from memory): relative density, gross heating value 477-1150 Btu/scf at 60 degF and
#: 14.73 psia, nitrogen and CO2 mole fractions
RELATIVE_DENSITY_RANGE = (0.554, 0.87)
HEATING_VALUE_RANGE_BTU_SCF = (477.0, 1150.0)
X_N2_MAX = 0.50
X_CO2_MAX = 0.30
_BTU_SCF = 1055.05585262 / 0.028316846592  # [J/m3] per Btu/ft3 (NIST SP 811)
_P_60F, _T_60F = 14.73 * 6894.757293168, (60.0 - 32.0) / 1.8 + 273.15
_ITER = 100
_REASON_DTYPE = "<U16"


@dataclass(frozen=True)
class GrossState:
    """The solved characterisation: what the GROSS equation needs, plus what was derived.

    Attributes
    ----------
    x_ch, x_n2, x_co2 : float [mol/mol]   equivalent hydrocarbon, nitrogen, CO2
    h_ch : float [kJ/mol]                 molar ideal gross heating value of the equivalent
                                          hydrocarbon at 25 degC (the model's variable)
    h_mixture : float [kJ/mol]            the same for the whole gas
    molar_mass : float [kg/mol]
    relative_density : float [-]          at the metering reference
    heating_value : float [J/m3]          volumetric gross heating value at the metering
                                          reference, combustion at the combustion reference
    characterization : GrossCharacterization  the inputs' reference conditions
    method : str                          'gross1', 'gross2' or 'composition'
    """

    x_ch: float
    x_n2: float
    x_co2: float
    h_ch: float
    h_mixture: float
    molar_mass: float
    relative_density: float
    heating_value: float
    characterization: GrossCharacterization
    method: str


def _quad(row, t):
    return row[0] + t * (row[1] + t * row[2])


def virial_coefficients(temperature, x_ch, x_n2, x_co2, h_ch):
    """Mixture second and third virial coefficients of the GROSS equation.

    Parameters
    ----------
    temperature : float or ndarray [K]
    x_ch, x_n2, x_co2 : float [mol/mol]   equivalent hydrocarbon, nitrogen, CO2
    h_ch : float [kJ/mol]                 molar gross heating value of the equivalent hydrocarbon

    Returns
    -------
    B : ndarray [L/mol], C : ndarray [(L/mol)^2]
        NaN where the mixing rules are undefined (B_CH B_CO2 < 0 or C_CH < 0).
    """
    t = np.asarray(temperature, dtype=float)
    b = {k: _quad(v, t) for k, v in G.B_N2_CO2.items()}
    c = {k: _quad(v, t) for k, v in G.C_N2_CO2.items()}
    b11 = sum(_quad(G.B_CH[m], t) * h_ch ** m for m in range(3))
    c111 = sum(_quad(G.C_CH[m], t) * h_ch ** m for m in range(3))
    b0, b1, bt = G.CROSS_B_CH_N2
    b12 = (b0 + b1 * (bt - t) ** 2) * (b11 + b[(2, 2)]) / 2.0
    with np.errstate(invalid="ignore"):
        prod = b11 * b[(3, 3)]
        b13 = G.CROSS_B_CH_CO2 * np.sqrt(np.where(prod >= 0, prod, np.nan))
        c111 = np.where(c111 >= 0, c111, np.nan)
        g0, g1, gt = G.CROSS_C_CH_N2
        fac = g0 + g1 * (t - gt)
        third = 1.0 / 3.0
        c112 = fac * (c111 ** 2 * c[(2, 2, 2)]) ** third
        c122 = fac * (c[(2, 2, 2)] ** 2 * c111) ** third
        c113 = G.CROSS_C_CH_CO2 * (c111 ** 2 * c[(3, 3, 3)]) ** third
        c133 = G.CROSS_C_CH_CO2 * (c[(3, 3, 3)] ** 2 * c111) ** third
        c123 = G.CROSS_C_CH_N2_CO2 * (c111 * c[(2, 2, 2)] * c[(3, 3, 3)]) ** third
    x1, x2, x3 = x_ch, x_n2, x_co2
    bmix = (x1 * x1 * b11 + 2 * x1 * x2 * b12 + 2 * x1 * x3 * b13 + x2 * x2 * b[(2, 2)]
            + 2 * x2 * x3 * b[(2, 3)] + x3 * x3 * b[(3, 3)])
    cmix = (x1 ** 3 * c111 + 3 * x1 * x1 * x2 * c112 + 3 * x1 * x1 * x3 * c113 + 3 * x1 * x2 * x2 * c122
            + 6 * x1 * x2 * x3 * c123 + 3 * x1 * x3 * x3 * c133 + x2 ** 3 * c[(2, 2, 2)]
            + 3 * x2 * x2 * x3 * c[(2, 2, 3)] + 3 * x2 * x3 * x3 * c[(2, 3, 3)] + x3 ** 3 * c[(3, 3, 3)])
    return bmix, cmix


def _z_air(td: float, pd_kpa: float) -> float:
    """Z of air at the density reference from its second virial coefficient (the standard's
    definition of real-gas relative density)."""
    return 1.0 + pd_kpa / (R * td) * _quad(G.AIR_B, td)


def _hv_factor(th: float) -> float:
    return 1.0 + G.HV_T_COEFF * (th - G.HV_T_REFERENCE)


def _gross_refs(ch: GrossCharacterization):
    return ch.temperature_reference_density, ch.pressure_reference / 1000.0, ch.temperature_reference_combustion


def _check_no_h2_co(ch: GrossCharacterization):
    if ch.x_h2 or ch.x_co:
        raise CompositionError("the GROSS method of AGA8 Part 1 (2017) has no hydrogen or carbon monoxide input",
                               hint="use aga8-detail with a full analysis for gases with H2 or CO")


def gross_method1(ch: GrossCharacterization) -> GrossState:
    """Solve GROSS method 1: heating value, relative density and CO2 -> x_CH, x_N2, H_CH.

    Fixed-point iteration of the standard on the Z of the gas at the metering reference,
    Z = 1 + B(Td) Pd / (R Td), to full convergence.
    """
    _check_no_h2_co(ch)
    if ch.heating_value is None:
        raise CompositionError("GROSS method 1 needs the volumetric gross heating value",
                               hint="give heating_value [J/m3], or use aga8-gross2 with the N2 fraction")
    td, pd, th = _gross_refs(ch)
    hv = ch.heating_value / 1e6  # [MJ/m3]
    x_co2 = ch.x_co2
    z_ref = _z_air(td, pd)
    zd = 1.0
    for _ in range(_ITER):
        hn = zd * R * td / pd * hv * _hv_factor(th)  # [kJ/mol] at 25 degC
        mm = ch.relative_density * zd * G.MOLAR_MASS_AIR / z_ref
        x_ch = (mm + (x_co2 - 1.0) * _M_N2 - x_co2 * _M_CO2 - G.G2 * hn) / (G.G1 - _M_N2)
        x_n2 = 1.0 - x_ch - x_co2
        if x_n2 < 0 or x_ch <= 0:
            raise CompositionError(
                f"GROSS method 1: heating value {hv:.4g} MJ/m3, relative density {ch.relative_density} and "
                f"CO2 {x_co2} give a negative nitrogen or hydrocarbon fraction",
                hint="check the heating value's and relative density's reference conditions and units")
        h_ch = hn / x_ch
        b, _ = virial_coefficients(td, x_ch, x_n2, x_co2, h_ch)
        z_new = 1.0 + float(b) * pd / (R * td)
        if not np.isfinite(z_new):
            raise CompositionError("GROSS method 1: the virial coefficients are undefined for these inputs",
                                   hint="the gas lies far outside the GROSS method's range")
        if abs(z_new - zd) < 1e-15:
            zd = z_new
            break
        zd = z_new
    hn = zd * R * td / pd * hv * _hv_factor(th)
    mm = ch.relative_density * zd * G.MOLAR_MASS_AIR / z_ref
    x_ch = (mm + (x_co2 - 1.0) * _M_N2 - x_co2 * _M_CO2 - G.G2 * hn) / (G.G1 - _M_N2)
    return GrossState(x_ch, 1.0 - x_ch - x_co2, x_co2, hn / x_ch, hn, mm / 1000.0, ch.relative_density,
                      ch.heating_value, ch, "gross1")


def gross_method2(ch: GrossCharacterization) -> GrossState:
    """Solve GROSS method 2: relative density, N2 and CO2 -> H_CH (and the heating value).

    Fixed-point iteration of the standard on the Z of the gas at the metering reference, to
    full convergence.
    """
    _check_no_h2_co(ch)
    if ch.x_n2 is None:
        raise CompositionError("GROSS method 2 needs the nitrogen mole fraction",
                               hint="give x_n2, or use aga8-gross1 with the heating value")
    td, pd, th = _gross_refs(ch)
    x_n2, x_co2 = ch.x_n2, ch.x_co2
    x_ch = 1.0 - x_n2 - x_co2
    if x_ch <= 0:
        raise CompositionError(f"N2 {x_n2} and CO2 {x_co2} leave no hydrocarbon", hint="check the fractions")
    z_ref = _z_air(td, pd)
    z = 1.0
    for _ in range(_ITER):
        mm = ch.relative_density * z * G.MOLAR_MASS_AIR / z_ref
        h_ch = ((mm - x_n2 * _M_N2 - x_co2 * _M_CO2) / x_ch - G.G1) / G.G2
        b, _ = virial_coefficients(td, x_ch, x_n2, x_co2, h_ch)
        z_new = 1.0 + float(b) * pd / (R * td)
        if not np.isfinite(z_new):
            raise CompositionError("GROSS method 2: the virial coefficients are undefined for these inputs",
                                   hint="check relative density and diluent fractions (the hydrocarbon's "
                                        "implied heating value may be unphysical)")
        if abs(z_new - z) < 1e-15:
            z = z_new
            break
        z = z_new
    mm = ch.relative_density * z * G.MOLAR_MASS_AIR / z_ref
    h_ch = ((mm - x_n2 * _M_N2 - x_co2 * _M_CO2) / x_ch - G.G1) / G.G2
    hn = h_ch * x_ch
    hv = hn / z / (R * td) * pd / _hv_factor(th) * 1e6  # [J/m3]
    return GrossState(x_ch, x_n2, x_co2, h_ch, hn, mm / 1000.0, ch.relative_density, hv, ch, "gross2")


def molar_density(pressure, temperature, b, c):
    """Gas-phase root D [mol/L] of p = D R T (1 + B D + C D^2), R = 8.31451, for many points.

    Parameters
    ----------
    pressure : ndarray [Pa]
    temperature : ndarray [K]
    b : ndarray [L/mol], c : ndarray [(L/mol)^2]

    Returns
    -------
    D : ndarray [mol/L], NaN without a gas root; reason : ndarray of str
    """
    pi = np.asarray(pressure, float) / (1000.0 * R * np.asarray(temperature, float))  # ideal D
    b, c = np.broadcast_arrays(np.asarray(b, float), np.asarray(c, float))
    pi, b, c = np.broadcast_arrays(pi, b, c)
    n = pi.shape
    reason = np.full(n, "", dtype=_REASON_DTYPE)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        # first maximum of g(D) = D + B D^2 + C D^3 on D > 0: 3 C D^2 + 2 B D + 1 = 0
        disc = b * b - 3.0 * c
        sq = np.sqrt(np.where(disc >= 0, disc, np.nan))
        r1 = np.where(c != 0, (-b - np.sign(c) * sq) / (3.0 * c), -0.5 / b)
        r2 = np.where(c != 0, (-b + np.sign(c) * sq) / (3.0 * c), np.nan)
        roots = np.stack([r1, r2])
        roots = np.where(roots > 0, roots, np.inf)
        dmax = np.min(roots, axis=0)  # inf where g rises for ever
        gmax = dmax + b * dmax ** 2 + c * dmax ** 3
        none = np.isfinite(dmax) & ~(gmax >= pi)
        hi = np.where(np.isfinite(dmax), dmax, np.nan)
        # unbounded rise: grow an upper bound until g(hi) >= pi
        grow = ~np.isfinite(hi)
        h = np.where(grow, 2.0 * pi, hi)
        for _ in range(200):
            if not grow.any():
                break
            gh = h + b * h * h + c * h ** 3
            up = grow & ~(gh >= pi)
            h = np.where(up, 2.0 * h, h)
            grow = up
        hi = np.where(none | grow, np.nan, h)
        lo = np.zeros(n)
        d = np.where(pi < hi, pi, 0.5 * hi)
        active = np.isfinite(hi)
        done = ~active
        for _ in range(_ITER):
            g = d + b * d * d + c * d ** 3 - pi
            gp = 1.0 + 2.0 * b * d + 3.0 * c * d * d
            lo = np.where(g < 0, d, lo)
            hi = np.where(g >= 0, d, hi)
            step = d - g / gp
            exact = g == 0
            out = ~exact & (~(step > lo) | ~(step < hi) | ~(gp > 0))
            new = np.where(exact, d, np.where(out, 0.5 * (lo + hi), step))
            conv = exact | (np.abs(new - d) <= 4e-16 * d) | (hi - lo <= 4e-16 * hi)
            d = np.where(done, d, new)
            done |= conv
            if done.all():
                break
    reason[none | grow] = REASON_NO_GAS_ROOT
    reason[~done] = REASON_NO_CONVERGENCE
    ok = active & done
    return np.where(ok, d, np.nan), reason


def normal_characterization(state: GrossState) -> bool:
    """Whether the characterisation lies in the GROSS method's normal range (AGA8 1992/1994,
    from memory): relative density, heating value, N2 and CO2 limits."""
    ch = state.characterization
    lo, hi = HEATING_VALUE_RANGE_BTU_SCF
    scale = _BTU_SCF * (ch.pressure_reference / _P_60F) * (_T_60F / ch.temperature_reference_density)
    rd_lo, rd_hi = RELATIVE_DENSITY_RANGE
    return bool(rd_lo <= state.relative_density <= rd_hi and lo * scale <= state.heating_value <= hi * scale
                and state.x_n2 <= X_N2_MAX and state.x_co2 <= X_CO2_MAX)


def _z_from_state(pressure, temperature, state: GrossState, name: str, edition: str, comp_normal=True) -> ZResult:
    p, t = np.broadcast_arrays(np.asarray(pressure, dtype=float), np.asarray(temperature, dtype=float))
    shape = p.shape
    pf, tf = p.ravel(), t.ravel()
    bad = invalid_points(pf, tf)
    tt = np.where(bad, 300.0, tf)
    pp = np.where(bad, 1e5, pf)
    b, c = virial_coefficients(tt, state.x_ch, state.x_n2, state.x_co2, state.h_ch)
    undefined = ~(np.isfinite(b) & np.isfinite(c))
    d, reason = molar_density(pp, tt, np.where(undefined, 0.0, b), np.where(undefined, 0.0, c))
    z = 1.0 + b * d + c * d * d
    reason = reason.astype(_REASON_DTYPE)
    reason[undefined] = REASON_INVALID_INPUT  # the virial coefficients are undefined at this T
    reason[bad] = REASON_INVALID_INPUT
    failed = reason != ""
    z[failed] = np.nan
    d = np.where(failed, np.nan, d)
    pm, tl, th = NORMAL_RANGE
    rng = np.full(pf.size, OUTSIDE, dtype=np.int8)
    if comp_normal and normal_characterization(state):
        rng[(pf <= pm) & (tf >= tl) & (tf <= th)] = NORMAL
    rng[bad] = OUTSIDE
    extra = {"x_ch": state.x_ch, "x_n2": state.x_n2, "x_co2": state.x_co2, "h_ch_kJ_per_mol": state.h_ch,
             "relative_density": state.relative_density, "heating_value": state.heating_value,
             "characterization": state.method}
    return ZResult(z.reshape(shape), rng.reshape(shape), reason.reshape(shape), name, edition,
                   molar_density=(d * 1000.0).reshape(shape), molar_mass=state.molar_mass,
                   speed_of_sound=None, extra=extra)


def _composition_normal(fractions) -> bool:
    from ..gas.components import INDEX

    x = np.asarray(fractions, float)
    for g, (lo, hi) in NORMAL_COMPOSITION.items():
        v = float(sum(x[INDEX[c]] for c in _GROUPS[g]))
        if not (lo - 1e-9 <= v <= hi + 1e-9):
            return False
    return True


@lru_cache(maxsize=256)
def _state_from_composition(key: bytes, td: float, pd_pa: float, th: float) -> GrossState:
    x = np.frombuffer(key, dtype=float)
    x_n2, x_co2 = float(x[1]), float(x[2])
    x_ch = 1.0 - x_n2 - x_co2
    hn = float(x @ _HN)
    h_ch = hn / x_ch
    mm = float(x @ _M)
    pd = pd_pa / 1000.0
    b, c = virial_coefficients(td, x_ch, x_n2, x_co2, h_ch)
    d, _ = molar_density(np.array([pd_pa]), np.array([td]), b, c)
    d = float(d[0])
    z = pd / (d * R * td)
    gr = mm * _z_air(td, pd) / G.MOLAR_MASS_AIR / z
    hv = hn / _hv_factor(th) * d * 1e6  # [J/m3]
    ch = GrossCharacterization(relative_density=gr, heating_value=hv, x_co2=x_co2, x_n2=x_n2,
                               temperature_reference_density=td, pressure_reference=pd_pa,
                               temperature_reference_combustion=th)
    return GrossState(x_ch, x_n2, x_co2, h_ch, hn, mm / 1000.0, gr, hv, ch, "composition")


def characterize(composition, *, temperature_reference_density: float = 273.15,
                 pressure_reference: float = 101325.0, temperature_reference_combustion: float = 298.15) -> GrossState:
    """GROSS characterisation of a full composition (the standard's route from an analysis).

    Parameters
    ----------
    composition : Composition or mapping of component name -> mole fraction [-]
    temperature_reference_density : float [K]     metering reference of relative density and HV
    pressure_reference : float [Pa]               metering reference pressure
    temperature_reference_combustion : float [K]  combustion reference of the heating value

    Returns
    -------
    GrossState
        H_CH from the component heating values at 25 degC; relative density and volumetric
        heating value at the metering reference from the GROSS equation itself (real gas, air
        by its second virial coefficient).
    """
    comp = as_composition(composition)
    x = np.ascontiguousarray(comp.fractions, dtype=float)
    if x[1] + x[2] >= 1.0:
        raise CompositionError("the GROSS method needs some hydrocarbon in the gas", hint="use aga8-detail")
    return _state_from_composition(x.tobytes(), float(temperature_reference_density), float(pressure_reference),
                                   float(temperature_reference_combustion))


def z_aga8_gross_composition(pressure, temperature, composition) -> ZResult:
    """Z by the GROSS equation with the characterisation taken straight from a composition.

    Parameters
    ----------
    pressure : float or ndarray [Pa]   absolute
    temperature : float or ndarray [K]
    composition : Composition or mapping of component name -> mole fraction [-]

    Returns
    -------
    ZResult   (no speed of sound: the GROSS method has no caloric part)
    """
    comp = as_composition(composition)
    state = characterize(comp)
    return _z_from_state(pressure, temperature, state, "aga8-gross-composition", EDITION_COMPOSITION,
                         comp_normal=_composition_normal(comp.fractions))


def _state_for(gas, method: str) -> tuple[GrossState, bool]:
    if isinstance(gas, GrossCharacterization):
        return (gross_method1(gas) if method == "gross1" else gross_method2(gas)), True
    comp = gas if isinstance(gas, Composition) else as_composition(gas)
    derived = characterize(comp).characterization
    if method == "gross1":
        derived = GrossCharacterization(derived.relative_density, derived.heating_value, derived.x_co2)
        return gross_method1(derived), _composition_normal(comp.fractions)
    return gross_method2(derived), _composition_normal(comp.fractions)


def z_aga8_gross1(pressure, temperature, gas) -> ZResult:
    """Compressibility factor and density by AGA8 GROSS method 1.

    Z = 1 + B(T) D + C(T) D^2 with B, C of the equivalent hydrocarbon, N2 and CO2 mixture.

    Parameters
    ----------
    pressure : float or ndarray [Pa]   absolute
    temperature : float or ndarray [K]
    gas : GrossCharacterization (relative density, heating value [J/m3], x_co2 [mol/mol] at the
        stated reference conditions), or a Composition from which they are derived at the
        GrossCharacterization defaults (0 degC, 101.325 kPa, combustion 25 degC)

    Returns
    -------
    ZResult
        ``z``, ``molar_density`` [mol/m3]; ``molar_mass`` [kg/mol] from relative density;
        ``extra`` the solved characterisation (x_ch, x_n2, h_ch_kJ_per_mol, ...). No speed of sound.

    Notes
    -----
    Normal range (AGA8 1992/1994, from memory): 264.8-334.8 K, p <= 12.07 MPa, relative density
    0.554-0.87, gross heating value 477-1150 Btu/scf (60 degF, 14.73 psia; scaled to the stated
    reference), N2 <= 50 %, CO2 <= 30 %; outside it the point is flagged ``outside`` (the GROSS
    method has no extended range). Hydrogen and carbon monoxide inputs are refused (the 2017
    edition's GROSS method has none).

    References
    ----------
    1. AGA Report No. 8 Part 1 (2017), GROSS characterization method; ISO 12213-3:2006 (SGERG-88).
    """
    state, comp_normal = _state_for(gas, "gross1")
    return _z_from_state(pressure, temperature, state, "aga8-gross1", EDITION_1, comp_normal)


def z_aga8_gross2(pressure, temperature, gas) -> ZResult:
    """Compressibility factor and density by AGA8 GROSS method 2.

    Parameters
    ----------
    pressure : float or ndarray [Pa]   absolute
    temperature : float or ndarray [K]
    gas : GrossCharacterization (relative density, x_n2, x_co2 [mol/mol] at the stated reference
        conditions), or a Composition from which they are derived

    Returns
    -------
    ZResult   as :func:`z_aga8_gross1`; ``extra['heating_value']`` [J/m3] is the heating value
        the method implies.
    """
    state, comp_normal = _state_for(gas, "gross2")
    return _z_from_state(pressure, temperature, state, "aga8-gross2", EDITION_2, comp_normal)


def _evaluate1(pressure, temperature, gas, **_options):
    return z_aga8_gross1(pressure, temperature, gas)


def _evaluate2(pressure, temperature, gas, **_options):
    return z_aga8_gross2(pressure, temperature, gas)


_RANGE_TEXT = ("normal range only: 264.8-334.8 K (17-143 degF), p <= 12.07 MPa (1750 psia), relative density "
               "0.554-0.87, gross heating value 477-1150 Btu/scf at 60 degF/14.73 psia, N2 <= 50 %, CO2 <= 30 %; "
               "no H2 or CO")
_SOURCE = ("AGA Report No. 8 (1992/1994; kept in Part 1, 2017): 0.1 % in the normal range, no extended range "
           "(from memory)")

METHODS = [
    ZMethod("aga8-gross1", EDITION_1, _evaluate1, gas_input="gross", family="equation of state",
            range_text=_RANGE_TEXT, uncertainty_pct={NORMAL: 0.1}, uncertainty_source=_SOURCE),
    ZMethod("aga8-gross2", EDITION_2, _evaluate2, gas_input="gross", family="equation of state",
            range_text=_RANGE_TEXT, uncertainty_pct={NORMAL: 0.1}, uncertainty_source=_SOURCE),
]

__all__ = ["z_aga8_gross1", "z_aga8_gross2", "z_aga8_gross_composition", "characterize", "gross_method1",
           "gross_method2", "virial_coefficients", "molar_density", "GrossState", "METHODS"]
