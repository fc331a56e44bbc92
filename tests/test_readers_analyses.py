"""Gas-analysis reader: one analysis, a table with effective-from times, a gross characterisation.

Expected fractions are the fixture's mol % / 100 (written by hand). Unit factors: NIST SP 811
(2008) B.8: Btu_IT = 1.055 055 852 62 E+03 J, ft3 = 2.831 684 659 2 E-02 m3, psi = 6.894 757 E+03 Pa.
"""

import io
from pathlib import Path

import pandas as pd
import pytest

from meterfix.errors import CompositionError, InputError
from meterfix.gas import Composition
from meterfix.gas.gross import GrossCharacterization
from meterfix.readers import parse_analyses, read_analyses

FIX = Path(__file__).resolve().parent.parent / "fixtures" / "analyses"
BTU_IT = 1055.05585262  # J, NIST SP 811 B.8
FT3 = 0.3048**3  # m3, NIST SP 811 B.8
PSI = 0.45359237 * 9.80665 / 0.0254**2  # Pa, NIST SP 811 B.8


def test_one_analysis_with_aliases_and_total_row():
    out = read_analyses(FIX / "fv_m1_analysis.csv")
    assert len(out) == 1 and out[0][0] is None
    g = out[0][1]
    assert isinstance(g, Composition)
    expect = {"methane": 0.9312, "ethane": 0.0342, "propane": 0.0071, "isobutane": 0.0011, "n_butane": 0.0013,
              "nitrogen": 0.0128, "carbon_dioxide": 0.0123}
    assert g.as_dict() == pytest.approx(expect, abs=1e-12)
    assert g.sum_as_given == pytest.approx(1.0)
    assert any("'Total' is not a component" in n for n in g.notes)


def test_table_of_analyses_local_times_and_repeated_hour():
    out = read_analyses(FIX / "tallow_bridge_b2_analyses.csv", timezone="Europe/Berlin")
    times = [w for w, _ in out]
    # 01.10.2026 06:00 CEST = 04:00 UTC; 15.10.2026 06:00 CEST = 04:00 UTC; 25.10.2026 02:30 is in the
    # repeated hour and, first in the file, read as summer time (CEST): 00:30 UTC
    assert times == [pd.Timestamp("2026-10-01 04:00", tz="UTC"), pd.Timestamp("2026-10-15 04:00", tz="UTC"),
                     pd.Timestamp("2026-10-25 00:30", tz="UTC")]
    assert out[1][1]["ethane"] == pytest.approx(0.0488) and out[1][1]["carbon_dioxide"] == pytest.approx(0.0195)
    assert out[0][1]["methane"] == pytest.approx(0.93)


def test_gross_characterisation_us_units():
    out = read_analyses(FIX / "heron_fen_m4_gross.csv", timezone="America/Chicago")
    assert [w for w, _ in out] == [pd.Timestamp("2026-10-01 14:00", tz="UTC"), pd.Timestamp("2026-10-16 14:00", tz="UTC")]
    g = out[0][1]
    assert isinstance(g, GrossCharacterization)
    assert g.heating_value == pytest.approx(1030.0 * BTU_IT / FT3, rel=1e-12)
    assert g.relative_density == 0.605 and g.x_co2 == pytest.approx(0.011) and g.x_n2 == pytest.approx(0.009)
    assert g.temperature_reference_density == pytest.approx((60 + 459.67) / 1.8)
    assert g.pressure_reference == pytest.approx(14.73 * PSI)
    assert g.temperature_reference_combustion == pytest.approx((60 + 459.67) / 1.8)


def test_fractions_and_unordered_table():
    text = ("Effective from,CH4 [-],C2H6 [-],N2 [-]\n2026-10-20 06:00,0.96,0.03,0.01\n"
            "2026-10-01 06:00,0.95,0.03,0.02\n")
    out = parse_analyses(io.BytesIO(text.encode()), name="a.csv")
    assert [w.day for w, _ in out] == [1, 20] and out[0][1]["nitrogen"] == pytest.approx(0.02)


def test_workbook_sheet_named_analyses(tmp_path):
    import openpyxl

    wb = openpyxl.Workbook()
    wb.active.title = "Notes"
    wb.active.append(["Gas analyses of FV-M1 (invented)"])
    ws = wb.create_sheet("Analyses")
    ws.append(["Component", "Mole fraction [-]"])
    for name, x in (("methane", 0.9), ("ethane", 0.06), ("CO2", 0.04)):
        ws.append([name, x])
    p = tmp_path / "a.xlsx"
    wb.save(p)
    (w, g), = read_analyses(p)
    assert w is None and g["carbon_dioxide"] == pytest.approx(0.04)


def test_sum_far_from_100_names_file_and_column():
    text = "Component,Mole percent [mol%]\nmethane,90\nethane,3\n"
    with pytest.raises(CompositionError, match="sums to 93") as e:
        parse_analyses(io.BytesIO(text.encode()), name="bad.csv")
    assert e.value.file == "bad.csv" and e.value.column == "Mole percent [mol%]"


def test_unknown_and_negative_component_name_row():
    text = "Component,Mole percent [mol%]\nmethane,95\nunobtainium,5\n"
    with pytest.raises(CompositionError, match="unknown gas component 'unobtainium'") as e:
        parse_analyses(io.BytesIO(text.encode()), name="u.csv")
    assert e.value.row == 3 and e.value.column == "Component"
    text = "Component,Mole percent [mol%]\nmethane,101\nethane,-1\n"
    with pytest.raises(CompositionError, match="negative") as e:
        parse_analyses(io.BytesIO(text.encode()), name="n.csv")
    assert e.value.row == 3 and e.value.column == "Mole percent [mol%]"
    text = "Effective from,methane [mol%],ethane [mol%]\n2026-10-01 06:00,98,2\n2026-10-02 06:00,x,2\n"
    with pytest.raises(CompositionError, match="not a number") as e:
        parse_analyses(io.BytesIO(text.encode()), name="t.csv")
    assert e.value.row == 3 and e.value.column == "methane [mol%]"


def test_several_analyses_need_times_and_distinct_times():
    text = "methane [mol%],ethane [mol%]\n98,2\n97,3\n"
    with pytest.raises(InputError, match="effective-from"):
        parse_analyses(io.BytesIO(text.encode()), name="a.csv")
    text = "Effective from,methane [mol%],ethane [mol%]\n2026-10-01 06:00,98,2\n2026-10-01 06:00,97,3\n"
    with pytest.raises(InputError, match="same effective-from"):
        parse_analyses(io.BytesIO(text.encode()), name="a.csv")


def test_analysis_periods_cover_the_right_intervals():
    """An analysis effective from 02.10.2026 06:00 CEST (04:00 UTC) covers intervals starting then or later."""
    from meterfix.engine.pipeline import run_month
    from meterfix.engine.settings import build_settings
    from meterfix.readers import read_log

    logs = Path(__file__).resolve().parent.parent / "fixtures" / "logs"
    frame, _ = read_log([logs / f"fv_m1_part{k}.csv" for k in (1, 2, 3)], timezone="Europe/Berlin", overlap="earlier")
    text = ("Effective from;methane [mol%];ethane [mol%];nitrogen [mol%]\n01.10.2026 06:00;95;3;2\n"
            "02.10.2026 06:00;94;4;2\n")
    analyses = parse_analyses(io.BytesIO(text.encode()), name="a.csv", timezone="Europe/Berlin")
    s = build_settings(None, {"base": "normal-0c", "elevation": "100 m", "timezone": "Europe/Berlin",
                              "method": "gerg-2008"})
    res = run_month(frame, analyses, s)
    a = res.intervals["analysis"]
    assert a.loc[pd.Timestamp("2026-10-02 04:00", tz="UTC")] == 0  # 05:00-06:00 CEST: the first analysis
    assert a.loc[pd.Timestamp("2026-10-02 05:00", tz="UTC")] == 1  # 06:00-07:00 CEST: the second
    assert (a == 0).sum() == 24 and (a == 1).sum() == 48
