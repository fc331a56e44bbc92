"""A big table streamed into an .xlsx as sheet XML, column-vectorised (the interval sheet).

Writing a month of intervals cell by cell through a general-purpose writer costs seconds per
10^5 cells. Here every column is formatted once (numbers with 15 significant digits, the
precision a spreadsheet keeps; times as spreadsheet serial days), rows are joined in chunks and
streamed into the zip entry, so memory stays at one chunk of XML whatever the month's length.

The rest of the workbook (header row, styles, column formats, charts, print setup) is written by
xlsxwriter; :func:`assemble` copies that package and inserts the table's rows into the sheet's
``<sheetData>``. Cells follow SpreadsheetML (ECMA-376 Part 1, §18.3.1.4 ``c``, §18.3.1.73 ``row``):
numbers as ``<v>``, text as inline strings, empty cells left out.
"""

from __future__ import annotations

import math
import re
import zipfile
from dataclasses import dataclass, field

import numpy as np

from . import xlsx_cells as X


def escape(text: str) -> str:
    """XML character data: ``&``, ``<`` and ``>`` as entities, as ``xml.sax.saxutils.escape`` does
    (that module imports ``urllib.request``, 8 ms of every start)."""
    return text.replace("&", "&amp;").replace(">", "&gt;").replace("<", "&lt;")

#: rows per chunk of XML handed to the compressor
CHUNK_ROWS = 4096
#: days from the spreadsheet epoch (1899-12-30) to 1970-01-01
_EPOCH_DAYS = 25569.0


def serial_days(times) -> np.ndarray:
    """Naive (wall-clock) times → spreadsheet serial days (days since 1899-12-30; NaT → NaN)."""
    a = np.asarray(times, dtype="datetime64[ns]")
    out = a.astype(np.int64) / 86_400e9 + _EPOCH_DAYS
    out[np.isnat(a)] = np.nan
    return out


@dataclass
class BulkColumn:
    header: str
    kind: str                  # 'number', 'time' (serial days), 'date' (whole serial days), 'text'
    data: object               # ndarray of float for number/time/date; list of str/None for text
    fmt: str | None = None
    width: float = 8.0         # the least width the layout wants


@dataclass
class BulkTable:
    """Columns of equal length written from ``first_row`` (1-based) down, starting in column 1."""

    columns: list
    first_row: int = 2
    _styles: dict = field(default_factory=dict)

    @property
    def rows(self) -> int:
        if not self.columns:
            return 0
        d = self.columns[0].data
        return len(d)

    @property
    def last_row(self) -> int:
        return self.first_row + self.rows - 1

    # -- layout
    def widths(self) -> dict:
        """Column → width [characters] wide enough for every value as its format shows it."""
        out = {}
        for j, c in enumerate(self.columns, start=1):
            w = c.width
            if c.kind == "text":
                longest = max((len(s) for s in set(c.data) if s), default=0)
                w = max(w, longest + 2.0)
            elif c.kind in ("time", "date"):
                w = max(w, (16 if c.kind == "time" else 10) + 2.0)
            else:
                a = np.asarray(c.data, dtype=float)
                fin = a[np.isfinite(a)]
                if fin.size:
                    for v in (float(fin.max()), float(fin.min())):
                        w = max(w, len(X.shown_text(v, c.fmt)) + 2.0)
            out[j] = w
        return out

    def column_format(self, col: int, formats):
        """The xlsxwriter format of a column's cells (also the column's default format)."""
        c = self.columns[col - 1] if 0 < col <= len(self.columns) else None
        if c is None or not c.fmt:
            return None
        f = formats.get({"num_format": c.fmt})
        self._styles[col] = f
        return f

    def columns_without_width(self, widths: dict) -> list:
        return [j for j in range(1, len(self.columns) + 1) if j not in widths]

    # -- cells
    def _column_cells(self, j: int, c: BulkColumn, style: int | None, lo: int, hi: int) -> list:
        letter = X.get_column_letter(j)
        s = f' s="{style}"' if style else ""
        rows = range(self.first_row + lo, self.first_row + hi)
        if c.kind == "text":
            out = []
            cache = {}
            for r, v in zip(rows, c.data[lo:hi]):
                if not v:
                    out.append("")
                    continue
                t = cache.get(v)
                if t is None:
                    t = cache[v] = f'{s} t="inlineStr"><is><t xml:space="preserve">{escape(v)}</t></is></c>'
                out.append(f'<c r="{letter}{r}"{t}')
            return out
        a = np.asarray(c.data[lo:hi], dtype=float)
        vals = a.tolist()
        head = f'<c r="{letter}'
        mid = f'"{s}><v>'
        if c.kind == "date":
            text = [f"{head}{r}{mid}{int(v)}</v></c>" if v == v else "" for r, v in zip(rows, vals)]
        elif c.kind == "time":
            # 17 significant digits: the time of day survives exactly to the millisecond
            text = [f"{head}{r}{mid}{v!r}</v></c>" if v == v else "" for r, v in zip(rows, vals)]
        elif np.isfinite(a).all():
            text = [f"{head}{r}{mid}{v:.15g}</v></c>" for r, v in zip(rows, vals)]
        else:
            fin = np.isfinite(a).tolist()
            text = [f"{head}{r}{mid}{v:.15g}</v></c>" if ok else "" for r, v, ok in zip(rows, vals, fin)]
        return text

    def xml_chunks(self, styles: dict):
        """Row XML in chunks of CHUNK_ROWS rows. ``styles``: column → xf index (or None)."""
        n = self.rows
        m = len(self.columns)
        for lo in range(0, n, CHUNK_ROWS):
            hi = min(n, lo + CHUNK_ROWS)
            cols = [self._column_cells(j, c, styles.get(j), lo, hi) for j, c in enumerate(self.columns, start=1)]
            rows = range(self.first_row + lo, self.first_row + hi)
            yield "".join([f'<row r="{r}" spans="1:{m}">' + "".join(cells) + "</row>"
                           for r, cells in zip(rows, zip(*cols))])

    def range_values(self, col: int):
        """Values of one column, for a chart's cached data (None where empty)."""
        c = self.columns[col - 1]
        if c.kind == "text":
            return list(c.data)
        a = np.asarray(c.data, dtype=float)
        return [v if math.isfinite(v) else None for v in a.tolist()]


# ---------------------------------------------------------------------------------------------
_SHEET_DATA_END = "</sheetData>"
_DIMENSION = re.compile(r'<dimension ref="([A-Z]+)(\d+)(?::([A-Z]+)(\d+))?"/>')


def _zinfo(name: str, level: int) -> zipfile.ZipInfo:
    zi = zipfile.ZipInfo(name, date_time=(1980, 1, 1, 0, 0, 0))
    zi.compress_type = zipfile.ZIP_DEFLATED
    zi.external_attr = 0o644 << 16
    zi._compresslevel = level            # Python 3.11-3.12
    if hasattr(zi, "compress_level"):
        zi.compress_level = level        # Python 3.13+
    return zi


def assemble(package: bytes, target, bulks: dict, formats) -> None:
    """Copy the xlsxwriter package to ``target``, inserting each bulk table into its sheet.

    ``bulks`` maps the 1-based sheet number (xl/worksheets/sheetN.xml) to its BulkTable. Entries
    keep their order and get a fixed time, so equal content gives equal bytes.
    """
    import io

    src = zipfile.ZipFile(io.BytesIO(package))
    with zipfile.ZipFile(target, "w", compression=zipfile.ZIP_DEFLATED, allowZip64=True) as dst:
        for info in src.infolist():
            data = src.read(info.filename)
            m = re.fullmatch(r"xl/worksheets/sheet(\d+)\.xml", info.filename)
            table = bulks.get(int(m.group(1))) if m else None
            if table is None or table.rows == 0:
                dst.writestr(_zinfo(info.filename, 6), data)
                continue
            xml = data.decode("utf-8")
            styles = {j: (f._get_xf_index() if f is not None else None) for j, f in table._styles.items()}
            last_col = X.get_column_letter(max(1, len(table.columns)))
            xml = _DIMENSION.sub(f'<dimension ref="A1:{last_col}{table.last_row}"/>', xml, count=1)
            if _SHEET_DATA_END in xml:
                head, tail = xml.split(_SHEET_DATA_END, 1)
            else:  # an empty <sheetData/>
                head, tail = xml.replace("<sheetData/>", "<sheetData>", 1).split("<sheetData>", 1)
                head, tail = head + "<sheetData>", tail
            with dst.open(_zinfo(info.filename, 1), "w", force_zip64=True) as fh:
                fh.write(head.encode("utf-8"))
                for chunk in table.xml_chunks(styles):
                    fh.write(chunk.encode("utf-8"))
                fh.write((_SHEET_DATA_END + tail).encode("utf-8"))
