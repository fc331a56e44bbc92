"""Invoice reader: the template layout, common header variations, units, and clear errors."""

import datetime as dt

import numpy as np
import pytest

from meterfix.errors import InputError, UnitError
from meterfix.readers.invoices import read_invoice

FT3 = 0.028316846592  # m3, exact (NIST SP 811 B.8: 1 ft = 0.3048 m)
PSI = 6894.757293168  # Pa (NIST SP 811 B.8, pound-force per square inch)
BTU_IT = 1055.05585262  # J (NIST SP 811 B.8, Btu_IT)

TEMPLATE = """Invoice of Marsh Gas Supply Co-op (invented) for meter Heron Fen M4
Note: volumes at the contract base
Period start,Period end,Billed volume [Sm3],Base pressure [kPa],Base temperature [degC],Heating value [MJ/m3],Billed energy [GJ],Price [EUR/MWh],Amount [EUR]
2026-03-01,2026-03-07,"50,000.5",101.325,15,38.5,1925.02,30,16041.8
2026-03-08,2026-03-14,49000,101.325,15,38.6,1891.4,30,15761.7
Total,,99000.5,,,,,,
"""


def test_template_csv(tmp_path):
    p = tmp_path / "invoice.csv"
    p.write_text(TEMPLATE, encoding="utf-8")
    df, meta = read_invoice(p, timezone="Europe/Berlin")
    assert meta.header_row == 3 and len(meta.notes) == 2 and meta.skipped_rows == [6]
    assert list(df["period_start"]) == [dt.date(2026, 3, 1), dt.date(2026, 3, 8)]
    assert df["volume_billed"].iat[0] == pytest.approx(50000.5)
    assert df["pressure_base"].iat[0] == pytest.approx(101325.0)
    assert df["temperature_base"].iat[0] == pytest.approx(288.15)
    assert df["heating_value"].iat[1] == pytest.approx(38.6e6)
    assert df["energy_billed"].iat[0] == pytest.approx(1925.02e9)
    assert df["price"].iat[0] == pytest.approx(30 / 3.6e9)  # 1 MWh = 3.6e9 J (exact)
    assert df["amount"].iat[1] == pytest.approx(15761.7)
    assert meta.currency == "EUR" and list(df["row"]) == [4, 5]


def test_us_layout_with_variations(tmp_path):
    p = tmp_path / "inv.csv"
    p.write_text("From;To;Volume (Mcf);Base pressure (psia);Base temperature (degF);HHV [Btu/scf];"
                 "Energy [MMBtu];Rate [USD/MMBtu]\n"
                 "03/01/2026;03/31/2026;1000;14.73;60;1030;1030;3.2\n", encoding="utf-8")
    df, meta = read_invoice(p, timezone="America/Chicago")
    # 03/31/2026 is unambiguous (31 > 12): month/day
    assert df["period_start"].iat[0] == dt.date(2026, 3, 1) and df["period_end"].iat[0] == dt.date(2026, 3, 31)
    assert df["volume_billed"].iat[0] == pytest.approx(1000 * 1000 * FT3, rel=1e-12)
    assert df["pressure_base"].iat[0] == pytest.approx(14.73 * PSI, rel=1e-12)  # 101 559.775 Pa, REFERENCES §5
    assert df["pressure_base"].iat[0] == pytest.approx(101559.775, abs=0.01)
    assert df["temperature_base"].iat[0] == pytest.approx(288.705556, abs=1e-6)
    assert df["heating_value"].iat[0] == pytest.approx(1030 * BTU_IT / FT3, rel=1e-12)
    assert df["energy_billed"].iat[0] == pytest.approx(1030e6 * BTU_IT, rel=1e-12)
    assert df["price"].iat[0] == pytest.approx(3.2 / (1e6 * BTU_IT), rel=1e-12)
    assert meta.currency == "USD"


def test_xlsx_with_title_rows(tmp_path):
    openpyxl = pytest.importorskip("openpyxl")
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Invoice"
    ws.append(["Billing statement (invented)"])
    ws.append([])
    ws.append(["Period start", "Period end", "Billed volume [m3]", "Base pressure [bar]", "Base temperature [K]",
               "Billed energy [kWh]", "Amount [EUR]"])
    ws.append([dt.datetime(2026, 3, 1), dt.datetime(2026, 3, 31), 123456.0, 1.01325, 273.15, 1.4e6, 42000.0])
    p = tmp_path / "inv.xlsx"
    wb.save(p)
    df, meta = read_invoice(p, timezone="UTC")
    assert meta.sheet == "Invoice" and meta.header_row == 3
    assert df["period_end"].iat[0] == dt.date(2026, 3, 31)
    assert df["pressure_base"].iat[0] == pytest.approx(101325.0)
    assert df["energy_billed"].iat[0] == pytest.approx(1.4e6 * 3.6e6)
    assert np.isnan(df["heating_value"].iat[0]) and np.isnan(df["price"].iat[0])


def test_missing_column_names_file_and_row(tmp_path):
    p = tmp_path / "bad.csv"
    p.write_text("Title\nPeriod start,Billed volume [Sm3],Base pressure [kPa],Base temperature [degC]\n"
                 "2026-03-01,100,101.325,15\n", encoding="utf-8")
    with pytest.raises(InputError, match="Period end") as exc:
        read_invoice(p, timezone="UTC")
    assert exc.value.file.endswith("bad.csv") and exc.value.row == 2


def test_missing_base_conditions_column(tmp_path):
    p = tmp_path / "nobase.csv"
    p.write_text("Period start,Period end,Billed volume [Sm3]\n2026-03-01,2026-03-31,100\n", encoding="utf-8")
    with pytest.raises(InputError, match="Base pressure"):
        read_invoice(p, timezone="UTC")
    df, _ = read_invoice(p, timezone="UTC", pressure_base=101325.0, temperature_base=288.15)
    assert df["temperature_base"].iat[0] == 288.15


def test_overlapping_periods_name_both_rows(tmp_path):
    p = tmp_path / "overlap.csv"
    p.write_text("Period start,Period end,Billed volume [Sm3],Base pressure [kPa],Base temperature [degC]\n"
                 "2026-03-01,2026-03-15,100,101.325,15\n"
                 "2026-03-15,2026-03-31,100,101.325,15\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"row 2 .*row 3") as exc:
        read_invoice(p, timezone="UTC")
    assert exc.value.row == 3 and exc.value.column == "Period start"


def test_bad_values(tmp_path):
    head = "Period start,Period end,Billed volume [Sm3],Base pressure [kPa],Base temperature [degC]\n"
    p = tmp_path / "b.csv"
    p.write_text(head + "2026-03-31,2026-03-01,100,101.325,15\n", encoding="utf-8")
    with pytest.raises(InputError, match="before it starts"):
        read_invoice(p, timezone="UTC")
    p.write_text(head + "2026-03-01,2026-03-31,lots,101.325,15\n", encoding="utf-8")
    with pytest.raises(InputError, match="not a number") as exc:
        read_invoice(p, timezone="UTC")
    assert exc.value.row == 2 and exc.value.column == "Billed volume [Sm3]"
    p.write_text(head + "03/04/2026,2026-03-31,100,101.325,15\n", encoding="utf-8")
    with pytest.raises(InputError, match="ambiguous"):
        read_invoice(p, timezone="UTC")
    p.write_text(head.replace("[kPa]", "[psig]") + "2026-03-01,2026-03-31,100,14.7,15\n", encoding="utf-8")
    with pytest.raises(UnitError, match="gauge"):
        read_invoice(p, timezone="UTC")
    p.write_text(head.replace("[Sm3]", "") + "2026-03-01,2026-03-31,100,101.325,15\n", encoding="utf-8")
    with pytest.raises(UnitError, match="no unit"):
        read_invoice(p, timezone="UTC")
