"""The GUM budget of the meter kinds: an orifice's C, epsilon, dp, d and D (ISO 5167-2:2003 5.3.3,
ISO 5167-1:2003 8.2.2), a Coriolis meter's mass, a calibration; the Monte Carlo follows the same model.

Sensitivities of ln qm worked by hand from qm = C/sqrt(1-b^4) eps (pi/4) d^2 sqrt(2 dp rho1)
(ISO 5167-1:2003, 8.2.2.2): dp 1/2, d 2/(1-b^4), D -2 b^4/(1-b^4); rho1 = p M/(Z R T) gives p and T
through 1/2 (1 - dlnZ/dlnp) and -1/2 (1 + dlnZ/dlnT), Z at line -1/2.
"""

from __future__ import annotations

import numpy as np
import pytest

from meterfix.engine.flow_meter import parse_flow_meter
from meterfix.engine.pipeline import run_month
from meterfix.meters import orifice_iso5167 as O
from meterfix.uncertainty import month_uncertainty
from test_meter_kinds_month import GAS, ORIFICE, _frame, _settings


def _budget(result):
    u = month_uncertainty(result, draws=20000)
    rows = {r["input"]: r for r in u.budget.to_dict(orient="records")} if hasattr(u.budget, "to_dict") else {
        r["input"]: r for r in u.budget}
    return u, rows


def test_orifice_budget_inputs_and_sensitivities():
    fm = parse_flow_meter(ORIFICE)
    f = _frame(n=48, pressure_differential=lambda rng, n: rng.uniform(5000.0, 40000.0, n))
    r = run_month(f, [(None, GAS)], _settings(), flow_meter=fm)
    u, rows = _budget(r)
    b = 50.8 / 102.26
    assert rows["orifice bore diameter d"]["sensitivity"] == pytest.approx(2 / (1 - b ** 4), rel=1e-12)
    assert rows["pipe diameter D"]["sensitivity"] == pytest.approx(-2 * b ** 4 / (1 - b ** 4), rel=1e-12)
    assert rows["differential pressure transmitter"]["sensitivity"] == 0.5
    assert rows["Z method at line conditions"]["sensitivity"] == -0.5
    # C: 0.5 % (k = 2) for 0.2 <= beta <= 0.6 at Re_D >= 10^4 (ISO 5167-2:2003, 5.3.3.1): 0.25 % standard
    assert rows["orifice discharge coefficient C"]["contribution_pct"] == pytest.approx(0.25, rel=1e-9)
    # pressure through rho1 with exponent 1/2: half the volume meter's 1 - dlnZ/dlnp (> 1 at these pressures)
    assert 0.5 < rows["line pressure"]["sensitivity"] < 0.6
    assert "meter, rated flow range" not in rows
    mc = u.to_summary()["monte_carlo"]
    assert mc["standard_uncertainty_pct"] == pytest.approx(u.to_summary()["expanded_pct"] / 2, rel=0.03)
    assert O.discharge_coefficient_uncertainty_iso5167_2_2003(b, 0.10226, 1e6) == 0.5


def test_coriolis_budget_has_mass_and_no_line_state():
    r = run_month(_frame(n=24, mass=lambda rng, n: rng.uniform(100, 200, n)), [(None, GAS)], _settings(),
                  flow_meter=parse_flow_meter({"kind": "coriolis"}))
    u, rows = _budget(r)
    assert rows["Coriolis meter, mass"]["contribution_pct"] == pytest.approx(0.25, rel=1e-12)
    assert rows["line pressure"]["sensitivity"] == pytest.approx(0.0, abs=1e-12)
    assert rows["line temperature"]["sensitivity"] == pytest.approx(0.0, abs=1e-12)
    # mass 0.25 % and Z at base 0.025 % standard, in quadrature (composition adds a few ppm)
    assert u.to_summary()["expanded_pct"] == pytest.approx(2 * np.hypot(0.25, 0.025), rel=2e-3)


def test_calibrated_meter_budget_takes_the_calibration():
    f = _frame(n=24)
    f["volume_line"] = 120.0
    r = run_month(f, [(None, GAS)], _settings(), flow_meter=parse_flow_meter({"meter_factor": 1.002}))
    u, rows = _budget(r)
    assert rows["meter calibration (error curve or factor)"]["contribution_pct"] == pytest.approx(0.15, rel=1e-12)
    assert "meter, rated flow range" not in rows
