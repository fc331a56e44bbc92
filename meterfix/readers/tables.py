"""Any table file → a raw table of cells with the row numbers a spreadsheet program shows.

This is the shared bottom layer of the readers (logs, analyses, invoices). It knows nothing of
meters: it finds the header row, keeps the title and note rows above it, and hands back the cells
below it as text (text files) or as the workbook's own values (numbers, datetimes).

Formats
-------
- **Text** (``.csv``, ``.txt``, ``.tsv``, ``.dat``): encoding ``utf-8`` / ``utf-8-sig`` (BOM),
  UTF-16 with a BOM, else ``cp1252`` (else ``latin-1``); delimiter sniffed among ``,`` ``;`` tab
  and ``|`` from the field counts of the sample's lines (title rows above the header do not
  confuse it); decimal comma or decimal point decided from the data cells; thousands separators
  (``1,234.5``, ``1.234,5``, ``1 234,5``, ``1'234.5``) removed when numbers are read.
- **Workbooks** (``.xlsx``, ``.xlsm``, ``.xls``, ``.ods``) through python-calamine (a Rust reader),
  with openpyxl as a fallback for ``.xlsx``/``.xlsm`` that calamine refuses (openpyxl parses the
  XML through defusedxml when it is installed, which it is: a dependency of meterfix).

Safety
------
- The first bytes of the file must match its extension: a CSV renamed ``.xlsx``, an ``.xls``
  renamed ``.xlsx``, or a workbook renamed ``.csv`` is an :class:`InputError` saying what the file
  really is. An ``.xlsx`` that is an encrypted container is reported as password-protected.
- Zip workbooks (xlsx, xlsm, ods) are checked before any cell is read: at most
  ``Limits.max_members`` members, a declared unpacked total of at most
  ``Limits.max_unpacked_bytes`` (500 MiB by default), no member above 1 MiB packed more densely
  than ``Limits.max_ratio`` : 1; then every member is inflated once in streaming fashion, which
  never produces more than the declared size and fails on a CRC mismatch, so a member lying about
  its size is caught (zip bombs). An XML part that declares a DTD or entities is refused (no
  workbook needs one; it is the shape of the "billion laughs" entity expansion).
- At most ``Limits.max_rows`` rows; binary garbage is "not a text table"; an empty file and a
  file with a header but no data rows are errors naming the file.

Input files are opened read-only and never modified.
"""

from __future__ import annotations

import codecs
import csv
import hashlib
import io
import re
import warnings
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable

import numpy as np
import pandas as pd

from ..errors import InputError
from .filecheck import (DEFAULT_LIMITS, TEXT_SUFFIXES, WORKBOOK_SUFFIXES, ZIP_SUFFIXES,  # noqa: F401
                        Limits, check_zip, sniff_format, utf16_without_bom)

_EMPTY_TEXT = ("", "-", "--", "---", "n/a", "na", "null", "none", "nan", "#n/a")


@dataclass
class RawTable:
    """The cells below the header row of one table.

    Attributes
    ----------
    file : str                  the file as named to the reader (for messages)
    sheet : str or None         sheet name for workbooks
    header_row : int            1-based row of the header, as a spreadsheet shows it
    header : list of str        header cells ('' for an empty header cell)
    cells : DataFrame           one column per header cell (columns 0..n-1), object values:
                                text files give str ('' when empty); workbooks give float, int,
                                bool, datetime, date, time, timedelta or str ('' when empty)
    rows : ndarray of int       1-based source row of each row of ``cells``
    notes : list of str         title and note rows above the header (joined cells)
    kind : str                  'text' or 'workbook'
    encoding, delimiter : str or None   text files only
    decimal : str               '.' or ',' (text files; '.' for workbooks)
    sha256 : str                of the file's bytes
    sheets : list of str        every sheet of a workbook
    """

    file: str
    sheet: str | None
    header_row: int
    header: list
    cells: pd.DataFrame
    rows: np.ndarray
    notes: list = field(default_factory=list)
    kind: str = "text"
    encoding: str | None = None
    delimiter: str | None = None
    decimal: str = "."
    sha256: str = ""
    sheets: list = field(default_factory=list)

    def where(self, row=None, column=None) -> dict:
        """Keyword arguments for an error raised about this table."""
        return {"file": self.file, "sheet": self.sheet, "row": row, "column": column}


# ---------------------------------------------------------------------------------------------
def default_header_score(cells) -> float:
    """Score of a row as a header: its count of non-empty text cells that are not numbers (≥ 2)."""
    n = 0
    for c in cells:
        if isinstance(c, str):
            t = c.strip()
            if t and not _looks_numeric(t):
                n += 1
    return float(n) if n >= 2 else 0.0


_NUMERIC = re.compile(r"^[-+]?[\d.,' \u00a0]*\d[\d.,' \u00a0]*(?:[eE][-+]?\d+)?$")


def _looks_numeric(t: str) -> bool:
    return bool(_NUMERIC.match(t))


def _cell_text(c) -> str:
    if c is None:
        return ""
    if isinstance(c, float) and np.isnan(c):
        return ""
    return str(c).strip()


def _find_header(rows, score: Callable, scan: int) -> tuple[int, float]:
    best_i, best_s = -1, 0.0
    for i, r in enumerate(rows[:scan]):
        s = score(list(r))
        if s > best_s:
            best_i, best_s = i, s
    return best_i, best_s



# ---------------------------------------------------------------------------------------------
def read_table(path, sheet=None, *, header_score: Callable | None = None, prefer=(),
               limits: Limits = DEFAULT_LIMITS) -> RawTable:
    """Read a table file (CSV/TXT or workbook) into a :class:`RawTable`.

    Parameters
    ----------
    path : str or Path
    sheet : str, optional        sheet of a workbook (case-insensitive); default: the sheet named in
                                 ``prefer``, else the one whose header scores best
    header_score : callable, optional   row cells → score; the best-scoring row among the first
                                 ``limits.header_scan_rows`` is the header (default: the row with
                                 the most text cells, at least two)
    prefer : tuple of str        sheet names tried first (case-insensitive)
    limits : Limits

    Raises
    ------
    InputError
        Missing, empty, unsupported, mislabelled, damaged or protected file; no header; no data.
    """
    p = Path(path)
    if not p.exists():
        raise InputError("file not found", file=p, hint="check the path")
    if p.is_dir():
        raise InputError("is a folder, not a file", file=p, hint="give the file inside it")
    with open(p, "rb") as fh:
        return parse_table(fh, name=str(p), suffix=p.suffix, sheet=sheet, header_score=header_score,
                           prefer=prefer, limits=limits)


def parse_table(fileobj, *, name: str = "<table>", suffix: str | None = None, sheet=None,
                header_score: Callable | None = None, prefer=(), limits: Limits = DEFAULT_LIMITS) -> RawTable:
    """Read a table from a binary file-like object (see :func:`read_table`).

    Parameters
    ----------
    fileobj : binary file-like   read from its current position; not closed
    name : str                   file name for messages; its extension gives the format unless
                                 ``suffix`` is given
    suffix : str, optional       e.g. '.csv', '.xlsx'
    """
    data = fileobj.read()
    if isinstance(data, str):
        data = data.encode("utf-8")
    suffix = (suffix if suffix is not None else Path(name).suffix).lower()
    kind = sniff_format(data, suffix, name)
    sha = hashlib.sha256(data).hexdigest()
    score = header_score or default_header_score
    if kind == "text":
        if len(data) > limits.max_text_bytes:
            raise InputError(f"the text file is larger than {limits.max_text_bytes / 2**20:.0f} MiB", file=name,
                             hint="split it into monthly files")
        t = _parse_text(data, name, score, limits)
    else:
        if kind == "zip":
            check_zip(io.BytesIO(data), name, limits)
        t = _parse_workbook(data, name, suffix, sheet, score, prefer, limits)
    t.sha256 = sha
    return t


def read_rows(path, *, sheet_words=(), limits: Limits = DEFAULT_LIMITS) -> tuple[list, str | None]:
    """Every row of a table file as a list of cell values (None for an empty cell).

    For readers that find their own header (the invoice reader). The same file checks as
    :func:`read_table` apply (magic bytes, zip limits, encodings, delimiter sniffing).

    Parameters
    ----------
    path : str or Path
    sheet_words : tuple of str   a workbook's first sheet whose name contains one of these words
                                 (case-insensitive) is read, else its first sheet
    limits : Limits

    Returns
    -------
    (rows, sheet name or None)
    """
    p = Path(path)
    if not p.exists():
        raise InputError("file not found", file=p, hint="check the path")
    data = p.read_bytes()
    name = str(p)
    kind = sniff_format(data, p.suffix, name)
    if kind == "text":
        text, _ = _decode(data, name)
        if not text.strip():
            raise InputError("the file is empty", file=name)
        lines = text.splitlines()
        if len(lines) > limits.max_rows + limits.header_scan_rows:
            raise InputError(f"the file has {len(lines)} lines, more than the limit of {limits.max_rows} rows",
                             file=name)
        delim = _sniff_delimiter(lines[: limits.header_scan_rows + 30])
        rows = list(csv.reader(io.StringIO(text, newline=""), delimiter=delim))
        return [[c if c.strip() != "" else None for c in r] for r in rows], None
    if kind == "zip":
        check_zip(io.BytesIO(data), name, limits)
    try:
        wb = _open_calamine(data, name)
        names = list(wb.sheet_names)

        def rows_of(n):
            return _sheet_rows_calamine(wb, n)[0]
    except _CalamineFailed as exc:
        if p.suffix.lower() not in (".xlsx", ".xlsm"):
            raise InputError(f"cannot read the workbook: {exc}", file=name,
                             hint="open it in the spreadsheet program and save it again, or export a CSV") from None
        _, names, _, rows_of2 = _openpyxl_fallback(data, name, exc)

        def rows_of(n):
            return rows_of2(n)[0]
    if not names:
        raise InputError("the workbook has no sheets", file=name)
    chosen = next((n for n in names if any(w in n.lower() for w in sheet_words)), names[0])
    rows = rows_of(chosen)
    if len(rows) > limits.max_rows + limits.header_scan_rows:
        raise InputError(f"sheet '{chosen}' has {len(rows)} rows, more than the limit of {limits.max_rows}",
                         file=name, sheet=chosen)
    return [[None if (isinstance(c, str) and c.strip() == "") or c is None else c for c in r] for r in rows], chosen


# ---------------------------------------------------------------------------------------------
def _decode(data: bytes, name) -> tuple[str, str]:
    if data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        try:
            return data.decode("utf-16"), "utf-16"
        except UnicodeDecodeError:
            raise InputError("not a text table (damaged UTF-16 text)", file=name,
                             hint="save the export as UTF-8 CSV") from None
    enc16 = utf16_without_bom(data)
    if enc16 is not None:
        try:
            return data.decode(enc16), enc16
        except UnicodeDecodeError:
            raise InputError(f"not a text table (damaged {enc16.upper()} text without a byte-order mark)", file=name,
                             hint="save the export as UTF-8 CSV") from None
    if data.startswith(codecs.BOM_UTF8):
        try:
            return data[3:].decode("utf-8"), "utf-8-sig"
        except UnicodeDecodeError:
            pass
    try:
        return data.decode("utf-8"), "utf-8"
    except UnicodeDecodeError:
        pass
    try:
        return data.decode("cp1252"), "cp1252"
    except UnicodeDecodeError:
        return data.decode("latin-1"), "latin-1"


def _sniff_delimiter(lines: list[str]) -> str:
    """The delimiter whose field count is the same on the most sample lines (and > 1)."""
    best, best_key = ",", (-1, -1)
    for d in (",", ";", "\t", "|"):
        counts = [len(r) for r in csv.reader(lines, delimiter=d)]
        counts = [c for c in counts if c > 1]
        if not counts:
            continue
        values, freq = np.unique(counts, return_counts=True)
        k = int(np.argmax(freq))
        key = (int(freq[k]), int(values[k]))
        if key > best_key:
            best, best_key = d, key
    return best


_COMMA_DEC = re.compile(r"^[-+]?(?:\d{1,3}(?:[.\u00a0' ]\d{3})+|\d+),\d+$")
_POINT_DEC = re.compile(r"^[-+]?(?:\d{1,3}(?:[,\u00a0' ]\d{3})+|\d+)\.\d+$")
#: the same patterns, one cell per line of a joined text; and every line of it (the usual case)
_COMMA_DEC_LINES = re.compile(_COMMA_DEC.pattern, re.MULTILINE)
_POINT_DEC_LINES = re.compile(_POINT_DEC.pattern, re.MULTILINE)
_COMMA_DEC_ALL = re.compile("(?:{0}\n)*{0}".format(_COMMA_DEC.pattern[1:-1]))
_POINT_DEC_ALL = re.compile("(?:{0}\n)*{0}".format(_POINT_DEC.pattern[1:-1]))
#: every line a plain decimal number (ASCII digits, no grouping): each matches one pattern only
_PLAIN_POINT_ALL = re.compile(r"(?a:[-+]?\d+\.\d+(?:\n[-+]?\d+\.\d+)*)")
_PLAIN_COMMA_ALL = re.compile(r"(?a:[-+]?\d+,\d+(?:\n[-+]?\d+,\d+)*)")


def _decimal_of(cells: pd.DataFrame) -> str:
    """',' when more text cells of the first 2000 rows read as decimal-comma numbers than as
    decimal-point numbers, else '.'.

    Each column's text cells are stripped and joined one per line, and the two patterns are
    counted over the joined text in one pass each (the same count as cell by cell: the patterns
    cannot cross a line break; a column whose cells hold line breaks is counted cell by cell).
    """
    sample = cells.iloc[:2000]
    comma = point = 0
    for j in sample.columns:
        col = sample[j].to_numpy(dtype=object)
        texts = [c.strip() for c in col if type(c) is str]
        if not texts:
            continue
        joined = "\n".join(texts)
        if joined.count("\n") != len(texts) - 1:
            comma += sum(1 for t in texts if _COMMA_DEC.match(t))
            point += sum(1 for t in texts if _POINT_DEC.match(t))
            continue
        if _PLAIN_POINT_ALL.fullmatch(joined):
            point += len(texts)
            continue
        if _PLAIN_COMMA_ALL.fullmatch(joined):
            comma += len(texts)
            continue
        if "," in joined:
            comma += len(texts) if _COMMA_DEC_ALL.fullmatch(joined) else len(_COMMA_DEC_LINES.findall(joined))
        if "." in joined:
            point += len(texts) if _POINT_DEC_ALL.fullmatch(joined) else len(_POINT_DEC_LINES.findall(joined))
    return "," if comma > point else "."


def _parse_text(data: bytes, name, score, limits: Limits) -> RawTable:
    text, enc = _decode(data, name)
    if not text.strip():
        raise InputError("the file is empty", file=name, hint="export the file again; it holds no table")
    n_lines = text.count("\n") + 1
    if n_lines > limits.max_rows + limits.header_scan_rows:
        raise InputError(f"the file has {n_lines} lines, more than the limit of {limits.max_rows} rows", file=name,
                         hint="split it into monthly files")
    head_lines = text[:65536].splitlines()[: limits.header_scan_rows + 30]
    delim = _sniff_delimiter(head_lines)
    head_rows = list(csv.reader(head_lines[: limits.header_scan_rows], delimiter=delim))
    hi, s = _find_header(head_rows, score, limits.header_scan_rows)
    if hi < 0:
        raise InputError(f"no header row found in the first {limits.header_scan_rows} rows", file=name,
                         hint="the table needs one header row naming its columns, e.g. 'Interval end', "
                              "'Line pressure [bar(g)]' (see templates/)")
    header = [c.strip() for c in head_rows[hi]]
    while header and header[-1] == "":
        header.pop()
    width = len(header)
    notes = [" ".join(c.strip() for c in r if c.strip()) for r in head_rows[:hi] if any(c.strip() for c in r)]
    # skip the physical lines up to and including the header (csv rows == lines in this part)
    skip = hi + 1
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("error", pd.errors.ParserWarning)  # never drop cells silently
            df = pd.read_csv(io.StringIO(text), sep=delim, header=None, skiprows=skip, names=list(range(width)),
                             dtype=object, keep_default_na=False, na_filter=False, skip_blank_lines=False,
                             engine="c", index_col=False)
        rows = np.arange(skip + 1, skip + 1 + len(df), dtype=np.int64)
    except (pd.errors.ParserError, pd.errors.ParserWarning, ValueError):
        # rows wider than the header or odd quoting: the csv module, slower but forgiving
        recs = list(csv.reader(io.StringIO(text, newline=""), delimiter=delim))[skip:]
        wide = [k for k, r in enumerate(recs) if len(r) > width and any(c.strip() for c in r[width:])]
        if wide:
            notes.append(f"{len(wide)} row(s) have cells beyond the last header column (first: row "
                         f"{skip + 1 + wide[0]}); those cells were not read")
        recs = [(r + [""] * width)[:width] for r in recs]
        df = pd.DataFrame(recs, columns=list(range(width)), dtype=object)
        rows = np.arange(skip + 1, skip + 1 + len(df), dtype=np.int64)
    df = df.astype(object)
    if len(df):
        nonempty = np.zeros(len(df), bool)
        for j in df.columns:
            nonempty |= df[j].to_numpy(dtype=object) != ""
        if not nonempty.all():
            df = df[nonempty]
            rows = rows[nonempty]
    df = df.reset_index(drop=True)
    if not len(df):
        raise InputError("the table has a header but no data rows", file=name, row=hi + 1,
                         hint="fill in rows below the header, or check the period exported")
    if len(df) > limits.max_rows:
        raise InputError(f"the table has {len(df)} rows, more than the limit of {limits.max_rows}", file=name,
                         hint="split it into monthly files")
    return RawTable(file=str(name), sheet=None, header_row=hi + 1, header=header, cells=df, rows=rows,
                    notes=notes, kind="text", encoding=enc, delimiter=delim, decimal=_decimal_of(df))


# ---------------------------------------------------------------------------------------------
def _open_calamine(data: bytes, name):
    from python_calamine import CalamineError, CalamineWorkbook

    try:
        return CalamineWorkbook.from_filelike(io.BytesIO(data))
    except CalamineError as exc:
        text = str(exc)
        if "password" in text.lower() or "encrypt" in text.lower():
            raise InputError("the workbook is password-protected (encrypted)", file=name,
                             hint="open it in the spreadsheet program, remove the password and save a copy") from None
        raise _CalamineFailed(text) from None


class _CalamineFailed(Exception):
    pass


def _sheet_rows_calamine(wb, sheet_name, nrows=None):
    sh = wb.get_sheet_by_name(sheet_name)
    return sh.to_python(skip_empty_area=False, nrows=nrows), sh.height


def _parse_workbook(data: bytes, name, suffix, sheet, score, prefer, limits: Limits) -> RawTable:
    try:
        wb = _open_calamine(data, name)
        names = list(wb.sheet_names)
        visible = [m.name for m in wb.sheets_metadata if str(m.visible).endswith("Visible")
                   and not str(m.visible).endswith("Hidden")] or names

        def rows_of(n, nrows=None):
            return _sheet_rows_calamine(wb, n, nrows)
    except _CalamineFailed as exc:
        if suffix not in (".xlsx", ".xlsm"):
            raise InputError(f"cannot read the workbook: {exc}", file=name,
                             hint="open it in the spreadsheet program and save it again, or export a CSV") from None
        wb, names, visible, rows_of = _openpyxl_fallback(data, name, exc)
    if not names:
        raise InputError("the workbook has no sheets", file=name)
    chosen, sheet_note = _choose_sheet(names, visible, sheet, prefer, rows_of, score, limits, name)
    rows, height = rows_of(chosen)
    if height > limits.max_rows + limits.header_scan_rows:
        raise InputError(f"sheet '{chosen}' has {height} rows, more than the limit of {limits.max_rows}", file=name,
                         sheet=chosen, hint="split it into monthly files")
    if not rows or all(all(_cell_text(c) == "" for c in r) for r in rows[: limits.header_scan_rows]):
        raise InputError("the sheet is empty", file=name, sheet=chosen,
                         hint="put the log on this sheet, or name the sheet that holds it")
    hi, s = _find_header(rows, score, limits.header_scan_rows)
    if hi < 0:
        raise InputError(f"no header row found in the first {limits.header_scan_rows} rows", file=name, sheet=chosen,
                         hint="the table needs one header row naming its columns (see templates/)")
    header = [_cell_text(c) for c in rows[hi]]
    while header and header[-1] == "":
        header.pop()
    width = len(header)
    notes = [" ".join(_cell_text(c) for c in r if _cell_text(c)) for r in rows[:hi] if any(_cell_text(c) for c in r)]
    if sheet_note and len(names) > 1:
        notes.append(sheet_note)
    body = rows[hi + 1:]
    df = pd.DataFrame([(list(r) + [""] * width)[:width] for r in body], columns=list(range(width)), dtype=object)
    rownum = np.arange(hi + 2, hi + 2 + len(df), dtype=np.int64)
    if len(df):
        df = df.where(df.notna(), "")
        nonempty = np.zeros(len(df), bool)
        for j in df.columns:
            col = df[j].to_numpy(dtype=object)
            nonempty |= ~((col == "") | pd.isna(col))
        df = df[nonempty].reset_index(drop=True)
        rownum = rownum[nonempty]
    if not len(df):
        raise InputError("the table has a header but no data rows", file=name, sheet=chosen, row=hi + 1,
                         hint="fill in rows below the header, or check the period exported")
    return RawTable(file=str(name), sheet=chosen, header_row=hi + 1, header=header, cells=df, rows=rownum,
                    notes=notes, kind="workbook", decimal=_decimal_of(df), sheets=names)


def _sheet_note(chosen, names, hidden, why="") -> str:
    others = [n for n in names if n != chosen]
    note = f"sheet '{chosen}' read{why}"
    if others:
        note += "; not read: " + ", ".join(f"'{n}'" + (" (hidden, holds a table)" if n in hidden else "")
                                           for n in others)
    return note


def _choose_sheet(names, visible, sheet, prefer, rows_of, score, limits, name):
    """(sheet to read, note saying which sheets were skipped or None).

    With a header scorer that marks known quantities (a score of 100 or more, as the log reader's
    does), a sheet holding a table is a candidate: one visible candidate is read; two or more
    are refused (which one is the month?), and a table only on a hidden sheet is refused too
    (hidden sheets often hold stale copies); ``sheet`` (``--sheet``) picks one.
    """
    low = {n.lower(): n for n in names}
    if sheet is not None:
        key = str(sheet).strip().lower()
        if key not in low:
            raise InputError(f"no sheet named '{sheet}'", file=name,
                             hint="sheets in this workbook: " + ", ".join(names))
        chosen = low[key]
        return chosen, _sheet_note(chosen, names, [], " (named by --sheet)")
    for want in prefer:
        if want.lower() in low:
            chosen = low[want.lower()]
            return chosen, _sheet_note(chosen, names, [])
    scores = {}
    for n in names:
        rows, _ = rows_of(n, limits.header_scan_rows)
        scores[n] = _find_header(rows, score, limits.header_scan_rows)[1]
    strong = [n for n in names if scores[n] >= 100]
    if strong:
        shown = [n for n in strong if n in visible]
        hidden = [n for n in strong if n not in visible]
        if len(shown) > 1:
            raise InputError("the workbook has more than one sheet holding a table: "
                             + ", ".join(f"'{n}'" for n in shown), file=name,
                             hint="name the one to read with --sheet, e.g. --sheet '" + shown[0] + "' "
                                  "(one run per sheet when each is a month or a meter)")
        if not shown:
            raise InputError(f"the table is on hidden sheet '{hidden[0]}'; hidden sheets are not read unless named",
                             file=name, sheet=hidden[0],
                             hint=f"if it is the month's log, give --sheet '{hidden[0]}'")
        chosen = shown[0]
        return chosen, _sheet_note(chosen, names, hidden)
    best = max(visible, key=lambda n: scores.get(n, 0.0)) if visible else None
    if best is None or scores.get(best, 0.0) <= 0:
        best = visible[0]
    return best, None


def _openpyxl_fallback(data: bytes, name, why):
    import openpyxl

    try:
        wb = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    except Exception as exc:  # noqa: BLE001 - openpyxl raises many types for a bad file
        raise InputError(f"cannot read the workbook ({why}; {exc})", file=name,
                         hint="open it in the spreadsheet program and save it again, or export a CSV") from None
    names = list(wb.sheetnames)
    visible = [ws.title for ws in wb.worksheets if getattr(ws, "sheet_state", "visible") == "visible"] or names

    def rows_of(n, nrows=None):
        ws = wb[n]
        out = []
        for k, r in enumerate(ws.iter_rows(values_only=True)):
            if nrows is not None and k >= nrows:
                break
            out.append(["" if c is None else c for c in r])
        return out, (ws.max_row or len(out))

    return wb, names, visible, rows_of


# ---------------------------------------------------------------------------------------------
def to_numbers(values, decimal: str = ".") -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Cells → floats, vectorized.

    Parameters
    ----------
    values : Series or array of cells (str, numbers, '' for empty)
    decimal : {'.', ','}  the file's decimal mark (text files)

    Returns
    -------
    (values, empty, bad) : float ndarray (NaN where empty or bad), bool ndarray, bool ndarray
        ``empty``: the cell is blank or a missing-value mark ('-', 'n/a', 'null' ...);
        ``bad``: the cell holds something that is not a number.
    """
    cells = np.asarray(values, dtype=object)
    n = len(cells)
    all_str = n > 0 and pd.api.types.infer_dtype(cells, skipna=False) == "string"
    if all_str and decimal != ",":
        # every cell text with a decimal point: one parse of the cells; done if each one reads
        quick = pd.to_numeric(cells, errors="coerce").astype(float)
        if np.isfinite(quick).all():
            return quick, np.zeros(n, bool), np.zeros(n, bool)
    s = pd.Series(cells)
    is_str = np.ones(n, bool) if all_str else (s.map(type).to_numpy() == str)
    out = np.full(n, np.nan)
    bad = np.zeros(n, bool)
    empty = np.zeros(n, bool)
    if (~is_str).any():
        other = s[~is_str]
        num = pd.to_numeric(other.where(other.map(lambda v: not isinstance(v, bool))), errors="coerce").to_numpy(float)
        na = pd.isna(other).to_numpy()
        out[~is_str] = num
        empty[~is_str] = na
        bad[~is_str] = ~na & np.isnan(num)
    if is_str.any():
        idx = np.flatnonzero(is_str)
        st = s[is_str] if not all_str else s
        if decimal == ",":
            plain = ~st.str.contains(".", regex=False).to_numpy()
            fast = np.full(len(st), np.nan)
            if plain.any():
                fast[plain] = pd.to_numeric(st[plain].str.replace(",", ".", regex=False), errors="coerce").to_numpy(float)
        else:
            fast = pd.to_numeric(st, errors="coerce").to_numpy(float)
        out[idx] = fast
        slow = np.isnan(fast)
        if slow.any():
            t = st[slow].str.strip()
            emp = t.str.lower().isin(_EMPTY_TEXT).to_numpy()
            cleaned = t.str.replace(r"[\s\u00a0\u202f']", "", regex=True)
            sep = "." if decimal == "," else ","
            if decimal == ",":
                grouped = cleaned.str.fullmatch(r"[-+]?\d{1,3}(?:\.\d{3})+(?:,\d*)?")
                cleaned = cleaned.where(~grouped, cleaned.str.replace(".", "", regex=False))
                cleaned = cleaned.str.replace(",", ".", regex=False)
            else:
                # a comma is a thousands separator only in groups of three digits; '2,5' stays bad
                grouped = cleaned.str.fullmatch(r"[-+]?\d{1,3}(?:,\d{3})+(?:\.\d*)?")
                cleaned = cleaned.where(~grouped, cleaned.str.replace(",", "", regex=False))
            # '30.125' among decimal-comma values (or '30,125' among decimal-point values) reads as
            # 30125 only if grouping is the column's own format: else it contradicts the column
            # and is unreadable, never rescaled
            bare = grouped & ~t.str.contains(decimal, regex=False)
            if bare.any():
                texts = st.str.strip()
                texts = texts[texts != ""]
                if float(texts.str.contains(sep, regex=False).mean()) < 0.5:
                    cleaned = cleaned.where(~bare, None)
            v = pd.to_numeric(cleaned.where(~emp, None), errors="coerce").to_numpy(float)
            j = idx[slow]
            out[j] = v
            empty[j] = emp
            bad[j] = ~emp & np.isnan(v)
    inf = np.isinf(out)
    if inf.any():  # 'inf', '-inf', '1e999': not a reading
        out[inf] = np.nan
        bad |= inf
    return out, empty, bad
