"""An invented zone for the balance tests: two receipt stations, five deliveries, one section.

Daily flows follow an invented heating-season profile (cold spell mid-month), an industrial
delivery works weekdays only; each meter's random daily error is drawn from its own budget.
"""

from __future__ import annotations

import numpy as np

from meterfix.balance.ufg import Fixed, MeterMonth

DAYS = [f"2026-10-{d:02d}" for d in range(1, 32)]


def zone(*, drift_meter: str | None = None, drift: float = 0.02, onset: int = 14, seed: int = 5, loss: float = 0.0,
         u_random_rel: float = 0.001, u_sys_rel: float = 0.003):
    """(meters, fixed, true Δlinepack per day) of the invented zone; ``drift_meter`` reads ``drift``
    high from day index ``onset`` (0-based)."""
    rng = np.random.default_rng(seed)
    D = len(DAYS)
    d = np.arange(D)
    cold = 1.0 + 0.35 * np.exp(-0.5 * ((d - 17) / 4.0) ** 2)
    weekday = np.array([(1 + (k + 3) % 7) <= 5 for k in d], float)  # 2026-10-01 is a Thursday
    deliveries = {
        "D1 Millbrook town": 42_000 * cold * (1 + 0.03 * rng.standard_normal(D)),
        "D2 Hollin village": 9_000 * cold * (1 + 0.03 * rng.standard_normal(D)),
        "D3 Kestrel works": 30_000 * (0.25 + 0.75 * weekday) * (1 + 0.02 * rng.standard_normal(D)),
        "D4 Fenwick estate": 15_000 * cold * (1 + 0.03 * rng.standard_normal(D)),
        "D5 Ashby power": 25_000 * np.ones(D),
    }
    own = {"O1 compressor fuel": 1_500 * np.ones(D)}
    dlp = 2_000 * np.sin(2 * np.pi * d / 9.0)                    # true linepack change [m3/day]
    total_out = sum(deliveries.values()) + sum(own.values()) + dlp + loss
    receipts = {"R1 North intake": 0.6 * total_out, "R2 East intake": 0.4 * total_out}
    meters = []
    for role, group in (("receipt", receipts), ("delivery", deliveries), ("own_use", own)):
        for name, true in group.items():
            measured = true * (1 + u_random_rel * rng.standard_normal(D))
            if name == drift_meter:
                measured = measured * np.where(d >= onset, 1.0 + drift, 1.0)
            meters.append(MeterMonth(name=name, role=role, gas_days=list(DAYS), volume=measured, energy=None,
                                     u_random=u_random_rel * measured, u_systematic_rel=u_sys_rel))
    return meters, [Fixed("vented, station maintenance", 0.0, 0.3)], dlp
