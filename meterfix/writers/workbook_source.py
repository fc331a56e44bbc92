"""The "Source data" sheet of the month workbook: what the log reader read and what it found.

Files read, how the times were read, how each column was understood (header as written, unit as
written, what it was read as, unit inside meterfix), every problem cell or row with the file, sheet,
row and column where it is, the reader's flags, the status texts of the log and the reader's notes.
The content comes from :func:`meterfix.writers.source_record.log_record` (all entries, no limit).
"""

from __future__ import annotations


import pandas as pd
from ..vocabulary import flag_label, flag_meaning
from . import xlsx_common as X
from .source_record import log_record

#: problem kind → (label, what the run did)
PROBLEM_KINDS = (
    ("unreadable_cells", "unreadable cell",
     "a number that cannot be read counts as empty and its interval is flagged 'unreadable cell'; a row whose time "
     "cannot be read is left out (never placed by guess)"),
    ("dropped_rows", "row left out",
     "the row is not used: its time cannot be read, is more than a day off its neighbours' slot, or does not "
     "exist on the local clock (spring change); its interval has no result unless substituted"),
    ("differing_duplicates", "differing duplicate",
     "two rows for the same interval end with different values: the first (file order, then row) is kept and "
     "flagged 'duplicate'"),
)


_WIDTHS = {1: 38, 2: 24, 3: 11, 4: 32, 5: 20, 6: 18, 7: 62}


def _local(text, tz):
    """An ISO UTC time as a naive local datetime for a cell (None stays None)."""
    if not text:
        return None
    ts = pd.Timestamp(text)
    if ts.tzinfo is None:
        ts = ts.tz_localize("UTC")
    return ts.tz_convert(tz).tz_localize(None).to_pydatetime()


def _kv(ws, r, label, value, unit="", fmt=None):
    ws.cell(row=r, column=1, value=label).font = X.LABEL_FONT
    c = ws.cell(row=r, column=2, value=X.cell_value(value))
    c.alignment = X.align("left")
    if fmt and isinstance(c.value, (int, float)) and not isinstance(c.value, bool):
        c.number_format = fmt
    if unit:
        ws.cell(row=r, column=3, value=unit)
    for j in (1, 2, 3):
        ws.cell(row=r, column=j).border = X.CELL_BORDER
    return r + 1


def _top(ws, first, last, ncols):
    """Align every cell of rows first..last to the top (rows with wrapped text read across)."""
    for rr in range(first, last + 1):
        for j in range(1, ncols + 1):
            c = ws.cell(rr, j)
            c.alignment = {**(c.alignment or {}), "valign": "top"}


def _none_row(ws, r, text):
    ws.cell(row=r, column=1, value=text).font = X.NOTE_FONT
    return r + 1


def write_source_data(ws, result) -> dict:
    """Write the sheet; returns the first row of each section by key (for tests and links)."""
    s = result.settings
    tz = s.timezone
    at = {}
    r = X.section(ws, 1, "Source data: what was read from the log and what the reader found")
    rec = log_record(result.log_metadata, limit=None)
    X.set_widths(ws, _WIDTHS)
    if rec is None:
        X.note(ws, r, "This month was handed to meterfix in memory, not read from a log file: there is no record "
                      "of files, columns or unreadable cells.", span=7)
        return at
    r = X.note(ws, r, "Rows are counted from 1 at the top of the file or sheet, as a spreadsheet shows them, title "
                      "rows included. Every value goes into the run in SI units (Pa, K, m3, s); the column table says "
                      f"how each header was understood. Times on this sheet are local ({tz}).", span=7)

    # -- files
    r = X.section(ws, r + 1, "Files read (in the order given)")
    at["files"] = r
    rows = [[f["file"], f["sheet"] or "(text file)", f["header_row"], f["rows"], f["encoding"], f["delimiter"],
             f["decimal"]] for f in rec["files"]]
    r = X.write_table(ws, r, 1, ["File", "Sheet", "Header row", "Data rows", "Encoding", "Delimiter",
                                 "Decimal mark"], rows, [None, None, X.FMT_INT, X.FMT_INT, None, None, None])
    for rr in range(r - len(rows), r):
        for j in (6, 7):
            ws.cell(rr, j).alignment = X.align("center")
        if ws.cell(row=rr, column=6).value == "\t":
            ws.cell(row=rr, column=6).value = "tab"

    # -- times and volume
    r = X.section(ws, r + 1, "How the times and volumes were read")
    at["times"] = r
    r = _kv(ws, r, "Clock of the time stamps", rec["timezone"], "IANA zone (unless a column says UTC)")
    r = _kv(ws, r, "A time stamp marks the interval", rec["interval_label"])
    nominal = rec["nominal_interval_s"]
    r = _kv(ws, r, "Interval length (median spacing)", None if nominal is None else nominal / 60.0, "min", "0.##")
    r = _kv(ws, r, "Volume taken from", rec["volume_from"])
    if rec["register_capacity_m3"] is not None:
        r = _kv(ws, r, "Index register rolls over at", rec["register_capacity_m3"], "m3", X.FMT_VOLUME)
    if rec["opening_index_m3"] is not None:
        r = _kv(ws, r, "Opening index reading (not an interval)", rec["opening_index_m3"], "m3", X.FMT_VOLUME_FINE)
    r = _kv(ws, r, "Identical copies of a row dropped", rec["identical_overlap_rows"], "rows", X.FMT_INT)

    # -- columns
    r = X.section(ws, r + 1, "How each column was understood")
    at["columns"] = r
    rows = []
    for fname, cols in rec["columns"].items():
        for name, c in cols.items():
            rows.append([fname, c["header"], c["unit"] or "", c["meaning"], name, c["unit_inside"] or ""])
        for h in rec["ignored_columns"].get(fname, []):
            rows.append([fname, h, "", "not used", "", ""])
    first = r + 1
    r = X.write_table(ws, r, 1, ["File", "Column as written", "Unit as written", "Read as", "Name inside meterfix",
                                 "Unit inside meterfix"], rows)
    X.wrap_rows(ws, first, r - 1, [1, 2, 4])
    _top(ws, first, r - 1, 6)

    # -- problems
    r = X.section(ws, r + 1, "Problems in the log")
    at["problem_counts"] = r
    rows = [[label, rec[key]["count"], text] for key, label, text in PROBLEM_KINDS]
    first = r + 1
    r = X.write_table(ws, r, 1, ["Kind", "Found", "What the run did"], rows, [None, X.FMT_INT, None])
    for rr in range(first - 1, r):
        ws.merge(rr, 3, rr, 7)
    for rr in range(first, r):
        ws.cell(rr, 3).alignment = X.TOP_WRAP
    _top(ws, first, r - 1, 3)
    listed = [(label, e) for key, label, _ in PROBLEM_KINDS for e in rec[key]["entries"]]
    r += 1
    at["problems"] = r
    if listed:
        rows = [[e["file"], e["sheet"] or "", e["row"], e["column"], e["text"], label, e["problem"]]
                for label, e in listed]
        first = r + 1
        r = X.write_table(ws, r, 1, ["File", "Sheet", "Row", "Column", "Text in the cell", "Kind",
                                     "What was found and done"], rows, [None, None, "0", None, "@", None, None])
        # cells are written as text as they are: '#VALUE!' as written stays text here, not an error cell
        X.wrap_rows(ws, first, r - 1, [1, 4, 5, 7])
        _top(ws, first, r - 1, 7)
        cut = [label for key, label, _ in PROBLEM_KINDS if rec[key]["count"] > rec[key]["listed"]]
        if cut:
            r = X.note(ws, r, "The reader lists at most 1,000 entries of a kind per file; more were found of: "
                              + ", ".join(cut) + ".", span=7)
    else:
        r = _none_row(ws, r, "No unreadable cell, no row left out and no differing duplicate.")

    # -- reader flags
    r = X.section(ws, r + 1, "Rows flagged by the reader")
    at["flags"] = r
    rows = [[flag_label(k), v, flag_meaning(k)] for k, v in rec["reader_flags"].items()]
    first = r + 1
    r = X.write_table(ws, r, 1, ["Flag", "Rows", "Meaning"], rows, [None, X.FMT_INT, None])
    for rr in range(first - 1, r):
        ws.merge(rr, 3, rr, 7)

    # -- status texts
    st = rec["status_texts"]
    if st["count"]:
        r = X.section(ws, r + 1, "Status texts in the log")
        at["status"] = r
        rows = [[e["text"], e["file"], e["row"], e["column"], e["count"], _local(e["interval_end_utc"], tz)]
                for e in st["by_text"]]
        first = r + 1
        r = X.write_table(ws, r, 1, ["Text", "First in file", "First row", "Column", "Rows with it",
                                     "First interval end"], rows, [None, None, "0", None, X.FMT_INT, X.FMT_DATETIME])
        X.wrap_rows(ws, first, r - 1, [1, 2])
        _top(ws, first, r - 1, 6)

    # -- notes
    if rec["notes"]:
        r = X.section(ws, r + 1, "Notes of the reader (title rows of the files and what it decided)")
        at["notes"] = r
        for n in rec["notes"]:
            c = ws.cell(row=r, column=1, value=X.cell_value(n))
            c.alignment = X.TOP_WRAP
            ws.merge(r, 1, r, 7)
            r += 1
    return at
