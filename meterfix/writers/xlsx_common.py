"""Shared pieces of the workbooks meterfix writes: palette, cell styles, display units, a small
sheet model written through xlsxwriter, and byte-for-byte repeatable .xlsx files.

Display units are chosen at the edge: the engine hands over SI, and :class:`DisplayUnits`
converts with :mod:`meterfix.units` for the headers (``Line pressure [kPa abs]``) and cells.

Sheets are first laid out in a :class:`Sheet` (cells with style, merged ranges, heights, charts),
then written in row order by :meth:`Book.save`: the layout code may style a cell after writing
it, and the column widths come from what the columns hold, so that no number prints as ``###``
and no label is cut. A big table (the interval sheet) is not held cell by cell: it is streamed
into the package as XML by :mod:`meterfix.writers.xlsx_bulk`.
"""

from __future__ import annotations

import datetime as _dt
import io
import math
import re

import numpy as np

from ..errors import SettingsError, UnitError
from ..units import parse_unit
from .atomic import neutralise_cell
from .xlsx_cells import (AMBER_FILL, AMBER_LINE, DECREASE, FIXED_TIME, FMT_DATE, FMT_DATETIME, FMT_ENERGY,  # noqa: F401
                         FMT_FACTOR, FMT_GENERAL, FMT_HV, FMT_INT, FMT_PCT, FMT_PCT2, FMT_PRESSURE, FMT_TEMPERATURE,
                         FMT_VOLUME, FMT_VOLUME_FINE, FMT_Z, GRID, IDEAL_GAS, INCREASE, PRESSURE, REAL_GAS, SAND,
                         SLATE, SLATE_LIGHT, TEMPERATURE, TOTAL, ZRATIO, column_index, get_column_letter, shown_text)

# ---------------------------------------------------------------------------------------------


def rgb(hex6: str) -> str:
    return "#" + hex6


# styles: dicts of xlsxwriter format properties, merged per cell when the sheet is written
def font(bold=False, italic=False, size=None, color=None) -> dict:
    d = {}
    if bold:
        d["bold"] = True
    if italic:
        d["italic"] = True
    if size:
        d["font_size"] = size
    if color:
        d["font_color"] = rgb(color)
    return d


def fill(color) -> dict:
    return {"pattern": 1, "bg_color": rgb(color)}


def align(horizontal=None, vertical=None, wrap=False) -> dict:
    d = {}
    if horizontal:
        d["align"] = {"centre": "center"}.get(horizontal, horizontal)
    if vertical:
        d["valign"] = {"center": "vcenter", "centre": "vcenter"}.get(vertical, vertical)
    if wrap:
        d["text_wrap"] = True
    return d


def border(style=1, color=GRID) -> dict:
    return {"border": style, "border_color": rgb(color)}


HEADER_FONT = font(bold=True, color="FFFFFF")
HEADER_FILL = fill(SLATE)
HEADER_ALIGN = align("center", "center", wrap=True)
TITLE_FONT = font(bold=True, size=16, color=SLATE)
SECTION_FONT = font(bold=True, size=12, color=SLATE)
LABEL_FONT = font(bold=True)
NOTE_FONT = font(italic=True, color="4A4A4A")
NOTE_FILL = fill(SAND)
CAUTION_FILL = fill(AMBER_FILL)
CAUTION_FONT = font(bold=True, size=11, color="5A3A00")
MONTH_FILL = fill(SLATE_LIGHT)
CELL_BORDER = border(1, GRID)
CAUTION_BORDER = border(2, AMBER_LINE)
TOP = align(vertical="top")
TOP_WRAP = align(vertical="top", wrap=True)

#: widest column we make before wrapping text instead [characters]
MAX_WIDTH = 70.0

# ---------------------------------------------------------------------------------------------
_LABELS = {"degC": "°C", "degF": "°F", "degR": "°R"}
DEFAULT_DISPLAY = {"pressure": "kPa", "temperature": "degC", "volume": "m3", "energy": "GJ",
                   "heating_value": "MJ/m3", "mass": "kg"}
#: a US base (14.65-14.73 psia or 1 atm, 60 degF) is shown in US units unless [display_units] says otherwise
US_DISPLAY = {"pressure": "psia", "temperature": "degF", "volume": "Mcf", "energy": "MMBtu",
              "heating_value": "Btu/ft3", "mass": "lb"}
_MASS = {"kg": 1.0, "t": 1000.0, "lb": 0.45359237}


def is_us_base(pressure_base, temperature_base) -> bool:
    """A base of US contracts: 60 degF and 14.65 to 14.73 psia (common practice)."""
    if pressure_base is None or temperature_base is None:
        return False
    return abs(temperature_base - 288.705556) < 0.01 and 14.60 * 6894.757 <= pressure_base <= 14.75 * 6894.757


class DisplayUnits:
    """Display units of a workbook, from the site file's ``[display_units]`` table.

    Keys: ``pressure`` (kPa, bar, MPa, psi ...; always shown absolute), ``temperature`` (degC,
    degF, K), ``volume`` (m3, ft3, Mcf ...), ``energy`` (GJ, MWh, MMBtu ...), ``heating_value``
    (MJ/m3, Btu/ft3 ...), ``mass`` (kg, t, lb).
    """

    def __init__(self, table: dict | None = None, defaults: dict | None = None):
        want = dict(defaults or DEFAULT_DISPLAY)
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

    @classmethod
    def for_settings(cls, settings) -> "DisplayUnits":
        """The run's display units: its [display_units], the rest in US units for a US base."""
        us = is_us_base(settings.base_pressure, settings.base_temperature)
        return cls(settings.display_units, US_DISPLAY if us else DEFAULT_DISPLAY)

    @classmethod
    def for_base(cls, pressure_base, temperature_base, table: dict | None = None) -> "DisplayUnits":
        """Display units on a base alone (a balance, which has no site file): ``table`` as
        ``[display_units]``, the rest in US units for a US base (as :meth:`for_settings`)."""
        us = is_us_base(pressure_base, temperature_base)
        return cls(table, US_DISPLAY if us else DEFAULT_DISPLAY)

    def exact(self, kind: str, value) -> str:
        """'101.325 kPa abs', '0 °C', '14.73 psia': a stated value (a base condition) in the display
        unit to six significant digits, no trailing zeros [value in SI]."""
        v = self.scalar(kind, value)
        return "-" if v is None else f"{v:.6g} {self.label(kind)}"

    def base_text(self, pressure_base, temperature_base) -> str:
        """'101.325 kPa abs, 0 °C': base conditions as every output writes them [Pa, K]."""
        return f"{self.exact('pressure', pressure_base)}, {self.exact('temperature', temperature_base)}"

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


def range_ref(sheet: str, col_letter: str, first: int, last: int) -> str:
    """An absolute reference to one column's rows, the sheet name quoted: 'Gas days'!$A$2:$A$32."""
    name = sheet.replace("'", "''")
    return f"'{name}'!${col_letter}${first}:${col_letter}${last}"


# ---------------------------------------------------------------------------------------------
class Cell:
    """One cell of a :class:`Sheet`: a value and its style parts (dicts of format properties)."""

    __slots__ = ("value", "font", "fill", "border", "alignment", "number_format")

    def __init__(self, value=None):
        self.value = value
        self.font = self.fill = self.border = self.alignment = None
        self.number_format = None

    def style(self) -> dict:
        d = {}
        for part in (self.font, self.fill, self.border, self.alignment):
            if part:
                d.update(part)
        if self.number_format and self.number_format != FMT_GENERAL:
            d["num_format"] = self.number_format
        return d


class Sheet:
    """A worksheet laid out in memory, written by :meth:`Book.save` (1-based rows and columns)."""

    def __init__(self, book, title: str):
        self.book = book
        self.title = title
        self.cells: dict = {}
        self.merged: list = []        # (r1, c1, r2, c2)
        self.heights: dict = {}
        self.widths: dict = {}        # column → width wanted by the layout (a minimum)
        self.charts: list = []        # (spec, row, col)
        self.wraps: list = []         # (first_row, last_row, columns): wrap long text there
        self.freeze = None            # (row, col) of the first scrolling cell, 1-based
        self.autofilter = None
        self.fit_width = True
        self.repeat_rows = None       # (first, last), 1-based
        self.repeat_cols = None
        self.row_breaks: list = []
        self.bulk = None              # a BulkTable (the interval sheet)

    # -- cells
    def cell(self, row: int, column: int, value=None) -> Cell:
        c = self.cells.get((row, column))
        if c is None:
            c = self.cells[(row, column)] = Cell()
        if value is not None:
            c.value = value
        return c

    def value(self, row: int, column: int):
        c = self.cells.get((row, column))
        return None if c is None else c.value

    @property
    def max_row(self) -> int:
        rows = [r for r, _ in self.cells] + [m[2] for m in self.merged]
        return max(rows) if rows else 0

    def merge(self, r1: int, c1: int, r2: int, c2: int) -> None:
        self.merged.append((r1, c1, r2, c2))

    def height(self, row: int, h: float) -> None:
        self.heights[row] = h

    def set_widths(self, widths: dict) -> None:
        for col, w in widths.items():
            self.widths[column_index(col) if isinstance(col, str) else col] = w

    def add_chart(self, spec, anchor: str) -> None:
        m = re.match(r"([A-Z]+)(\d+)$", anchor)
        self.charts.append((spec, int(m.group(2)), column_index(m.group(1))))

    def wrap_rows(self, first_row: int, last_row: int, columns) -> None:
        """Wrap text in ``columns`` of these rows where it is longer than the column is wide."""
        if last_row >= first_row:
            self.wraps.append((first_row, last_row, list(columns)))


class Book:
    """A workbook laid out as :class:`Sheet` objects, saved through xlsxwriter.

    The document properties carry fixed dates, the zip entries a fixed time, so the same content
    gives the same bytes.
    """

    def __init__(self, title: str = "", subject: str = ""):
        self.sheets: list[Sheet] = []
        self.title = title
        self.subject = subject

    def create_sheet(self, title: str) -> Sheet:
        ws = Sheet(self, title)
        self.sheets.append(ws)
        return ws

    @property
    def sheetnames(self) -> list[str]:
        return [s.title for s in self.sheets]

    def __getitem__(self, title: str) -> Sheet:
        for s in self.sheets:
            if s.title == title:
                return s
        raise KeyError(title)

    def save(self, path) -> None:
        """Write the .xlsx to ``path`` (a file name or a binary file object)."""
        import xlsxwriter

        from .xlsx_bulk import assemble

        buf = io.BytesIO()
        wb = xlsxwriter.Workbook(buf, {"in_memory": True, "strings_to_numbers": False, "strings_to_formulas": False,
                                       "strings_to_urls": False, "nan_inf_to_errors": False})
        wb.set_properties({"title": self.title, "subject": self.subject, "author": "meterfix",
                           "created": FIXED_TIME, "comments": ""})
        wb.set_calc_mode("auto")
        formats = _FormatCache(wb)
        bulks = {}
        for ws in self.sheets:
            xs = wb.add_worksheet(ws.title)
            _write_sheet(wb, xs, ws, formats)
            if ws.bulk is not None:
                bulks[len(wb.worksheets())] = ws.bulk  # xl/worksheets/sheetN.xml
        wb.close()
        assemble(buf.getvalue(), path, bulks, formats)


class _FormatCache:
    def __init__(self, wb):
        self.wb = wb
        self.cache = {}

    def get(self, props: dict):
        if not props:
            return None
        key = tuple(sorted(props.items()))
        f = self.cache.get(key)
        if f is None:
            f = self.cache[key] = self.wb.add_format(dict(props))
        return f


# ---------------------------------------------------------------------------------------------
def _text_width(text: str, props: dict) -> float:
    """Width in character units of one line of text at 11 pt (bold and big fonts are wider)."""
    longest = max((len(line) for line in text.split("\n")), default=0)
    w = longest * (1.12 if props.get("bold") else 1.0) * (props.get("font_size", 11) / 11.0)
    return w + 2.0


def _write_sheet(wb, xs, ws: Sheet, formats: _FormatCache) -> None:
    """Lay one Sheet into an xlsxwriter worksheet: widths, cells, merges, heights, charts, print setup."""
    covered = {}
    for (r1, c1, r2, c2) in ws.merged:
        for r in range(r1, r2 + 1):
            for c in range(c1, c2 + 1):
                covered[(r, c)] = (r1, c1, r2, c2)
    wrap_cells = set()
    for first, last, cols in ws.wraps:
        for r in range(first, last + 1):
            for c in cols:
                wrap_cells.add((r, c))

    # column widths: at least what the layout asks, wide enough for every unwrapped value
    need = dict(ws.widths)
    for (r, c), cell in ws.cells.items():
        if (r, c) in covered or (r, c) in wrap_cells or cell.value is None:
            continue
        props = cell.style()
        if props.get("text_wrap") or props.get("font_size", 11) > 11:
            continue  # wrapped text fits its column; titles and section heads run on over empty cells
        text = shown_text(cell.value, cell.number_format)
        w = _text_width(text, props)
        if isinstance(cell.value, str) and w > MAX_WIDTH:
            # a long text: wrap it in a column as wide as we go, and give the row its lines
            wrap_cells.add((r, c))
            continue
        if w > need.get(c, 0.0):
            need[c] = w
    if ws.bulk is not None:
        for c, w in ws.bulk.widths().items():
            need[c] = max(need.get(c, 0.0), w)
    widths = {c: min(MAX_WIDTH, max(w, 4.0)) for c, w in need.items()}
    for c, w in sorted(widths.items()):
        colfmt = ws.bulk.column_format(c, formats) if ws.bulk is not None else None
        xs.set_column(c - 1, c - 1, w, colfmt)
    if ws.bulk is not None:
        for c in ws.bulk.columns_without_width(widths):
            xs.set_column(c - 1, c - 1, None, ws.bulk.column_format(c, formats))

    def width_of(c1, c2):
        return sum(widths.get(c, 8.43) for c in range(c1, c2 + 1))

    # long text wraps; rows get the height their lines need (merged text over the merged width)
    heights = dict(ws.heights)
    tall_rows = set()
    for (r, c), cell in ws.cells.items():
        if not isinstance(cell.value, str):
            continue
        m = covered.get((r, c))
        if m is not None and (m[0], m[1]) != (r, c):
            continue
        wraps = (r, c) in wrap_cells or (cell.alignment or {}).get("text_wrap")
        span_w = width_of(c, m[3] if m else c)
        props = cell.style()
        if not wraps and _text_width(cell.value, props) <= span_w + 0.5:
            continue
        if not wraps and m is None:
            continue
        cell.alignment = {**(cell.alignment or {}), "text_wrap": True, "valign": "top"}
        per_line = max(1.0, (span_w - 1.0) / ((1.12 if props.get("bold") else 1.0) *
                                               props.get("font_size", 11) / 11.0))
        lines = sum(max(1, math.ceil(len(part) / per_line)) for part in cell.value.split("\n"))
        rows = (m[2] - m[0] + 1) if m else 1
        line_h = 15.0 * props.get("font_size", 11) / 11.0
        want = (lines * line_h + 3.0) / rows
        if lines > 1:
            tall_rows.update(range(r, r + rows))
            if want > heights.get(r, 15.0):
                for rr in range(r, r + rows):
                    heights[rr] = max(heights.get(rr, 15.0), want)
    # a row of several lines reads across from the top of each cell
    for (r, c), cell in ws.cells.items():
        if r in tall_rows and not (cell.alignment or {}).get("valign"):
            cell.alignment = {**(cell.alignment or {}), "valign": "top"}
    for r, h in sorted(heights.items()):
        xs.set_row(r - 1, h)

    # cells, merged ranges first
    done = set()
    for (r1, c1, r2, c2) in ws.merged:
        first = ws.cells.get((r1, c1)) or Cell()
        props = first.style()
        for r in range(r1, r2 + 1):
            for c in range(c1, c2 + 1):
                other = ws.cells.get((r, c))
                if other is not None and other.border:
                    props.update(other.border)
        v = first.value
        xs.merge_range(r1 - 1, c1 - 1, r2 - 1, c2 - 1, "", formats.get(props) or formats.get({"valign": "top"}))
        if v is not None:
            _write_value(xs, r1 - 1, c1 - 1, v, formats.get(props))
        done.update(k for k, m in covered.items() if m == (r1, c1, r2, c2))
    for (r, c) in sorted(ws.cells):
        if (r, c) in done:
            continue
        cell = ws.cells[(r, c)]
        _write_value(xs, r - 1, c - 1, cell.value, formats.get(cell.style()))

    for spec, r, c in ws.charts:
        chart = spec.build(wb, ws.book)
        xs.insert_chart(r - 1, c - 1, chart, {"object_position": 1})
    if ws.freeze is not None:
        xs.freeze_panes(ws.freeze[0] - 1, ws.freeze[1] - 1)
    if ws.autofilter is not None:
        xs.autofilter(*(x - 1 for x in ws.autofilter))
    print_setup(xs, ws, widths)


def _write_value(xs, r, c, v, fmt):
    if v is None:
        if fmt is not None:
            xs.write_blank(r, c, None, fmt)
    elif isinstance(v, bool):
        xs.write_boolean(r, c, v, fmt)
    elif isinstance(v, (int, float)):
        if math.isfinite(v):
            xs.write_number(r, c, v, fmt)
        elif fmt is not None:
            xs.write_blank(r, c, None, fmt)
    elif isinstance(v, (_dt.datetime, _dt.date)):
        xs.write_datetime(r, c, v, fmt)
    else:
        xs.write_string(r, c, str(v), fmt)


def print_setup(xs, ws: Sheet, widths: dict) -> None:
    """A4, narrow margins, landscape where the sheet is wider than a portrait page; the columns fit
    the page width (a sheet too wide to read at one page width goes over a few pages, its first
    columns repeated); title rows repeat on every page; page numbers in the footer."""
    xs.set_paper(9)
    xs.set_margins(left=0.4, right=0.4, top=0.5, bottom=0.6)
    total = sum(widths.values()) if widths else 0.0
    for _, _, c in ws.charts:
        total = max(total, sum(widths.get(j, 8.43) for j in range(1, c)) + 95.0)
    if total > 95.0:
        xs.set_landscape()
    else:
        xs.set_portrait()
    pages_wide = 1
    if not ws.fit_width:
        # about 150 characters are legible across landscape A4; never smaller than ~70 %
        pages_wide = max(1, math.ceil(total / 200.0))
    xs.fit_to_pages(pages_wide, 0)
    if ws.repeat_rows:
        xs.repeat_rows(ws.repeat_rows[0] - 1, ws.repeat_rows[1] - 1)
    if ws.repeat_cols:
        xs.repeat_columns(ws.repeat_cols[0] - 1, ws.repeat_cols[1] - 1)
    if ws.row_breaks:
        xs.set_h_pagebreaks(ws.row_breaks)
    xs.set_footer(f"&L{ws.title.replace('&', '&&')}&RPage &P of &N")
    xs.print_across() if pages_wide > 1 else None


# ---------------------------------------------------------------------------------------------
# layout helpers used by every sheet module
def write_header(ws: Sheet, row: int, col: int, headers, height: float | None = 32.0) -> None:
    """One styled header row starting at (row, col)."""
    for j, h in enumerate(headers):
        c = ws.cell(row, col + j, neutralise_cell(h))
        c.font = HEADER_FONT
        c.fill = HEADER_FILL
        c.alignment = HEADER_ALIGN
        c.border = CELL_BORDER
        if isinstance(h, str) and h:
            # a header wraps at its spaces: its column is at least as wide as its longest word
            longest = max(len(w) for w in h.split())
            ws.widths[col + j] = max(ws.widths.get(col + j, 0.0), longest * 1.12 + 2.0)
    if height:
        ws.height(row, height)


def write_table(ws: Sheet, row: int, col: int, headers, rows, formats=None, border: bool = True) -> int:
    """Header + rows of values with per-column number formats; returns the next free row."""
    write_header(ws, row, col, headers)
    formats = formats or [None] * len(headers)
    r = row + 1
    for values in rows:
        for j, v in enumerate(values):
            c = ws.cell(r, col + j, cell_value(v))
            if formats[j]:
                c.number_format = formats[j]
            if border:
                c.border = CELL_BORDER
        r += 1
    return r


def section(ws: Sheet, row: int, text: str, col: int = 1) -> int:
    ws.cell(row, col, text).font = SECTION_FONT
    return row + 1


def note(ws: Sheet, row: int, text: str, col: int = 1, span: int = 6) -> int:
    """A shaded note spanning ``span`` columns (merged, wrapped; the row gets the height it needs)."""
    c = ws.cell(row, col, neutralise_cell(text))
    c.font = NOTE_FONT
    c.fill = NOTE_FILL
    c.alignment = TOP_WRAP
    if span > 1:
        ws.merge(row, col, row, col + span - 1)
    return row + 1


def wrap_rows(ws: Sheet, first_row: int, last_row: int, columns) -> None:
    ws.wrap_rows(first_row, last_row, columns)


def set_widths(ws: Sheet, widths: dict) -> None:
    ws.set_widths(widths)


def repeatable_xlsx_bytes(wb) -> bytes:
    """An openpyxl workbook (the blank templates) as repeatable bytes: see :mod:`.xlsx_openpyxl`."""
    from .xlsx_openpyxl import repeatable_xlsx_bytes as save

    return save(wb)
