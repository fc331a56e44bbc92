"""Issue 13 case 12: a state that is not a single gas phase gets NaN with reason 'not-gas'.

Outside sources: the Wagner coefficients against the `chemicals` library's table (McGarry 1983),
the vapour pressures against CoolProp's reference equations of state (Span & Wagner for CO2,
Lemmon et al. for propane), H2S against `chemicals.vapor_pressure.Ambrose_Walton`.
"""

import numpy as np
import pytest
from typer.testing import CliRunner

from meterfix.cli import app
from meterfix.gas import Composition
from meterfix.z import evaluate_z
from meterfix.z.phase import WAGNER_MCGARRY, not_gas, vapour_pressure
from _z_reference import REFERENCE_CODE_GAS  # the AGA8 reference code's 21-component gas

CO2 = Composition.from_mapping({"carbon_dioxide": 1.0})


def test_wagner_coefficients_are_the_chemicals_table():
    vp = pytest.importorskip("chemicals.vapor_pressure")
    from meterfix.gas.components import COMPONENTS

    cas = {c.name: c.cas for c in COMPONENTS}
    for name, (a, b, c, d, tc, pc, tmin) in WAGNER_MCGARRY.items():
        row = vp.Psat_data_WagnerMcGarry.loc[cas[name]]
        assert (a, b, c, d, tc, pc, tmin) == (row["A"], row["B"], row["C"], row["D"], row["Tc"], row["Pc"],
                                              row["Tmin"]), name
        t = 0.8 * tc
        assert vapour_pressure(name, t) == pytest.approx(vp.Wagner_original(t, tc, pc, a, b, c, d), rel=1e-12)


@pytest.mark.parametrize("fluid,name,temps", [
    ("CO2", "carbon_dioxide", (230.0, 260.0, 284.65, 300.0)),
    ("Propane", "propane", (250.0, 293.15, 330.0)),
    ("n-Butane", "n_butane", (273.15, 300.0)),
    ("Nitrogen", "nitrogen", (80.0, 110.0)),
    ("Methane", "methane", (120.0, 170.0)),
])
def test_vapour_pressure_against_coolprop(fluid, name, temps):
    CP = pytest.importorskip("CoolProp.CoolProp")
    for t in temps:
        # CoolProp saturated vapour pressure (reference equations of state); Wagner/McGarry within 0.5 %
        assert vapour_pressure(name, t) == pytest.approx(CP.PropsSI("P", "T", t, "Q", 1, fluid), rel=5e-3)


def test_hydrogen_sulfide_by_ambrose_walton():
    vp = pytest.importorskip("chemicals.vapor_pressure")
    from meterfix.gas.components import COMPONENTS

    c = next(c for c in COMPONENTS if c.name == "hydrogen_sulfide")
    for t in (250.0, 300.0, 350.0):
        assert vapour_pressure("hydrogen_sulfide", t) == pytest.approx(
            vp.Ambrose_Walton(t, c.critical_temperature, c.critical_pressure, c.acentric_factor), rel=1e-12)
    assert np.isnan(vapour_pressure("hydrogen_sulfide", 400.0))  # above Tc: no vapour pressure


@pytest.mark.parametrize("method", ["aga8-detail", "gerg-2008", "lee-kesler", "ideal"])
def test_liquid_co2_is_not_gas(method):
    # issue 13 case 12: pure CO2 at 51 bar(a), 11.5 degC is a liquid (CoolProp: p_sat(284.65 K) = 46.7 bar)
    r = evaluate_z([51e5, 40e5], [284.65, 284.65], CO2, method)
    assert np.isnan(r.z[0]) and r.reason[0] == "not-gas"
    assert np.isfinite(r.z[1]) and r.reason[1] == ""


def test_gas_co2_agrees_with_coolprop_gas_phase():
    CP = pytest.importorskip("CoolProp.CoolProp")
    r = evaluate_z(40e5, 284.65, CO2, "gerg-2008")
    assert float(r.z) == pytest.approx(CP.PropsSI("Z", "P", 40e5, "T", 284.65, "CO2"), rel=1e-3)


def test_dominant_component_dew_point_by_raoult():
    gas = Composition.from_mapping({"carbon_dioxide": 0.95, "nitrogen": 0.05})
    psat = float(vapour_pressure("carbon_dioxide", 280.0))
    m = not_gas([0.99 * psat / 0.95, 1.01 * psat / 0.95], 280.0, gas)
    assert list(m) == [False, True]
    # above CO2's critical temperature nothing is flagged (dense phase is one phase)
    assert not not_gas(100e5, 310.0, gas)


def test_natural_gas_never_flagged():
    p, t = np.meshgrid(np.linspace(1e5, 12e6, 20), np.linspace(250.0, 330.0, 9))
    assert not not_gas(p, t, Composition.from_array(REFERENCE_CODE_GAS)).any()
    lean = Composition.from_mapping({"methane": 0.93, "ethane": 0.035, "propane": 0.008, "nitrogen": 0.015,
                                     "carbon_dioxide": 0.012})
    r = evaluate_z(p, t, lean, "aga8-detail")
    assert np.all(np.isfinite(r.z))


def test_cli_z_refuses_liquid_state():
    r = CliRunner().invoke(app, ["z", "--gas", "carbon_dioxide=1", "--pressure", "51 bar(a)",
                                 "--temperature", "11.5 degC"])
    assert r.exit_code == 2 and "not-gas" in r.output and "Traceback" not in r.output


def test_methods_command_states_the_limits():
    r = CliRunner().invoke(app, ["methods"])
    assert r.exit_code == 0 and "not-gas" in r.output and "Raoult" in r.output and "natural gas" in r.output


def test_month_leaves_liquid_intervals_without_result():
    from synthetic_month import month_frame, run

    frame = month_frame(days=3)
    frame["pressure_gauge"] = 30e5
    frame.iloc[5:9, frame.columns.get_loc("pressure_gauge")] = 60e5  # liquid CO2 at about 281 K
    r = run(frame, analyses=[(None, CO2)])
    d = r.intervals
    liquid = d["z_reason"] == "not-gas"
    assert liquid.sum() == 4 and d["volume_base"][liquid].isna().all()
    assert r.totals["intervals_without_result"] == 4
    assert r.totals["uncorrected_volume_without_result_m3"] == pytest.approx(frame["volume_line"].iloc[5:9].sum())
    assert np.isfinite(r.totals["base_volume_m3"])
