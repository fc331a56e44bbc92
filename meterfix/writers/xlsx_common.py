"""Shared pieces of the workbooks meterfix writes: palette, cell styles, display units, and
byte-for-byte repeatable .xlsx files.

Display units are chosen at the edge: the engine hands over SI, and :class:`DisplayUnits`
converts with :mod:`meterfix.units` for the headers (``Line pressure [kPa abs]``) and cells.
"""

from __future__ import annotations

import datetime as _dt
import io
import math
import re
import zipfile

import numpy as np
from openpyxl.styles import Alignment, Border, Font, PatternFill, Side
from openpyxl.utils import get_column_letter

from ..errors import SettingsError, UnitError
from ..units import parse_unit
from .atomic import neutralise_cell

# ---------------------------------------------------------------------------------------------
# palette (our own): slate headers, sand notes, amber caution; chart series colours
SLATE = "27415C"
SLATE_LIGHT = "DCE4EC"
SAND = "F5F1E6"
AMBER_FILL = "FFF1CC"
AMBER_LINE = "B7791F"
GRID = "B8C2CC"
REAL_GAS = "1F7A6D"     # real-gas corrected volume
IDEAL_GAS = "D9822B"    # ideal-gas (Z = 1) volume
PRESSURE = "27415C"
TEMPERATURE = "B03A2E"
ZRATIO = "6A4C93"
INCREASE = "3C8D5A"
DECREASE = "B03A2E"
TOTAL = "5B6770"

HEADER_FONT = Font(bold=True, color="FFFFFF")
HEADER_FILL = PatternFill("solid", fgColor=SLATE)
HEADER_ALIGN = Alignment(wrap_text=True, vertical="center", horizontal="center")
TITLE_FONT = Font(bold=True, size=16, color=SLATE)
SECTION_FONT = Font(bold=True, size=12, color=SLATE)
LABEL_FONT = Font(bold=True)
NOTE_FONT = Font(italic=True, color="4A4A4A")
NOTE_FILL = PatternFill("solid", fgColor=SAND)
CAUTION_FILL = PatternFill("solid", fgColor=AMBER_FILL)
CAUTION_FONT = Font(bold=True, size=11, color="5A3A00")
_thin = Side(style="thin", color=GRID)
CELL_BORDER = Border(left=_thin, right=_thin, top=_thin, bottom=_thin)
_amber = Side(style="medium", color=AMBER_LINE)
CAUTION_BORDER = Border(left=_amber, right=_amber, top=_amber, bottom=_amber)

# number formats
FMT_DATETIME = "yyyy-mm-dd hh:mm"
FMT_DATE = "yyyy-mm-dd"
FMT_INT = "#,##0"
FMT_VOLUME = "#,##0.0"
FMT_VOLUME_FINE = "#,##0.000"
FMT_PCT = "0.000"
FMT_PCT2 = "0.00"
FMT_Z = "0.000000"
FMT_FACTOR = "0.00000"
FMT_PRESSURE = "#,##0.000"
FMT_TEMPERATURE = "0.00"
FMT_ENERGY = "#,##0.000"
FMT_HV = "0.0000"
FMT_GENERAL = "General"

#: fixed timestamp written into the workbook properties (repeatable bytes)
FIXED_TIME = _dt.datetime(2000, 1, 1, 0, 0, 0)

# ---------------------------------------------------------------------------------------------
_LABELS = {"degC": "°C", "degF": "°F", "degR": "°R"}
DEFAULT_DISPLAY = {"pressure": "kPa", "temperature": "degC", "volume": "m3", "energy": "GJ",
                   "heating_value": "MJ/m3", "mass": "kg"}
_MASS = {"kg": 1.0, "t": 1000.0, "lb": 0.45359237}


class DisplayUnits:
    """Display units of a workbook, from the site file's ``[display_units]`` table.

    Keys: ``pressure`` (kPa, bar, MPa, psi ...; always shown absolute), ``temperature`` (degC,
    degF, K), ``volume`` (m3, ft3, Mcf ...), ``energy`` (GJ, MWh, MMBtu ...), ``heating_value``
    (MJ/m3, Btu/ft3 ...), ``mass`` (kg, t, lb).
    """

    def __init__(self, table: dict | None = None):
        want = dict(DEFAULT_DISPLAY)
        for k, v in (table or {}).items():
            if k not in DEFAULT_DISPLAY:
                raise SettingsError(f"display_units: unknown kind '{k}'",
                                    hint="known kinds: " + ", ".join(DEFAULT_DISPLAY))
            want[k] = str(v).strip()
        self.names = want
        self._units = {}
        for kind, name in want.items():
            if kind == "mass":
                if name not in _MASS:
                    raise SettingsError(f"display_units: unknown mass unit '{name}'", hint="use kg, t or lb")
                continue
            try:
                u = parse_unit(name, kind)
            except UnitError as exc:
                raise SettingsError(f"display_units: {exc.message}", hint=exc.hint) from None
            if kind == "pressure" and u.reference == "gauge":
                raise SettingsError("display_units: pressures are shown absolute; give e.g. 'kPa' or 'bar'")
            self._units[kind] = u

    def label(self, kind: str) -> str:
        """Header label of a kind's unit, e.g. 'kPa abs', '°C', 'm3'."""
        name = self.names[kind]
        if kind == "pressure":
            base = re.sub(r"\s*\((a|abs)\)\s*$", "", name)
            if base.lower() in ("psi", "psia"):
                return "psia"
            if base.lower() in ("bara", "kpaa", "mpaa"):
                base = base[:-1]
            return f"{base} abs"
        return _LABELS.get(name, name)

    def convert(self, kind: str, values):
        """SI → display unit (arrays or scalars; NaN stays NaN)."""
        if kind == "mass":
            return np.divide(values, _MASS[self.names["mass"]])
        return self._units[kind].from_si(values)

    def scalar(self, kind: str, value):
        if value is None:
            return None
        v = float(self.convert(kind, float(value)))
        return v if math.isfinite(v) else None


# ---------------------------------------------------------------------------------------------
def cell_value(v):
    """A value a worksheet cell can hold: NaN/inf → empty, numpy → Python, text neutralised."""
    if v is None:
        return None
    if isinstance(v, (np.bool_, bool)):
        return bool(v)
    if isinstance(v, (np.integer,)):
        return int(v)
    if isinstance(v, (float, np.floating)):
        f = float(v)
        return f if math.isfinite(f) else None
    if isinstance(v, str):
        return neutralise_cell(v)
    if hasattr(v, "to_pydatetime"):
        v = v.to_pydatetime()
    if isinstance(v, _dt.datetime) and v.tzinfo is not None:
        return v.replace(tzinfo=None)
    return v


def write_header(ws, row: int, col: int, headers, height: float | None = 32.0) -> None:
    """One styled header row starting at (row, col)."""
    for j, h in enumerate(headers):
        c = ws.cell(row=row, column=col + j, value=neutralise_cell(h))
        c.font = HEADER_FONT
        c.fill = HEADER_FILL
        c.alignment = HEADER_ALIGN
        c.border = CELL_BORDER
    if height:
        ws.row_dimensions[row].height = height


def write_table(ws, row: int, col: int, headers, rows, formats=None, border: bool = True) -> int:
    """Header + rows of values with per-column number formats; returns the next free row."""
    write_header(ws, row, col, headers)
    formats = formats or [None] * len(headers)
    r = row + 1
    for values in rows:
        for j, v in enumerate(values):
            c = ws.cell(row=r, column=col + j, value=cell_value(v))
            if formats[j]:
                c.number_format = formats[j]
            if border:
                c.border = CELL_BORDER
        r += 1
    return r


def section(ws, row: int, text: str, col: int = 1) -> int:
    ws.cell(row=row, column=col, value=text).font = SECTION_FONT
    return row + 1


def note(ws, row: int, text: str, col: int = 1, span: int = 6) -> int:
    """A shaded note spanning ``span`` columns (merged, wrapped)."""
    c = ws.cell(row=row, column=col, value=neutralise_cell(text))
    c.font = NOTE_FONT
    c.fill = NOTE_FILL
    c.alignment = Alignment(wrap_text=True, vertical="top")
    if span > 1:
        ws.merge_cells(start_row=row, start_column=col, end_row=row, end_column=col + span - 1)
    lines = max(1, math.ceil(len(text) / (14 * span)))
    ws.row_dimensions[row].height = 15 * lines + 3
    return row + 1


def wrap_rows(ws, first_row: int, last_row: int, columns) -> None:
    """Wrap long text in ``columns`` (1-based) and give each row the height its lines need.

    Call after the column widths are set. A column is about 1.1 characters per width unit wide.
    """
    for r in range(first_row, last_row + 1):
        lines = 1
        for j in columns:
            c = ws.cell(row=r, column=j)
            if not isinstance(c.value, str):
                continue
            width = ws.column_dimensions[get_column_letter(j)].width or 8.43
            n = max(1, math.ceil(len(c.value) / max(1.0, 1.1 * width)))
            if n > 1:
                c.alignment = Alignment(wrap_text=True, vertical="top")
                lines = max(lines, n)
        if lines > 1:
            ws.row_dimensions[r].height = 15 * lines + 1


def set_widths(ws, widths: dict) -> None:
    for col, w in widths.items():
        key = get_column_letter(col) if isinstance(col, int) else col
        ws.column_dimensions[key].width = w


def print_setup(ws, fit_width: bool = True) -> None:
    """A4 landscape, narrow margins; fit the columns to the page width unless told not to."""
    ws.page_margins.top = ws.page_margins.bottom = 0.5
    ws.page_margins.left = ws.page_margins.right = 0.5
    ws.page_setup.orientation = "landscape"
    ws.page_setup.paperSize = ws.PAPERSIZE_A4
    if fit_width:
        ws.sheet_properties.pageSetUpPr.fitToPage = True
        ws.page_setup.fitToWidth = 1
        ws.page_setup.fitToHeight = 0


# ---------------------------------------------------------------------------------------------
def fix_properties(wb, title: str = "", subject: str = "") -> None:
    """Fixed creator and timestamps, so the same result gives the same file."""
    p = wb.properties
    p.creator = "meterfix"
    p.lastModifiedBy = "meterfix"
    p.title = title
    p.subject = subject
    p.created = FIXED_TIME
    p.modified = FIXED_TIME


_MODIFIED = re.compile(rb"<dcterms:modified([^>]*)>[^<]*</dcterms:modified>")


def repeatable_xlsx_bytes(wb) -> bytes:
    """Save a workbook to bytes with fixed timestamps inside and fixed dates on the zip entries.

    openpyxl stamps the save time into docProps/core.xml and every zip entry; both are replaced
    here so that the same result gives byte-identical files.
    """
    buf = io.BytesIO()
    wb.save(buf)
    src = zipfile.ZipFile(io.BytesIO(buf.getvalue()))
    out = io.BytesIO()
    stamp = FIXED_TIME.strftime("%Y-%m-%dT%H:%M:%SZ").encode()
    with zipfile.ZipFile(out, "w", compression=zipfile.ZIP_DEFLATED) as dst:
        for info in src.infolist():
            data = src.read(info.filename)
            if info.filename == "docProps/core.xml":
                data = _MODIFIED.sub(rb"<dcterms:modified\1>" + stamp + rb"</dcterms:modified>", data)
            zi = zipfile.ZipInfo(info.filename, date_time=(1980, 1, 1, 0, 0, 0))
            zi.compress_type = zipfile.ZIP_DEFLATED
            zi.external_attr = 0o600 << 16
            dst.writestr(zi, data)
    return out.getvalue()
