"""`meterfix demo`: one invented month through the engine and the writers.

Scenario (invented): meter "FV-M1" at the Fennick Valley kiln works, hourly, October 2026, about
38-41 bar(g), an analysis change on 15 October, a six-hour gap. The month is generated in memory
(deterministic); the log readers are not part of this build yet.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .gas import Composition

ANALYSIS_1 = {"methane": 0.9312, "ethane": 0.0342, "propane": 0.0071, "isobutane": 0.0011, "n_butane": 0.0013,
              "nitrogen": 0.0128, "carbon_dioxide": 0.0123}
ANALYSIS_2 = {"methane": 0.9105, "ethane": 0.0488, "propane": 0.0102, "isobutane": 0.0016, "n_butane": 0.0019,
              "nitrogen": 0.0110, "carbon_dioxide": 0.0160}


def demo_month():
    """(frame, analyses) of the invented month."""
    idx = pd.date_range("2026-10-01 06:00", "2026-11-01 06:00", freq="h", tz="Europe/Berlin", inclusive="right")
    idx = idx.tz_convert("UTC")
    n = len(idx)
    rng = np.random.default_rng(2026)
    hours = np.arange(n)
    p_gauge = 39.5e5 + 1.2e5 * np.sin(hours / 24 * 2 * np.pi) + 0.2e5 * rng.standard_normal(n)
    t = 273.15 + 12.0 + 4.0 * np.sin((hours - 8) / 24 * 2 * np.pi) + 0.3 * rng.standard_normal(n)
    v = 1150.0 + 250.0 * np.sin((hours - 10) / 24 * 2 * np.pi) + 30.0 * rng.standard_normal(n)
    frame = pd.DataFrame({"pressure_gauge": p_gauge, "temperature_line": t, "volume_line": v,
                          "duration": 3600.0}, index=idx)
    gap = slice(300, 306)
    frame.iloc[gap, frame.columns.get_loc("pressure_gauge")] = np.nan
    frame.iloc[gap, frame.columns.get_loc("temperature_line")] = np.nan
    frame["flag_gap"] = False
    frame.iloc[gap, frame.columns.get_loc("flag_gap")] = True
    change = pd.Timestamp("2026-10-15 06:00", tz="Europe/Berlin").tz_convert("UTC")
    analyses = [(None, Composition.from_mapping(ANALYSIS_1)), (change, Composition.from_mapping(ANALYSIS_2))]
    return frame, analyses


def run_demo(out_dir, overwrite: bool = False):
    """Run the demo month and write its outputs; returns (result, {kind: path})."""
    from .engine.pipeline import run_month
    from .engine.settings import build_settings
    from .engine.uncertainty import month_uncertainty
    from .writers import write_outputs

    settings = build_settings(None, {"meter": "FV-M1", "site": "Fennick Valley kiln works (invented)",
                                     "base": "normal-0c", "timezone": "Europe/Berlin", "gas_day_start": "06:00",
                                     "elevation": "240 m", "method": "gerg-2008"})
    frame, analyses = demo_month()
    result = run_month(frame, analyses, settings)
    result.uncertainty = month_uncertainty(result)
    return result, write_outputs(result, out_dir, overwrite=overwrite)
