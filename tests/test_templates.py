"""Templates: generated deterministically, shipped as meterfix.templates, written by
`meterfix template DIR`, and a filled template reads back through the readers."""

import datetime as dt
import re
import sys
import tomllib
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from openpyxl import load_workbook
from typer.testing import CliRunner

from meterfix.cli import TEMPLATE_FILES, app
from meterfix.engine.settings import build_settings, load_site_file
from meterfix.engine.settings_table import SETTINGS

TOP_KEYS = [s.name for s in SETTINGS if not s.table and s.kind != "mapping"]
from meterfix.errors import SettingsError
from meterfix.uncertainty.inputs import parse_uncertainty_settings
from meterfix.readers import read_analyses, read_invoice, read_log
from meterfix.writers.xlsx_common import repeatable_xlsx_bytes

TEMPLATES = Path(__file__).resolve().parents[1] / "templates"
sys.path.insert(0, str(TEMPLATES))
import make_templates  # noqa: E402


def test_committed_templates_are_what_the_generator_makes():
    for name, make in (("log.xlsx", make_templates.log_workbook), ("analyses.xlsx", make_templates.analyses_workbook),
                       ("invoice.xlsx", make_templates.invoice_workbook)):
        assert repeatable_xlsx_bytes(make()) == (TEMPLATES / name).read_bytes(), f"run templates/make_templates.py ({name})"
    assert make_templates.site_toml() == (TEMPLATES / "site.toml").read_text(encoding="utf-8")


def test_templates_ship_in_the_package():
    # the templates the package uses (the installed package's, or the checkout's folder when the
    # tests import meterfix from the source tree); the wheel itself is checked in test_demo_files
    from meterfix.resources import data_folder

    files = data_folder("templates")
    for name in TEMPLATE_FILES:
        assert (files / name).read_bytes() == (TEMPLATES / name).read_bytes()
    pyproject = tomllib.loads((TEMPLATES.parent / "pyproject.toml").read_text())
    shipped = pyproject["tool"]["setuptools"]["package-data"]["meterfix.templates"]
    assert all(any(Path(n).match(pat) for pat in shipped) for n in TEMPLATE_FILES)


def test_template_command_writes_and_refuses_to_overwrite(tmp_path):
    r = CliRunner().invoke(app, ["template", str(tmp_path / "t")])
    assert r.exit_code == 0, r.output
    for name in TEMPLATE_FILES:
        assert (tmp_path / "t" / name).read_bytes() == (TEMPLATES / name).read_bytes()
    (tmp_path / "t" / "site.toml").write_text("# mine\n")
    r = CliRunner().invoke(app, ["template", str(tmp_path / "t")])
    assert r.exit_code == 2 and "already exists" in r.output and "--overwrite" in r.output
    assert (tmp_path / "t" / "site.toml").read_text() == "# mine\n"  # nothing written at all
    r = CliRunner().invoke(app, ["template", str(tmp_path / "t"), "--overwrite"])
    assert r.exit_code == 0 and (tmp_path / "t" / "site.toml").read_bytes() == (TEMPLATES / "site.toml").read_bytes()


# --- site file ---------------------------------------------------------------------------------
_SETTING_LINE = re.compile(r"^# ((?:[a-z_]+|\"[^\"]+\") = .+|\[[a-z_]+\])$")


def test_site_template_loads_and_comments_every_setting(tmp_path):
    text = (TEMPLATES / "site.toml").read_text(encoding="utf-8")
    raw = load_site_file(TEMPLATES / "site.toml")
    # issue 13 case 17: the blank template carries no live setting, so a month with it is refused until
    # the contract's base conditions are written in (the old assertion expected the demo's live values)
    assert raw == {}
    with pytest.raises(SettingsError, match="no contract base pressure") as e:
        build_settings(TEMPLATES / "site.toml", {})
    assert "--base" in e.value.hint
    assert build_settings(TEMPLATES / "site.toml", {"base": "iso-15c"}).timezone == "UTC"
    for key in TOP_KEYS:
        assert re.search(rf"^(# )?{key} = ", text, re.M), f"{key} has no line in the site template"
        assert re.search(rf"^#   {key}: ", text, re.M), f"{key} is not explained"
    for s in SETTINGS:
        if s.table or s.kind == "mapping":
            assert re.search(rf"^# ({s.name} = |\[{s.name}\])", text, re.M), f"{s.table} {s.name} has no line in the template"
    # the shipped template is the one the settings table makes
    from meterfix.engine.site_template import site_template
    from meterfix.z.registry import method_names

    assert text == site_template(method_names()), "templates/site.toml is stale: run python templates/make_templates.py"
    # every example, uncommented, is a valid setting
    full = "\n".join(m.group(1) if (m := _SETTING_LINE.match(line)) else line for line in text.splitlines()
                     # [flow_meter]: the example is an orifice plate; a calibration belongs to volume meters
                     if not line.startswith(("# error_curve = ", "# meter_factor = ")))
    p = tmp_path / "site_all.toml"
    p.write_text(full, encoding="utf-8")
    data = tomllib.loads(full)
    assert set(data) >= set(TOP_KEYS) | {"uncertainty", "columns", "display_units", "files"}
    s = build_settings(p, {})
    assert s.base_pressure == 101325.0 and s.atmospheric_pressure == 98500.0 and s.price is not None
    assert s.display_units["pressure"] == "bar" and s.columns["P1 (barg)"] == "pressure_gauge"
    parse_uncertainty_settings(s.uncertainty)


# --- filled templates read back ------------------------------------------------------------------
def _fill(template, tmp_path, sheet, rows, name):
    wb = load_workbook(TEMPLATES / template)
    ws = wb[sheet]
    headers = [c.value for c in ws[1]]
    for i, row in enumerate(rows, start=2):
        for j, h in enumerate(headers, start=1):
            if h in row:
                ws.cell(row=i, column=j, value=row[h])
    p = tmp_path / name
    wb.save(p)
    return p, headers


def test_columns_sheet_explains_every_header():
    for template, sheet in (("log.xlsx", "Log"), ("analyses.xlsx", "Analyses"), ("invoice.xlsx", "Invoice")):
        wb = load_workbook(TEMPLATES / template)
        headers = [c.value for c in wb[sheet][1]]
        explained = [c.value for c in wb["Columns"]["A"]]
        assert all(h in explained for h in headers), template
        assert wb[sheet].max_row == 1  # header only: no example rows to delete


def test_filled_log_template_reads_back(tmp_path):
    t0 = dt.datetime(2026, 10, 1, 7, 0)
    rows = [{"Interval end": t0 + dt.timedelta(hours=i), "Line pressure [bar(g)]": 39.5 + 0.1 * i,
             "Line temperature [degC]": 11.0 + i, "Uncorrected volume [m3]": 1150.0 + i,
             "Atmospheric pressure [kPa]": 98.4, "Site corrected volume [m3]": 40000.0 + i, "Status": "ok"}
            for i in range(4)]
    p, _ = _fill("log.xlsx", tmp_path, "Log", rows, "filled_log.xlsx")
    frame, meta = read_log(p, timezone="Europe/Berlin")
    assert len(frame) == 4
    # 07:00 CEST = 05:00 UTC; bar = 1e5 Pa, kPa = 1e3 Pa, degC + 273.15 = K (NIST SP 811)
    assert frame.index[0] == pd.Timestamp("2026-10-01 05:00", tz="UTC")
    assert frame["pressure_gauge"].to_numpy() == pytest.approx([3.95e6, 3.96e6, 3.97e6, 3.98e6])
    assert frame["pressure_atm"].to_numpy() == pytest.approx([98_400.0] * 4)
    assert frame["temperature_line"].to_numpy() == pytest.approx(273.15 + np.array([11.0, 12.0, 13.0, 14.0]))
    assert frame["volume_line"].to_numpy() == pytest.approx([1150.0, 1151.0, 1152.0, 1153.0])
    assert frame["volume_corrected_site"].to_numpy() == pytest.approx([40000.0, 40001.0, 40002.0, 40003.0])


def test_filled_analysis_template_reads_back(tmp_path):
    rows = [{"Effective from": dt.datetime(2026, 10, 1, 6, 0), "methane [mol%]": 93.12, "ethane [mol%]": 3.42,
             "propane [mol%]": 0.71, "nitrogen [mol%]": 1.28, "carbon_dioxide [mol%]": 1.47},
            {"Effective from": dt.datetime(2026, 10, 15, 6, 0), "methane [mol%]": 91.05, "ethane [mol%]": 4.88,
             "propane [mol%]": 1.02, "nitrogen [mol%]": 1.10, "carbon_dioxide [mol%]": 1.95}]
    p, _ = _fill("analyses.xlsx", tmp_path, "Analyses", rows, "filled_analyses.xlsx")
    an = read_analyses(p, timezone="Europe/Berlin")
    assert len(an) == 2
    assert pd.Timestamp(an[1][0]) == pd.Timestamp("2026-10-15 04:00", tz="UTC")  # 06:00 CEST
    gas = an[1][1].as_dict()
    assert gas["methane"] == pytest.approx(0.9105, rel=1e-9)
    assert gas["carbon_dioxide"] == pytest.approx(0.0195, rel=1e-9)


def test_filled_invoice_template_reads_back(tmp_path):
    rows = [{"Period start": dt.date(2026, 10, 1), "Period end": dt.date(2026, 10, 14), "Billed volume [Sm3]": 16.0e6,
             "Base pressure [kPa]": 101.325, "Base temperature [degC]": 0.0, "Heating value [MJ/m3]": 40.9,
             "Billed energy [GJ]": 654_400.0, "Price [EUR/MWh]": 35.0, "Amount [EUR]": 6_362_222.22},
            {"Period start": dt.date(2026, 10, 15), "Period end": dt.date(2026, 10, 31), "Billed volume [Sm3]": 20.1e6,
             "Base pressure [kPa]": 101.325, "Base temperature [degC]": 0.0, "Heating value [MJ/m3]": 41.3,
             "Billed energy [GJ]": 830_130.0, "Price [EUR/MWh]": 35.0, "Amount [EUR]": 8_070_708.33}]
    p, _ = _fill("invoice.xlsx", tmp_path, "Invoice", rows, "filled_invoice.xlsx")
    df, meta = read_invoice(p, timezone="Europe/Berlin")
    assert len(df) == 2 and meta.sheet == "Invoice" and meta.currency == "EUR"
    assert df["volume_billed"].to_numpy() == pytest.approx([16.0e6, 20.1e6])
    assert df["pressure_base"].to_numpy() == pytest.approx([101_325.0] * 2)
    assert df["temperature_base"].to_numpy() == pytest.approx([273.15] * 2)
    assert df["heating_value"].to_numpy() == pytest.approx([40.9e6, 41.3e6])
    assert df["energy_billed"].to_numpy() == pytest.approx([654_400.0e9, 830_130.0e9])
    # 35 EUR/MWh = 35 / 3.6e9 EUR/J (1 MWh = 3.6e9 J exact)
    assert df["price"].to_numpy() == pytest.approx([35 / 3.6e9] * 2)
