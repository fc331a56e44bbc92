"""Uncertainty of the month: GUM budget per interval, gas day and month, with a Monte Carlo check.

``month_uncertainty(result)`` takes a :class:`~meterfix.engine.pipeline.MonthResult` and returns a
:class:`MonthUncertainty`: the relative expanded uncertainty (k = 2) of the month's base volume
and energy, the budget (one row per input: value, uncertainty as given, standard uncertainty,
distribution, GUM type, correlation class, sensitivity, contribution, share of the variance,
whether the figure is a default and where it comes from), the same per gas day and per interval,
and a Monte Carlo propagation (JCGM 101) that validates the GUM result.

Inputs and their settings: see :mod:`meterfix.uncertainty.inputs`; the measurement model,
sensitivities and correlation classes: :mod:`meterfix.uncertainty.budget` (the composition:
:mod:`meterfix.uncertainty.composition`); the Monte Carlo: :mod:`meterfix.uncertainty.monte_carlo`.

What the figures cover, and what they do not: the inputs listed in the budget, within the ranges
of their stated distributions. An estimated interval carries the meter's figure and the estimated
figure together. Not covered: an error in the base conditions or the gas-day
convention (those are settings, checked elsewhere), a meter or transmitter out of calibration
beyond its stated figure, substituted data beyond the ``estimated`` figure, intervals without a
result (reported by the run, not in the total). The figures support review and queries; the
contract, local legal-metrology rules and licensed practice decide what is billed.

References: JCGM 100:2008 (GUM); JCGM 101:2008 (propagation of distributions by Monte Carlo).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from .budget import (BUDGET_COLUMNS, IntervalModel, build_model, budget_frame, combined_relative,
                                 interval_variance, term_variance)
from .inputs import (DEFAULTS, INPUT_KEYS, InputSpec, UncertaintySettings, parse_uncertainty,
                                 parse_uncertainty_settings)
from ..z.blocks import blas_single_thread
from .monte_carlo import monte_carlo, numerical_tolerance

COVERAGE_FACTOR = 2.0



def _records(frame: pd.DataFrame) -> list[dict]:
    """``frame.to_dict(orient="records")`` with Python scalars, column by column (``tolist``): a
    budget of a few rows costs a few microseconds instead of pandas' row-by-row boxing."""
    cols = list(frame.columns)
    if not cols:
        return [{} for _ in range(len(frame))]
    return [dict(zip(cols, vals)) for vals in zip(*(frame.iloc[:, i].tolist() for i in range(len(cols))))]


@dataclass
class MonthUncertainty:
    """Uncertainty of a month's base volume and energy.

    Attributes
    ----------
    expanded_pct : float            month base volume, relative expanded uncertainty, k = 2 [%]
    expanded_energy_pct : float or None   month energy, k = 2 [%]
    coverage_factor : float         2.0
    budget : DataFrame              one row per input: input, setting, value, unit, uncertainty (as
                                    given), standard_uncertainty_pct, distribution, type ('A'/'B'),
                                    correlation ('random'/'systematic'), sensitivity (∂ln V/∂ln x),
                                    contribution_pct (to the month total, k = 1; for a systematic
                                    input |c|·u, for a random one after averaging over the
                                    intervals), share_pct (of the variance), interval_contribution_pct
                                    (|c|·u on one interval, volume-weighted rms), is_default, source.
                                    value and sensitivity are volume-weighted means over the intervals
                                    the input applies to; for the composition (independent components)
                                    the sensitivity is the effective one, contribution / u
    energy_budget : DataFrame or None   the same for the month's energy
    gas_days : DataFrame            index gas_day; volume_base [m3], expanded_pct, expanded_energy_pct [%],
                                    random_standard_uncertainty_m3 [m3], random_standard_uncertainty_J [J]
                                    (k = 1: the inputs independent from interval to interval, which are
                                    also independent from gas day to gas day)
    systematic_pct : float          month base volume: the part shared by every interval (the budget's
                                    correlated rows: systematic inputs, one error per analysis), relative
                                    standard uncertainty, k = 1 [%]; a gas day's share of it is its
                                    volume times this figure (what a system balance adds across days)
    systematic_energy_pct : float or None   the same for the energy, k = 1 [%]
    intervals : DataFrame           index as result.intervals; u_volume_base_pct, u_energy_pct (k = 1)
                                    [%], sensitivity_pressure, sensitivity_temperature [-]
    monte_carlo : dict              draws, seed, expanded_pct (half-width of the 95 % probabilistically
                                    symmetric interval / month total) [%], coverage_interval_m3,
                                    shortest_interval_m3, gum_interval_m3 (y ± 1.96 u), d_low, d_high [m3],
                                    gum_agrees, validation (text), tolerance_pct (JCGM 101 §7.9.2 with
                                    n_dig digits), numerically_stable, endpoint_standard_error,
                                    evaluation (the interval-sums check), energy (the same in J, or None), ...
    standard_uncertainty_m3 : float  month base volume, k = 1 [m3]
    notes : list of str
    """

    expanded_pct: float
    expanded_energy_pct: float | None
    coverage_factor: float
    budget: pd.DataFrame
    energy_budget: pd.DataFrame | None
    gas_days: pd.DataFrame
    intervals: pd.DataFrame
    monte_carlo: dict
    standard_uncertainty_m3: float = float("nan")
    notes: list = field(default_factory=list)
    systematic_pct: float = float("nan")
    systematic_energy_pct: float | None = None

    def to_summary(self) -> dict:
        """JSON-ready dict: budget rows, month figures, Monte Carlo check, gas days."""
        def rows(frame):
            if frame is None:
                return None
            return [{k: (None if isinstance(v, float) and not np.isfinite(v) else v) for k, v in r.items()}
                    for r in _records(frame)]

        mc = dict(self.monte_carlo)
        return {
            "method": "GUM (JCGM 100:2008) linear propagation, validated by Monte Carlo (JCGM 101:2008)",
            "coverage_factor": self.coverage_factor,
            "expanded_pct": self.expanded_pct,
            "expanded_energy_pct": self.expanded_energy_pct,
            "standard_uncertainty_m3": self.standard_uncertainty_m3,
            "systematic_standard_uncertainty_pct": self.systematic_pct,
            "systematic_standard_uncertainty_energy_pct": self.systematic_energy_pct,
            "budget": rows(self.budget),
            "energy_budget": rows(self.energy_budget),
            "monte_carlo_expanded_pct": mc.get("expanded_pct"),
            "monte_carlo": mc,
            "gas_days": [{"gas_day": str(k), **r} for k, r in zip(self.gas_days.index, _records(self.gas_days))],
            "notes": list(self.notes),
        }


def month_uncertainty(result, *, draws: int = 10_000, seed: int = 2026, progress=None,
                      n_dig: int | None = None, max_draws: int | None = None) -> MonthUncertainty:
    """GUM budget and Monte Carlo check of a month run.

    Parameters
    ----------
    result : MonthResult
        ``result.settings.uncertainty`` holds the inputs as strings (``[uncertainty]`` table or CLI
        options), see :func:`parse_uncertainty_settings`.
    draws : int            Monte Carlo trials per stage of the adaptive procedure (JCGM 101 §7.9.4
                           M = 10^4) [-]
    max_draws : int, optional  stages of ``draws`` trials until the month base volume's results are
                           numerically stable to the tolerance (JCGM 101 §7.9.4), up to this many
                           [-] (default 2·10^5; give ``draws`` for a fixed M)
    seed : int             seed of the generator [-]
    progress : callable(done, total), optional   Monte Carlo progress [trials]
    n_dig : int, optional  significant digits of u for the JCGM 101 numerical tolerance [-] (default:
                           two when u's leading digit is 1, else one; see
                           :func:`meterfix.uncertainty.monte_carlo.month_tolerance`)

    Returns
    -------
    MonthUncertainty

    Raises
    ------
    SettingsError   an uncertainty setting that cannot be read (naming the setting)
    """
    parsed = parse_uncertainty_settings(result.settings.uncertainty)
    # BLAS held to one thread for the whole budget and Monte Carlo: the matrix products then do not
    # depend on how many threads the process has (a Dask worker holds one), so the same month
    # gives the same bits in every process
    with blas_single_thread():
        model = build_model(result, parsed)
    return _month_uncertainty(result, model, draws=draws, seed=seed, progress=progress, n_dig=n_dig,
                              max_draws=max_draws)


def _month_uncertainty(result, model, *, draws, seed, progress, n_dig, max_draws) -> MonthUncertainty:
    index = result.intervals.index
    has_e = model.energy is not None
    total_v = float(np.sum(model.volume))
    u_v = float(combined_relative(model)) if total_v else float("nan")
    u_e = float(combined_relative(model, energy=True)) if has_e else None

    budget = budget_frame(model)
    ebudget = budget_frame(model, energy=True) if has_e else None

    # per gas day
    codes, days = pd.factorize(pd.Index(model.gas_day), sort=True)
    gd = pd.DataFrame(index=pd.Index(days, name="gas_day"))
    gd["volume_base"] = np.bincount(codes, weights=model.volume, minlength=len(days)) if len(days) else []
    if len(days):
        gd["expanded_pct"] = 100.0 * COVERAGE_FACTOR * combined_relative(model, groups=codes)
        gd["expanded_energy_pct"] = (100.0 * COVERAGE_FACTOR * combined_relative(model, energy=True, groups=codes)
                                     if has_e else np.nan)
    else:
        gd["expanded_pct"] = []
        gd["expanded_energy_pct"] = []
    rnd_v, sys_v = _random_systematic(model, codes, len(days))
    gd["random_standard_uncertainty_m3"] = rnd_v
    if has_e:
        rnd_e, sys_e = _random_systematic(model, codes, len(days), energy=True)
        gd["random_standard_uncertainty_J"] = rnd_e
    else:
        gd["random_standard_uncertainty_J"] = np.nan
        sys_e = None

    # per interval (k = 1)
    iv = pd.DataFrame(index=index)
    for col, arr in (("u_volume_base_pct", 100.0 * np.sqrt(interval_variance(model))),
                     ("u_energy_pct", 100.0 * np.sqrt(interval_variance(model, energy=True)) if has_e else None),
                     ("sensitivity_pressure", 1.0 - model.dlnz_dlnp),
                     ("sensitivity_temperature", -1.0 - model.dlnz_dlnt)):
        full = np.full(len(index), np.nan)
        if arr is not None:
            full[model.used] = arr
        iv[col] = full

    notes = list(model.notes)
    n_out = int(np.count_nonzero(~model.used))
    if n_out:
        vl = result.intervals["volume_line"].to_numpy(float)[~model.used]
        notes.append(f"{n_out} interval(s) without a corrected result ({np.nansum(vl):.6g} m3 uncorrected) are not "
                     "in the month total and not in its uncertainty")
    if total_v and model.volume.size:
        with blas_single_thread():  # see month_uncertainty
            mc = monte_carlo(model, gum_u_volume=u_v, gum_u_energy=u_e, draws=draws, seed=seed, progress=progress,
                             n_dig=n_dig, max_draws=max_draws)
        mc["coverage_interval_m3"] = mc["coverage_interval"]
        mc["shortest_interval_m3"] = mc["shortest_interval"]
        mc["gum_interval_m3"] = mc["gum_interval"]
        if mc["gum_agrees"] is None:
            notes.append("Monte Carlo validation of the base volume " + mc["validation"])
        elif mc["gum_agrees"] is False:
            notes.append("the Monte Carlo 95 % interval differs from the GUM interval by more than the numerical "
                         "tolerance: quote the Monte Carlo interval (JCGM 101 §8)")
    else:
        mc = {"draws": 0, "seed": seed, "expanded_pct": None, "coverage_interval_m3": None, "gum_agrees": None,
              "tolerance_pct": None}
    return MonthUncertainty(
        expanded_pct=100.0 * COVERAGE_FACTOR * u_v,
        expanded_energy_pct=100.0 * COVERAGE_FACTOR * u_e if has_e else None,
        coverage_factor=COVERAGE_FACTOR, budget=budget, energy_budget=ebudget, gas_days=gd, intervals=iv,
        monte_carlo=mc, standard_uncertainty_m3=u_v * total_v, notes=notes,
        systematic_pct=100.0 * sys_v, systematic_energy_pct=None if sys_e is None else 100.0 * sys_e)


def _random_systematic(model, codes, n_days: int, energy: bool = False):
    """(random standard uncertainty per gas day [m3 or J], systematic relative standard uncertainty of
    the month [-]), k = 1: the budget's independent rows by gas day, and its correlated rows over the
    month (a system balance adds these across meters and days; JCGM 100:2008 §5.1, §5.2)."""
    w = model.energy if energy else model.volume
    rnd = np.zeros(n_days)
    sys = 0.0
    for t in model.terms:
        c = t.c_energy if energy else t.c_volume
        if c is None or (not energy and not t.in_volume):
            continue
        if t.mode == "independent":
            if n_days:
                rnd = rnd + term_variance(t, w, c, codes)
        else:
            sys += term_variance(t, w, c)
    tot = float(np.sum(w)) if w is not None else 0.0
    return np.sqrt(rnd), (np.sqrt(sys) / tot if tot else float("nan"))


__all__ = ["MonthUncertainty", "month_uncertainty", "parse_uncertainty_settings", "parse_uncertainty",
           "UncertaintySettings", "InputSpec", "IntervalModel", "DEFAULTS", "INPUT_KEYS", "BUDGET_COLUMNS",
           "numerical_tolerance", "COVERAGE_FACTOR"]
