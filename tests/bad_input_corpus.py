"""A corpus of bad inputs, each built fresh in a temporary folder, with what the tool must do.

Every case is a function ``case(d: Path) -> Case`` that writes its files into ``d`` and says
which command line to run and what must happen:

- ``exit_code`` 2: a fatal problem. The message names the file (and sheet/row/column where it
  has them) and what to do; no traceback; no output written; inputs unchanged.
- ``exit_code`` 0: a problem confined to rows. The month is kept; the JSON summary counts the
  flag named in ``flag``.

The scenario is invented: meter "Tallow Bridge B2", hourly, about 30 bar(g), Europe/Berlin.
"""

from __future__ import annotations

import io
import zipfile
from dataclasses import dataclass, field
from pathlib import Path

HEADER = ["Interval end", "Line pressure [bar(g)]", "Line temperature [degC]", "Uncorrected volume [m3]"]
GAS = "methane=0.93,ethane=0.04,propane=0.01,nitrogen=0.01,carbon_dioxide=0.01"
BASE_ARGS = ["--gas", GAS, "--base", "normal-0c", "--elevation", "120 m", "--timezone", "Europe/Berlin",
             "--meter", "Tallow Bridge B2", "--quiet"]


@dataclass
class Case:
    """One bad input and the expected behaviour."""

    files: list            # input paths whose bytes must not change
    args: list             # CLI arguments after 'meterfix' (the --out folder is appended by the test)
    exit_code: int = 2
    must_say: list = field(default_factory=list)   # fragments the message must contain (case-insensitive)
    flag: str | tuple | None = None                # for exit 0: a flag kind (or one of several) the summary must count
    command: str = "correct"


def rows(n=24, start_hour=1, p=30.0, t=11.5, v=850.0):
    """n good hourly rows of 2026-03-10 (local time) as lists of strings."""
    out = []
    for i in range(n):
        h = start_hour + i
        day = 10 + h // 24
        out.append([f"2026-03-{day:02d} {h % 24:02d}:00", f"{p + 0.1 * (i % 5):.2f}", f"{t + 0.2 * (i % 3):.2f}",
                    f"{v + 7 * (i % 4):.1f}"])
    return out


def csv_text(header=HEADER, body=None, sep=",") -> str:
    body = rows() if body is None else body
    return "\n".join(sep.join(r) for r in [header] + body) + "\n"


def write(d: Path, name: str, data) -> Path:
    p = d / name
    p.parent.mkdir(parents=True, exist_ok=True)
    if isinstance(data, bytes):
        p.write_bytes(data)
    else:
        p.write_text(data, encoding="utf-8")
    return p


def xlsx_bytes(header=HEADER, body=None, sheet="Log") -> bytes:
    import openpyxl

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = sheet
    ws.append(list(header))
    for r in (rows() if body is None else body):
        ws.append(r)
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def log_case(d, text_or_bytes, name="log.csv", extra_args=(), **kw) -> Case:
    p = write(d, name, text_or_bytes)
    return Case(files=[p], args=[str(p), *BASE_ARGS, *extra_args], **kw)


# --------------------------------------------------------------------------------------- files
def empty_file(d):
    return log_case(d, b"", must_say=["log.csv", "empty"])


def header_only(d):
    return log_case(d, csv_text(body=[]), must_say=["log.csv"])


def title_rows_only(d):
    return log_case(d, "Tallow Bridge B2 export\nno data this month\n", must_say=["log.csv"])


def whitespace_only(d):
    return log_case(d, "\n\n   \n\t\n", must_say=["log.csv"])


def binary_garbage(d):
    import random

    rnd = random.Random(7)
    return log_case(d, bytes(rnd.randrange(256) for _ in range(4096)), must_say=["log.csv"])


def nul_bytes_csv(d):
    return log_case(d, csv_text().replace("\n", "\x00\n").encode(), must_say=["log.csv"])


def corrupt_xlsx(d):
    good = xlsx_bytes()
    return log_case(d, good[: len(good) // 2], name="log.xlsx", must_say=["log.xlsx"])


def csv_renamed_xlsx(d):
    return log_case(d, csv_text(), name="log.xlsx", must_say=["log.xlsx"])


def random_bytes_xlsx(d):
    return log_case(d, b"PK\x03\x04" + bytes(range(256)) * 8, name="log.xlsx", must_say=["log.xlsx"])


def zip_bomb_xlsx(d):
    """A workbook whose sheet XML inflates to 640 MiB (compressed well under 1 MiB): a zip bomb."""
    good = xlsx_bytes()
    src = zipfile.ZipFile(io.BytesIO(good))
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as z:
        for item in src.infolist():
            if item.filename == "xl/worksheets/sheet1.xml":
                with z.open(item.filename, "w", force_zip64=True) as fh:
                    head = b'<?xml version="1.0"?><worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"><sheetData>'
                    fh.write(head)
                    chunk = b" " * (1 << 24)
                    for _ in range(40):  # 640 MiB of blanks
                        fh.write(chunk)
                    fh.write(b"</sheetData></worksheet>")
            else:
                z.writestr(item, src.read(item.filename))
    return log_case(d, buf.getvalue(), name="log.xlsx", must_say=["log.xlsx"])


def xml_entity_bomb_xlsx(d):
    """Billion laughs: a DOCTYPE with nested entities in the sheet XML, used in a header cell."""
    good = xlsx_bytes(header=HEADER + ["Status"], body=[r + ["ok"] for r in rows()])
    src = zipfile.ZipFile(io.BytesIO(good))
    dtd = (b'<!DOCTYPE worksheet [<!ENTITY lol "lol">'
           + b"".join(b'<!ENTITY lol%d "%s">' % (i, (b"&lol%d;" % (i - 1) if i > 1 else b"&lol;") * 10)
                      for i in range(1, 10)) + b"]>")
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as z:
        for item in src.infolist():
            data = src.read(item.filename)
            if item.filename == "xl/worksheets/sheet1.xml":
                head, sep, rest = data.partition(b"?>")
                data = head + sep + dtd + rest.replace(b"<t>Status</t>", b"<t>&lol9;</t>", 1)
            z.writestr(item, data)
    # refused before any entity is expanded
    return log_case(d, buf.getvalue(), name="log.xlsx", must_say=["log.xlsx", "entit"])


def ods_garbage(d):
    return log_case(d, b"PK\x03\x04not really an open document", name="log.ods", must_say=["log.ods"])


def unsupported_extension(d):
    return log_case(d, csv_text(), name="log.pdf", must_say=["log.pdf"])


def workbook_without_log(d):
    return log_case(d, xlsx_bytes(header=["Notes"], body=[["nothing here"]], sheet="Readme"),
                    name="log.xlsx", must_say=["log.xlsx"])


# ------------------------------------------------------------------------------------- columns
def missing_pressure(d):
    body = [[r[0], r[2], r[3]] for r in rows()]
    return log_case(d, csv_text([HEADER[0], HEADER[2], HEADER[3]], body), must_say=["log.csv", "pressure"])


def missing_temperature(d):
    body = [[r[0], r[1], r[3]] for r in rows()]
    return log_case(d, csv_text([HEADER[0], HEADER[1], HEADER[3]], body), must_say=["log.csv", "temperature"])


def missing_volume(d):
    body = [[r[0], r[1], r[2]] for r in rows()]
    return log_case(d, csv_text(HEADER[:3], body), must_say=["log.csv", "volume"])


def missing_time(d):
    body = [r[1:] for r in rows()]
    return log_case(d, csv_text(HEADER[1:], body), must_say=["log.csv"])


def duplicate_columns(d):
    body = [r + [r[1]] for r in rows()]
    return log_case(d, csv_text(HEADER + [HEADER[1]], body), must_say=["log.csv", "pressure"])


def unknown_pressure_unit(d):
    return log_case(d, csv_text([HEADER[0], "Line pressure [furlongs]", HEADER[2], HEADER[3]]),
                    must_say=["log.csv", "furlongs"])


def unknown_temperature_unit(d):
    return log_case(d, csv_text([HEADER[0], HEADER[1], "Line temperature [degQ]", HEADER[3]]),
                    must_say=["log.csv", "degQ"])


def volume_unit_for_pressure(d):
    return log_case(d, csv_text([HEADER[0], "Line pressure [m3]", HEADER[2], HEADER[3]]),
                    must_say=["log.csv", "pressure"])


def bad_column_map(d):
    return log_case(d, csv_text(), extra_args=["--column", "Line pressure [bar(g)]=pressure_sideways"],
                    must_say=["pressure_sideways"])


# --------------------------------------------------------------------------------------- cells
def text_in_numeric_cells(d):
    body = rows()
    body[5][1] = "n/a"
    body[9][2] = "ERR"
    return log_case(d, csv_text(body=body), exit_code=0, flag="unreadable")


def spreadsheet_error_values(d):
    body = rows()
    body[3][1] = "#DIV/0!"
    body[4][3] = "#VALUE!"
    return log_case(d, xlsx_bytes(body=body), name="log.xlsx", exit_code=0, flag=("unreadable", "missing"))


def every_pressure_unreadable(d):
    body = rows()
    for r in body:
        r[1] = "----"
    return log_case(d, csv_text(body=body), must_say=["log.csv", "pressure"])


def negative_absolute_pressure(d):
    body = rows()
    body[6][1] = "-5.0"  # -5 bar(g) is below vacuum: negative absolute pressure
    return log_case(d, csv_text(body=body), exit_code=0, flag="pressure_range")


def below_absolute_zero(d):
    body = rows()
    body[7][2] = "-300"
    return log_case(d, csv_text(body=body), exit_code=0, flag="temperature_range")


# ---------------------------------------------------------------------------------------- time
def unparseable_timestamps(d):
    body = rows()
    for r in body:
        r[0] = "sometime " + r[0][-5:]
    return log_case(d, csv_text(body=body), must_say=["log.csv", "Interval end"])


def one_unparseable_timestamp(d):
    body = rows()
    body[4][0] = "31/02/2026 25:61"
    return log_case(d, csv_text(body=body), exit_code=0, flag="unreadable")


def timestamps_out_of_order(d):
    body = rows()
    body[10], body[11] = body[11], body[10]
    return log_case(d, csv_text(body=body), exit_code=0, flag="time_backwards")


def duplicated_timestamps(d):
    body = rows()
    body.insert(8, list(body[7]))
    body[8][3] = "999.0"
    return log_case(d, csv_text(body=body), exit_code=0, flag="duplicate")


def nonexistent_local_time(d):
    """2026-03-29 02:30 does not exist in Europe/Berlin (clocks go 02:00 → 03:00)."""
    body = []
    for i, h in enumerate(["00:00", "01:00", "02:30", "03:00", "04:00"]):
        body.append([f"2026-03-29 {h}", "30.0", "10.0", "800.0"])
    return log_case(d, csv_text(body=body), exit_code=0, flag="unreadable")


# --------------------------------------------------------------------------------- compositions
def _gas_case(d, text, name="gas.csv", must=("gas.csv",)):
    log = write(d, "log.csv", csv_text())
    g = write(d, name, text)
    args = [str(log), "--composition", str(g)] + [a for a in BASE_ARGS if a not in ("--gas", GAS)]
    return Case(files=[log, g], args=args, must_say=list(must))


def composition_sums_wrong(d):
    return _gas_case(d, "Component,Mole percent [mol%]\nmethane,45\nethane,3\nnitrogen,1\n", must=("gas.csv", "sum"))


def composition_unknown_component(d):
    return _gas_case(d, "Component,Mole percent [mol%]\nmethane,95\nunobtainium,3\nnitrogen,2\n",
                     must=("gas.csv", "unobtainium"))


def composition_negative(d):
    return _gas_case(d, "Component,Mole percent [mol%]\nmethane,99\nethane,-1\nnitrogen,2\n", must=("gas.csv", "ethane"))


def composition_text_value(d):
    return _gas_case(d, "Component,Mole percent [mol%]\nmethane,ninety\nethane,3\nnitrogen,2\n", must=("gas.csv",))


def composition_empty(d):
    return _gas_case(d, "", must=("gas.csv",))


def composition_is_a_log(d):
    return _gas_case(d, csv_text(), must=("gas.csv",))


def gas_option_sums_wrong(d):
    log = write(d, "log.csv", csv_text())
    args = [str(log), "--gas", "methane=0.5,ethane=0.1"] + [a for a in BASE_ARGS if a not in ("--gas", GAS)]
    return Case(files=[log], args=args, must_say=["sum"])


# ------------------------------------------------------------------------------------- settings
def _settings_case(d, extra, must):
    log = write(d, "log.csv", csv_text())
    return Case(files=[log], args=[str(log), *BASE_ARGS, *extra], must_say=list(must))


def bad_base_pressure(d):
    return _settings_case(d, ["--base-pressure", "abc", "--base-temperature", "15 degC"], ["base"])


def unknown_method(d):
    return _settings_case(d, ["--method", "crystal-ball"], ["crystal-ball"])


def unknown_timezone(d):
    return _settings_case(d, ["--timezone", "Mars/Olympus_Mons"], ["Mars/Olympus_Mons"])


def bad_gas_day_start(d):
    return _settings_case(d, ["--gas-day-start", "25:00"], ["gas"])


def gauge_without_atmosphere(d):
    log = write(d, "log.csv", csv_text())
    args = [str(log), "--gas", GAS, "--base", "normal-0c", "--timezone", "Europe/Berlin", "--quiet"]
    return Case(files=[log], args=args, must_say=["atmospheric"])


def malformed_site_file(d):
    log = write(d, "log.csv", csv_text())
    site = write(d, "site.toml", "base_pressure = \"101.325 kPa\nmethod = [[[\n")
    return Case(files=[log, site], args=[str(log), "--site", str(site), "--gas", GAS, "--quiet"], must_say=["site.toml"])


def unknown_site_key(d):
    log = write(d, "log.csv", csv_text())
    site = write(d, "site.toml", 'base = "normal-0c"\nelevation = "120 m"\nflux_capacitor = 1.21\n')
    return Case(files=[log, site], args=[str(log), "--site", str(site), "--gas", GAS, "--quiet"],
                must_say=["flux_capacitor"])


def bad_atmospheric_pressure_unit(d):
    return _settings_case(d, ["--atmospheric-pressure", "12 furlongs"], ["furlongs"])


# -------------------------------------------------------------------------------------- invoices
def _invoice_case(d, text, must):
    log = write(d, "log.csv", csv_text())
    inv = write(d, "invoice.csv", text)
    return Case(files=[log, inv], args=[str(log), *BASE_ARGS, "--invoice", str(inv)], must_say=list(must))


INVOICE_HEADER = "Period start,Period end,Billed volume [Sm3],Base pressure [kPa],Base temperature [degC]\n"


def overlapping_invoice_periods(d):
    return _invoice_case(d, INVOICE_HEADER + "2026-03-10,2026-03-10,20000,101.325,0\n2026-03-10,2026-03-11,1000,101.325,0\n",
                         ["invoice.csv", "overlap"])


def invoice_end_before_start(d):
    return _invoice_case(d, INVOICE_HEADER + "2026-03-11,2026-03-10,20000,101.325,0\n", ["invoice.csv"])


def invoice_missing_volume(d):
    return _invoice_case(d, "Period start,Period end,Base pressure [kPa]\n2026-03-10,2026-03-10,101.325\n",
                         ["invoice.csv", "volume"])


def invoice_ambiguous_dates(d):
    return _invoice_case(d, INVOICE_HEADER + "03/04/2026,04/05/2026,20000,101.325,0\n", ["invoice.csv", "ambiguous"])


# ---------------------------------------------------------------------------------------- paths
def missing_file(d):
    return Case(files=[], args=[str(d / "no_such_log.csv"), *BASE_ARGS], must_say=["no_such_log.csv"])


def missing_file_and_no_settings(d):
    # a mistyped file name is reported as such, not as the missing settings behind it
    return Case(files=[], args=[str(d / "typo_log.csv")], must_say=["typo_log.csv", "not found"])


def missing_site_file(d):
    log = write(d, "log.csv", csv_text())
    return Case(files=[log], args=[str(log), "--site", str(d / "no_site.toml"), "--gas", GAS],
                must_say=["no_site.toml", "not found"])


def folder_as_file(d):
    f = d / "a_folder.csv"
    f.mkdir()
    return Case(files=[], args=[str(f), *BASE_ARGS], must_say=["a_folder.csv"])


def out_is_a_file(d):
    log = write(d, "log.csv", csv_text())
    return Case(files=[log], args=[str(log), *BASE_ARGS], must_say=["--out"], command="correct-out-is-input")


CASES = [
    empty_file, header_only, title_rows_only, whitespace_only, binary_garbage, nul_bytes_csv, corrupt_xlsx,
    csv_renamed_xlsx, random_bytes_xlsx, zip_bomb_xlsx, xml_entity_bomb_xlsx, ods_garbage, unsupported_extension,
    workbook_without_log, missing_pressure, missing_temperature, missing_volume, missing_time, duplicate_columns,
    unknown_pressure_unit, unknown_temperature_unit, volume_unit_for_pressure, bad_column_map,
    text_in_numeric_cells, spreadsheet_error_values, every_pressure_unreadable, negative_absolute_pressure,
    below_absolute_zero, unparseable_timestamps, one_unparseable_timestamp, timestamps_out_of_order,
    duplicated_timestamps, nonexistent_local_time, composition_sums_wrong, composition_unknown_component,
    composition_negative, composition_text_value, composition_empty, composition_is_a_log, gas_option_sums_wrong,
    bad_base_pressure, unknown_method, unknown_timezone, bad_gas_day_start, gauge_without_atmosphere,
    malformed_site_file, unknown_site_key, bad_atmospheric_pressure_unit, overlapping_invoice_periods,
    invoice_end_before_start, invoice_missing_volume, invoice_ambiguous_dates, missing_file, missing_file_and_no_settings, missing_site_file, folder_as_file,
    out_is_a_file,
]


def mistyped_year(d):
    """A mistyped year in one row (2062 for 2026) and one beyond the datetime range (2500): each
    row is left out and recorded (never placed by guess), the next row flagged; exit 0, the two
    intervals without a result."""
    body = rows()
    body[7][0] = body[7][0].replace("2026", "2062")
    body[15][0] = body[15][0].replace("2026", "2500")
    return log_case(d, csv_text(body=body), exit_code=0, flag="unreadable")


CASES.append(mistyped_year)


# ---------------------------------------------------------------------- meter kinds (issue 23)
DP_HEADER = ["Interval end", "Line pressure [bar(g)]", "Line temperature [degC]", "Differential pressure [mbar]"]
ORIFICE_SITE = ('base = "101.325kPa-0C"\nelevation = "120 m"\ntimezone = "Europe/Berlin"\n[flow_meter]\n'
                'kind = "orifice"\n')


def _orifice_case(d, table, must, header=DP_HEADER, body=None, exit_code=2, flag=None):
    log = write(d, "orifice.csv", csv_text(header=header, body=body))
    site = write(d, "site.toml", ORIFICE_SITE + table)
    return Case(files=[log, site], args=[str(log), "--site", str(site), "--gas", GAS, "--quiet"],
                must_say=list(must), exit_code=exit_code, flag=flag)


GOOD_PLATE = 'pipe_diameter = "102.26 mm"\nbore_diameter = "50.8 mm"\n'


def dp_without_unit(d):
    return _orifice_case(d, GOOD_PLATE, ["Differential pressure", "no unit", "[mbar]"], header=DP_HEADER[:3] + [
        "Differential pressure"])


def negative_dp_flagged_no_flow(d):
    body = rows()
    body[5][3] = "-0.4"
    return _orifice_case(d, GOOD_PLATE, [], body=body, exit_code=0, flag="negative_differential_pressure")


def bore_larger_than_pipe(d):
    return _orifice_case(d, 'pipe_diameter = "102.26 mm"\nbore_diameter = "110 mm"\n',
                         ["site.toml", "[flow_meter] bore_diameter", "not smaller than the pipe"])


def beta_outside_the_standard(d):
    return _orifice_case(d, 'pipe_diameter = "102.26 mm"\nbore_diameter = "85 mm"\n',
                         ["[flow_meter] bore_diameter", "beta", "0.75"])


def missing_bore_diameter(d):
    return _orifice_case(d, 'pipe_diameter = "102.26 mm"\n', ["[flow_meter] bore_diameter", "bore_diameter = "])


def _curve_case(d, table, must):
    log = write(d, "log.csv", csv_text())
    site = write(d, "site.toml", 'base = "101.325kPa-0C"\nelevation = "120 m"\ntimezone = "Europe/Berlin"\n'
                                 "[flow_meter]\n" + table)
    return Case(files=[log, site], args=[str(log), "--site", str(site), "--gas", GAS, "--quiet"], must_say=list(must))


def error_curve_unsorted(d):
    return _curve_case(d, "error_curve = [[150, 0.4], [50, 1.2]]\n", ["[flow_meter] error_curve", "increasing"])


def error_curve_duplicated(d):
    return _curve_case(d, "error_curve = [[50, 0.4], [50, 1.2]]\n", ["[flow_meter] error_curve", "twice"])


def error_curve_and_meter_factor(d):
    return _curve_case(d, "error_curve = [[50, 0.4], [150, 1.2]]\nmeter_factor = 1.002\n",
                       ["[flow_meter] meter_factor", "both", "keep one"])


CASES += [dp_without_unit, negative_dp_flagged_no_flow, bore_larger_than_pipe, beta_outside_the_standard,
          missing_bore_diameter, error_curve_unsorted, error_curve_duplicated, error_curve_and_meter_factor]
