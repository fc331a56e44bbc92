"""Invoice reconciliation on one basis, and the sequential attribution (waterfall) of differences."""

import json
from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings as hsettings, strategies as st

from meterfix.engine.correct import convert_base_volume
from meterfix.checks.invoice import reconcile_frame, reconcile_invoice
from meterfix.writers.summary import _clean
from meterfix.z import evaluate_z
from synthetic_month import COOLPROP_FLUID, GAS, METHOD, month_frame, month_settings, run

# NIST SP 811 factors, 2019 SI R: base conditions and their ideal molar volumes (published/derived from R, 2019 SI)
P_US, T_US, VM_US = 101_559.775, 288.705556, 23.63565e-3  # 14.73 psia, 60 degF [Pa, K, m3/mol]
P_ISO, T_ISO, VM_ISO = 101_325.0, 288.15, 23.64483e-3  # 101.325 kPa, 15 degC

FRAME = month_frame()
RESULT = run(FRAME)
DAYS = sorted(RESULT.gas_days.index)
PERIODS = [(DAYS[0], DAYS[6]), (DAYS[7], DAYS[-1])]
HV = 38.5e6  # J/m3 at our base (the supplied value of month_settings)
PRICE = 0.03 / 3.6e6  # EUR/J (0.03 EUR/kWh; 1 kWh = 3.6e6 J exact)


def _sel(result, a, b):
    gd = result.intervals["gas_day"]
    return result.intervals[[(a <= d <= b) for d in gd]]


def _invoice(volumes, p_base, t_base, hv=np.nan, energy=None, price=np.nan):
    rows = []
    for k, ((a, b), v) in enumerate(zip(PERIODS, volumes)):
        rows.append({"period_start": a, "period_end": b, "volume_billed": v, "pressure_base": p_base,
                     "temperature_base": t_base, "heating_value": hv,
                     "energy_billed": np.nan if energy is None else energy[k], "price": price, "amount": np.nan,
                     "row": k + 2})
    return pd.DataFrame(rows)


def _check_waterfall(att):
    start = att.loc[att["kind"] == "start"]
    end = att.loc[att["kind"] == "end"]
    steps = att.loc[att["kind"] == "step"]
    assert list(steps["step"]) == ["base pressure", "base temperature", "ideal gas", "fixed atmospheric pressure",
                                   "heating value", "estimated intervals", "not explained"]
    # the steps add up to the total difference exactly (floating-point rounding only)
    total_v = end["volume_m3"].iat[0] - start["volume_m3"].iat[0]
    assert steps["volume_m3"].sum() == pytest.approx(total_v, abs=1e-9 * abs(end["volume_m3"].iat[0]))
    assert steps["volume_m3"].cumsum().iat[-1] + start["volume_m3"].iat[0] == pytest.approx(end["volume_m3"].iat[0],
                                                                                            rel=1e-12)
    assert att["cumulative_volume_m3"].iat[-2] == pytest.approx(end["volume_m3"].iat[0], rel=1e-12)
    if np.isfinite(end["energy_MJ"].iat[0]):
        total_e = end["energy_MJ"].iat[0] - start["energy_MJ"].iat[0]
        assert steps["energy_MJ"].sum() == pytest.approx(total_e, abs=1e-9 * abs(end["energy_MJ"].iat[0]))
    return dict(zip(steps["step"], steps["volume_m3"])), dict(zip(steps["step"], steps["energy_MJ"]))


def test_base_conversion_by_hand_ideal():
    # ideal gas: V_to / V_from = Vm_to / Vm_from (NIST SP 811 factors, 2019 SI R molar volumes, 7 digits)
    v = convert_base_volume(1.0, P_ISO, T_ISO, 1.0, P_US, T_US, 1.0)
    assert v == pytest.approx(VM_US / VM_ISO, rel=5e-7)
    # 101.325 kPa / 0 degC vs 15 degC: the 5.5 % of REFERENCES §5
    assert convert_base_volume(1.0, P_ISO, 273.15, 1.0, P_ISO, T_ISO, 1.0) - 1 == pytest.approx(0.0549, abs=2e-4)


def test_base_conversion_by_hand_real_gas():
    # real gas: V_to / V_from = (Vm_to Z_to) / (Vm_from Z_from), Z from CoolProp (library)
    CP = pytest.importorskip("CoolProp.CoolProp")
    z_us = CP.PropsSI("Z", "P", P_US, "T", T_US, COOLPROP_FLUID)
    z_iso = CP.PropsSI("Z", "P", P_ISO, "T", T_ISO, COOLPROP_FLUID)
    expected = (VM_US * z_us) / (VM_ISO * z_iso)
    zu = float(evaluate_z(P_US, T_US, GAS, METHOD).z)
    zi = float(evaluate_z(P_ISO, T_ISO, GAS, METHOD).z)
    assert convert_base_volume(1.0, P_ISO, T_ISO, zi, P_US, T_US, zu) == pytest.approx(expected, rel=2e-6)


def test_invoice_at_other_base_agrees_on_one_basis():
    # The supplier bills our own gas at 14.73 psia / 60 degF, converted by hand with REFERENCES §5 molar
    # volumes and CoolProp Z at both bases: on one basis the difference is nil.
    CP = pytest.importorskip("CoolProp.CoolProp")
    z_us = CP.PropsSI("Z", "P", P_US, "T", T_US, COOLPROP_FLUID)
    z_iso = CP.PropsSI("Z", "P", P_ISO, "T", T_ISO, COOLPROP_FLUID)
    ours = [float(_sel(RESULT, a, b)["volume_base"].sum()) for a, b in PERIODS]
    billed = [v * (VM_US * z_us) / (VM_ISO * z_iso) for v in ours]
    energy = [v * HV for v in ours]
    rec = reconcile_frame(RESULT, _invoice(billed, P_US, T_US, energy=energy, price=PRICE))
    per = rec.periods
    assert np.allclose(per["volume_ours_m3"], ours, rtol=1e-12)
    assert np.all(np.abs(per["volume_difference_pct"]) < 2e-4)  # CoolProp vs the method: ~1e-5 in Z
    assert np.all(np.abs(per["energy_difference_pct"]) < 1e-10)
    assert np.all(np.abs(per["amount_difference"]) < 1e-6)
    assert per["amount_ours"].iat[0] == pytest.approx(energy[0] * PRICE, rel=1e-12)
    vol, en = _check_waterfall(rec.attribution)
    # the apparent difference as billed is all base conditions: 14.73 psia vs 101.325 kPa, 60 degF vs 15 degC
    assert vol["base pressure"] + vol["base temperature"] == pytest.approx(sum(billed) - sum(ours), rel=2e-3)
    assert abs(vol["not explained"]) < 1e-4 * sum(ours)
    assert en["base pressure"] == 0.0 and en["base temperature"] == 0.0


def test_ideal_gas_invoice_is_attributed_to_ideal_gas():
    d = RESULT.intervals
    p_i, t_i = P_US, T_US
    billed = [float((s.volume_line * s.pressure_line / p_i * t_i / s.temperature_line).sum())
              for s in (_sel(RESULT, a, b) for a, b in PERIODS)]
    z_i = float(evaluate_z(p_i, t_i, GAS, METHOD).z)
    conv = (p_i / P_ISO) * (T_ISO / t_i) * (d["z_base"].iat[0] / z_i)
    hv_i = HV * conv  # our heating value re-stated per m3 at their base
    rec = reconcile_frame(RESULT, _invoice(billed, p_i, t_i, hv=hv_i))
    vol, en = _check_waterfall(rec.attribution)
    applied = dict(zip(rec.attribution["step"], rec.attribution["applied"]))
    assert applied["ideal gas"] and not applied["fixed atmospheric pressure"]
    assert abs(vol["not explained"]) < 1e-9 * sum(billed)
    assert abs(en["not explained"]) < 1e-9 * sum(billed) * hv_i / 1e6
    # the ideal-gas step is the month's ideal-gas error (pipeline total) restated at their base
    real_at_theirs = sum(billed) - vol["ideal gas"]
    assert 100 * vol["ideal gas"] / real_at_theirs == pytest.approx(RESULT.totals["ideal_gas_error_pct"], rel=1e-3)
    # on one basis the invoice is low by the same ideal-gas error (Zb at the two bases differs by ~2e-5)
    assert rec.totals["volume_difference_pct"] == pytest.approx(RESULT.totals["ideal_gas_error_pct"], rel=1e-3)


def test_fixed_atmosphere_and_heating_value():
    pb, tb = P_ISO, T_ISO
    billed, energy = [], []
    for a, b in PERIODS:
        s = _sel(RESULT, a, b)
        f = FRAME.loc[s.index]
        p2 = f["pressure_gauge"].to_numpy() + 101_325.0
        z2 = np.asarray(evaluate_z(p2, s["temperature_line"].to_numpy(), GAS, METHOD).z)
        v = float((s.volume_line * p2 / pb * tb / s.temperature_line * s.z_base / z2).sum())
        billed.append(v)
        energy.append(v * 38.0e6)
    rec = reconcile_frame(RESULT, _invoice(billed, pb, tb, hv=38.0e6, energy=energy))
    vol, en = _check_waterfall(rec.attribution)
    applied = dict(zip(rec.attribution["step"], rec.attribution["applied"]))
    assert applied["fixed atmospheric pressure"] and applied["heating value"] and not applied["ideal gas"]
    assert vol["base pressure"] == 0.0 and vol["base temperature"] == pytest.approx(0.0, abs=1e-9)
    assert abs(vol["not explained"]) < 1e-9 * sum(billed) and abs(en["not explained"]) < 1e-9 * sum(energy) / 1e6
    assert en["heating value"] == pytest.approx(sum(billed) * (38.0 - 38.5), rel=1e-9)


def test_estimated_intervals_step():
    f = FRAME.copy()
    f["flag_estimated"] = False
    f.iloc[30:40, f.columns.get_loc("flag_estimated")] = True
    r = run(f)
    est = float(r.intervals["volume_base"][r.intervals["estimated"]].sum())
    ours = [float(_sel(r, a, b)["volume_base"].sum()) for a, b in PERIODS]
    billed = [ours[0] - 0.5 * est, ours[1]]  # the supplier had half our substitute for the gap
    rec = reconcile_frame(r, _invoice(billed, P_ISO, T_ISO))
    vol, _ = _check_waterfall(rec.attribution)
    assert vol["estimated intervals"] == pytest.approx(-0.5 * est, rel=1e-9)
    assert abs(vol["not explained"]) < 1e-6


def test_tolerance_and_uncertainty_flags():
    r = run(settings=month_settings(invoice_tolerance="0.5"))
    r.uncertainty = SimpleNamespace(expanded_pct=0.8)
    ours = [float(_sel(r, a, b)["volume_base"].sum()) for a, b in PERIODS]
    inv = _invoice([ours[0] * 1.015, ours[1] * 1.003], P_ISO, T_ISO, hv=HV)
    rec = reconcile_frame(r, inv, meter_uncertainty_pct=0.6)
    assert rec.uncertainty["combined_expanded_pct"] == pytest.approx(1.0, rel=1e-12)  # hypot(0.8, 0.6)
    assert list(rec.periods["exceeds_tolerance"]) == [True, False]
    assert list(rec.periods["exceeds_uncertainty"]) == [True, False]
    assert rec.periods["volume_difference_pct"].iat[0] == pytest.approx(1.5, rel=1e-9)
    assert rec.periods["energy_difference_pct"].iat[0] == pytest.approx(1.5, rel=1e-9)
    # money at the site price (0.03 EUR/kWh)
    assert rec.periods["amount_difference"].iat[0] == pytest.approx(0.015 * ours[0] * HV * PRICE, rel=1e-9)
    # without our uncertainty the flag is unknown, not False
    r.uncertainty = None
    assert reconcile_frame(r, inv).periods["exceeds_uncertainty"].iat[0] is None


@hsettings(max_examples=15, deadline=None)
@given(st.floats(0.8, 1.2), st.floats(0.8, 1.2), st.floats(30e6, 45e6),
       st.sampled_from([(P_ISO, T_ISO), (P_US, T_US), (P_ISO, 273.15)]))
def test_waterfall_adds_up_exactly(f1, f2, hv, base):
    ours = [float(_sel(RESULT, a, b)["volume_base"].sum()) for a, b in PERIODS]
    rec = reconcile_frame(RESULT, _invoice([ours[0] * f1, ours[1] * f2], *base, hv=hv))
    _check_waterfall(rec.attribution)


def test_reconcile_invoice_file_and_summary(tmp_path):
    ours = [float(_sel(RESULT, a, b)["volume_base"].sum()) for a, b in PERIODS]
    lines = ["Invoice (invented) for Heron Fen M4",
             "Period start,Period end,Billed volume [Sm3],Base pressure [kPa],Base temperature [degC],"
             "Heating value [MJ/m3],Price [EUR/kWh]"]
    for (a, b), v in zip(PERIODS, ours):
        lines.append(f"{a},{b},{v * 1.01:.3f},101.325,15,38.5,0.03")
    p = tmp_path / "invoice.csv"
    p.write_text("\n".join(lines) + "\n", encoding="utf-8")
    rec = reconcile_invoice(RESULT, p)
    assert rec.file == "invoice.csv" and rec.currency == "EUR"
    assert rec.totals["volume_difference_pct"] == pytest.approx(1.0, abs=1e-5)
    s = rec.to_summary()
    text = json.dumps(_clean(s))
    assert "attribution" in s and "periods" in s and len(s["periods"]) == 2 and "not explained" in text
