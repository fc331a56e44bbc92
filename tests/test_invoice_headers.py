"""Issue 13: common invoice headers (service period from/to, temperature base, heating value as a Btu
factor, energy in MMBtu, Dth, therms, kWh) and invoice base conditions given when the invoice has none.

Unit factors: NIST SP 811 (2008) appendix B (1 ft3 = 0.028316846592 m3, 1 Btu_IT = 1055.05585262 J,
1 psi = 6894.757293168 Pa); 1 therm = 100 000 Btu, 1 Dth = 1 MMBtu = 10^6 Btu (common practice of
the gas trade); a Btu factor is MMBtu per Mcf (common practice).
"""

import datetime as dt

import pytest

from meterfix.errors import InputError, UnitError
from meterfix.readers.invoices import read_invoice

FT3 = 0.028316846592
BTU = 1055.05585262
PSI = 6894.757293168


def _csv(tmp_path, text, name="inv.csv"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def test_service_period_btu_factor_and_mmbtu(tmp_path):
    p = _csv(tmp_path, "Customer: Heron Fen M4 (invented)\n"
                       "Service Period From,Service Period To,Volume (Mcf),Pressure Base (psia),Temp Base (degF),"
                       "Btu Factor,MMBtu,Rate ($/MMBtu),Amount ($)\n"
                       "10/01/2026,10/31/2026,1234.5,14.73,60,1.035,1277.71,3.20,4088.67\n")
    df, meta = read_invoice(p, timezone="America/Chicago")
    assert (df["period_start"].iat[0], df["period_end"].iat[0]) == (dt.date(2026, 10, 1), dt.date(2026, 10, 31))
    assert df["volume_billed"].iat[0] == pytest.approx(1234.5 * 1000 * FT3, rel=1e-12)
    assert df["pressure_base"].iat[0] == pytest.approx(14.73 * PSI, rel=1e-12)
    assert df["temperature_base"].iat[0] == pytest.approx(288.705556, abs=1e-6)
    # Btu factor 1.035 MMBtu/Mcf = 1035 Btu/ft3
    assert df["heating_value"].iat[0] == pytest.approx(1035 * BTU / FT3, rel=1e-12)
    assert df["energy_billed"].iat[0] == pytest.approx(1277.71e6 * BTU, rel=1e-12)
    assert meta.units["heating_value"] == "MMBtu/Mcf" and meta.units["energy_billed"] == "MMBtu"


@pytest.mark.parametrize("header,value,joules", [
    ("Dth", 1277.71, 1277.71e6 * BTU),
    ("Dekatherms", 1277.71, 1277.71e6 * BTU),
    ("Therms", 12777.1, 12777.1e5 * BTU),
    ("Billed Therms", 12777.1, 12777.1e5 * BTU),
    ("kWh", 374_464.0, 374_464.0 * 3.6e6),
    ("Energy (kWh)", 374_464.0, 374_464.0 * 3.6e6),
])
def test_energy_units_from_headers(tmp_path, header, value, joules):
    p = _csv(tmp_path, f"Service From,Service To,Mcf,{header}\n2026-10-01,2026-10-31,1234.5,{value}\n")
    df, _ = read_invoice(p, pressure_base=101_559.775, temperature_base=288.705556)
    assert df["energy_billed"].iat[0] == pytest.approx(joules, rel=1e-12)
    assert df["volume_billed"].iat[0] == pytest.approx(1234.5 * 1000 * FT3, rel=1e-12)


def test_btu_factor_in_btu_per_cubic_foot(tmp_path):
    p = _csv(tmp_path, "Service Start,Service End,Volume [Mcf],Btu Factor\n2026-10-01,2026-10-31,100,1035\n")
    df, meta = read_invoice(p, pressure_base=101_559.775, temperature_base=288.705556)
    assert df["heating_value"].iat[0] == pytest.approx(1035 * BTU / FT3, rel=1e-12) and meta.units["heating_value"] == "Btu/cf"


def test_btu_factor_of_no_known_range_is_refused(tmp_path):
    p = _csv(tmp_path, "Service Start,Service End,Volume [Mcf],Btu Factor\n2026-10-01,2026-10-31,100,35.2\n")
    with pytest.raises(UnitError, match="Btu Factor") as e:
        read_invoice(p, pressure_base=101_559.775, temperature_base=288.705556)
    assert "MMBtu/Mcf" in e.value.hint


def test_one_service_period_column(tmp_path):
    p = _csv(tmp_path, "Service period,Volume [Sm3],Base pressure [kPa],Base temperature [degC]\n"
                       "2026-10-01 - 2026-10-15,5000,101.325,15\n2026-10-16 to 2026-10-31,5100,101.325,15\n")
    df, _ = read_invoice(p)
    assert list(df["period_end"]) == [dt.date(2026, 10, 15), dt.date(2026, 10, 31)]
    assert list(df["period_start"]) == [dt.date(2026, 10, 1), dt.date(2026, 10, 16)]


def test_missing_base_names_the_setting(tmp_path):
    p = _csv(tmp_path, "Service From,Service To,Mcf\n2026-10-01,2026-10-31,1234.5\n")
    with pytest.raises(InputError, match="no 'Base pressure' column") as e:
        read_invoice(p)
    assert "--invoice-base" in e.value.hint and "invoice_base" in e.value.hint
    df, _ = read_invoice(p, pressure_base=101_559.775, temperature_base=288.705556)
    assert df["pressure_base"].iat[0] == 101_559.775


def test_cli_invoice_base_option(tmp_path):
    """An invoice without base columns reconciles when --invoice-base says its base (exit 0), and is refused
    with the fix without it (exit 2)."""
    from pathlib import Path

    from typer.testing import CliRunner

    from meterfix.cli import app

    log = Path(__file__).resolve().parents[1] / "fixtures" / "logs" / "fv_m1_part1.csv"
    inv = _csv(tmp_path, "Service Period From,Service Period To,Volume [m3]\n2026-10-01,2026-10-01,12000\n")
    args = ["correct", str(log), "--base", "normal-0c", "--elevation", "240 m", "--timezone", "Europe/Berlin",
            "--gas", "methane=0.95,ethane=0.03,nitrogen=0.02", "--invoice", str(inv), "--quiet"]
    r = CliRunner().invoke(app, args + ["--out", str(tmp_path / "a")])
    assert r.exit_code == 2 and "--invoice-base" in r.output, r.output
    r = CliRunner().invoke(app, args + ["--out", str(tmp_path / "b"), "--invoice-base", "normal-0c"])
    assert r.exit_code == 0, r.output
