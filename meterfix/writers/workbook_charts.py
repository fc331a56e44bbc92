"""Native charts of the month workbook (openpyxl.chart), pointing at the data sheets' cells.

- line pressure and temperature over the month (temperature on a secondary axis);
- Zb/Zf over the month;
- daily corrected volume, real gas beside ideal gas (clustered columns);
- daily ideal-gas error [%];
- the invoice attribution as a waterfall: a stacked column chart whose first series, the
  invisible base, lifts each visible bar to where the previous step ended;
- the uncertainty budget shares; the corrector ratio against the best explanation.

When the interval table does not fit a worksheet the time-series charts plot gas-day means.
"""

from __future__ import annotations

import math

from openpyxl.chart import BarChart, Reference, ScatterChart, Series
from openpyxl.chart.shapes import GraphicalProperties
from openpyxl.drawing.line import LineProperties
from openpyxl.utils import column_index_from_string
from openpyxl.utils.datetime import to_excel

from . import xlsx_common as X

WIDTH_CM = 25.0
HEIGHT_CM = 9.0


def _ref(ws, col_letter, first, last):
    c = column_index_from_string(col_letter)
    return Reference(ws, min_col=c, max_col=c, min_row=first, max_row=last)


def _axes_visible(chart):
    # openpyxl 3.1 marks axes deleted unless told otherwise; spreadsheets then hide them
    for ax in (chart.x_axis, chart.y_axis):
        ax.delete = False


def _line_series(ws, block, xcol, ycol, title, colour, width_emu=19050):
    s = Series(_ref(ws, ycol, block.first_row, block.last_row), _ref(ws, xcol, block.first_row, block.last_row),
               title=title)
    s.marker.symbol = "none"
    s.smooth = False
    s.graphicalProperties.line.solidFill = colour
    s.graphicalProperties.line.width = width_emu
    return s


def _time_chart(title, y_title, x_title, span=None, y_format="General"):
    """A scatter chart with lines over time; ``span`` = (first, last) datetime of the x axis."""
    ch = ScatterChart()
    ch.title = title
    ch.style = 2
    ch.y_axis.title = y_title
    if x_title:
        ch.x_axis.title = x_title
    ch.x_axis.number_format = "dd mmm"
    ch.x_axis.majorGridlines = None
    ch.x_axis.axPos = "b"
    ch.y_axis.number_format = y_format
    if span is not None:
        lo, hi = (to_excel(v) for v in span)
        ch.x_axis.scaling.min = math.floor(lo)
        ch.x_axis.scaling.max = math.ceil(hi)
        ch.x_axis.majorUnit = 7 if hi - lo > 20 else 1
    ch.width, ch.height = WIDTH_CM, HEIGHT_CM
    ch.legend.position = "b"
    _axes_visible(ch)
    return ch


def pressure_temperature_chart(data_ws, block, du, *, daily=False, span=None):
    """Line pressure (left axis) and temperature (right axis) over the month."""
    xcol = block.columns["local"] if not daily else block.columns["Gas day"]
    pcol = block.columns["pressure"] if not daily else block.columns[f"Mean line pressure [{du.label('pressure')}]"]
    tcol = block.columns["temperature"] if not daily else block.columns[f"Mean line temperature [{du.label('temperature')}]"]
    ch = _time_chart("Line pressure and temperature" + (" (gas-day means)" if daily else ""), f"Line pressure [{du.label('pressure')}]",
                     None, span, "#,##0")
    ch.series.append(_line_series(data_ws, block, xcol, pcol, "Line pressure", X.PRESSURE))
    t = ScatterChart()
    t.series.append(_line_series(data_ws, block, xcol, tcol, "Line temperature", X.TEMPERATURE))
    t.y_axis.axId = 200
    t.y_axis.title = f"Line temperature [{du.label('temperature')}]"
    t.y_axis.crosses = "max"
    t.y_axis.axPos = "r"
    t.y_axis.majorGridlines = None
    t.y_axis.number_format = "0"
    t.y_axis.delete = False
    t.x_axis = ch.x_axis
    ch.y_axis.crosses = "min"
    ch += t
    return ch


def z_ratio_chart(data_ws, block, *, daily=False, span=None):
    """Zb/Zf (= Fpv²) over the month."""
    xcol = block.columns["local"] if not daily else block.columns["Gas day"]
    ycol = block.columns["factor_z"] if not daily else block.columns["Zb/Zf, volume-weighted [-]"]
    ch = _time_chart("Zb/Zf over the month" + (" (gas-day volume-weighted)" if daily else ""),
                     "Zb/Zf [-]", None, span, "0.000")
    ch.series.append(_line_series(data_ws, block, xcol, ycol, "Zb/Zf", X.ZRATIO))
    ch.legend = None
    return ch


def _bar_chart(title, y_title, x_title="Gas day"):
    ch = BarChart()
    ch.type = "col"
    ch.style = 2
    ch.title = title
    ch.y_axis.title = y_title
    ch.x_axis.title = x_title
    ch.x_axis.number_format = "dd"
    ch.x_axis.tickLblPos = "low"
    ch.width, ch.height = WIDTH_CM, HEIGHT_CM
    ch.legend.position = "b"
    _axes_visible(ch)
    return ch


def _colour(series, colour):
    series.graphicalProperties = GraphicalProperties(solidFill=colour)
    series.graphicalProperties.line = LineProperties(solidFill=colour)


def daily_volume_chart(gd_ws, block, du, x_title="Gas day"):
    """Daily corrected volume, real gas beside ideal gas."""
    vl = du.label("volume")
    ch = _bar_chart("Corrected volume by gas day, real gas and Z = 1", f"Volume [{vl} at base]", x_title)
    ch.y_axis.number_format = "#,##0"
    ch.grouping = "clustered"
    for key, colour in ((f"Corrected volume, real gas [{vl} at base]", X.REAL_GAS),
                        (f"Corrected volume, ideal gas Z=1 [{vl} at base]", X.IDEAL_GAS)):
        col = column_index_from_string(block.columns[key])
        ch.add_data(Reference(gd_ws, min_col=col, min_row=block.first_row - 1, max_row=block.last_row), titles_from_data=True)
        _colour(ch.series[-1], colour)
    ch.set_categories(_ref(gd_ws, block.columns["Gas day"], block.first_row, block.last_row))
    ch.gapWidth = 60
    return ch


def daily_error_chart(gd_ws, block, values=(), x_title="Gas day"):
    """Daily ideal-gas error [%]; the value axis always includes zero."""
    ch = _bar_chart("Ideal-gas error by gas day", "Ideal-gas error [%]", x_title)
    ch.y_axis.number_format = "0.0"
    vals = [v for v in values if v is not None and math.isfinite(v)]
    if vals and max(vals) <= 0:
        ch.y_axis.scaling.max = 0
    elif vals and min(vals) >= 0:
        ch.y_axis.scaling.min = 0
    col = column_index_from_string(block.columns["Ideal-gas error [%]"])
    ch.add_data(Reference(gd_ws, min_col=col, min_row=block.first_row - 1, max_row=block.last_row), titles_from_data=True)
    _colour(ch.series[-1], X.IDEAL_GAS)
    ch.set_categories(_ref(gd_ws, block.columns["Gas day"], block.first_row, block.last_row))
    ch.legend = None
    ch.gapWidth = 40
    return ch


# ---------------------------------------------------------------------------------------------
def waterfall_parts(labels, kinds, values):
    """Columns of a waterfall drawn as stacked columns with an invisible base.

    Parameters
    ----------
    labels : list of str
    kinds : list of str        'start', 'step' or 'end' per bar
    values : list of float     the start and end levels, and each step's change

    Returns
    -------
    dict of lists: base (invisible), total, up, up2, down, down2 — per bar. Stacked column
    charts stack positive and negative values separately from zero in series order, so a bar
    that crosses zero is split into a positive and a negative part of the same colour.
    """
    out = {k: [] for k in ("base", "total", "up", "up2", "down", "down2")}
    level = 0.0
    for kind, v in zip(kinds, values):
        row = dict.fromkeys(out, 0.0)
        if kind in ("start", "end"):
            row["total"] = v
            level = v if kind == "start" else level
        else:
            lo, hi = sorted((level, level + v))
            a, b = ("up", "up2") if v >= 0 else ("down", "down2")
            if lo >= 0:
                row["base"], row[a] = lo, hi - lo
            elif hi <= 0:
                row["base"], row[a] = hi, lo - hi
            else:
                row[a], row[b] = hi, lo
            level += v
        for k in out:
            out[k].append(row[k])
    return out


def waterfall_chart(ws, first_row, last_row, cols, title, y_title, y_min=None):
    """Stacked columns from the helper table: cols maps part name → column letter, 'label' too."""
    ch = BarChart()
    ch.type = "col"
    ch.grouping = "stacked"
    ch.overlap = 100
    ch.gapWidth = 50
    ch.style = 2
    ch.title = title
    ch.y_axis.title = y_title
    ch.width, ch.height = WIDTH_CM, HEIGHT_CM + 2
    _axes_visible(ch)
    colours = {"base": None, "total": X.TOTAL, "up": X.INCREASE, "up2": X.INCREASE, "down": X.DECREASE,
               "down2": X.DECREASE}
    for part in ("base", "total", "up", "up2", "down", "down2"):
        col = column_index_from_string(cols[part])
        ch.add_data(Reference(ws, min_col=col, min_row=first_row - 1, max_row=last_row), titles_from_data=True)
        s = ch.series[-1]
        if colours[part] is None:
            s.graphicalProperties = GraphicalProperties(noFill=True)
            s.graphicalProperties.line = LineProperties(noFill=True)
        else:
            _colour(s, colours[part])
    ch.set_categories(_ref(ws, cols["label"], first_row, last_row))
    ch.y_axis.number_format = "#,##0"
    if y_min is not None:
        ch.y_axis.scaling.min = y_min
    ch.legend = None
    ch.x_axis.tickLblPos = "low"
    return ch


def share_chart(ws, first_row, last_row, label_col, share_col):
    """Horizontal bars: each input's share of the combined variance [%]."""
    ch = BarChart()
    ch.type = "bar"
    ch.style = 2
    ch.title = "Share of the combined variance by input"
    ch.y_axis.title = "Share [%]"
    ch.width, ch.height = 18.0, max(6.0, 0.7 * (last_row - first_row + 1) + 3)
    _axes_visible(ch)
    col = column_index_from_string(share_col)
    ch.add_data(Reference(ws, min_col=col, min_row=first_row - 1, max_row=last_row), titles_from_data=True)
    _colour(ch.series[-1], X.SLATE)
    ch.set_categories(_ref(ws, label_col, first_row, last_row))
    ch.legend = None
    ch.x_axis.scaling.orientation = "maxMin"
    return ch


def corrector_ratio_chart(data_ws, block, span=None):
    """The site corrector's volume over ours, interval by interval, and the best explanation."""
    ch = _time_chart("Site corrector ÷ ours, and the best explanation", "Ratio [-]", None,
                     span, "0.000")
    # the explanation underneath, broad and light; the observed ratio on top, thin
    ch.series.append(_line_series(data_ws, block, block.columns["local"], block.columns["fitted_ratio"],
                                  "Best explanation", X.SLATE_LIGHT, width_emu=57150))
    ch.series.append(_line_series(data_ws, block, block.columns["local"], block.columns["ratio"], "Corrector ÷ ours",
                                  X.IDEAL_GAS, width_emu=12700))
    return ch


def place(ws, chart, anchor):
    ws.add_chart(chart, anchor)
