"""Gas analyses as they come (neopentane, hexane isomers, lumps, uncertainties), the properties command,
US practice, and ISO 6976 in the month run."""

import json

import numpy as np
import pytest
from typer.testing import CliRunner

from meterfix.cli import app
from meterfix.energy import iso6976 as I
from meterfix.energy.month import BTU_PER_SCF, analysis_energy, us_heating_value, water_vapour_pressure
from meterfix.errors import CompositionError
from meterfix.gas import Composition
from tests.test_iso6976 import EX1, EX3, T0, T15, T25, U1, printed

runner = CliRunner()


def test_isomers_are_assigned_for_z_and_kept_exactly_for_energy():
    g = Composition.from_mapping({**{k: v * 100 for k, v in EX3.items()}, "2-methylpentane": 0.0, "neo-C5": 0.0})
    assert g["n_pentane"] == pytest.approx(EX3["n_pentane"] + EX3["neopentane"])  # rule: same carbon number
    assert any("neopentane counted as n_pentane" in n for n in g.notes)
    assert g.detail["neopentane"] == pytest.approx(EX3["neopentane"])
    # energy uses the analysis as reported: ISO 6976:2016 D.4.3.1 printed Hv,G = 39.73351 MJ/m3
    e = analysis_energy(g, temperature_combustion=T15, temperature_metering=T15, pressure_metering=101325.0)
    assert printed(e.gross_volumetric / 1e6, "39.73351")
    assert "ISO 6976:2016" in e.source


def test_lumps_and_components_without_a_z_counterpart():
    g = Composition.from_mapping({"methane": 97.0, "ethane": 2.0, "C9+": 0.5, "benzene": 0.5})
    assert g["n_nonane"] == pytest.approx(0.005) and g["n_hexane"] == pytest.approx(0.005)
    assert any("lumped as n_nonane" in n for n in g.notes)
    with pytest.raises(CompositionError, match="no counterpart"):
        Composition.from_mapping({"methane": 99.0, "ammonia": 1.0})
    e = Composition.from_mapping({"methane": 99.0, "ammonia": 1.0}, allow_no_z=True)
    assert e.detail["ammonia"] == pytest.approx(0.01) and e["methane"] == 1.0


def test_unknown_component_names_the_closest_known_ones():
    with pytest.raises(CompositionError, match="closest known: neopentane"):
        Composition.from_mapping({"methane": 99.0, "neopentan": 1.0})


def test_normalisation_keeps_the_raw_total_and_scales_the_uncertainties():
    raw = {k: v * 99.83 for k, v in EX1.items()}
    g = Composition.from_mapping(raw, uncertainties={k: v * 100 for k, v in U1.items()})
    assert g.sum_as_given == pytest.approx(0.9983)
    assert any("normalised: sum was 99.83 %" in n for n in g.notes)
    assert g.detail_uncertainty["methane"] == pytest.approx(0.000346 / 0.9983)


def test_analysis_file_with_uncertainty_column_and_correlations(tmp_path):
    f = tmp_path / "gc.csv"
    lines = ["Component,Mole fraction [-],Standard uncertainty [-],methane,ethane"]
    for k, v in EX1.items():
        rho = {"methane": ("1", "-0.5"), "ethane": ("-0.5", "1")}.get(k, ("", ""))
        lines.append(f"{k},{v},{U1[k]},{rho[0]},{rho[1]}")
    f.write_text("\n".join(lines) + "\n")
    r = runner.invoke(app, ["properties", "--composition", str(f), "--combustion-temperature", "15 degC",
                            "--metering-temperature", "15 degC", "--json"])
    assert r.exit_code == 0, r.output
    out = json.loads(r.output)
    assert list(out) == list(I.KEYS) + ["standard_uncertainty"]
    assert list(out["standard_uncertainty"]) == list(I.KEYS)
    # values: ISO 6976:2016 D.2 printed Hv,G 38.410611 MJ/m3 (SI in the JSON)
    assert printed(out["gross_heating_value_volumetric"] / 1e6, "38.410611")
    # the methane-ethane correlation -0.5 lowers u against D.2's identity-matrix figure 0.026267
    assert out["standard_uncertainty"]["gross_heating_value_volumetric"] / 1e6 < 0.026267
    # without the correlation columns: the printed D.2 figure
    f2 = tmp_path / "gc2.csv"
    f2.write_text("Component,Mole fraction [-],Standard uncertainty [-]\n"
                  + "\n".join(f"{k},{v},{U1[k]}" for k, v in EX1.items()) + "\n")
    r2 = runner.invoke(app, ["properties", "--composition", str(f2), "--combustion-temperature", "15 degC",
                             "--metering-temperature", "15 degC", "--json"])
    u = json.loads(r2.output)["standard_uncertainty"]["gross_heating_value_volumetric"] / 1e6
    assert printed(u, "0.026267")


def test_properties_command_table_and_bad_input():
    r = runner.invoke(app, ["properties", "--gas", "methane=0.95,ethane=0.03,nitrogen=0.02",
                            "--combustion-temperature", "25 degC", "--metering-temperature", "0 degC"])
    assert r.exit_code == 0 and "ISO 6976:2016" in r.output and "Wobbe index, gross" in r.output
    r = runner.invoke(app, ["properties", "--gas", "methane=0.95,neopentan=0.05", "--combustion-temperature",
                            "25 degC", "--metering-temperature", "0 degC"])
    assert r.exit_code == 2 and "closest known: neopentane" in r.output and "Traceback" not in r.output
    r = runner.invoke(app, ["properties", "--gas", "n_heptane=1", "--combustion-temperature", "15 degC",
                            "--metering-temperature", "15 degC"])
    assert r.exit_code == 2 and "below 0.9" in r.output
    r = runner.invoke(app, ["properties", "--gas", "methane=1", "--combustion-temperature", "15 degC",
                            "--metering-temperature", "15 degC", "--edition", "1995", "--json"])
    assert r.exit_code == 0 and json.loads(r.output)["gross_heating_value_molar"] == pytest.approx(891.56e3)


def test_us_practice_btu_per_scf():
    g = Composition.from_mapping({"methane": 1.0})
    us = us_heating_value(g)
    # hand arithmetic: 891.46 kJ/mol (60 degF column) at 14.73 psia, 60 degF, Z by the summation factor 0.04437
    p, t = 14.73 * 6894.757293168361, (60 - 32) / 1.8 + 273.15
    z = 1 - p / 101325.0 * 0.04437**2
    assert us["dry_Btu_per_scf"] == pytest.approx(891.46e3 * p / (z * 8.3144621 * t) / BTU_PER_SCF, rel=1e-12)
    # common practice (from memory): methane about 1012 Btu/scf ideal at 14.73 psia, 60 degF
    assert 1010 < us["dry_Btu_per_scf"] < 1016
    assert us["water_saturated_Btu_per_scf"] < us["dry_Btu_per_scf"]
    assert "14.73 psia" in us["basis"] and "water-saturated" in us["basis"]


def test_water_vapour_pressure_against_coolprop():
    # library: CoolProp (IAPWS-95 water) saturation pressure at 60 degF
    CP = pytest.importorskip("CoolProp.CoolProp")
    t = (60 - 32) / 1.8 + 273.15
    assert water_vapour_pressure(t) == pytest.approx(CP.PropsSI("P", "T", t, "Q", 0, "Water"), rel=1e-4)


def test_month_run_uses_iso_6976_and_names_the_edition():
    from meterfix.engine.pipeline import run_month
    from tests.synthetic_month import GAS, month_frame, month_settings

    frame = month_frame(days=2)
    r = run_month(frame, [(None, GAS)], month_settings(heating_value=None, base="normal-0c"))
    a = r.analyses[0]
    assert r.method["energy_standard"] == "ISO 6976:2016"
    assert a.heating_value_source.startswith("from the analysis (ISO 6976:2016")
    ref = I.properties(GAS.as_dict(), temperature_combustion=T25, temperature_metering=T0)
    assert a.heating_value == pytest.approx(ref["gross_heating_value_volumetric"], rel=1e-15)
    assert a.wobbe_index == pytest.approx(ref["wobbe_index_gross"], rel=1e-15)
    e = r.intervals["energy"].to_numpy()
    assert np.allclose(e, r.intervals["volume_base"].to_numpy() * ref["gross_heating_value_volumetric"])
    # the 1995 edition for contracts that cite it
    r95 = run_month(frame, [(None, GAS)], month_settings(heating_value=None, base="normal-0c", energy_edition="1995"))
    assert r95.method["energy_standard"] == "ISO 6976:1995"
    assert r95.analyses[0].heating_value != a.heating_value
    # a base the standard does not tabulate (10 degC): the standard's molar value, the run's Z, stated
    r10 = run_month(frame, [(None, GAS)], month_settings(heating_value=None, base_temperature="10 degC",
                                                         base_pressure="101.325 kPa"))
    assert "not tabulated by the standard" in r10.analyses[0].heating_value_source


def test_annex_b_feeds_the_months_energy_budget():
    # ISO 6976:2016 Annex B u(Hv) of the analysis (example 1's uncertainties, D.2) becomes the heating-value
    # input of the month's GUM budget; the composition then acts on the energy through Z only
    from meterfix.engine.pipeline import run_month
    from meterfix.uncertainty import month_uncertainty
    from tests.synthetic_month import month_frame, month_settings

    gas = Composition.from_mapping(EX1, uncertainties=U1)
    frame = month_frame(days=2)
    r = run_month(frame, [(None, gas)], month_settings(heating_value=None, base="normal-0c"))
    props = r.analyses[0].energy.properties
    rel = props.standard_uncertainty["gross_heating_value_volumetric"] / props["gross_heating_value_volumetric"]
    mu = month_uncertainty(r, draws=2000, max_draws=2000)
    row = mu.energy_budget.set_index("input").loc["heating value"]
    assert "Annex B" in row["source"]
    assert row["standard_uncertainty_pct"] == pytest.approx(100 * rel, rel=1e-9)
    plain = run_month(frame, [(None, Composition.from_mapping(EX1))], month_settings(heating_value=None, base="normal-0c"))
    row0 = month_uncertainty(plain, draws=2000, max_draws=2000).energy_budget.set_index("input").loc["heating value"]
    assert "Annex B" not in row0["source"]


def test_table_of_analyses_with_isomers_and_a_lump(tmp_path):
    from meterfix.readers import read_analyses

    f = tmp_path / "lab.csv"
    f.write_text("Effective from,methane [mol%],ethane [mol%],neo-C5 [mol%],2-methylpentane [mol%],C7+ [mol%],N2 [mol%]\n"
                 "2026-10-01 06:00,94.0,4.0,0.3,0.2,0.1,1.4\n"
                 "2026-10-15 06:00,93.0,5.0,0.3,0.2,0.1,1.4\n")
    (w1, g1), (w2, g2) = read_analyses(f, timezone="Europe/Berlin")
    assert g1.detail["neopentane"] == pytest.approx(0.003) and g1.detail["2_methylpentane"] == pytest.approx(0.002)
    assert g1["n_pentane"] == pytest.approx(0.003) and g1["n_hexane"] == pytest.approx(0.002)
    assert g1["n_heptane"] == pytest.approx(0.001)
    assert any("lumped as n_heptane" in n for n in g1.notes)


@pytest.mark.parametrize("h2, detail_range, gross_range", [(0.05, "normal", "normal"), (0.20, "extended", "outside")])
def test_hydrogen_ranges_of_the_z_methods_are_flagged(h2, detail_range, gross_range):
    # DETAIL: hydrogen up to 10 % in the normal range, to 100 % in the extended range; GROSS: the same
    # normal composition range, outside it beyond (AGA8 Part 1, from memory, as in z/aga8_detail.py and
    # z/aga8_gross.py); GERG-2008: the whole composition range of its components (from memory)
    from meterfix.z import evaluate_z
    from meterfix.z.base import RANGE_NAMES

    g = Composition.from_mapping({"methane": 0.93 - h2, "hydrogen": h2, "nitrogen": 0.02, "ethane": 0.05})
    assert RANGE_NAMES[int(evaluate_z(50e5, 288.15, g, "aga8-detail").range_class)] == detail_range
    assert RANGE_NAMES[int(evaluate_z(50e5, 288.15, g, "gerg-2008").range_class)] == "normal"
    for gross in ("aga8-gross1", "aga8-gross2"):
        assert RANGE_NAMES[int(evaluate_z(50e5, 288.15, g, gross).range_class)] == gross_range
    # energy: a hydrogen blend is within ISO 6976 (Z > 0.9 at the metering reference)
    e = analysis_energy(g, temperature_combustion=T25, temperature_metering=T0, pressure_metering=101325.0)
    assert e.edition == "ISO 6976:2016" and np.isfinite(e.gross_volumetric)


def test_an_unknown_component_column_is_refused_with_the_closest_names(tmp_path):
    from meterfix.readers import read_analyses

    f = tmp_path / "lab.csv"
    f.write_text("Effective from,methane [mol%],ethane [mol%],neopentan [mol%],N2 [mol%]\n"
                 "2026-10-01 06:00,94.0,4.0,0.5,1.5\n")
    with pytest.raises(CompositionError, match="closest known: neopentane") as e:
        read_analyses(f)
    assert e.value.column == "neopentan [mol%]"
