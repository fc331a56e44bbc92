"""openpyxl styles and helpers for the blank input templates (templates/make_templates.py).

The month workbook is written with xlsxwriter (:mod:`meterfix.writers.xlsx_common`); the
templates are small, built with openpyxl, and saved with fixed timestamps so that the committed
files are exactly what the generator makes.
"""

from __future__ import annotations

import io
import re
import zipfile

from openpyxl.styles import Alignment, Border, Font, PatternFill, Side
from openpyxl.utils import get_column_letter  # noqa: F401  (used by the template generator)

from .atomic import neutralise_cell
from .xlsx_cells import FIXED_TIME, FMT_DATE, FMT_DATETIME, GRID, SAND, SLATE  # noqa: F401

HEADER_FONT = Font(bold=True, color="FFFFFF")
HEADER_FILL = PatternFill("solid", fgColor=SLATE)
HEADER_ALIGN = Alignment(wrap_text=True, vertical="center", horizontal="center")
TITLE_FONT = Font(bold=True, size=16, color=SLATE)
LABEL_FONT = Font(bold=True)
NOTE_FONT = Font(italic=True, color="4A4A4A")
NOTE_FILL = PatternFill("solid", fgColor=SAND)
_thin = Side(style="thin", color=GRID)
CELL_BORDER = Border(left=_thin, right=_thin, top=_thin, bottom=_thin)


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


def fix_properties(wb, title: str = "", subject: str = "") -> None:
    """Fixed creator and timestamps, so the same content gives the same file."""
    p = wb.properties
    p.creator = "meterfix"
    p.lastModifiedBy = "meterfix"
    p.title = title
    p.subject = subject
    p.created = FIXED_TIME
    p.modified = FIXED_TIME


_MODIFIED = re.compile(rb"<dcterms:modified([^>]*)>[^<]*</dcterms:modified>")


def repeatable_xlsx_bytes(wb) -> bytes:
    """Save an openpyxl workbook to bytes with fixed timestamps inside and fixed dates on the zip entries.

    openpyxl stamps the save time into docProps/core.xml and every zip entry; both are replaced
    here so that the same content gives byte-identical files.
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
