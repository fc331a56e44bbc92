"""Uncertainty of a month: GUM budget and Monte Carlo on the demo month (745 hourly intervals).

Prints wall time of the budget alone, of the Monte Carlo with grouped intervals (the default) and
with every interval in every trial at a fixed number of trials, their ratio, how far apart the two
evaluations are, and the default adaptive procedure (JCGM 101 §7.9.4) in the same run.

    python benchmarks/bench_uncertainty.py [--draws 100000] [--repeat 3]
"""

from __future__ import annotations

import argparse
import os
import time

import numpy as np


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--draws", type=int, default=100_000)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--quick", action="store_true", help="10^4 trials, one run (checks the benchmark runs)")
    a = ap.parse_args()
    if a.quick:
        a.draws, a.repeat = 10_000, 1

    print(f"load average {' '.join(f'{x:.2f}' for x in os.getloadavg())}")
    from meterfix.cli.demo import demo_month
    from meterfix.engine.pipeline import run_month
    from meterfix.engine.settings import build_settings
    from meterfix.uncertainty.budget import build_model, combined_relative
    from meterfix.uncertainty.inputs import parse_uncertainty_settings
    from meterfix.uncertainty.monte_carlo import monte_carlo

    frame, analyses = demo_month()
    s = build_settings(None, {"base": "normal-0c", "timezone": "Europe/Berlin", "gas_day_start": "06:00",
                              "elevation": "240 m", "method": "gerg-2008"})
    r = run_month(frame, analyses, s)
    parsed = parse_uncertainty_settings({})

    def best(f):
        times = []
        for _ in range(a.repeat):
            t0 = time.perf_counter()
            out = f()
            times.append(time.perf_counter() - t0)
        return min(times), out

    from meterfix.engine.pipeline import run_month as core

    t_core, _ = best(lambda: core(frame, analyses, s))
    t_gum, model = best(lambda: build_model(r, parsed))
    u = float(combined_relative(model))
    ue = float(combined_relative(model, energy=True))
    print(f"{model.volume.size} intervals; core path of the month (run_month) {t_core * 1000:.0f} ms; GUM model "
          f"(closed-form Z sensitivities through GERG-2008, composition by differences) {t_gum * 1000:.0f} ms")
    kw = dict(gum_u_volume=u, gum_u_energy=ue, draws=a.draws, max_draws=a.draws)
    t_g, mc_g = best(lambda: monte_carlo(model, **kw))
    t_x, mc_x = best(lambda: monte_carlo(model, grouping=False, **kw))
    ev = mc_g["evaluation"]
    print(f"Monte Carlo, {a.draws:,} trials: interval sums ({ev['columns']} columns for {ev['sets']} sets) "
          f"{t_g:.3f} s, per interval {t_x:.2f} s, ratio {t_x / t_g:.0f}x")
    print(f"interval sums checked on {ev['checked_trials']} trials: max relative difference "
          f"{ev['max_relative_difference']:.1e}")
    d = np.array(mc_g["coverage_interval"]) - np.array(mc_x["coverage_interval"])
    print(f"95 % interval endpoints, interval sums minus per interval (same seed): {d[0]:.3g}, {d[1]:.3g} m3 "
          f"(tolerance {mc_g['tolerance']:.3g} m3)")
    t_ad, mc_ad = best(lambda: monte_carlo(model, gum_u_volume=u, gum_u_energy=ue))
    t_all = t_gum + t_ad
    print(f"adaptive (JCGM 101 §7.9.4, the default: stages of 10^4 trials until stable, n_dig = "
          f"{mc_ad['n_dig']} by the month's rule): {mc_ad['draws']:,} trials ({mc_ad['stages']} stages) in "
          f"{t_ad:.3f} s; GUM {mc_ad['validation']}, energy {mc_ad['energy']['validation']}")
    print(f"uncertainty (model + adaptive Monte Carlo) {t_all * 1000:.0f} ms = {t_all / t_core:.1f}x the core path "
          f"(target 1x)")

if __name__ == "__main__":
    main()
