"""An invented month for the reconciliation and corrector tests: meter "Heron Fen M4", hourly,
gauge pressure 10-40 bar with a weekly swing, a logged barometer, a lean pipeline gas."""

from __future__ import annotations

import contextlib

import numpy as np
import pandas as pd
import pytest

from meterfix.engine import pipeline
from meterfix.engine.pipeline import run_month
from meterfix.engine.settings import build_settings
from meterfix.gas import Composition
from meterfix.z import method_names

#: the Z method: aga8-detail once it is registered, GERG-2008 until then
METHOD = "aga8-detail" if "aga8-detail" in method_names() else "gerg-2008"
GAS = Composition.from_mapping({"methane": 0.9300, "ethane": 0.0350, "propane": 0.0080, "nitrogen": 0.0150,
                                "carbon_dioxide": 0.0120})
COOLPROP_FLUID = "HEOS::Methane[0.93]&Ethane[0.035]&Propane[0.008]&Nitrogen[0.015]&CarbonDioxide[0.012]"


@contextlib.contextmanager
def supplied_heating_value_only():
    """Until meterfix.energy lands, run months with a supplied heating value without importing it.

    The pipeline imports meterfix.energy even for a supplied value stated at the contract base,
    which it then returns unchanged; this patches exactly that path (and nothing when the module
    exists)."""
    try:
        import meterfix.energy  # noqa: F401
    except ImportError:
        def hv(gas, settings):
            assert settings.heating_value is not None and settings.heating_value_reference_temperature is None
            return settings.heating_value, "supplied, taken as stated at the contract base conditions"

        with pytest.MonkeyPatch.context() as mp:
            mp.setattr(pipeline, "_heating_value", hv)
            yield
    else:
        yield


def month_frame(days=14, seed=3, start="2026-03-01 06:00"):
    idx = pd.date_range(start, periods=24 * days, freq="h", tz="Europe/Berlin").tz_convert("UTC")
    n = len(idx)
    rng = np.random.default_rng(seed)
    t = np.arange(n)
    gauge = 25e5 + 15e5 * np.sin(2 * np.pi * t / (24 * 7)) + 1e5 * rng.standard_normal(n)
    atm = 96_500 + 800 * np.sin(2 * np.pi * t / (24 * 5))
    temp = 281.0 + 6.0 * np.sin(2 * np.pi * t / 24) + rng.standard_normal(n)
    return pd.DataFrame({"pressure_gauge": gauge, "pressure_atm": atm, "temperature_line": temp,
                         "volume_line": 300.0 * (1 + 0.2 * rng.random(n)), "duration": 3600.0}, index=idx)


def month_settings(**kw):
    opts = {"base": "iso-15c", "method": METHOD, "heating_value": "38.5 MJ/m3", "price": "0.03 EUR/kWh",
            "timezone": "Europe/Berlin", "gas_day_start": "06:00"}
    opts.update(kw)
    return build_settings(None, opts)


def run(frame=None, settings=None, analyses=None):
    frame = month_frame() if frame is None else frame
    with supplied_heating_value_only():
        return run_month(frame, analyses or [(None, GAS)], settings or month_settings())
