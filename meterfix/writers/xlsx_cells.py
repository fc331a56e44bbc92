"""The lowest pieces of the workbooks meterfix writes: palette, number formats, fixed time,
column letters, and the text a number format shows (for column widths)."""

from __future__ import annotations

import datetime as _dt
import re

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
def get_column_letter(j: int) -> str:
    """1-based column number → letters (1 → A, 27 → AA)."""
    s = ""
    while j:
        j, r = divmod(j - 1, 26)
        s = chr(65 + r) + s
    return s


def column_index(letters: str) -> int:
    """Letters → 1-based column number."""
    n = 0
    for ch in letters.upper():
        n = n * 26 + ord(ch) - 64
    return n



# # what a value looks like in a cell of a given format (for column widths)
_DEC = re.compile(r"\.(0+)(#*)")


def shown_text(value, fmt) -> str:
    """The text a spreadsheet shows for ``value`` under number format ``fmt`` (close enough for widths)."""
    if value is None:
        return ""
    if isinstance(value, str):
        return value
    if isinstance(value, bool):
        return "TRUE" if value else "FALSE"
    if isinstance(value, _dt.datetime):
        return "2000-01-01 00:00" if fmt in (None, FMT_DATETIME) else "x" * len(fmt or "")
    if isinstance(value, _dt.date):
        return "2000-01-01"
    if not isinstance(value, (int, float)):
        return str(value)
    if not fmt or fmt == FMT_GENERAL:
        return f"{value:.10g}" if isinstance(value, float) else str(value)
    m = _DEC.search(fmt)
    decimals = len(m.group(1)) + len(m.group(2)) if m else 0
    if "." in fmt and not m:
        decimals = len(fmt.split(".", 1)[1].rstrip("#")) or fmt.count("#", fmt.index("."))
    sep = "," if "," in fmt else ""
    return f"{value:{sep}.{decimals}f}"
