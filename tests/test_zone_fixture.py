"""The demo zone (fixtures/zone, made by fixtures/make_zone.py): the committed files are what the
generator makes; its orifice and Coriolis meters log what the invented true flows give, worked out
here outside meterfix; and the same zone without the drifting meter closes consistent with zero and
credits no meter.

Outside sources: `fluids` (Caleb Bell, ChEDL) differential_pressure_meter_solver ('ISO 5167 orifice',
flange taps) and ATMOSPHERE_1976 for the site's atmospheric pressure; the AGA8 reference code
(`pyaga8`, DETAIL) for density and isentropic exponent. The viscosity (Lee, Gonzalez and Eakin 1966)
enters only through Re_D, where 10 % of it moves C by less than 1e-5 at Re_D = 7e5."""

from __future__ import annotations

import csv
import json
import sys
from pathlib import Path

import numpy as np
import pytest
from typer.testing import CliRunner

from meterfix.cli import app

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "fixtures"))

import make_zone  # noqa: E402

SIGN = {"receipt": 1.0, "delivery": -1.0, "own_use": -1.0}


def test_committed_zone_is_what_the_generator_makes():
    files = make_zone.files()
    assert (make_zone.OUT / "balance.toml").is_file()
    for rel, text in files.items():
        assert (make_zone.OUT / rel).read_text(encoding="utf-8") == text, rel
    on_disk = {p.relative_to(make_zone.OUT).as_posix() for p in make_zone.OUT.rglob("*") if p.is_file()}
    assert on_disk == set(files)


def test_the_zone_holds_three_kinds_and_invented_names():
    _, truth = make_zone.build()
    kinds = {mid: m["kind"] for mid, m in truth["meters"].items()}
    deliveries = [mid for mid, m in truth["meters"].items() if m["role"] == "delivery"]
    assert len(deliveries) == 5 and sum(m["role"] == "receipt" for m in truth["meters"].values()) == 2
    assert sorted(kinds[d] for d in deliveries) == ["coriolis", "orifice", "volume", "volume", "volume"]
    assert kinds[make_zone.DRIFT_METER] == "volume"


def _pyaga8(p, t):
    """Density [kg/m3] and isentropic exponent [-] of the zone's gas at each (p [Pa], T [K]) (pyaga8)."""
    pyaga8 = pytest.importorskip("pyaga8")
    ref = pyaga8.Detail()
    comp = pyaga8.Composition()
    for k, v in make_zone.GAS.items():
        setattr(comp, k, v)
    ref.set_composition(comp)
    ref.calc_molar_mass()
    out = np.empty((2, len(p)))
    for i in range(len(p)):
        ref.pressure = p[i] / 1000.0
        ref.temperature = t[i]
        ref.calc_density()
        ref.calc_properties()
        out[:, i] = ref.d * ref.mm, ref.kappa  # mol/l x g/mol = kg/m3
    return out


def _log(mid):
    rows = list(csv.reader((make_zone.OUT / "meters" / mid / f"{mid.lower()}_log_2026-11.csv")
                           .read_text(encoding="utf-8").splitlines()[2:]))
    return np.array([[float(c) for c in r[1:]] for r in rows])


def _base_density():
    return float(_pyaga8(np.array([make_zone.P_B]), np.array([make_zone.T_B]))[0, 0])


def test_coriolis_mass_is_the_true_base_volume_times_base_density():
    """BF-D4 logs mass = its hourly base volume as measured (the truth x its 0.3 % noise) x the base
    density at 101.325 kPa, 0 degC (pyaga8); the log's 0.01 kg rounding is all that differs."""
    _, truth = make_zone.build()
    mass = _log("BF-D4")[:, 2]
    want = truth["meters"]["BF-D4"]["measured"] * _base_density()
    assert np.max(np.abs(mass - want)) <= 0.005 + 1e-9
    # and the noise is the meter's own, not the truth itself
    ratio = mass / (truth["meters"]["BF-D4"]["true"] * _base_density())
    assert 0.002 < np.std(ratio) < 0.004


def test_orifice_dp_gives_the_true_flow_by_fluids_iso5167():
    """Each hour's logged dp through BF-D5's plate by `fluids`' ISO 5167 solver (flange taps; d and D
    at the logged temperature from 44.45 mm and 102.26 mm at 20 degC, 16.0e-6 and 11.6e-6 1/K; p1 =
    logged gauge pressure + the 1976 standard atmosphere at 180 m; density and kappa by pyaga8) gives
    the hour's mass as measured: to 1e-5 per hour (the log's 0.001 mbar at about 95 mbar), 1e-6 over
    the month."""
    fm = pytest.importorskip("fluids.flow_meter")
    from fluids.atmosphere import ATMOSPHERE_1976

    from meterfix.meters.viscosity import viscosity_lee_gonzalez_eakin_1966

    _, truth = make_zone.build()
    log = _log("BF-D5")
    p1 = log[:, 0] * 1e5 + ATMOSPHERE_1976(make_zone.ELEVATION_M).P
    t = log[:, 1] + 273.15
    dp = log[:, 2] * 100.0
    assert 60.0 < dp.mean() / 100.0 < 150.0            # a plausible design dp [mbar] for a steady load
    rho, kappa = _pyaga8(p1, t)
    mw = sum(v * w for v, w in zip(make_zone.GAS.values(), (16.0425, 30.069, 44.0956, 58.1222, 58.1222, 28.0135,
                                                             44.0095))) / 1000.0  # AGA8 molar masses [kg/mol]
    mu = viscosity_lee_gonzalez_eakin_1966(t, rho, mw)
    dt = t - 293.15
    pipe = make_zone.PIPE_MM / 1000.0 * (1 + 11.6e-6 * dt)
    bore = make_zone.BORE_MM / 1000.0 * (1 + 16.0e-6 * dt)
    qm = np.array([fm.differential_pressure_meter_solver(D=pipe[i], D2=bore[i], P1=p1[i], P2=p1[i] - dp[i],
                                                         rho=rho[i], mu=mu[i], k=kappa[i],
                                                         meter_type="ISO 5167 orifice", taps="flange")
                   for i in range(len(dp))])
    want = truth["meters"]["BF-D5"]["measured"] * _base_density()
    np.testing.assert_allclose(qm * 3600.0, want, rtol=1e-5)
    assert (qm * 3600.0).sum() == pytest.approx(want.sum(), rel=1e-6)
    assert 0.40 < make_zone.BORE_MM / make_zone.PIPE_MM < 0.50


def expected_ufg(truth):
    """The balance's UFG by construction [m3 at base], per gas day and for the month: the true flows
    balance exactly, so the UFG is the sum of the meters' errors, receipts minus the rest."""
    err = sum(SIGN[m["role"]] * (m["measured"] - m["true"]) for m in truth["meters"].values())
    daily = err.reshape(len(truth["gas_days"]), 24).sum(axis=1)   # November: 30 gas days of 24 hours
    return daily, float(err.sum())


def test_clean_zone_is_consistent_and_credits_no_meter(tmp_path):
    """The zone without the mill's drift: the UFG is what the meters' 0.3 % hourly noise makes it (by
    construction, to the logs' rounding), consistent with zero, and no meter is named."""
    make_zone.write(tmp_path / "zone", drift=0.0)
    out = tmp_path / "out"
    r = CliRunner().invoke(app, ["balance", str(tmp_path / "zone" / "balance.toml"), "--out", str(out),
                                 "--workers", "2", "--quiet"])
    assert r.exit_code == 0, r.output
    s = json.loads((out / "Brackenfold_zone_2026-11_balance.json").read_text(encoding="utf-8"))
    _, truth = make_zone.build(0.0)
    daily, month = expected_ufg(truth)
    assert s["ufg_m3"] == pytest.approx(month, abs=1e-5 * s["receipts_m3"])
    # a day's UFG also holds the linepack at its two boundaries, read from a log rounded to 0.01 K: up to
    # 0.005 K / T of the section's content each, plus 1 m3 for the meters' logs' rounding
    content = max(s["linepack"][0]["opening_m3"], s["linepack"][0]["closing_m3"])
    np.testing.assert_allclose([d["ufg_m3"] for d in s["days"]], daily, rtol=0,
                               atol=2 * content * 0.005 / 278.0 + 1.0)
    assert s["consistent"] and abs(s["ufg_m3"]) < s["ufg_expanded_uncertainty_m3"]
    assert not [f for f in s["findings"] if f["credited"]]
    assert s["search"].startswith("no meter credited")
    assert "no meter credited" in r.output
