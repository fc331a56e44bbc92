"""An invented fleet for the store tests: three meters of the Ostwold gas network (invented), a few
days of hourly logs in each of three gas months, written as plain CSV exports with a site file each.

``write_fleet_month(root, "2026-09")`` makes ``root/<meter>/site.toml`` and ``log.csv`` for that
month; every month of a meter has its own seed, so the totals differ month to month.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

GAS = "methane=0.93,ethane=0.035,propane=0.008,nitrogen=0.015,carbon_dioxide=0.012"
MONTHS = ("2026-08", "2026-09", "2026-10")
#: meter → (folder, mean gauge pressure [bar], mean flow [m3/h], site-file lines)
METERS = {
    "OW-North": ("ow-north", 38.0, 900.0, 'base = "normal-0c"\nelevation = "120 m"\n'),
    "OW-Quarry": ("ow-quarry", 12.0, 250.0, 'base = "iso-15c"\natmospheric_pressure = "99.1 kPa"\n'),
    "OW-Mill": ("ow-mill", 4.0, 60.0, 'base = "normal-0c"\nelevation = "310 m"\nsubstitution = "interpolate"\n'),
}


def log_csv(month: str, mean_bar: float, flow: float, *, days: int = 3, seed: int = 0, gap: bool = False) -> str:
    """An hourly log of the first ``days`` gas days of ``month`` (local clock, Europe/Berlin)."""
    rng = np.random.default_rng(seed)
    start = pd.Timestamp(f"{month}-01 07:00")
    n = 24 * days
    t = np.arange(n)
    p = mean_bar * (1 + 0.05 * np.sin(2 * np.pi * t / 24)) + 0.02 * mean_bar * rng.standard_normal(n)
    temp = 9.0 + 3.0 * np.sin(2 * np.pi * (t - 6) / 24) + 0.3 * rng.standard_normal(n)
    vol = flow * (1 + 0.15 * rng.random(n))
    lines = ["Interval end,Line pressure [bar(g)],Line temperature [degC],Uncorrected volume [m3]"]
    for i in range(n):
        when = (start + pd.Timedelta(hours=i)).strftime("%Y-%m-%d %H:%M")
        if gap and i in (30, 31):
            lines.append(f"{when},,,")
            continue
        lines.append(f"{when},{p[i]:.4f},{temp[i]:.2f},{vol[i]:.3f}")
    return "\n".join(lines) + "\n"


def write_fleet_month(root, month: str, meters=None, *, days: int = 3, extra: str = "") -> dict:
    """One gas month of the invented fleet under ``root``; returns {meter: folder}."""
    from pathlib import Path

    root = Path(root)
    out = {}
    for k, name in enumerate(meters or METERS):
        folder, bar, flow, site = METERS[name]
        d = root / folder
        d.mkdir(parents=True, exist_ok=True)
        seed = 1000 * MONTHS.index(month) + k if month in MONTHS else k
        (d / "log.csv").write_text(log_csv(month, bar, flow, days=days, seed=seed, gap=name == "OW-Mill"),
                                   encoding="utf-8")
        (d / "gas.csv").write_text("Component,Mole percent [mol%]\nmethane,93\nethane,3.5\npropane,0.8\n"
                                   "nitrogen,1.5\ncarbon_dioxide,1.2\n", encoding="utf-8")
        (d / "site.toml").write_text(f'meter = "{name}"\n{site}timezone = "Europe/Berlin"\ngas_day_start = "06:00"\n'
                                     f'{extra}[files]\nlogs = ["log.csv"]\ncomposition = "gas.csv"\n', encoding="utf-8")
        out[name] = d
    return out
