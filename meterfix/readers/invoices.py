"""Supplier invoices (CSV/XLSX) → one row per billing period, in SI, plus metadata.

The layout is meterfix's own invoice template: optional title or note rows, then one header row
whose cells carry their unit in brackets, then one row per billing period::

    Period start | Period end | Billed volume [Sm3] | Base pressure [kPa] | Base temperature [degC]
    | Heating value [MJ/m3] | Billed energy [GJ] | Price [EUR/MWh] | Amount [EUR]

Quirks handled:

- the header row is found among the first 30 rows (title and note rows above it are kept in the
  metadata); the unit may be written in brackets or parentheses (``Volume (Mcf)``);
- common variations of the header names (``From``/``To``, ``Start date``, ``Service period
  from``/``to``, ``Service start``/``end``, one ``Service period`` column '2026-10-01 - 2026-10-31',
  ``Volume``, ``Quantity``, ``GCV``/``HHV``, ``Temp base``, ``Pressure base``, ``Energy``, ``Rate``,
  ``Total``);
- headers that are a unit themselves: ``Mcf``, ``Ccf``, ``MMBtu``, ``Dth``/``Dekatherms``,
  ``Therms``, ``kWh`` (also ``Billed Therms``);
- a heating value as a bare ``Btu factor`` (or ``Therm factor``): MMBtu per Mcf when every value
  lies in 0.3-2.5, Btu per cubic foot when every value lies in 300-2500 (the two cannot be
  confused), refused otherwise;
- dates are gas days; the end date is inclusive; ISO dates (2026-03-01), spreadsheet dates and
  day.month.year are read; slash dates are read day/month or month/day when some date of the
  file shows which (a part above 12), otherwise refused as ambiguous;
- a base pressure or base temperature column may be missing when the caller passes the value
  (``pressure_base=``, ``temperature_base=``: the settings ``invoice_base``,
  ``invoice_base_pressure``, ``invoice_base_temperature``); a base the invoice states wins; a cell
  may also carry its own unit (``14.73 psia``);
- a row whose first cell starts with "total" is a totals row and is skipped (kept in metadata);
  fully empty rows are skipped;
- billed volumes are at the invoice's base conditions (``Sm3``, ``m3``, ``Mcf``, ``scf`` are all
  read as volumes at those conditions).

Overlapping billing periods, a period that ends before it starts, a missing required column or
an unreadable value raise :class:`meterfix.errors.InputError` naming file, sheet, row and column.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import InputError, UnitError
from ..units import parse_quantity, parse_unit

#: canonical invoice column → (unit kind or None, required, header spellings in lower case)
INVOICE_COLUMNS = {
    "period_start": (None, True, ("period start", "start", "from", "start date", "period from", "billing start",
                                  "date from", "begin", "period begin", "first gas day", "from gas day",
                                  "service period from", "service from", "service start", "service period start",
                                  "service start date", "from date", "start of service", "billing period from",
                                  "billing period start", "bill from", "period start date", "read date from",
                                  "meter read from", "service date from")),
    "period_end": (None, True, ("period end", "end", "to", "end date", "period to", "billing end", "date to",
                                "until", "last gas day", "to gas day", "through", "service period to", "service to",
                                "service end", "service period end", "service end date", "to date", "end of service",
                                "billing period to", "billing period end", "bill to", "period end date",
                                "service through", "read date to", "meter read to", "service date to")),
    "volume_billed": ("volume", True, ("billed volume", "volume", "quantity", "billed quantity", "volume billed",
                                       "base volume", "corrected volume", "standard volume", "billed", "mcf", "ccf",
                                       "mscf", "scf", "sm3", "nm3", "billed mcf", "billed ccf", "volume mcf",
                                       "gas volume", "metered volume")),
    "pressure_base": ("pressure", False, ("base pressure", "pressure base", "reference pressure",
                                          "contract pressure", "pressure basis", "base p", "base press",
                                          "press base", "press. base", "pressure base psia", "psia base")),
    "temperature_base": ("temperature", False, ("base temperature", "temperature base", "reference temperature",
                                                "contract temperature", "temperature basis", "base t", "base temp",
                                                "temp base", "temp. base", "temp basis")),
    "heating_value": ("heating_value", False, ("heating value", "gross heating value", "calorific value",
                                               "gross calorific value", "gcv", "hhv", "hv", "cv", "btu factor",
                                               "btu", "therm factor", "heat factor", "heat content", "btu content",
                                               "heating value factor", "energy factor")),
    "energy_billed": ("energy", False, ("billed energy", "energy", "energy billed", "billed quantity energy",
                                        "mmbtu", "dth", "dekatherms", "dekatherm", "therms", "therm", "kwh", "mwh",
                                        "gj", "billed mmbtu", "billed dth", "billed therms", "billed kwh",
                                        "energy quantity", "quantity mmbtu")),
    "price": ("price", False, ("price", "unit price", "rate", "energy price", "tariff")),
    "amount": ("currency", False, ("amount", "total", "charge", "cost", "amount due", "total amount", "value",
                                   "gas charge", "commodity charge")),
    "period": (None, False, ("service period", "billing period", "period", "bill period", "gas days")),
}

#: headers that are a unit themselves ('MMBtu', 'Dth', 'Mcf'): the unit the column holds
_UNIT_HEADERS = {"mcf": "Mcf", "ccf": "ccf", "mscf": "Mcf", "scf": "scf", "sm3": "m3", "nm3": "m3",
                 "mmbtu": "MMBtu", "dth": "Dth", "dekatherms": "Dth", "dekatherm": "Dth", "therms": "therm",
                 "therm": "therm", "kwh": "kWh", "mwh": "MWh", "gj": "GJ"}
#: a heating value written as a factor without unit ("Btu factor" 1.035): MMBtu per Mcf (= therms per
#: ccf = 1000 Btu/cf) when every value lies in 0.3-2.5, Btu per cubic foot when every value lies in
#: 300-2500 (common practice in gas bills; the two ranges cannot be confused)
_FACTOR_HEADERS = ("btu factor", "btu", "therm factor", "heat factor", "energy factor", "heating value factor",
                   "heat content", "btu content")
_FACTOR_RANGES = (((0.3, 2.5), "MMBtu/Mcf"), ((300.0, 2500.0), "Btu/cf"))
_PERIOD_SPLIT = re.compile(r"^\s*(.+?)\s+(?:-|–|to|through|until)\s+(.+?)\s*$", re.I)

_HEADER_SCAN_ROWS = 30
_UNIT_IN_HEADER = re.compile(r"^(?P<name>.*?)\s*[\[(](?P<unit>[^\])]*)[\])]\s*$")


@dataclass
class InvoiceMetadata:
    """Where an invoice came from and how it was read.

    Attributes
    ----------
    file : str
    sheet : str or None
    sha256 : str
    header_row : int             1-based row of the header, as a spreadsheet shows it
    columns : dict               canonical name → header text as found
    units : dict                 canonical name → unit text as found ('' when none)
    currency : str               from the price or amount header ('' when none)
    notes : list of str          title and note rows above the header
    skipped_rows : list of int   totals rows skipped
    timezone : str               the site clock (gas days are dates in it)
    """

    file: str
    sheet: str | None
    sha256: str
    header_row: int
    columns: dict = field(default_factory=dict)
    units: dict = field(default_factory=dict)
    currency: str = ""
    notes: list = field(default_factory=list)
    skipped_rows: list = field(default_factory=list)
    timezone: str = "UTC"


# ---------------------------------------------------------------------------------------------
def _raw_rows(path: Path):
    """The file as a list of rows of cell values, and the sheet name (None for CSV).

    Read through :func:`meterfix.readers.tables.read_rows`: the shared file checks (magic bytes,
    zip limits, encodings, delimiter sniffing); a workbook's sheet named like 'invoice' or
    'billing' is used, else its first sheet.
    """
    from .tables import read_rows

    return read_rows(path, sheet_words=("invoice", "billing"))


def _split_header(cell) -> tuple[str, str]:
    """'Billed volume [Mcf]' → ('billed volume', 'Mcf')."""
    text = " ".join(str(cell).split())
    m = _UNIT_IN_HEADER.match(text)
    if m:
        return m.group("name").strip().lower().rstrip(":"), m.group("unit").strip()
    return text.strip().lower().rstrip(":"), ""


def _match_header(row) -> dict:
    """canonical name → (column index, header text, unit) for the cells of one row."""
    found = {}
    for j, cell in enumerate(row):
        if cell is None or str(cell).strip() == "":
            continue
        name, unit = _split_header(cell)
        for canon, (_, _, spellings) in INVOICE_COLUMNS.items():
            if canon in found:
                continue
            if name in spellings:
                found[canon] = (j, str(cell).strip(), unit)
                break
    return found


def _find_header(rows, path, sheet):
    best = None
    for i, row in enumerate(rows[:_HEADER_SCAN_ROWS]):
        m = _match_header(row)
        if "period" in m and "period_start" not in m and "period_end" not in m:
            m["period_start"] = m["period_end"] = m["period"]  # one column 'start - end'
        score = sum(1 for c in ("period_start", "period_end", "volume_billed") if c in m)
        if score == 3:
            return i, m
        if score and (best is None or score > best[2]):
            best = (i, m, score)
    if best is not None:
        i, m, _ = best
        missing = [c for c in ("period_start", "period_end", "volume_billed") if c not in m]
        names = {"period_start": "Period start", "period_end": "Period end", "volume_billed": "Billed volume [unit]"}
        raise InputError(
            "missing required invoice column(s): " + ", ".join(names[c] for c in missing),
            file=path, sheet=sheet, row=i + 1,
            hint="the header row needs 'Period start', 'Period end' and 'Billed volume [Sm3]' "
                 "(see templates/invoice.xlsx); found: "
                 + ", ".join(str(c) for c in rows[i] if c is not None))
    raise InputError("no invoice header row found in the first 30 rows", file=path, sheet=sheet,
                     hint="the header row needs 'Period start', 'Period end' and 'Billed volume [Sm3]' "
                          "(see templates/invoice.xlsx)")


_ISO = re.compile(r"^\d{4}-\d{1,2}-\d{1,2}")
_DOTS = re.compile(r"^(\d{1,2})\.(\d{1,2})\.(\d{4})$")
_SLASH = re.compile(r"^(\d{1,2})/(\d{1,2})/(\d{4})$")


def _slash_order(cells) -> str | None:
    """'dmy' or 'mdy' when the file's slash dates show it (a part above 12), else None."""
    dmy = mdy = False
    for c in cells:
        m = _SLASH.match(str(c).strip()) if isinstance(c, str) else None
        if m:
            a, b = int(m.group(1)), int(m.group(2))
            dmy |= a > 12
            mdy |= b > 12
    if dmy and mdy:
        return "mixed"
    return "dmy" if dmy else ("mdy" if mdy else None)


def _date(value, timezone, where, slash_order=None):
    if isinstance(value, _dt.datetime):
        ts = pd.Timestamp(value)
        if ts.tzinfo is not None:
            ts = ts.tz_convert(timezone)
        return ts.date()
    if isinstance(value, _dt.date):
        return value
    text = str(value).strip()
    try:
        if _ISO.match(text):
            ts = pd.Timestamp(text)
            if ts.tzinfo is not None:
                ts = ts.tz_convert(timezone)
            return ts.date()
        m = _DOTS.match(text)
        if m:
            return _dt.date(int(m.group(3)), int(m.group(2)), int(m.group(1)))
        m = _SLASH.match(text)
        if m:
            a, b, y = int(m.group(1)), int(m.group(2)), int(m.group(3))
            if slash_order == "dmy":
                return _dt.date(y, b, a)
            if slash_order == "mdy":
                return _dt.date(y, a, b)
            if a > 12 >= b:
                return _dt.date(y, b, a)
            if b > 12 >= a:
                return _dt.date(y, a, b)
            if a == b:
                return _dt.date(y, a, b)
            raise InputError(f"date '{text}' is ambiguous (day/month or month/day)", **where,
                             hint="write dates as YYYY-MM-DD (e.g. 2026-03-01)")
    except ValueError:
        pass
    raise InputError(f"'{text}' is not a date", **where, hint="write dates as YYYY-MM-DD (e.g. 2026-03-01)")


def _number(value, where) -> float:
    if value is None:
        return np.nan
    if isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(value, bool):
        return float(value)
    text = str(value).strip().replace("\u00a0", "").replace(" ", "")
    if text in ("", "-", "n/a", "na"):
        return np.nan
    if "," in text and "." in text:
        text = text.replace(",", "") if text.rfind(".") > text.rfind(",") else text.replace(".", "").replace(",", ".")
    elif "," in text:
        text = text.replace(",", ".") if re.fullmatch(r"-?\d+,\d{1,2}|-?\d+,\d{4,}", text) else text.replace(",", "")
    text = re.sub(r"^[A-Za-z$€£]{1,3}(?=[-\d.])", "", text)
    try:
        return float(text)
    except ValueError:
        raise InputError(f"'{value}' is not a number", **where, hint="write a plain number; the unit goes in the header") from None


def _price_unit(unit_text: str, where):
    """'EUR/MWh' → (SI scale to currency/J, currency)."""
    m = re.match(r"^\s*([A-Za-z$€£]*)\s*/\s*(\S+)\s*$", unit_text or "")
    if not m:
        raise UnitError(f"price unit '{unit_text}' is not <currency>/<energy unit>", **where,
                        hint="write the header as e.g. 'Price [USD/MMBtu]' or 'Price [EUR/MWh]'")
    try:
        e = parse_unit(m.group(2), "energy")
    except UnitError as exc:
        raise UnitError(exc.message, **where, hint=exc.hint) from None
    return 1.0 / e.scale, m.group(1)


def _unit(kind, unit_text, where):
    try:
        return parse_unit(unit_text, kind)
    except UnitError as exc:
        raise UnitError(exc.message, **where, hint=exc.hint) from None


def _factor_unit(rows, hi, j, header, where):
    """The unit of a heating value written as a bare factor, from the range of its values."""
    vals = []
    for r in rows[hi + 1:]:
        if r is None or j >= len(r) or r[j] is None or str(r[j]).strip() == "":
            continue
        try:
            vals.append(float(str(r[j]).replace(",", ".")))
        except ValueError:
            continue
    for (lo, hi_), unit in _FACTOR_RANGES:
        if vals and all(lo <= v <= hi_ for v in vals):
            return unit
    raise UnitError(f"column '{header}' has no unit and its values fit neither MMBtu/Mcf (0.3-2.5) nor Btu/cf "
                    "(300-2500)", **where, row=hi + 1, column=header,
                    hint=f"write the unit in the header, e.g. '{header} [MMBtu/Mcf]' or '{header} [Btu/cf]'")


def _split_period(value, where):
    """'2026-10-01 - 2026-10-31' → ('2026-10-01', '2026-10-31')."""
    m = _PERIOD_SPLIT.match(str(value)) if isinstance(value, str) else None
    if not m:
        raise InputError(f"'{value}' is not a period 'start - end'", **where,
                         hint="write the period as '2026-10-01 - 2026-10-31', or use two columns "
                              "'Period start' and 'Period end'")
    return m.group(1), m.group(2)


def read_invoice(path, *, timezone: str = "UTC", pressure_base=None, temperature_base=None):
    """Read a supplier invoice in the meterfix template layout.

    Parameters
    ----------
    path : str or Path            a .csv or .xlsx file
    timezone : str                IANA zone of the site clock (dates are gas days in it)
    pressure_base : float, optional [Pa]    the invoice's base pressure when it has no such column
    temperature_base : float, optional [K]  the invoice's base temperature when it has no such column

    Returns
    -------
    (DataFrame, InvoiceMetadata)
        One row per billing period, in file order, columns: ``period_start``, ``period_end``
        (``datetime.date``, gas days, end inclusive), ``volume_billed`` [m3 at the invoice's base],
        ``pressure_base`` [Pa], ``temperature_base`` [K], ``heating_value`` [J/m3 at the invoice's
        base, NaN when not given], ``energy_billed`` [J, NaN when not given], ``price``
        [currency/J, NaN when not given], ``amount`` [currency, NaN when not given], ``row``
        (1-based source row).

    Raises
    ------
    InputError
        Missing required column, unreadable value, period ending before it starts, overlapping
        periods (naming both rows), no base conditions.
    """
    p = Path(path)
    if not p.exists():
        raise InputError("invoice file not found", file=p, hint="check the path given to --invoice")
    rows, sheet = _raw_rows(p)
    hi, cols = _find_header(rows, p, sheet)
    loc = {"file": p, "sheet": sheet}
    meta = InvoiceMetadata(file=p.name, sheet=sheet, sha256=hashlib.sha256(p.read_bytes()).hexdigest(),
                           header_row=hi + 1, timezone=timezone,
                           notes=[" ".join(str(c) for c in r if c is not None) for r in rows[:hi]
                                  if any(c is not None for c in r)])
    cols = _units_from_header_words(rows, hi, cols, loc)
    scales = _column_scales(cols, meta, hi, loc)
    _require_base_conditions(cols, pressure_base, temperature_base, hi, loc)
    combined = cols["period_start"][0] == cols["period_end"][0]
    order = _date_order(rows, hi, cols, combined, loc)
    out = []
    for i in range(hi + 1, len(rows)):
        r = rows[i]
        if r is None or all(c is None or str(c).strip() == "" for c in r):
            continue
        first = next((c for c in r if c is not None and str(c).strip() != ""), None)
        if isinstance(first, str) and first.strip().lower().startswith(("total", "sum")):
            meta.skipped_rows.append(i + 1)
            continue
        rec = _read_period(r, i, cols, scales, combined, order, timezone, loc)
        _complete_and_check_period(rec, i, cols, pressure_base, temperature_base, loc)
        out.append(rec)
    if not out:
        raise InputError("the invoice has no billing period below its header", **loc, row=hi + 1,
                         hint="one row per billing period under the header row")
    df = pd.DataFrame(out, columns=["period_start", "period_end", "volume_billed", "pressure_base", "temperature_base",
                                    "heating_value", "energy_billed", "price", "amount", "row"])
    _check_overlaps(df, p, sheet, cols["period_start"][1])
    return df, meta


def _units_from_header_words(rows, hi, cols, loc) -> dict:
    """A header without a bracketed unit whose words name one ('Volume Mcf'), or a factor column
    whose unit stands in the row below: the unit text of each column."""
    out = dict(cols)
    for canon, (j, header, unit_text) in cols.items():
        if canon == "period":
            continue
        name = _split_header(header)[0]
        if not unit_text and name.replace("billed ", "").replace("quantity ", "") in _UNIT_HEADERS:
            unit_text = _UNIT_HEADERS[name.replace("billed ", "").replace("quantity ", "")]
        elif not unit_text and canon == "heating_value" and name in _FACTOR_HEADERS:
            unit_text = _factor_unit(rows, hi, j, header, loc)
        out[canon] = (j, header, unit_text)
    return out


def _column_scales(cols, meta, hi, loc) -> dict:
    """Each column's unit → SI: a Unit, a float factor (prices, amounts) or None (the unit is in
    each cell); a quantity column without a unit is refused."""
    scales = {}
    for canon, (j, header, unit_text) in cols.items():
        if canon == "period":
            continue
        meta.columns[canon] = header
        meta.units[canon] = unit_text
        kind = INVOICE_COLUMNS[canon][0]
        where = {**loc, "row": hi + 1, "column": header}
        if kind is None or not unit_text:
            if kind in ("volume", "energy") or (kind == "heating_value"):
                example = {'volume': 'Sm3', 'energy': 'GJ', 'heating_value': 'MJ/m3'}[kind]
                raise UnitError(f"column '{header}' has no unit", **where,
                                hint=f"write the unit in brackets, e.g. '{header} [{example}]'")
            if kind == "price":
                raise UnitError(f"column '{header}' has no unit", **where, hint="write e.g. 'Price [USD/MMBtu]'")
            scales[canon] = None
            continue
        if kind == "price":
            scale, cur = _price_unit(unit_text, where)
            scales[canon] = scale
            meta.currency = meta.currency or cur
        elif kind == "currency":
            scales[canon] = 1.0
            meta.currency = meta.currency or unit_text
        else:
            u = _unit(kind, unit_text, where)
            if kind == "pressure" and u.reference == "gauge":
                raise UnitError(f"a base pressure is absolute; '{unit_text}' is a gauge unit", **where,
                                hint="write e.g. 'Base pressure [psia]' or 'Base pressure [kPa]'")
            scales[canon] = u
    return scales


def _require_base_conditions(cols, pressure_base, temperature_base, hi, loc) -> None:
    """The invoice's base: a column of it, or the settings invoice_base_* when it has none."""
    for canon in ("pressure_base", "temperature_base"):
        given = pressure_base if canon == "pressure_base" else temperature_base
        if canon not in cols and given is None:
            label = "Base pressure [kPa]" if canon == "pressure_base" else "Base temperature [degC]"
            opt = "invoice_base_pressure" if canon == "pressure_base" else "invoice_base_temperature"
            raise InputError(f"the invoice has no '{label.split(' [')[0]}' column", **loc, row=hi + 1,
                             hint=f"add a column '{label}', or give the base the invoice's volumes are stated at: "
                                  f"--invoice-base (e.g. 14.73psia-60F) or --{opt.replace('_', '-')}, or "
                                  f"invoice_base / {opt} in the site file")


def _date_order(rows, hi, cols, combined, loc):
    """The day/month order of slash dates, by evidence over every date of the file; a mix is refused."""
    if combined:
        date_cells = []
        for r in rows[hi + 1:]:
            j = cols["period_start"][0]
            if r is not None and j < len(r) and isinstance(r[j], str) and _PERIOD_SPLIT.match(r[j]):
                date_cells += list(_PERIOD_SPLIT.match(r[j]).groups())
    else:
        date_cells = [r[cols[c][0]] for r in rows[hi + 1:] for c in ("period_start", "period_end")
                      if r is not None and cols[c][0] < len(r)]
    order = _slash_order(date_cells)
    if order == "mixed":
        raise InputError("the dates mix day/month/year and month/day/year", **loc, column=cols["period_start"][1],
                         hint="write dates as YYYY-MM-DD (e.g. 2026-03-01)")
    return order


def _read_period(r, i, cols, scales, combined, order, timezone, loc) -> dict:
    """One billing period's row → its values in SI (NaN where a column is absent or empty)."""
    def cell(canon):
        j = cols[canon][0]
        return r[j] if j < len(r) else None

    rec = {"row": i + 1}
    pair = None
    if combined:
        where = {**loc, "row": i + 1, "column": cols["period_start"][1]}
        pair = dict(zip(("period_start", "period_end"), _split_period(cell("period_start"), where)))
    for canon in ("period_start", "period_end"):
        where = {**loc, "row": i + 1, "column": cols[canon][1]}
        v = pair[canon] if pair else cell(canon)
        if v is None or str(v).strip() == "":
            raise InputError("empty date", **where, hint="every billing period needs its start and end gas day")
        rec[canon] = _date(v, timezone, where, order)
    for canon in ("volume_billed", "pressure_base", "temperature_base", "heating_value", "energy_billed",
                  "price", "amount"):
        if canon not in cols:
            rec[canon] = np.nan
            continue
        where = {**loc, "row": i + 1, "column": cols[canon][1]}
        rec[canon] = _cell_value(cell(canon), scales[canon], INVOICE_COLUMNS[canon][0], cols[canon][1], where)
    return rec


def _cell_value(v, s, kind, header, where) -> float:
    """A cell in SI: by its column's unit, or by the unit written in the cell when the header has none."""
    if s is None:
        if v is None or str(v).strip() == "":
            return np.nan
        if isinstance(v, str) and re.search(r"[A-Za-z°]", v):
            try:
                q = parse_quantity(v, kind)
            except UnitError as exc:
                raise UnitError(exc.message, **where, hint=exc.hint) from None
            if kind == "pressure" and q.is_gauge:
                raise UnitError(f"a base pressure is absolute; '{v}' is gauge", **where)
            return q.value
        raise UnitError(f"'{v}' has no unit and the header gives none", **where,
                        hint=f"write the unit in the header, e.g. '{header} [kPa]'")
    x = _number(v, where)
    if isinstance(s, float):
        return x * s
    return float(s.to_si(x)) if np.isfinite(x) else np.nan


def _complete_and_check_period(rec, i, cols, pressure_base, temperature_base, loc) -> None:
    """The billed volume present, the base filled from the settings where the cell is empty, the
    base plausible and the period the right way round; else refused naming the cell."""
    if not np.isfinite(rec["volume_billed"]):
        raise InputError("billed volume is empty", **loc, row=i + 1, column=cols["volume_billed"][1],
                         hint="every billing period needs its billed volume")
    if not np.isfinite(rec["pressure_base"]):
        if pressure_base is None:
            raise InputError("base pressure is empty", **loc, row=i + 1, column=cols["pressure_base"][1],
                             hint="fill it in, or give --invoice-base / --invoice-base-pressure")
        rec["pressure_base"] = float(pressure_base)
    if not np.isfinite(rec["temperature_base"]):
        if temperature_base is None:
            raise InputError("base temperature is empty", **loc, row=i + 1, column=cols["temperature_base"][1],
                             hint="fill it in, or give --invoice-base / --invoice-base-temperature")
        rec["temperature_base"] = float(temperature_base)
    if not (50e3 <= rec["pressure_base"] <= 200e3):
        raise InputError(f"base pressure {rec['pressure_base']:.0f} Pa is not plausible (50-200 kPa absolute)",
                         **loc, row=i + 1, column=cols.get("pressure_base", (0, None))[1], hint="check the unit")
    if not (250.0 <= rec["temperature_base"] <= 310.0):
        raise InputError(f"base temperature {rec['temperature_base']:.2f} K is not plausible", **loc, row=i + 1,
                         column=cols.get("temperature_base", (0, None))[1], hint="check the unit (degC, degF, K)")
    if rec["period_end"] < rec["period_start"]:
        raise InputError(f"period ends ({rec['period_end']}) before it starts ({rec['period_start']})",
                         **loc, row=i + 1, column=cols["period_end"][1], hint="the end gas day is inclusive")


def _check_overlaps(df: pd.DataFrame, path, sheet, column):
    order = sorted(range(len(df)), key=lambda k: (df["period_start"].iat[k], df["period_end"].iat[k]))
    for a, b in zip(order, order[1:]):
        if df["period_start"].iat[b] <= df["period_end"].iat[a]:
            ra, rb = int(df["row"].iat[a]), int(df["row"].iat[b])
            raise InputError(
                f"billing periods overlap: row {ra} ({df['period_start'].iat[a]} to {df['period_end'].iat[a]}) "
                f"and row {rb} ({df['period_start'].iat[b]} to {df['period_end'].iat[b]})",
                file=path, sheet=sheet, row=rb, column=column,
                hint="each gas day belongs to one billing period; end dates are inclusive")
