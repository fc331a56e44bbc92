"""Native charts of the month workbook (xlsxwriter charts), pointing at the data sheets' cells.

- line pressure and temperature over the month (temperature on a secondary axis);
- Zb/Zf over the month;
- daily base volume, real gas beside ideal gas (clustered columns, the axis from zero);
- daily ideal-gas error [%] (bars hang from zero);
- the invoice attribution as a waterfall of the difference, from zero (our figure) to the
  invoice: a stacked column chart whose first series, the invisible base (no fill, no line, no
  legend entry), lifts each visible bar to where the previous step ended;
- the uncertainty budget shares (from zero); the corrector ratio against the best explanation.

A chart is described by a :class:`ChartSpec` while the sheets are laid out and built when the
workbook is saved. When the interval table does not fit a worksheet the time-series charts plot
gas-day means.
"""

from __future__ import annotations

import datetime as _dt
import math
from dataclasses import dataclass, field

from .. import vocabulary as V
from . import xlsx_common as X

WIDTH_CM = 25.0
HEIGHT_CM = 9.0
_PX_PER_CM = 96 / 2.54


@dataclass
class Ref:
    """One column's rows on a sheet."""

    sheet: str
    col: str
    first: int
    last: int

    def formula(self) -> str:
        return "=" + X.range_ref(self.sheet, self.col, self.first, self.last)


@dataclass
class ChartSpec:
    kind: str                                   # 'scatter', 'column', 'bar'
    subtype: str | None = None
    title: str = ""
    series: list = field(default_factory=list)  # dicts: name, x, y (Ref), colour, width, y2, invisible
    x_axis: dict = field(default_factory=dict)
    y_axis: dict = field(default_factory=dict)
    y2_axis: dict = field(default_factory=dict)
    legend: str | None = "bottom"
    width_cm: float = WIDTH_CM
    height_cm: float = HEIGHT_CM
    gap: int | None = None
    overlap: int | None = None

    # -- readable accessors (tests and layout)
    @property
    def height(self):
        return self.height_cm

    @height.setter
    def height(self, v):
        self.height_cm = v

    def build(self, wb, book=None):
        """The xlsxwriter chart (``book``: the Book, for the cached values of streamed tables)."""
        opts = {"type": self.kind}
        if self.subtype:
            opts["subtype"] = self.subtype
        ch = wb.add_chart(opts)
        for s in self.series:
            d = {"values": s["y"].formula(), "name": s["name"]}
            if s.get("x") is not None:
                d["categories"] = s["x"].formula()
            if book is not None:
                for key, ref in (("values_data", s["y"]), ("categories_data", s.get("x"))):
                    data = _cached(book, ref)
                    if data is not None:
                        d[key] = data
            colour = s.get("colour")
            if self.kind == "scatter":
                d["line"] = {"color": X.rgb(colour), "width": s.get("width", 1.5)}
                d["marker"] = {"type": "none"}
            elif s.get("invisible"):
                d["fill"] = {"none": True}
                d["border"] = {"none": True}
            else:
                d["fill"] = {"color": X.rgb(colour)}
                d["border"] = {"color": X.rgb(colour)}
            if s.get("y2"):
                d["y2_axis"] = True
            if self.gap is not None and self.kind != "scatter":
                d["gap"] = self.gap
            if self.overlap is not None and self.kind != "scatter":
                d["overlap"] = self.overlap
            ch.add_series(d)
        ch.set_title({"name": self.title, "name_font": {"size": 12, "bold": True}})
        ch.set_x_axis(dict(self.x_axis))
        ch.set_y_axis(dict(self.y_axis))
        if self.y2_axis:
            ch.set_y2_axis(dict(self.y2_axis))
        if self.legend is None:
            ch.set_legend({"none": True})
        else:
            hidden = [i for i, s in enumerate(self.series) if s.get("invisible")]
            ch.set_legend({"position": self.legend, **({"delete_series": hidden} if hidden else {})})
        ch.set_size({"width": round(self.width_cm * _PX_PER_CM), "height": round(self.height_cm * _PX_PER_CM)})
        return ch


def _cached(book, ref):
    """No cached values for a streamed table's columns: the chart refers to the cells, and a
    spreadsheet draws it from them (the cache is optional in SpreadsheetML; writing it would
    double the time to write a long month)."""
    if ref is None:
        return None
    try:
        ws = book[ref.sheet]
    except KeyError:
        return None
    return [] if ws.bulk is not None else None


def _serial(v: _dt.datetime) -> float:
    return (v - _dt.datetime(1899, 12, 30)).total_seconds() / 86400.0


def _axis_title(text):
    return {"name": text, "name_font": {"size": 10, "bold": False}}


def _time_chart(title, y_title, span=None, y_format="General", clock=""):
    """A scatter chart with lines over time; ``span`` = (first, last) datetime of the x axis; ``clock``
    names the time axis' clock (the site's zone)."""
    x = {**_axis_title(f"Interval end, local time ({clock})" if clock else "Interval end"), "num_format": "dd mmm", "major_gridlines": {"visible": False}, "label_position": "low"}
    if span is not None:
        lo, hi = (_serial(v) for v in span)
        x.update({"min": math.floor(lo), "max": math.ceil(hi), "major_unit": 7 if hi - lo > 20 else 1})
    return ChartSpec("scatter", "straight", title, x_axis=x,
                     y_axis={**_axis_title(y_title), "num_format": y_format,
                             "major_gridlines": {"visible": True, "line": {"color": X.rgb(X.GRID)}}})


def _series(name, x, y, colour, width=1.5, **kw):
    return {"name": name, "x": x, "y": y, "colour": colour, "width": width, **kw}


def pressure_temperature_chart(data_ws, block, du, *, daily=False, span=None, clock=""):
    """Line pressure (left axis) and temperature (right axis) over the month."""
    xcol = block.columns["local"] if not daily else block.columns["Gas day"]
    pcol = block.columns["pressure"] if not daily else block.columns[f"Mean line pressure [{du.label('pressure')}]"]
    tcol = block.columns["temperature"] if not daily else block.columns[f"Mean line temperature [{du.label('temperature')}]"]
    ch = _time_chart("Line pressure and temperature" + (" (gas-day means)" if daily else ""),
                     f"Line pressure [{du.label('pressure')}]", span, "#,##0", clock=clock)
    ref = lambda c: Ref(data_ws.title, c, block.first_row, block.last_row)  # noqa: E731
    ch.series.append(_series("Line pressure", ref(xcol), ref(pcol), X.PRESSURE))
    ch.series.append(_series("Line temperature", ref(xcol), ref(tcol), X.TEMPERATURE, y2=True))
    ch.y2_axis = {**_axis_title(f"Line temperature [{du.label('temperature')}]"), "num_format": "0",
                  "major_gridlines": {"visible": False}}
    return ch


def z_ratio_chart(data_ws, block, *, daily=False, span=None, clock=""):
    """Zb/Zf (= Fpv²) over the month."""
    xcol = block.columns["local"] if not daily else block.columns["Gas day"]
    ycol = block.columns["factor_z"] if not daily else block.columns["Zb/Zf, volume-weighted [-]"]
    ch = _time_chart("Zb/Zf over the month" + (" (gas-day volume-weighted)" if daily else ""), "Zb/Zf [-]", span,
                     "0.000", clock=clock)
    ref = lambda c: Ref(data_ws.title, c, block.first_row, block.last_row)  # noqa: E731
    ch.series.append(_series("Zb/Zf", ref(xcol), ref(ycol), X.ZRATIO))
    ch.legend = None
    return ch


def _bar_chart(title, y_title, x_title="Gas day"):
    return ChartSpec("column", None, title,
                     x_axis={**_axis_title(x_title), "num_format": "dd", "label_position": "low"},
                     y_axis={**_axis_title(y_title),
                             "major_gridlines": {"visible": True, "line": {"color": X.rgb(X.GRID)}}})


def daily_volume_chart(gd_ws, block, du, x_title="Gas day"):
    """Daily base volume, real gas beside ideal gas; sizes compared, so the axis starts at zero."""
    vl = du.label("volume")
    ch = _bar_chart("Base volume by gas day, real gas and ideal gas (Z = 1)", f"Volume [{vl} at base]", x_title)
    ch.y_axis.update({"num_format": "#,##0", "min": 0})
    cats = Ref(gd_ws.title, block.columns["Gas day"], block.first_row, block.last_row)
    for key, colour, name in ((f"{V.BASE_VOLUME} [{vl} at base]", X.REAL_GAS, "Real gas"),
                              (f"{V.BASE_VOLUME_IDEAL} [{vl} at base]", X.IDEAL_GAS, "Ideal gas (Z = 1)")):
        ch.series.append(_series(name, cats, Ref(gd_ws.title, block.columns[key], block.first_row, block.last_row),
                                 colour))
    ch.gap = 60
    return ch


def daily_error_chart(gd_ws, block, values=(), x_title="Gas day"):
    """Daily ideal-gas error [%]; the value axis always includes zero."""
    ch = _bar_chart("Ideal-gas error by gas day", "Ideal-gas error [%]", x_title)
    ch.y_axis["num_format"] = "0.0"
    vals = [v for v in values if v is not None and math.isfinite(v)]
    if vals and max(vals) <= 0:
        ch.y_axis["max"] = 0
    elif vals and min(vals) >= 0:
        ch.y_axis["min"] = 0
    cats = Ref(gd_ws.title, block.columns["Gas day"], block.first_row, block.last_row)
    ch.series.append(_series("Ideal-gas error", cats,
                             Ref(gd_ws.title, block.columns["Ideal-gas error [%]"], block.first_row, block.last_row),
                             X.IDEAL_GAS))
    ch.legend = None
    ch.gap = 40
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


WATERFALL_PARTS = ("base", "total", "up", "up2", "down", "down2")


def waterfall_chart(ws, first_row, last_row, cols, title, y_title):
    """Stacked columns from the helper table: cols maps part name → column letter, 'label' too.

    The helper series (the invisible base) has no fill, no line and no legend entry; the value
    axis includes zero (the levels are differences from our figure)."""
    ch = ChartSpec("column", "stacked", title, width_cm=WIDTH_CM, height_cm=HEIGHT_CM + 2,
                   x_axis={"label_position": "low", "num_font": {"size": 9}},
                   y_axis={**_axis_title(y_title), "num_format": "#,##0.###",
                           "major_gridlines": {"visible": True, "line": {"color": X.rgb(X.GRID)}}})
    colours = {"base": None, "total": X.TOTAL, "up": X.INCREASE, "up2": X.INCREASE, "down": X.DECREASE,
               "down2": X.DECREASE}
    names = {"base": "base (helper)", "total": "total", "up": "increase", "up2": "increase",
             "down": "decrease", "down2": "decrease"}
    cats = Ref(ws.title, cols["label"], first_row, last_row)
    for part in WATERFALL_PARTS:
        ch.series.append({"name": names[part], "x": cats, "y": Ref(ws.title, cols[part], first_row, last_row),
                          "colour": colours[part], "invisible": colours[part] is None})
    ch.gap = 50
    ch.overlap = 100
    ch.legend = None
    return ch


def share_chart(ws, first_row, last_row, label_col, share_col):
    """Horizontal bars: each input's share of the combined variance [%], from zero, first input on top."""
    ch = ChartSpec("bar", None, "Share of the combined variance by input",
                   width_cm=18.0, height_cm=max(6.0, 0.7 * (last_row - first_row + 1) + 3),
                   x_axis={**_axis_title("Share [%]"), "min": 0, "num_format": "0",
                           "major_gridlines": {"visible": True, "line": {"color": X.rgb(X.GRID)}}},
                   y_axis={"reverse": True})
    ch.series.append({"name": "Share of the variance", "x": Ref(ws.title, label_col, first_row, last_row),
                      "y": Ref(ws.title, share_col, first_row, last_row), "colour": X.SLATE})
    ch.legend = None
    return ch


def corrector_ratio_chart(data_ws, block, span=None, clock=""):
    """The site corrector's volume over ours, interval by interval, and the best explanation."""
    ch = _time_chart("Site corrector ÷ ours, and the best explanation", "Ratio [-]", span, "0.000", clock=clock)
    ref = lambda c: Ref(data_ws.title, c, block.first_row, block.last_row)  # noqa: E731
    # the explanation underneath, broad and light; the observed ratio on top, thin
    ch.series.append(_series("Best explanation", ref(block.columns["local"]), ref(block.columns["fitted_ratio"]),
                             X.SLATE_LIGHT, width=4.5))
    ch.series.append(_series("Corrector ÷ ours", ref(block.columns["local"]), ref(block.columns["ratio"]),
                             X.IDEAL_GAS, width=1.0))
    return ch


def place(ws, chart, anchor):
    ws.add_chart(chart, anchor)
