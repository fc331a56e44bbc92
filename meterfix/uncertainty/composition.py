"""Composition in the uncertainty budget: through Z at line and base and the heating value together.

Each mole fraction x_j present in an analysis is perturbed by a factor exp(±h) (h = 1e-2) and the
analysis renormalised to sum 1 before Z is evaluated with the run's method, at every interval of the
analysis and at base conditions: the sum-to-one constraint is kept, and the other components (in
practice the balance, methane) absorb the change. Never one fraction alone without renormalising.
With ε_j the relative perturbation of x_j before renormalising, the derivatives are

    ∂ln Z / ∂ε_j  by central differences through the Z method (DETAIL and GERG-2008: of Z at the
                  solved molar density ρ, no new density solve, then at constant p and T by
                  (∂ln Z/∂ε)_ρ / (∂ln p/∂ln ρ)_T, since ln p = ln ρ + ln T + ln Z + ln R),
    ∂ln Hm / ∂ε_j = x_j (Hm_j / Hm − 1)    (analytic; Hm = Σ x_j Hm_j, ideal molar gross heating value)

and, since renormalising makes a common factor on every fraction a no-op, Σ_j ∂/∂ε_j = 0 for all of
them. The stated uncertainty is a relative standard uncertainty of each mole fraction (the same for
every component), independent from component to component; systematic: shared by every analysis of
the month, or random: one independent error per analysis.
"""

from __future__ import annotations

import numpy as np

from ..z import IDEAL_METHOD, evaluate_z
from .inputs import relative_only

#: step in the log-perturbation of one mole fraction
STEP_COMPOSITION = 1e-2


def composition_term(model, result, parsed, add, method_name):
    """Add the composition's term to the model: every mole fraction perturbed and renormalised.

    Parameters
    ----------
    model : IntervalModel           receives the term and its derivatives (comp_line, comp_base, comp_hm)
    result : MonthResult
    parsed : UncertaintySettings
    add : callable                  the model builder's term constructor
    method_name : str               Z method
    """
    from ..gas.composition import Composition

    n = model.volume.size
    comps = {a: an.gas for a, an in enumerate(result.analyses) if isinstance(an.gas, Composition)}
    if not comps:
        if any(an.gas is not None for an in result.analyses):
            model.notes.append("the gas is a gross characterisation: the uncertainty of its inputs is not in the "
                               "budget (only the heating value's)")
        return
    spec = parsed.resolve("composition")
    relative_only(spec)
    hcomp = _component_heating_values(result.settings)
    present = sorted({j for g in comps.values() for j in np.flatnonzero(g.fractions > 0)})
    A = model.n_analyses
    g_line = np.zeros((len(present), n))
    g_base = np.zeros((len(present), A))
    g_hm = np.zeros((len(present), A))
    s = result.settings
    h = STEP_COMPOSITION
    at_density = {}  # analysis -> (molar density at its points, 1 / (∂ln p/∂ln ρ)_T)
    for a, gas in comps.items():
        sel = model.analysis == a
        x = gas.fractions
        hm = float(x @ hcomp) if hcomp is not None else np.nan
        for r, j in enumerate(present):
            if x[j] <= 0:
                continue
            if hcomp is not None and hm > 0:
                g_hm[r, a] = x[j] * (hcomp[j] / hm - 1.0)
            if method_name == IDEAL_METHOD:
                continue
            pts_p = np.concatenate([[s.base_pressure], model.pressure[sel]])
            pts_t = np.concatenate([[s.base_temperature], model.temperature[sel]])
            if method_name in _AT_DENSITY and a not in at_density:
                at_density[a] = _density_state(method_name, pts_p, pts_t, gas)
            lz = []
            for sign in (1.0, -1.0):
                xp = x.copy()
                xp[j] *= np.exp(sign * h)
                g = Composition.from_array(xp / xp.sum(), unit="fraction")
                with np.errstate(invalid="ignore", divide="ignore"):
                    if a in at_density:
                        lz.append(np.log(_z_at(method_name)(at_density[a][0], pts_t, g)))
                    else:
                        lz.append(np.log(np.asarray(evaluate_z(pts_p, pts_t, g, method_name,
                                                              speed_of_sound=False).z, float)))
            d = (lz[0] - lz[1]) / (2 * h)
            if a in at_density:
                d = d * at_density[a][1]  # at constant p and T: divided by (∂ln p/∂ln ρ)_T
            g_base[r, a] = d[0] if np.isfinite(d[0]) else 0.0
            g_line[r, sel] = np.where(np.isfinite(d[1:]), d[1:], 0.0)
    rows_a = np.ones((len(present), 1), bool)
    if spec.correlation == "random" and A > 1:
        # one independent error per analysis and component: rows (component, analysis)
        rows_a = np.eye(A, dtype=bool)[None, :, :].repeat(len(present), 0).reshape(-1, A)
        g_line = np.repeat(g_line, A, 0) * (model.analysis[None, :] == np.tile(np.arange(A), len(present))[:, None])
        g_base = np.repeat(g_base, A, 0) * rows_a
        g_hm = np.repeat(g_hm, A, 0) * rows_a
    R = g_line.shape[0]
    cv = g_base[:, model.analysis] - g_line
    hv_of = model.hv_from_composition[model.analysis]
    ce = np.where(hv_of[None, :], g_hm[:, model.analysis], g_base[:, model.analysis]) - g_line
    applies = np.isin(model.analysis, list(comps))
    u = np.where(applies[None, :], spec.standard, 0.0) * np.ones((R, 1))
    if spec.correlation == "random" and A > 1:
        u = u * (model.analysis[None, :] == np.tile(np.arange(A), len(present))[:, None])
    model.comp_line, model.comp_base, model.comp_hm = g_line, g_base, g_hm
    add("composition", spec, np.nan, "mol/mol", u, cv, ce, applies,
        text=f"{spec.text} of each mole fraction, renormalised", rows_mode="correlated")
    if method_name == IDEAL_METHOD:
        model.notes.append("ideal method: Z does not depend on the composition; the composition acts on the "
                           "heating value only")


#: methods whose Z is evaluated at the solved density for the perturbed compositions:
#: (module, Z at density, ln Z derivatives in closed form)
_AT_DENSITY = {"aga8-detail": ("..z.aga8_detail", "z_at_density", "z_log_derivatives_detail"),
               "gerg-2008": ("..z.gerg2008", "z_at_density", "z_log_derivatives_gerg")}


def _eos(method_name, which):
    import importlib

    mod, at, der = _AT_DENSITY[method_name]
    return getattr(importlib.import_module(mod, __package__), at if which == "at" else der)


def _z_at(method_name):
    return _eos(method_name, "at")


def _density_state(method_name, p, t, gas):
    """Molar density of the analysis' gas at the points and 1/(∂ln p/∂ln ρ)_T = 1 − ∂lnZ/∂lnp."""
    res = evaluate_z(p, t, gas, method_name, speed_of_sound=False)
    d = _eos(method_name, "derivatives")(p, t, gas)
    return np.asarray(res.molar_density, float), 1.0 - d["p"]


def _component_heating_values(settings):
    """Each component's gross molar heating value at the combustion temperature [J/mol] (ISO 6976)."""
    from ..energy import component_heating_values

    return np.asarray(component_heating_values(settings.combustion_temperature), float)
