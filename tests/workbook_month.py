"""A complete invented month for the writer tests: the demo month of meter "FV-M1" with its
uncertainty, a site corrector configured as ideal gas, and a supplier invoice 1.5 % above ours."""

from __future__ import annotations

import numpy as np
import pandas as pd

from meterfix.cli.demo import demo_month
from meterfix.engine.pipeline import run_month
from meterfix.checks.invoice import check_corrector, reconcile_frame
from meterfix.engine.settings import build_settings
from meterfix.uncertainty import month_uncertainty

OPTIONS = {"meter": "FV-M1", "site": "Fennick Valley kiln works (invented)", "base": "normal-0c",
           "timezone": "Europe/Berlin", "gas_day_start": "06:00", "elevation": "240 m", "method": "gerg-2008",
           "price": "35 EUR/MWh"}


def plain_month(**options):
    """The demo month through the engine only (no uncertainty, invoice or corrector)."""
    opts = dict(OPTIONS)
    opts.update(options)
    frame, analyses = demo_month()
    return run_month(frame, analyses, build_settings(None, opts)), frame


def full_month(**options):
    """The demo month with every later step attached."""
    result, frame = plain_month(**options)
    d = result.intervals
    frame = frame.copy()
    # an ideal-gas corrector at the contract base: Vb = Vf (pf/pb)(Tb/Tf), Z = 1
    frame["volume_corrected_site"] = d["volume_line"] * d["factor_pressure"] * d["factor_temperature"]
    result.corrector_check = check_corrector(result, frame)
    result.uncertainty = month_uncertainty(result, draws=2000)
    days = sorted(result.gas_days.index)
    invoice = pd.DataFrame([
        {"period_start": days[0], "period_end": days[13], "volume_billed": np.nan, "pressure_base": 101325.0,
         "temperature_base": 273.15, "heating_value": 40.9e6, "energy_billed": np.nan, "price": 35 / 3.6e9,
         "amount": np.nan, "row": 2},
        {"period_start": days[14], "period_end": days[-1], "volume_billed": np.nan, "pressure_base": 101325.0,
         "temperature_base": 273.15, "heating_value": 41.3e6, "energy_billed": np.nan, "price": 35 / 3.6e9,
         "amount": np.nan, "row": 3}])
    gd = d.groupby("gas_day")["volume_base"].sum()
    invoice.loc[0, "volume_billed"] = 1.015 * float(gd.loc[days[0]:days[13]].sum())
    invoice.loc[1, "volume_billed"] = 1.015 * float(gd.loc[days[14]:days[-1]].sum())
    result.reconciliation = reconcile_frame(result, invoice, file="harrowgate_invoice_2026-10.xlsx", currency="EUR")
    result.inputs = [{"file": "fv-m1_2026-10.csv", "role": "log", "sha256": "a" * 64}]
    return result
