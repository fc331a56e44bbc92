"""GUM budget of a month run: the inputs acting on every interval, their sensitivities, and the
combined uncertainty per interval, gas day and month.

Measurement equation of one interval i (DESIGN.md glossary)::

    V_b,i = V_f,i · (p_i / p_b) · (T_b / T_i) · (Z_b / Z_f,i)        E_i = V_b,i · H

Relative sensitivity coefficients c = ∂ln V_b / ∂ln x:

* analytic: meter (V_f) 1, Z_f −1, Z_b +1, heating value (energy) 1;
* through the chosen Z method: AGA8 DETAIL and GERG-2008 by their own derivatives at the solved
  density (closed form, :mod:`meterfix.z.derivatives`), the other methods by central differences
  in ln p and ln T (step 1e-3, all intervals of an analysis in one vectorized call): pressure
  c_p = 1 − ∂lnZ/∂lnp, temperature c_T = −1 − ∂lnZ/∂lnT, atmospheric pressure c_p · p_atm / p
  (gauge logs);
* composition through Z_f, Z_b and the heating value together: each mole fraction is perturbed
  by a factor exp(±h) and the analysis renormalised to sum 1 before Z is evaluated (the sum-to-one
  constraint is kept, the balance component absorbs the change); ∂ln Hm/∂ε_j = x_j (Hm_j/Hm − 1)
  is analytic (:mod:`meterfix.uncertainty.composition`). Where the heating value was computed
  from the analysis at the contract base, H is proportional to 1/Z_b and Z_b cancels from the energy
  (ISO 6976's own Z at base stands for the method's there: the two agree to about 1e-5).
* heating value from an analysis that states its standard uncertainties: u(H) by ISO 6976:2016
  Annex B (composition with its correlations, the standard's table values), and the composition
  term acts on the energy through Z only; the method's Z_b then enters the energy with +1.

Each input is a :class:`Term` with one or more independent sub-sources (rows): a row is either
*correlated* across intervals (one error shared by every interval it touches; a systematic input,
or one error per analysis for an analysis-bound input set as random) or *independent* from
interval to interval (a random per-interval input). For a total over a set S of intervals::

    u²(Σ V) = Σ_correlated rows (Σ_{i∈S} V_i c_ri u_ri)² + Σ_independent rows Σ_{i∈S} (V_i c_ri u_ri)²

References: JCGM 100:2008 (GUM) §5.1 (uncorrelated inputs), §5.2 (correlated inputs).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..engine.flow_meter import CORIOLIS_METER, ORIFICE_METER, VOLUME_METER
from ..z import IDEAL_METHOD, evaluate_z
from ..z.base import EXTENDED, NORMAL, OUTSIDE
from ..z.registry import get_method
from .inputs import ATMOSPHERIC_DEFAULTS, HEATING_VALUE_DEFAULTS, INPUT_KEYS, InputSpec, relative_only as _relative_only

#: step in ln p and ln T for the central differences of ln Z (methods without a closed form)
STEP_PT = 1e-3
#: methods whose ln Z derivatives come from the equation of state's own derivatives
_CLOSED_FORM = {"aga8-detail": ("..z.aga8_detail", "z_log_derivatives_detail"),
                "gerg-2008": ("..z.gerg2008", "z_log_derivatives_gerg")}

BUDGET_COLUMNS = ["input", "setting", "value", "unit", "uncertainty", "standard_uncertainty_pct", "distribution",
                  "type", "correlation", "sensitivity", "contribution_pct", "share_pct", "interval_contribution_pct",
                  "is_default", "source"]


@dataclass
class Term:
    """One input of the budget as it acts on the intervals.

    Attributes
    ----------
    key : str                 setting key (``pressure``)
    label : str               name in the budget
    spec : InputSpec
    value : float             representative value of the input (volume-weighted mean) [SI]
    unit : str                SI unit of ``value``
    u : ndarray (rows, n)     relative standard uncertainty of the input quantity per interval [-]
    c_volume : ndarray (rows, n)  relative sensitivity ∂ln V_b,i / ∂ln x [-]
    c_energy : ndarray (rows, n) or None
    mode : str                ``correlated`` or ``independent`` (see module docstring)
    applies : ndarray (n,) bool  intervals the input belongs to
    text : str                the uncertainty as shown in the budget
    in_volume : bool          listed in the volume budget (the heating value is energy only)
    """

    key: str
    label: str
    spec: InputSpec
    value: float
    unit: str
    u: np.ndarray
    c_volume: np.ndarray
    c_energy: np.ndarray | None
    mode: str
    applies: np.ndarray
    text: str
    in_volume: bool = True


@dataclass
class IntervalModel:
    """Everything the GUM budget and the Monte Carlo need, over the intervals with a result.

    Attributes
    ----------
    used : ndarray (N,) bool      intervals of ``result.intervals`` with a finite base volume
    volume : ndarray (n,) [m3]    V_b of the used intervals
    energy : ndarray (n,) or None [J]
    analysis : ndarray (n,) int   analysis in force
    n_analyses : int
    gas_day : ndarray (n,)        gas day of each used interval
    pressure, pressure_atm, temperature, z : ndarray (n,) [Pa, Pa, K, -]
    dlnz_dlnp, dlnz_dlnt, d2lnz_dlnp2, d2lnz_dlnt2, d2lnz_dlnpdlnt : ndarray (n,) [-]
    hv_from_composition : ndarray (A,) bool  H computed from the analysis at base (H ∝ 1/Z_b)
    terms : list of Term
    comp_line : ndarray (rows, n)   ∂ln Z_f,i / ∂ε_r of the composition rows (0 outside their analysis)
    comp_base : ndarray (rows, A)   ∂ln Z_b,a / ∂ε_r
    comp_hm : ndarray (rows, A)     ∂ln Hm_a / ∂ε_r
    notes : list of str
    """

    used: np.ndarray
    volume: np.ndarray
    energy: np.ndarray | None
    analysis: np.ndarray
    n_analyses: int
    gas_day: np.ndarray
    pressure: np.ndarray
    pressure_atm: np.ndarray
    temperature: np.ndarray
    z: np.ndarray
    dlnz_dlnp: np.ndarray
    dlnz_dlnt: np.ndarray
    d2lnz_dlnp2: np.ndarray
    d2lnz_dlnt2: np.ndarray
    d2lnz_dlnpdlnt: np.ndarray
    hv_from_composition: np.ndarray
    terms: list = field(default_factory=list)
    comp_line: np.ndarray | None = None
    comp_base: np.ndarray | None = None
    comp_hm: np.ndarray | None = None
    notes: list = field(default_factory=list)

    def term(self, key: str) -> Term | None:
        for t in self.terms:
            if t.key == key:
                return t
        return None


# ---------------------------------------------------------------------------------------------
def z_log_derivatives(pressure, temperature, gas, method: str, z0=None, step: float = STEP_PT,
                      analytic: bool = True):
    """First and second derivatives of ln Z in ln p and ln T: by the equation of state's own
    derivatives where the method has them (AGA8 DETAIL, GERG-2008: :mod:`meterfix.z.derivatives`),
    else by central differences.

    Parameters
    ----------
    pressure : ndarray [Pa]      absolute
    temperature : ndarray [K]
    gas : Composition or GrossCharacterization
    method : str                 Z method (registry name)
    z0 : ndarray [-], optional   Z at the points (evaluated when None)
    step : float [-]             step in ln p and ln T (central differences)
    analytic : bool              use the closed form where the method has one

    Returns
    -------
    dict of ndarray [-]: ``p``, ``t`` (first derivatives), ``pp``, ``tt``, ``pt`` (second)
    """
    p = np.asarray(pressure, float)
    t = np.asarray(temperature, float)
    if analytic and method in _CLOSED_FORM:
        from ..gas.composition import Composition

        if isinstance(gas, Composition):
            mod, fn = _CLOSED_FORM[method]
            import importlib

            d = getattr(importlib.import_module(mod, __package__), fn)(p, t, gas)
            return {k: d[k] for k in ("p", "t", "pp", "tt", "pt")}
    n = p.size
    e, f = np.exp(step), np.exp(-step)
    pp = np.concatenate([p * e, p * f, p, p, p * e, p * e, p * f, p * f])
    tt = np.concatenate([t, t, t * e, t * f, t * e, t * f, t * e, t * f])
    z = np.asarray(evaluate_z(pp, tt, gas, method, speed_of_sound=False).z, float).reshape(8, n)
    if z0 is None:
        z0 = np.asarray(evaluate_z(p, t, gas, method, speed_of_sound=False).z, float)
    with np.errstate(invalid="ignore", divide="ignore"):
        lz = np.log(z)
        l0 = np.log(np.asarray(z0, float))
    h = step
    return {
        "p": (lz[0] - lz[1]) / (2 * h),
        "t": (lz[2] - lz[3]) / (2 * h),
        "pp": (lz[0] - 2 * l0 + lz[1]) / h**2,
        "tt": (lz[2] - 2 * l0 + lz[3]) / h**2,
        "pt": (lz[4] - lz[5] - lz[6] + lz[7]) / (4 * h**2),
    }


def _wmean(x, w, mask=None):
    x = np.broadcast_to(np.asarray(x, float), np.shape(w))
    if mask is not None:
        w = np.where(mask, w, 0.0)
    s = np.sum(w)
    if not s > 0:
        return float(np.nanmean(x)) if np.size(x) and np.isfinite(x).any() else np.nan
    return float(np.sum(np.where(w > 0, x, 0.0) * w) / s)


def _range_text(u_by_class: dict, k: float = 2.0) -> str:
    parts = [f"{u_by_class[c]:g} % ({name})" for c, name in ((NORMAL, "normal range"), (EXTENDED, "extended range"))
             if c in u_by_class]
    return ", ".join(parts) + f" (k = {k:g})" if parts else "0"


# ---------------------------------------------------------------------------------------------
def build_model(result, parsed) -> IntervalModel:
    """The interval model of a month run: inputs resolved with their defaults, sensitivities.

    The steps, in order: the intervals with a result, the derivatives of ln Z (made those of the
    meter kind's effective Z), where each analysis' heating value comes from, then the terms of
    the meter, the line state, the Z method, the analysis-bound inputs and the estimated intervals.

    Parameters
    ----------
    result : MonthResult
    parsed : UncertaintySettings   from :func:`parse_uncertainty_settings`

    Returns
    -------
    IntervalModel
    """
    method = get_method(result.method["name"])
    x = _Intervals.of(result)
    notes = []
    if x.n and x.energy is None and np.isfinite(x.en).any():
        notes.append("the heating value is not known for every interval: no energy uncertainty is stated")
    fm = result.flow_meter or {}
    kind = fm.get("kind", VOLUME_METER)
    # the line state acts through the density at the upstream tap with exponent 1/2 on an orifice's
    # mass (qm ~ sqrt(rho1)) and not at all on a Coriolis meter's
    f_rho = {ORIFICE_METER: 0.5, CORIOLIS_METER: 0.0}.get(kind, 1.0)
    der = _z_derivatives(result, method.name, x, notes, f_rho)
    annex_b, has_b, hv_comp = _heating_value_sources(result, x.n_an)
    model = IntervalModel(used=x.used, volume=x.vb, energy=x.energy, analysis=x.analysis, n_analyses=x.n_an,
                          gas_day=np.asarray(result.intervals["gas_day"].to_numpy(object))[x.used], pressure=x.p,
                          pressure_atm=x.patm, temperature=x.t, z=x.z, dlnz_dlnp=der["p"], dlnz_dlnt=der["t"],
                          d2lnz_dlnp2=der["pp"], d2lnz_dlnt2=der["tt"], d2lnz_dlnpdlnt=der["pt"],
                          hv_from_composition=hv_comp, notes=notes)
    add = _term_adder(model)
    _meter_terms(model, add, parsed, result.intervals, x, fm, kind)
    _line_state_terms(add, parsed, result, x, der, notes)
    _z_terms(add, parsed, method, x, f_rho)
    _analysis_bound_terms(model, add, parsed, result, method, x, annex_b, has_b, hv_comp)
    if f_rho != 1.0:
        _scale_composition_line(model, f_rho)
    e_spec = parsed.resolve("estimated")
    _relative_only(e_spec)
    add("estimated", e_spec, float(np.sum(x.vl[x.est])), "m3", np.where(x.est, e_spec.standard, 0.0), 1.0, 1.0, x.est)
    return model


@dataclass
class _Intervals:
    """The figures of the intervals with a result (a finite base volume) that the model is built on.

    used (N,) bool over ``result.intervals``; n of them; vb [m3] base volume, the weights of the
    means; en [J] energy and ``energy`` the same when known for every interval (else None);
    analysis (n,) int in force, n_an analyses; p, patm [Pa], t [K], z [-] line state; vl [m3]
    line volume; dur [s]; est bool estimated; z_range int codes (RANGE_NAMES).
    """

    used: np.ndarray
    n: int
    vb: np.ndarray
    en: np.ndarray
    energy: np.ndarray | None
    analysis: np.ndarray
    n_an: int
    p: np.ndarray
    patm: np.ndarray
    t: np.ndarray
    z: np.ndarray
    vl: np.ndarray
    dur: np.ndarray
    est: np.ndarray
    z_range: np.ndarray

    @classmethod
    def of(cls, result):
        df = result.intervals
        vb_all = df["volume_base"].to_numpy(float)
        used = np.isfinite(vb_all)
        n = int(np.count_nonzero(used))
        en = df["energy"].to_numpy(float)[used] if "energy" in df else np.full(n, np.nan)
        analysis = df["analysis"].to_numpy(int)[used]
        rng = np.asarray(df["z_range"].cat.codes if hasattr(df["z_range"], "cat") else df["z_range"], int)[used]
        return cls(
            used=used, n=n, vb=vb_all[used], en=en, energy=en if n and np.isfinite(en).all() else None,
            analysis=analysis, n_an=max(len(result.analyses), int(analysis.max()) + 1 if n else 1),
            p=df["pressure_line"].to_numpy(float)[used],
            patm=df["pressure_atm"].to_numpy(float)[used] if "pressure_atm" in df else np.full(n, np.nan),
            t=df["temperature_line"].to_numpy(float)[used], z=df["z_line"].to_numpy(float)[used],
            vl=df["volume_line"].to_numpy(float)[used], dur=df["duration"].to_numpy(float)[used],
            est=df["estimated"].to_numpy(bool)[used] if "estimated" in df else np.zeros(n, bool), z_range=rng)


def _z_derivatives(result, method: str, x: _Intervals, notes: list, f_rho: float) -> dict:
    """ln Z derivatives at each interval's state [-]: p, t first order in ln p and ln T, pp, tt,
    pt second order (0 where Z cannot be evaluated: ideal gas, noted). For an orifice (f_rho ½)
    or a Coriolis meter (0) they are made those of an effective Z, so that c_p = f (1 − ∂lnZ/∂lnp),
    c_T = −f (1 + ∂lnZ/∂lnT), here and in the Monte Carlo."""
    der = {k: np.zeros(x.n) for k in ("p", "t", "pp", "tt", "pt")}
    gases = [a.gas for a in result.analyses]
    for a in range(len(gases)):
        sel = x.analysis == a
        if not sel.any() or gases[a] is None or method == IDEAL_METHOD:
            continue
        d = z_log_derivatives(x.p[sel], x.t[sel], gases[a], method, z0=x.z[sel])
        for k in der:
            der[k][sel] = d[k]
    bad = ~np.isfinite(der["p"]) | ~np.isfinite(der["t"])
    if bad.any():
        notes.append(f"{int(bad.sum())} interval(s) where Z could not be evaluated beside the logged state: "
                     "their pressure and temperature sensitivities are taken as ideal gas (1, -1)")
    for k in der:
        der[k] = np.where(np.isfinite(der[k]), der[k], 0.0)
    if f_rho != 1.0:
        der = {"p": 1.0 - f_rho * (1.0 - der["p"]), "t": -1.0 + f_rho * (1.0 + der["t"]),
               "pp": f_rho * der["pp"], "tt": f_rho * der["tt"], "pt": f_rho * der["pt"]}
    return der


def _heating_value_sources(result, n_an: int):
    """Where each analysis' heating value comes from: (annex_b (A,) [-] the relative u(Hv) of ISO
    6976:2016 Annex B where the analysis gave its standard uncertainties, else nan; has_b (A,) bool;
    hv_comp (A,) bool computed from the composition at base without Annex B figures).

    With Annex B, u(Hv) of that analysis (composition and the standard's table values) is the
    heating-value input and the composition term then acts on the energy through Z only (no double
    count); H does not follow the method's Z_b.
    """
    from ..gas.composition import Composition

    s = result.settings
    annex_b = np.array([_annex_b_relative(a) for a in result.analyses] + [np.nan] * (n_an - len(result.analyses)))
    has_b = np.isfinite(annex_b)
    hv_comp = np.array([isinstance(a.gas, Composition) and s.heating_value is None for a in result.analyses]
                       + [False] * (n_an - len(result.analyses)), bool) & ~has_b
    return annex_b, has_b, hv_comp


def _term_adder(model: IntervalModel):
    """``add(key, spec, value, unit, u, cv, ce, applies, ...)``: append one Term to the model, u the
    standard uncertainty of each row and interval, cv, ce the sensitivities of ln V_b and ln E
    (ce dropped without energy); a random input is independent across intervals, else correlated."""
    E = model.energy is not None

    def add(key, spec, value, unit, u, cv, ce, applies, text=None, in_volume=True, rows_mode=None, label=None):
        u = np.atleast_2d(np.asarray(u, float))
        cv = np.atleast_2d(np.broadcast_to(cv, u.shape).astype(float))
        ce = None if not E or ce is None else np.atleast_2d(np.broadcast_to(ce, u.shape).astype(float))
        mode = rows_mode or ("independent" if spec.correlation == "random" else "correlated")
        model.terms.append(Term(key, label or INPUT_KEYS[key][0], spec, value, unit, u, cv, ce, mode, applies,
                                text or spec.text, in_volume))

    return add


def _meter_terms(model, add, parsed, df, x: _Intervals, fm: dict, kind: str) -> None:
    """The meter's terms: the primary element's (orifice, Coriolis, calibration), or the volume
    meter's by flow range (Qt to Qmax and below Qt, q = V/duration [m3/s]), or one figure."""
    n, vl, notes = x.n, x.vl, model.notes
    ones = np.ones(n)
    m_spec = parsed.resolve("meter")
    if kind in (ORIFICE_METER, CORIOLIS_METER) or (fm and "meter" not in parsed.given):
        _meter_kind_terms(model, add, parsed, df, x.used, fm, vl, n)
    elif parsed.meter_qt is not None or parsed.meter_qmax is not None:
        with np.errstate(invalid="ignore", divide="ignore"):
            q = vl / x.dur
        low = np.zeros(n, bool)
        if parsed.meter_qt is not None:
            low |= np.isfinite(q) & (q < parsed.meter_qt)
        high = np.isfinite(q) & (q > parsed.meter_qmax) if parsed.meter_qmax is not None else np.zeros(n, bool)
        rated = ~(low | high)
        lo_spec = parsed.resolve("meter_below_qt")
        add("meter", m_spec, float(np.sum(vl[rated])), "m3", np.where(rated, m_spec.standard_at(ones), 0.0), 1.0, 1.0,
            rated, label="meter, Qt to Qmax")
        add("meter_below_qt", lo_spec, float(np.sum(vl[~rated])), "m3",
            np.where(~rated, lo_spec.standard_at(ones), 0.0), 1.0, 1.0, ~rated)
        if high.any():
            notes.append(f"{int(high.sum())} interval(s) above Qmax, outside the meter's rated range: the "
                         "meter_below_qt figure is used there")
    else:
        add("meter", m_spec, float(np.sum(vl)), "m3", m_spec.standard_at(ones), 1.0, 1.0, np.ones(n, bool),
            label="meter")
    _relative_only(m_spec)


def _line_state_terms(add, parsed, result, x: _Intervals, der: dict, notes: list) -> None:
    """Line pressure [Pa], atmospheric pressure [Pa] (gauge logs only; its default by source) and
    line temperature [K], with c_p = 1 − ∂lnZ/∂lnp and c_T = −1 − ∂lnZ/∂lnT."""
    n, p, t, patm, w = x.n, x.p, x.t, x.patm, x.vb
    c_p = 1.0 - der["p"]
    c_t = -1.0 - der["t"]
    p_spec = parsed.resolve("pressure")
    add("pressure", p_spec, _wmean(p, w), "Pa", p_spec.standard_at(p), c_p, c_p, np.ones(n, bool))
    gauge = np.isfinite(patm)
    if gauge.any():
        src = str(result.method.get("atmospheric_pressure_source") or "")
        dflt = ATMOSPHERIC_DEFAULTS["barometer" if src.startswith("barometer") else "fixed"]
        a_spec = parsed.resolve("atmospheric", *dflt)
        pa = np.where(gauge, patm, 1.0)
        add("atmospheric", a_spec, _wmean(patm, w, gauge), "Pa", np.where(gauge, a_spec.standard_at(pa), 0.0),
            np.where(gauge, c_p * pa / p, 0.0), np.where(gauge, c_p * pa / p, 0.0), gauge)
    elif "atmospheric" in parsed.given:
        notes.append("the log's pressure is absolute: the atmospheric-pressure uncertainty does not apply")
    t_spec = parsed.resolve("temperature")
    add("temperature", t_spec, _wmean(t, w), "K", t_spec.standard_at(t), c_t, c_t, np.ones(n, bool))


def _z_terms(add, parsed, method, x: _Intervals, f_rho: float) -> None:
    """The Z method at line conditions [-], by range class: the z setting, or the method's stated
    uncertainty in its normal and extended ranges (k = 2); outside its range twice that, assumed."""
    n, z, w, rng = x.n, x.z, x.vb, x.z_range
    z_given = parsed.given.get("z")
    outside = rng == OUTSIDE
    if method.name == IDEAL_METHOD:
        z_spec = z_given or InputSpec("z", "0", True, 0.0, 0.0, is_default=True, source=method.uncertainty_source)
        uz = np.full(n, z_spec.standard if z_spec.relative else 0.0)
        text = z_spec.text
    elif z_given is not None:
        z_spec = z_given
        _relative_only(z_spec)
        uz = np.full(n, z_spec.standard)
        text = z_spec.text
    else:
        table = {c: float(v) for c, v in (method.uncertainty_pct or {}).items() if v is not None}
        z_spec = InputSpec("z", _range_text(table), True, table.get(NORMAL, 0.0) / 100, table.get(NORMAL, 0.0) / 200,
                           is_default=True, source=f"{method.name}: {method.uncertainty_source}")
        uz = np.array([table.get(int(c), table.get(EXTENDED, table.get(NORMAL, 0.0))) for c in range(3)])[
            np.clip(rng, 0, 2)] / 200.0
        text = z_spec.text
    inside = ~outside
    add("z", z_spec, _wmean(z, w), "-", np.where(inside, uz, 0.0), -f_rho, -f_rho, inside, text=text)
    if outside.any() and method.name != IDEAL_METHOD:
        table = method.uncertainty_pct or {}
        base = z_spec.value if z_given is not None else float(table.get(EXTENDED, table.get(NORMAL, 0.0))) / 100
        zo = parsed.resolve("z_outside", f"{200 * base:g} %",
                            "assumed: twice the " + ("z setting" if z_given is not None else "method's extended-range "
                                                     "figure") + "; the method states no uncertainty outside its range")
        _relative_only(zo)
        add("z_outside", zo, _wmean(z, w, outside), "-", np.where(outside, zo.standard, 0.0), -f_rho, -f_rho, outside)


def _analysis_bound_terms(model, add, parsed, result, method, x: _Intervals, annex_b, has_b, hv_comp) -> None:
    """The inputs bound to the analysis in force: base Z [-], heating value [J/m3] (ISO 6976:2016
    Annex B where the analysis gave its uncertainties) and the composition."""
    df, analysis, w, n_an = result.intervals, x.analysis, x.vb, x.n_an
    zb = df["z_base"].to_numpy(float)[x.used]
    if method.name == IDEAL_METHOD:
        zb_spec = parsed.given.get("base_z") or InputSpec("base_z", "0", True, 0.0, 0.0, is_default=True,
                                                          source="Z = 1 by definition with the ideal method")
    else:
        zb_spec = parsed.resolve("base_z")
    _relative_only(zb_spec)
    hv_of = hv_comp[analysis]
    _analysis_term(model, add, "base_z", zb_spec, _wmean(zb, w), "-", zb_spec.standard, 1.0,
                   np.where(hv_of, 0.0, 1.0))
    if x.energy is not None:
        h = df["heating_value"].to_numpy(float)[x.used]
        dflt = HEATING_VALUE_DEFAULTS["composition" if hv_comp[: len(result.analyses)].all() else "supplied"]
        h_spec = parsed.resolve("heating_value", *dflt)
        uh = h_spec.standard_at(h)
        if "heating_value" not in parsed.given and has_b[analysis].any():
            from dataclasses import replace

            uh = np.where(has_b[analysis], annex_b[np.clip(analysis, 0, n_an - 1)], uh)
            h_spec = replace(h_spec, text="ISO 6976:2016 Annex B", source=(
                "ISO 6976:2016 Annex B from the analysis' standard uncertainties (and correlations when given) "
                "and the standard's table uncertainties" + ("" if has_b[analysis].all() else
                                                           "; other analyses: " + h_spec.source)))
        _analysis_term(model, add, "heating_value", h_spec, _wmean(h, w), "J/m3", uh, 0.0, 1.0, in_volume=False)
    from .composition import composition_term

    composition_term(model, result, parsed, add, method.name)


def _meter_kind_terms(model, add, parsed, df, used, fm: dict, vl, n: int) -> None:
    """The primary element's inputs in place of the volume meter's: an orifice's C, epsilon, dp, d and D
    (ISO 5167-2:2003, 5.3.3; ISO 5167-1:2003, 8.2.2), a Coriolis meter's mass, a calibration."""
    from ..meters import orifice_iso5167 as O

    ones = np.ones(n)
    allrows = np.ones(n, bool)
    kind = fm.get("kind")
    if kind == ORIFICE_METER:
        beta = float(fm["beta"])
        b4 = beta ** 4
        dp = df["pressure_differential"].to_numpy(float)[used]
        p1 = df["pressure_upstream"].to_numpy(float)[used]
        kap = df["isentropic_exponent"].to_numpy(float)[used]
        re = df["reynolds_pipe"].to_numpy(float)[used]
        d_pipe = float(fm["pipe_diameter_m"])
        flowing = np.isfinite(re) & (dp > 0)
        w = model.volume
        # C's uncertainty is step-valued (beta and D fixed, +0.5 % below Re_D = 10^4); epsilon's, 3.5 dp/(kappa p1),
        # is taken at its volume-weighted mean over the month (one value: a systematic input of a few 0.01 %)
        uc = np.where(flowing, O.discharge_coefficient_uncertainty_iso5167_2_2003(beta, d_pipe, re), 0.0) / 200.0
        ue = np.full(n, _wmean(np.where(flowing, O.expansibility_uncertainty_iso5167_2_2003(dp, p1, kap), 0.0), w,
                               flowing) / 200.0)
        c_txt = f"{_wmean(uc * 200.0, w):.3g} % (k = 2, ISO 5167-2:2003 5.3.3.1, by beta and Re_D)"
        e_txt = f"{_wmean(ue * 200.0, w):.3g} % (k = 2, 3.5 dp/(kappa p1) %, ISO 5167-2:2003 5.3.3.2, month mean)"
        from .inputs import InputSpec as _Spec

        for key, u, text, src in (
                ("discharge_coefficient", uc, c_txt, "ISO 5167-2:2003, 5.3.3.1 (from memory of the text)"),
                ("expansibility", ue, e_txt, "ISO 5167-2:2003, 5.3.3.2")):
            spec = parsed.given.get(key) or _Spec(key, text, True, float(_wmean(u, w)) * 2, float(_wmean(u, w)),
                                                  is_default=True, source=src)
            _relative_only(spec)
            uu = np.full(n, spec.standard) if key in parsed.given else u
            add(key, spec, np.nan, "-", uu, 1.0, 1.0, allrows, text=spec.text)
        for key, c in (("differential_pressure", 0.5), ("bore_diameter", 2.0 / (1.0 - b4)),
                       ("pipe_diameter", -2.0 * b4 / (1.0 - b4))):
            spec = parsed.resolve(key)
            _relative_only(spec)
            value = {"differential_pressure": _wmean(dp, w), "bore_diameter": fm["bore_diameter_m"],
                     "pipe_diameter": d_pipe}[key]
            add(key, spec, float(value), "Pa" if key == "differential_pressure" else "m", spec.standard * ones, c, c,
                allrows)
    elif kind == CORIOLIS_METER:
        spec = parsed.resolve("coriolis_mass")
        _relative_only(spec)
        add("coriolis_mass", spec, float(np.nansum(df["mass"].to_numpy(float)[used])), "kg", spec.standard * ones,
            1.0, 1.0, allrows)
    else:
        spec = parsed.resolve("calibration")
        _relative_only(spec)
        add("calibration", spec, float(np.sum(vl)), "m3", spec.standard * ones, 1.0, 1.0, allrows)


def _scale_composition_line(model, f: float) -> None:
    """The composition's action through Z at line conditions scaled by the density exponent f."""
    t = model.term("composition")
    if t is None or model.comp_line is None:
        return
    g_line = model.comp_line
    model.comp_line = g_line * f
    t.c_volume = t.c_volume + (1.0 - f) * g_line
    if t.c_energy is not None:
        t.c_energy = t.c_energy + (1.0 - f) * g_line
    model.notes.append("orifice and Coriolis meters: the composition acts through Z; its effect through the molar "
                       "mass on the density is not in this budget")


def _annex_b_relative(a) -> float:
    """Relative standard uncertainty u(Hv)/Hv of an analysis by ISO 6976:2016 Annex B, or NaN."""
    props = a.energy.properties if a.energy is not None else None
    u = props.standard_uncertainty if props is not None else None
    if not u:
        return np.nan
    key = "gross_heating_value_volumetric"
    return float(u[key] / props.values[key])


def _analysis_term(model, add, key, spec, value, unit, u, cv, ce, in_volume=True):
    """An input bound to the analysis in force: one shared error (systematic) or one per analysis."""
    n = model.volume.size
    u = np.broadcast_to(np.asarray(u, float), (n,))
    cv = np.broadcast_to(np.asarray(cv, float), (n,))
    ce = np.broadcast_to(np.asarray(ce, float), (n,))
    applies = np.ones(n, bool)
    if spec.correlation == "random" and model.n_analyses > 1:
        rows = [model.analysis == a for a in range(model.n_analyses)]
        U = np.array([np.where(r, u, 0.0) for r in rows])
        add(key, spec, value, unit, U, cv, ce, applies, in_volume=in_volume, rows_mode="correlated")
    else:
        add(key, spec, value, unit, u, cv, ce, applies, in_volume=in_volume, rows_mode="correlated")


# ---------------------------------------------------------------------------------------------
def term_variance(term: Term, weights: np.ndarray, sensitivity: np.ndarray, groups=None):
    """Variance of Σ weights·(relative deviation) from one term, in total or by group.

    Parameters
    ----------
    term : Term
    weights : ndarray (n,) [m3 or J]   V_b,i or E_i
    sensitivity : ndarray (rows, n) [-]
    groups : ndarray (n,) of int, optional   group code per interval (codes 0..G-1)

    Returns
    -------
    float or ndarray (G,) [m6 or J2]
    """
    a = weights[None, :] * sensitivity * term.u  # (rows, n)
    if groups is None:
        if term.mode == "correlated":
            return float(np.sum(np.sum(a, axis=1) ** 2))
        return float(np.sum(a**2))
    G = int(groups.max()) + 1 if groups.size else 0
    out = np.zeros(G)
    for r in range(a.shape[0]):
        if term.mode == "correlated":
            out += np.bincount(groups, weights=a[r], minlength=G) ** 2
        else:
            out += np.bincount(groups, weights=a[r] ** 2, minlength=G)
    return out


def interval_variance(model: IntervalModel, energy: bool = False) -> np.ndarray:
    """Relative variance of each interval's base volume (or energy), k = 1, squared.

    Parameters
    ----------
    model : IntervalModel
    energy : bool    the energy instead of the base volume

    Returns
    -------
    ndarray (n,) [-]
    """
    v = np.zeros(model.volume.size)
    for t in model.terms:
        c = t.c_energy if energy else t.c_volume
        if c is None or (not energy and not t.in_volume):
            continue
        v += np.sum((c * t.u) ** 2, axis=0)
    return v


def budget_frame(model: IntervalModel, energy: bool = False) -> pd.DataFrame:
    """One row per input: value, uncertainty, distribution, sensitivity, contribution, share.

    Parameters
    ----------
    model : IntervalModel
    energy : bool    the budget of the month's energy instead of its base volume

    Returns
    -------
    DataFrame   columns :data:`BUDGET_COLUMNS` (values SI, uncertainties and contributions in %)
    """
    w = model.energy if energy else model.volume
    total = float(np.sum(w))
    rows = []
    for t in model.terms:
        c = t.c_energy if energy else t.c_volume
        if c is None or (not energy and not t.in_volume):
            continue
        var = term_variance(t, w, c)
        contrib = np.sqrt(var) / total if total else np.nan
        wa = np.where(t.applies, np.abs(w), 0.0)
        # the input's relative u per interval: rows are components of one analysis, or one row per
        # analysis, each with the input's own figure
        u_row = np.max(np.abs(t.u), axis=0)
        u_mean = _wmean(u_row, wa) if t.applies.any() else (t.spec.standard if t.spec.relative else np.nan)
        if t.c_volume.shape[0] == 1:
            sens = _wmean(c[0], wa) if t.applies.any() else _wmean(c[0], np.abs(w))
        else:
            sens = contrib / u_mean if u_mean else 0.0
        per_interval = np.sqrt(np.sum((c * t.u) ** 2, axis=0))
        rows.append({
            "input": t.label, "setting": t.key, "value": t.value, "unit": t.unit, "uncertainty": t.text,
            "standard_uncertainty_pct": 100.0 * u_mean if np.isfinite(u_mean) else np.nan,
            "distribution": t.spec.distribution, "type": t.spec.type, "correlation": t.spec.correlation,
            "sensitivity": sens, "contribution_pct": 100.0 * contrib,
            "interval_contribution_pct": 100.0 * np.sqrt(_wmean(per_interval**2, wa)) if t.applies.any() else 0.0,
            "is_default": bool(t.spec.is_default), "source": t.spec.source,
        })
    out = pd.DataFrame(rows, columns=[c for c in BUDGET_COLUMNS if c != "share_pct"])
    var = out["contribution_pct"].to_numpy(float) ** 2
    tot = var.sum()
    out.insert(BUDGET_COLUMNS.index("share_pct"), "share_pct", 100.0 * var / tot if tot > 0 else 0.0)
    return out[BUDGET_COLUMNS]


def combined_relative(model: IntervalModel, energy: bool = False, groups=None):
    """Combined relative standard uncertainty (k = 1) of the month total, or of each group's total.

    Parameters
    ----------
    model : IntervalModel
    energy : bool                    the energy instead of the base volume
    groups : ndarray (n,) of int, optional   group code per used interval (e.g. gas day), 0..G-1

    Returns
    -------
    float or ndarray (G,) [-]
    """
    w = model.energy if energy else model.volume
    if groups is None:
        var = 0.0
    else:
        var = np.zeros(int(groups.max()) + 1 if groups.size else 0)
    for t in model.terms:
        c = t.c_energy if energy else t.c_volume
        if c is None or (not energy and not t.in_volume):
            continue
        var = var + term_variance(t, w, c, groups)
    if groups is None:
        tot = float(np.sum(w))
        return np.sqrt(var) / tot if tot else np.nan
    tot = np.bincount(groups, weights=w, minlength=var.size)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.sqrt(var) / tot
