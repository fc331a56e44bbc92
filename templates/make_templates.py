"""Generate the blank templates shipped in meterfix.templates (run from the repository root):

    python templates/make_templates.py

Writes log.xlsx, analyses.xlsx, invoice.xlsx and site.toml beside this script. The output is
deterministic (fixed workbook timestamps and zip dates): running it again gives the same bytes,
so the committed files only change when this script does. Headers follow the file conventions
the readers read (meterfix/readers: logs.py, analyses.py, invoices.py); setting names and their
descriptions come from the settings table, meterfix.engine.settings_table.SETTINGS.
"""

from __future__ import annotations

import sys
from pathlib import Path

from openpyxl import Workbook
from openpyxl.styles import Alignment

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))

from meterfix.engine.site_template import site_template  # noqa: E402
from meterfix.gas.components import NAMES  # noqa: E402
from meterfix.writers import xlsx_openpyxl as X  # noqa: E402
from meterfix.z.registry import method_names  # noqa: E402

# (header, required, unit choices, what it holds, example)
LOG_COLUMNS = [
    ("Interval end", "yes", "local clock time of the site",
     "Clock time at the END of the interval (06:00-07:00 is written 07:00), as text '2026-10-01 07:00' or a "
     "spreadsheet date-time. The time zone is the site file's 'timezone'; during the autumn clock change the "
     "repeated hour is told apart by the order of the rows.", "2026-10-01 07:00"),
    ("Line pressure [bar(g)]", "yes", "gauge: bar(g), kPa(g), psig; absolute: bar(a), kPa(a), psia, MPa(a)",
     "Static pressure at the meter during the interval. A gauge reading needs the atmospheric pressure: the "
     "'Atmospheric pressure' column, or atmospheric_pressure or elevation in the site file.", "39.52"),
    ("Line temperature [degC]", "yes", "degC, degF, K", "Gas temperature at the meter during the interval.", "11.8"),
    ("Uncorrected volume [m3]", "yes (or one of the two below)", "m3, ft3, Mcf, L",
     "Volume through the meter in the interval at line conditions (not corrected). Instead of it a log may "
     "carry 'Meter index [m3]' (the cumulative register reading) or 'Flow rate [m3/h]'.", "1150.4"),
    ("Differential pressure [mbar]", "orifice meters (instead of a volume)", "mbar, kPa, Pa, inH2O (60 degF)",
     "Orifice plates: the interval's mean differential pressure across the plate. The site file's [flow_meter] "
     "table says kind = \"orifice\" and gives the pipe and bore diameters. Averaging dp instead of its square root "
     "overstates the flow: the month's summary states how much.", "125.4"),
    ("Mass [kg]", "Coriolis meters (instead of a volume)", "kg, t, lb; or 'Mass flow [kg/h]' (kg/h, t/h, lb/h)",
     "Coriolis meters: the mass through the meter in the interval ([flow_meter] kind = \"coriolis\"). The base "
     "volume is the mass over the analysis' base density.", "2875.2"),
    ("Speed of sound [m/s]", "no", "m/s, ft/s",
     "Ultrasonic meters: the meter's mean speed of sound; compared with the analysis' at line pressure and "
     "temperature (AGA8 DETAIL or GERG-2008), intervals beyond speed_of_sound_threshold (0.2 %) are counted.",
     "412.6"),
    ("Atmospheric pressure [kPa]", "no", "kPa, hPa, mbar, psia (absolute)",
     "Atmospheric pressure logged at the site; used for gauge pressure when the site file allows "
     "(use_barometer, default true). Empty cells fall back to the fixed value or the elevation.", "98.47"),
    ("Site corrected volume [m3]", "no", "m3, ft3, Mcf at the corrector's own base",
     "The site corrector's own corrected volume for the interval, at ITS base conditions. meterfix compares it "
     "with its own correction and names the likely misconfiguration (ideal gas, fixed Z, wrong base ...).",
     "40125.7"),
    ("Status", "no", "text", "Free text from the logger (alarms, notes). Kept with the data, not used in the "
                             "calculation.", "ok"),
]

ANALYSIS_COLUMNS = [
    ("Effective from", "yes", "local clock time of the site",
     "From when the analysis applies; it holds until the next row's time. The earliest row also covers any "
     "interval before it.", "2026-10-15 06:00"),
] + [(f"{n} [mol%]", "methane: yes; others as measured", "mol%, or [-] for mole fractions, [ppm]",
      f"Amount of {n.replace('_', '-')} in the gas. Leave a component empty or 0 when it was not measured; the "
      "analysis must sum to 100 % within 2 %.", "93.12" if n == "methane" else "0.0")
     for n in NAMES]

INVOICE_COLUMNS = [
    ("Period start", "yes", "date (gas day)", "First gas day of the billing period.", "2026-10-01"),
    ("Period end", "yes", "date (gas day), inclusive", "Last gas day of the billing period.", "2026-10-31"),
    ("Billed volume [Sm3]", "yes", "Sm3, Nm3, m3, scf, Mcf (at the invoice's base)",
     "Volume billed, at the base conditions stated in the next two columns.", "36095283"),
    ("Base pressure [kPa]", "no, if given to the reader", "kPa, psia, bar (absolute)",
     "Base pressure of the billed volume; a cell may carry its own unit ('14.73 psia').", "101.325"),
    ("Base temperature [degC]", "no, if given to the reader", "degC, degF, K", "Base temperature of the billed "
                                                                              "volume.", "0"),
    ("Heating value [MJ/m3]", "no", "MJ/m3, kWh/m3, Btu/scf (gross, at the billed base)",
     "Gross heating value the supplier applied.", "40.9"),
    ("Billed energy [GJ]", "no", "GJ, MWh, kWh, MMBtu, therm", "Energy billed for the period.", "1476297"),
    ("Price [EUR/MWh]", "no", "currency per energy unit", "Energy price of the period.", "35.00"),
    ("Amount [EUR]", "no", "currency", "Amount billed for the period.", "14352888.55"),
]


def _columns_sheet(ws, title: str, intro: str, columns) -> None:
    ws.cell(row=1, column=1, value=title).font = X.TITLE_FONT
    c = ws.cell(row=2, column=1, value=intro)
    c.alignment = Alignment(wrap_text=True, vertical="top")
    c.font = X.NOTE_FONT
    c.fill = X.NOTE_FILL
    ws.merge_cells("A2:E2")
    ws.row_dimensions[2].height = 62
    X.write_header(ws, 4, 1, ["Column header (write it exactly)", "Required", "Units accepted", "What it holds",
                              "Example value"])
    for i, (h, req, units, what, ex) in enumerate(columns, start=5):
        for j, v in enumerate((h, req, units, what, ex), start=1):
            cell = ws.cell(row=i, column=j, value=v)
            cell.alignment = Alignment(wrap_text=True, vertical="top")
            cell.border = X.CELL_BORDER
        ws.cell(row=i, column=1).font = X.LABEL_FONT
        ws.row_dimensions[i].height = 15 * max(1, -(-len(what) // 62)) + 3
    X.set_widths(ws, {1: 30, 2: 16, 3: 30, 4: 70, 5: 18})
    ws.freeze_panes = "A5"


def _data_sheet(ws, columns, formats) -> None:
    X.write_header(ws, 1, 1, [c[0] for c in columns], height=36)
    for j, (h, *_rest) in enumerate(columns, start=1):
        letter = X.get_column_letter(j)
        ws.column_dimensions[letter].width = max(14, min(30, len(h) + 2))
        fmt = formats.get(h)
        if fmt:
            ws.column_dimensions[letter].number_format = fmt
    ws.freeze_panes = "A2"


def _finish(wb) -> None:
    for ws in wb.worksheets:
        X.print_setup(ws)
        ws.print_area = f"A1:{X.get_column_letter(ws.max_column)}{max(ws.max_row, 40)}"


def log_workbook() -> Workbook:
    wb = Workbook()
    ws = wb.active
    ws.title = "Log"
    _data_sheet(ws, LOG_COLUMNS, {"Interval end": X.FMT_DATETIME})
    _columns_sheet(wb.create_sheet("Columns"), "meterfix log: the columns",
                   "Fill the sheet 'Log': one row per interval, below the header row; keep the headers as they are "
                   "or change only the unit in brackets to one of the units accepted. Optional columns may be "
                   "deleted. Save as .xlsx (or export the Log sheet as CSV). meterfix reads the sheet named 'Log'.",
                   LOG_COLUMNS)
    _finish(wb)
    X.fix_properties(wb, title="meterfix log template")
    return wb


def analyses_workbook() -> Workbook:
    wb = Workbook()
    ws = wb.active
    ws.title = "Analyses"
    _data_sheet(ws, ANALYSIS_COLUMNS, {"Effective from": X.FMT_DATETIME})
    _columns_sheet(wb.create_sheet("Columns"), "meterfix gas analyses: the columns",
                   "Fill the sheet 'Analyses': one row per gas analysis, in time order, with the time it takes effect "
                   "and the amount of each component. Component columns not measured may be deleted. A single "
                   "analysis may instead be given as two columns 'Component' and 'Mole percent [mol%]'.",
                   ANALYSIS_COLUMNS)
    _finish(wb)
    X.fix_properties(wb, title="meterfix gas analysis template")
    return wb


def invoice_workbook() -> Workbook:
    wb = Workbook()
    ws = wb.active
    ws.title = "Invoice"
    _data_sheet(ws, INVOICE_COLUMNS, {"Period start": X.FMT_DATE, "Period end": X.FMT_DATE})
    _columns_sheet(wb.create_sheet("Columns"), "meterfix invoice: the columns",
                   "Copy the supplier's invoice into the sheet 'Invoice': one row per billing period. Dates are gas "
                   "days; the end date is inclusive. Change the unit in brackets to the invoice's own. A row whose "
                   "first cell starts with 'Total' is skipped.", INVOICE_COLUMNS)
    _finish(wb)
    X.fix_properties(wb, title="meterfix invoice template")
    return wb


def site_toml() -> str:
    """The commented site file, made from the settings table (meterfix.engine.site_template)."""
    return site_template(method_names())


def main() -> None:
    for name, make in (("log.xlsx", log_workbook), ("analyses.xlsx", analyses_workbook),
                       ("invoice.xlsx", invoice_workbook)):
        (HERE / name).write_bytes(X.repeatable_xlsx_bytes(make()))
    (HERE / "site.toml").write_text(site_toml(), encoding="utf-8", newline="\n")


if __name__ == "__main__":
    main()
