"""Meter kinds through the month run (run_month): orifice, Coriolis, error curves, speed of sound.

Outside sources, named beside each check: `fluids` 1.3 (differential_pressure_meter_solver, ISO 5167
orifice) with the density, isentropic exponent and speed of sound of the AGA8 reference code
(`pyaga8`: DETAIL and GERG-2008) at the same P and T; the error-curve month worked by hand.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from meterfix.engine.flow_meter import parse_flow_meter
from meterfix.engine.pipeline import run_month
from meterfix.engine.settings import build_settings
from meterfix.errors import SettingsError
from meterfix.gas import Composition

# an invented scenario: "Fenwick Road" offtake, hourly
MIX = {"methane": 0.905, "ethane": 0.045, "propane": 0.012, "nitrogen": 0.021, "carbon_dioxide": 0.014,
       "n_butane": 0.003}
GAS = Composition.from_mapping(MIX)
PYAGA8 = {"aga8-detail": "Detail", "gerg-2008": "Gerg2008"}


def _frame(n=96, seed=4, **extra):
    idx = pd.date_range("2026-05-01 01:00", periods=n, freq="h", tz="UTC")
    rng = np.random.default_rng(seed)
    cols = {"pressure_line": rng.uniform(3.0e6, 6.5e6, n), "temperature_line": rng.uniform(278.0, 300.0, n),
            "volume_line": np.full(n, np.nan), "duration": np.full(n, 3600.0)}
    cols.update({k: (v(rng, n) if callable(v) else v) for k, v in extra.items()})
    return pd.DataFrame(cols, index=idx)


def _settings(method="aga8-detail", **flow_meter):
    return build_settings(None, {"base": "101.325kPa-15C", "method": method, "flow_meter": flow_meter})


def _pyaga8(p, t, method):
    pyaga8 = pytest.importorskip("pyaga8")
    ref = getattr(pyaga8, PYAGA8[method])()
    comp = pyaga8.Composition()
    for k, v in MIX.items():
        setattr(comp, k, v)
    ref.set_composition(comp)
    ref.calc_molar_mass()
    p, t = np.broadcast_arrays(np.asarray(p, float), np.asarray(t, float))
    out = np.empty((3, p.size))
    for i, (pi, ti) in enumerate(zip(p.ravel(), t.ravel())):
        ref.pressure = pi / 1000.0
        ref.temperature = ti
        ref.calc_density(0) if method == "gerg-2008" else ref.calc_density()
        ref.calc_properties()
        out[:, i] = ref.d * ref.mm, ref.kappa, ref.w
    return out


ORIFICE = {"kind": "orifice", "pipe_diameter": "102.26 mm", "bore_diameter": "50.8 mm", "diameters_at": "20 degC",
           "taps": "flange", "viscosity": "1.1e-5 Pa s"}


@pytest.mark.parametrize("static_tap", ["upstream", "downstream"])
@pytest.mark.parametrize("method", ["aga8-detail", "gerg-2008"])
def test_orifice_month_against_fluids_and_pyaga8(method, static_tap):
    fm_ = pytest.importorskip("fluids.flow_meter")
    fm = parse_flow_meter(dict(ORIFICE, static_tap=static_tap))
    f = _frame(pressure_differential=lambda rng, n: rng.uniform(500.0, 45000.0, n))
    r = run_month(f, [(None, GAS)], _settings(method), flow_meter=fm)
    iv = r.intervals
    dp = f["pressure_differential"].to_numpy()
    t = f["temperature_line"].to_numpy()
    p1 = f["pressure_line"].to_numpy() + (dp if static_tap == "downstream" else 0.0)
    rho, kappa, _ = _pyaga8(p1, t, method)
    d_pipe = 0.10226 * (1 + 11.6e-6 * (t - 293.15))
    d_bore = 0.0508 * (1 + 16.0e-6 * (t - 293.15))
    qm = np.array([fm_.differential_pressure_meter_solver(
        D=d_pipe[i], D2=d_bore[i], P1=p1[i], P2=p1[i] - dp[i], rho=rho[i], mu=1.1e-5, k=kappa[i],
        meter_type="ISO 5167 orifice", taps="flange") for i in range(len(f))])
    np.testing.assert_allclose(iv["mass"].to_numpy(), qm * 3600.0, rtol=1e-9)
    rho_b = _pyaga8(101325.0, 288.15, method)[0][0]
    np.testing.assert_allclose(iv["volume_base"].to_numpy(), qm * 3600.0 / rho_b, rtol=1e-9)
    assert r.totals["base_volume_m3"] == pytest.approx(float(np.sum(qm * 3600.0 / rho_b)), rel=1e-9)
    # the line volume is mass / rho1, and the month names the density's source
    np.testing.assert_allclose(iv["volume_line"].to_numpy(), qm * 3600.0 / rho, rtol=1e-9)
    assert "own molar mass" in r.method["density"]
    assert r.flow_meter["standard"] == "ISO 5167-2:2003"
    assert r.flow_meter["differential_pressure_averaging"]["month_mean_error_pct"] > 0  # sqrt is concave
    assert any("square root" in w for w in r.warnings)


def test_orifice_negative_dp_is_flagged_without_flow_and_limits_flag_rows():
    fm = parse_flow_meter(ORIFICE)
    f = _frame(n=6, pressure_differential=np.array([2e4, -30.0, 0.0, 2e4, 0.02, 2e4]))
    f.loc[f.index[3], "pressure_line"] = 2.0e5  # dp/p1 = 0.1 -> p2/p1 = 0.9; fine
    f.loc[f.index[5], "pressure_line"] = 0.7e5  # p2/p1 < 0.75
    r = run_month(f, [(None, GAS)], _settings(), flow_meter=fm)
    iv = r.intervals
    assert iv["flag_negative_differential_pressure"].tolist() == [False, True, False, False, False, False]
    assert iv["mass"].iloc[1] == 0.0 and iv["mass"].iloc[2] == 0.0
    assert iv["flag_orifice_reynolds"].iloc[4]  # 0.02 Pa: Re_D far below 5000
    assert iv["flag_orifice_pressure_ratio"].tolist() == [False, False, False, False, False, True]
    assert r.flags["negative_differential_pressure"] == 1


@pytest.mark.parametrize("method", ["aga8-detail", "gerg-2008"])
def test_coriolis_base_volume_from_pyaga8_base_density(method):
    fm = parse_flow_meter({"kind": "coriolis"})
    f = _frame(n=48, mass=lambda rng, n: rng.uniform(200.0, 900.0, n))
    r = run_month(f, [(None, GAS)], _settings(method), flow_meter=fm)
    rho_b = _pyaga8(101325.0, 288.15, method)[0][0]  # AGA8 reference code at base conditions
    np.testing.assert_allclose(r.intervals["volume_base"].to_numpy(), f["mass"].to_numpy() / rho_b, rtol=1e-12)
    np.testing.assert_array_equal(r.intervals["mass"].to_numpy(), f["mass"].to_numpy())
    hm = r.analyses[0].energy.properties.values["gross_heating_value_mass"]
    assert r.totals["energy_MJ"] == pytest.approx(float(f["mass"].sum()) * hm / 1e6, rel=1e-12)


def test_coriolis_mass_flow_rate_times_duration():
    fm = parse_flow_meter({"kind": "coriolis"})
    f = _frame(n=4, mass_flow=np.array([0.1, 0.2, 0.3, 0.4]))
    r = run_month(f, [(None, GAS)], _settings(), flow_meter=fm)
    np.testing.assert_allclose(r.intervals["mass"].to_numpy(), [360.0, 720.0, 1080.0, 1440.0], rtol=1e-15)


def test_error_curve_month_by_hand():
    """Four hours, ideal gas, an error curve [[50, 1.2], [150, 0.4], [300, -0.2]] m3/h, %: worked by hand.

    Q = 100 m3/h: e = 1.2 + (0.4 - 1.2)(100 - 50)/100 = 0.8 %, V = 100/1.008 = 99.206349206...
    Q = 225 m3/h: e = 0.4 + (-0.6)(75/150) = 0.1 %, V = 225/1.001 = 224.775224775...
    Q = 20 m3/h (below the curve): e held at 1.2 %, V = 20/1.012, flagged
    Q = 400 m3/h (above): e held at -0.2 %, V = 400/0.998, flagged
    """
    fm = parse_flow_meter({"error_curve": [[50, 1.2], [150, 0.4], [300, -0.2]]})
    f = _frame(n=4)
    f["pressure_line"] = 101325.0
    f["temperature_line"] = 288.15
    f["volume_line"] = [100.0, 225.0, 20.0, 400.0]
    r = run_month(f, [(None, GAS)], build_settings(None, {"base": "101.325kPa-15C", "method": "ideal"}), flow_meter=fm)
    want = [100 / 1.008, 225 / 1.001, 20 / 1.012, 400 / 0.998]
    np.testing.assert_allclose(r.intervals["volume_base"].to_numpy(), want, rtol=1e-13)
    np.testing.assert_allclose(r.intervals["meter_error"].to_numpy(), [0.8, 0.1, 1.2, -0.2], rtol=1e-13)
    assert r.intervals["flag_outside_error_curve"].tolist() == [False, False, True, True]
    effect = 100 * (sum(want) / 745.0 - 1)
    assert r.flow_meter["meter_error_correction_pct"] == pytest.approx(effect, rel=1e-12)


def test_meter_factor_month_by_hand():
    fm = parse_flow_meter({"meter_factor": 1.0021})
    f = _frame(n=3)
    f["pressure_line"] = 101325.0
    f["temperature_line"] = 288.15
    f["volume_line"] = [10.0, 20.0, 30.0]
    r = run_month(f, [(None, GAS)], build_settings(None, {"base": "101.325kPa-15C", "method": "ideal"}), flow_meter=fm)
    np.testing.assert_allclose(r.intervals["volume_base"].to_numpy(), [10.021, 20.042, 30.063], rtol=1e-13)
    assert r.flow_meter["meter_error_correction_pct"] == pytest.approx(0.21, rel=1e-10)


@pytest.mark.parametrize("method", ["aga8-detail", "gerg-2008"])
def test_speed_of_sound_check_against_pyaga8(method):
    f = _frame(n=24)
    f["volume_line"] = 500.0
    w_ref = _pyaga8(f["pressure_line"].to_numpy(), f["temperature_line"].to_numpy(), method)[2]
    measured = w_ref.copy()
    measured[5:8] *= 1.004   # +0.4 % for three hours
    measured[12] *= 0.9985   # -0.15 %: within 0.2 %
    f["speed_of_sound"] = measured
    r = run_month(f, [(None, GAS)], _settings(method), flow_meter=parse_flow_meter({}))
    np.testing.assert_allclose(r.intervals["speed_of_sound_computed"].to_numpy(), w_ref, rtol=1e-11)
    c = r.speed_of_sound_check
    assert c["flagged_intervals"] == 3 and len(c["periods"]) == 1 and c["periods"][0]["intervals"] == 3
    assert c["largest_deviation_pct"] == pytest.approx(0.4, rel=1e-8)
    assert c["threshold_pct"] == 0.2
    s2 = build_settings(None, {"base": "101.325kPa-15C", "method": method, "speed_of_sound_threshold": "0.1"})
    r2 = run_month(f, [(None, GAS)], s2)
    assert r2.speed_of_sound_check["flagged_intervals"] == 4


@pytest.mark.parametrize("table,words", [
    ({"kind": "orifice", "pipe_diameter": "100 mm"}, ["bore_diameter", "needs its pipe and bore"]),
    ({"kind": "orifice", "pipe_diameter": "100 mm", "bore_diameter": "120 mm"}, ["bore_diameter", "not smaller"]),
    ({"kind": "orifice", "pipe_diameter": "100 mm", "bore_diameter": "80 mm"}, ["bore_diameter", "beta"]),
    ({"kind": "orifice", "pipe_diameter": "30 mm", "bore_diameter": "15 mm"}, ["pipe_diameter", "50 mm"]),
    ({"error_curve": [[150, 0.4], [50, 1.2]]}, ["error_curve", "increasing"]),
    ({"error_curve": [[50, 0.4], [50, 1.2]]}, ["error_curve", "twice"]),
    ({"error_curve": [[50, 0.4]], "meter_factor": 1.001}, ["meter_factor", "both"]),
    ({"kind": "turbine"}, ["kind", "unknown meter kind"]),
    ({"kind": "orifice", "pipe_diameter": "100", "bore_diameter": "50 mm"}, ["pipe_diameter", "unit"]),
])
def test_bad_flow_meter_tables_name_the_key(table, words):
    with pytest.raises(SettingsError) as exc:
        parse_flow_meter(table)
    text = str(exc.value) + " " + (exc.value.hint or "")
    for w in words:
        assert w in text


def test_flow_meter_table_through_the_settings(tmp_path):
    """[flow_meter] in the site file and the same keys as options give the same FlowMeter (SI)."""
    site = tmp_path / "site.toml"
    site.write_text('base = "101.325kPa-15C"\n[flow_meter]\nkind = "orifice"\npipe_diameter = "4.026 in"\n'
                    'bore_diameter = "50.8 mm"\ntaps = "corner"\nerror_curve_unused = 1\n', encoding="utf-8")
    with pytest.raises(SettingsError) as exc:
        build_settings(site)
    assert "error_curve_unused" in str(exc.value)
    site.write_text('base = "101.325kPa-15C"\n[flow_meter]\nkind = "orifice"\npipe_diameter = "102.26 mm"\n'
                    'bore_diameter = "50.8 mm"\ntaps = "corner"\n', encoding="utf-8")
    s = build_settings(site)
    assert s.flow_meter["pipe_diameter"] == pytest.approx(0.10226, rel=1e-15)
    opt = build_settings(None, {"base": "101.325kPa-15C", "kind": "orifice", "pipe_diameter": "102.26 mm",
                                "bore_diameter": "50.8 mm", "taps": "corner"})
    assert parse_flow_meter(opt.flow_meter) == parse_flow_meter(s.flow_meter)
    assert s.sources["[flow_meter] bore_diameter"] == "site file"
    with pytest.raises(SettingsError) as exc:
        build_settings(None, {"base": "101.325kPa-15C", "kind": "orifice", "pipe_diameter": "102.26 mm",
                              "bore_diameter": "110 mm"})
    assert "[flow_meter] bore_diameter" in str(exc.value) and "not smaller" in str(exc.value)
    with pytest.raises(SettingsError) as exc:
        build_settings(None, {"base": "101.325kPa-15C", "error_curve": "150:0.4,50:1.2"})
    assert "[flow_meter] error_curve" in str(exc.value) and "increasing" in str(exc.value)
    s = build_settings(None, {"base": "101.325kPa-15C", "error_curve": "50:1.2,150:0.4"})
    assert s.flow_meter["error_curve"] == [[50.0, 1.2], [150.0, 0.4]]


def test_orifice_uses_the_interval_mean_of_sqrt_dp_when_logged():
    """Within an interval dp swings between 10 and 40 mbar (half the time each): mean dp = 25 mbar, mean
    sqrt(dp) = (sqrt(10) + sqrt(40))/2 sqrt(mbar). The flow is that of (mean sqrt dp)^2 = 22.5 mbar (by hand);
    averaging dp instead would overstate it by sqrt(25/22.5) - 1 = 5.41 %."""
    fm = parse_flow_meter(ORIFICE)
    root = (np.sqrt(1000.0) + np.sqrt(4000.0)) / 2  # sqrt(Pa)
    f = _frame(n=4, pressure_differential=np.full(4, 2500.0), pressure_differential_root=np.full(4, root))
    r = run_month(f, [(None, GAS)], _settings(), flow_meter=fm)
    g = _frame(n=4, pressure_differential=np.full(4, root ** 2))
    ref = run_month(g, [(None, GAS)], _settings(), flow_meter=fm)
    np.testing.assert_allclose(r.intervals["mass"].to_numpy(), ref.intervals["mass"].to_numpy(), rtol=1e-12)
    assert root ** 2 == pytest.approx(2250.0)
    av = r.flow_meter["differential_pressure_averaging"]
    assert av["root_mean_column"] == "pressure_differential_root"
    assert av["mean_dp_error_pct"] == pytest.approx(100 * (np.sqrt(2500 / 2250) - 1), rel=1e-9)
    assert not any("square root" in w for w in r.warnings)


def test_coriolis_negative_mass_left_out_unless_bidirectional():
    f = _frame(n=4, mass=np.array([100.0, -5.0, 100.0, 100.0]))
    r = run_month(f, [(None, GAS)], _settings(), flow_meter=parse_flow_meter({"kind": "coriolis"}))
    assert r.flags["negative_mass"] == 1 and np.isnan(r.intervals["volume_base"].iloc[1])
    assert r.totals["intervals_without_result"] == 1 and r.totals["mass_kg"] == pytest.approx(300.0)
    s = build_settings(None, {"base": "101.325kPa-15C", "bidirectional": "true"})
    r2 = run_month(f, [(None, GAS)], s, flow_meter=parse_flow_meter({"kind": "coriolis"}))
    assert r2.totals["mass_kg"] == pytest.approx(295.0)
