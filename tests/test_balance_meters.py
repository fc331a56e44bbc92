"""A meter's month as the balance reads it: the random/systematic split of the GUM budget adds
back to the month's combined uncertainty (JCGM 100:2008 §5.1–5.2, by hand), restatement of base
conditions by the ideal-gas ratios and Z at both bases (formula, common practice)."""

from __future__ import annotations

import json

import numpy as np
import pytest

from meterfix.balance.meters import meter_month, z_at_base
from meterfix.cli.demo import run_demo


@pytest.fixture(scope="module")
def demo_summary(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo")
    run_demo(out)
    return json.loads(next(out.glob("*_summary.json")).read_text(encoding="utf-8"))


def test_split_adds_back_to_the_month(demo_summary):
    u = demo_summary["uncertainty"]
    V = demo_summary["totals"]["base_volume_m3"]
    r = np.array([d["random_standard_uncertainty_m3"] for d in u["gas_days"]])
    total = np.sqrt(np.sum(r**2) + (u["systematic_standard_uncertainty_pct"] / 100 * V) ** 2)
    assert total == pytest.approx(u["standard_uncertainty_m3"], rel=1e-10)
    assert demo_summary["gas_day"] == {"start_hour": 6, "timezone": "Europe/Berlin"}


def test_meter_month_from_summary_and_restated(demo_summary):
    days = [d["gas_day"] for d in demo_summary["gas_days"]]
    m = meter_month(demo_summary, name="FV-M1", role="delivery", gas_days=days)
    assert np.nansum(m.volume) == pytest.approx(sum(d["volume_base_m3"] for d in demo_summary["gas_days"]), rel=1e-12)
    assert m.energy is not None and not m.notes
    # the demo's base is 0 °C / 101.325 kPa; restated to 15 °C: V (T'/T)(Z'/Z)
    r = meter_month(demo_summary, name="FV-M1", role="delivery", gas_days=days, pressure_base=101325.0,
                    temperature_base=288.15)
    z0 = z_at_base(demo_summary, 101325.0, 273.15)
    z1 = z_at_base(demo_summary, 101325.0, 288.15)
    assert 0.99 < z0 < z1 < 1.0
    np.testing.assert_allclose(r.volume, m.volume * (288.15 / 273.15) * (z1 / z0), rtol=1e-12)
    assert r.notes and "restated" in r.notes[0]
    np.testing.assert_allclose(r.energy, m.energy)      # energy does not depend on the volume's base
    # a gas day the meter does not hold has no result
    n = meter_month(demo_summary, name="x", role="receipt", gas_days=days + ["2026-11-01"])
    assert np.isnan(n.volume[-1])
