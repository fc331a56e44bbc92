"""The month workbook, opened with openpyxl: sheets, headers with units, number formats, charts and
the cells they plot; every number compared with the MonthResult's own fields."""

import datetime as dt
import io
import zipfile

import numpy as np
import pytest
from openpyxl import load_workbook

from meterfix.errors import InputError, SettingsError
from meterfix.writers import workbook as W
from meterfix.writers.summary import CAUTION
from meterfix.writers.workbook_charts import waterfall_parts
from workbook_month import full_month, plain_month

RESULT = full_month()
N = len(RESULT.intervals)


@pytest.fixture(scope="module")
def book(tmp_path_factory):
    path = tmp_path_factory.mktemp("wb") / "FV-M1_2026-10.xlsx"
    W.write_workbook(RESULT, path, interval_csv="FV-M1_2026-10_intervals.csv")
    return load_workbook(path), path


def _headers(ws, row=1):
    return [c.value for c in ws[row]]


def _col(ws, header, row=1):
    """1-based column index of a header."""
    return _headers(ws, row).index(header) + 1


def _column_values(ws, header, first=2, last=None):
    j = _col(ws, header)
    last = last or ws.max_row
    return [ws.cell(row=r, column=j).value for r in range(first, last + 1)]


def _label_row(ws, label, col=1):
    for r in range(1, ws.max_row + 1):
        if ws.cell(row=r, column=col).value == label:
            return r
    raise AssertionError(f"no row labelled {label!r} on {ws.title}")


def _floats(cells):
    """Cell values as floats, an empty cell as NaN."""
    return [np.nan if v is None else v for v in cells]


def test_sheets_in_order(book):
    wb, _ = book
    assert wb.sheetnames == ["Overview", "Charts", "Gas days", "Intervals", "Analyses", "Findings", "Edits",
                             "Uncertainty", "Invoice check", "Corrector check", "Source data"]


def test_without_invoice_or_corrector_those_sheets_are_absent(tmp_path):
    r, _ = plain_month()
    p = W.write_workbook(r, tmp_path / "m.xlsx")
    wb = load_workbook(p)
    assert "Invoice check" not in wb.sheetnames and "Corrector check" not in wb.sheetnames
    ws = wb["Uncertainty"]
    assert "No uncertainty was computed" in ws.cell(row=2, column=1).value


def test_interval_headers_units_formats_and_values(book):
    wb, _ = book
    ws = wb["Intervals"]
    h = _headers(ws)
    for want in ("Interval end [UTC]", "Interval end [local, Europe/Berlin]", "Gas day", "Line pressure [kPa abs]",
                 "Atmospheric pressure [kPa abs]", "Line temperature [°C]", "Uncorrected volume [m3]",
                 "Zf at line [-]", "Zb at base [-]", "Fp = pf/pb [-]", "Ft = Tb/Tf [-]", "Zb/Zf = Fpv² [-]",
                 "Base volume [m3 at base]", "Base volume, ideal gas (Z = 1) [m3 at base]",
                 "Ideal-gas error [%]", "Energy [GJ]", "Heating value, gross [MJ/m3]", "Flag: gap",
                 "Site corrector volume [m3 at its base]", "Site corrector ÷ ours [-]"):
        assert want in h, want
    assert ws.max_row == N + 1
    assert ws.freeze_panes == "B2"
    d = RESULT.intervals
    # display units at the edge: kPa = Pa / 1000, degC = K - 273.15, GJ = J / 1e9 (NIST SP 811 prefixes)
    assert _floats(_column_values(ws, "Line pressure [kPa abs]")) == pytest.approx(list(d["pressure_line"] / 1e3),
                                                                                   rel=1e-12, nan_ok=True)
    temps = _column_values(ws, "Line temperature [°C]")
    ok = np.isfinite(d["temperature_line"].to_numpy())
    assert [t for t, o in zip(temps, ok) if o] == pytest.approx(list(d["temperature_line"][ok] - 273.15), abs=1e-9)
    assert all(t is None for t, o in zip(temps, ok) if not o)  # the gap stays empty, not zero
    assert _floats(_column_values(ws, "Zb/Zf = Fpv² [-]")) == pytest.approx(list(d["factor_z"]), rel=1e-12, nan_ok=True)
    vb = _column_values(ws, "Base volume [m3 at base]")
    assert sum(v for v in vb if v is not None) == pytest.approx(RESULT.totals["base_volume_m3"], rel=1e-12)
    e = _column_values(ws, "Energy [GJ]")
    assert sum(v for v in e if v is not None) == pytest.approx(RESULT.totals["energy_MJ"] / 1e3, rel=1e-12)
    # local time beside UTC: the first interval end is 2026-10-01 07:00 CEST = 05:00 UTC
    assert ws.cell(row=2, column=_col(ws, "Interval end [UTC]")).value == dt.datetime(2026, 10, 1, 5, 0)
    assert ws.cell(row=2, column=_col(ws, "Interval end [local, Europe/Berlin]")).value == dt.datetime(2026, 10, 1, 7, 0)
    assert ws.cell(row=2, column=_col(ws, "UTC offset")).value == "+02:00"
    assert ws.cell(row=N + 1, column=_col(ws, "UTC offset")).value == "+01:00"  # after the October clock change
    # flags: one 'yes' per flagged interval
    assert _column_values(ws, "Flag: gap").count("yes") == RESULT.flags["gap"] == 6
    # number formats
    fm = {hh: ws.cell(row=3, column=_col(ws, hh)).number_format for hh in h}
    assert fm["Interval end [UTC]"] == "yyyy-mm-dd hh:mm"
    assert fm["Gas day"] == "yyyy-mm-dd"
    assert fm["Line pressure [kPa abs]"] == "#,##0.000"
    assert fm["Zf at line [-]"] == "0.000000"
    assert fm["Ideal-gas error [%]"] == "0.000"


def test_overview_totals_caution_method_inputs(book):
    wb, _ = book
    ws = wb["Overview"]
    t = RESULT.totals
    val = lambda label: ws.cell(row=_label_row(ws, label), column=2).value  # noqa: E731
    unit = lambda label: ws.cell(row=_label_row(ws, label), column=3).value  # noqa: E731
    assert val("Uncorrected volume") == pytest.approx(t["uncorrected_volume_m3"], rel=1e-12)
    assert val("Base volume") == pytest.approx(t["base_volume_m3"], rel=1e-12)
    assert val("Base volume, ideal gas (Z = 1)") == pytest.approx(t["ideal_gas_base_volume_m3"], rel=1e-12)
    assert val("Difference, ideal − real") == pytest.approx(t["ideal_gas_base_volume_m3"] - t["base_volume_m3"],
                                                             rel=1e-12)
    assert val("Ideal-gas error") == pytest.approx(t["ideal_gas_error_pct"], rel=1e-12)
    assert val("Energy, gross") == pytest.approx(t["energy_MJ"] / 1e3, rel=1e-12) and unit("Energy, gross") == "GJ"
    assert val("Expanded uncertainty, base volume") == pytest.approx(RESULT.uncertainty.expanded_pct, rel=1e-12)
    assert val("Expanded uncertainty, energy") == pytest.approx(RESULT.uncertainty.expanded_energy_pct, rel=1e-12)
    assert val("Intervals") == N
    assert unit("Base volume") == "m3 at base"
    assert ws.cell(row=_label_row(ws, "Base volume"), column=2).number_format == "#,##0.0"
    # the caution of the summary, prominent near the top
    assert ws["A3"].value == "CAUTION" and ws["A4"].value == CAUTION
    assert "A4:D7" in {str(m) for m in ws.merged_cells.ranges}
    # method and edition, base conditions (normal-0c preset: 101.325 kPa, 0 degC; common practice)
    assert val("Z method") == RESULT.method["name"] and val("Edition") == RESULT.method["edition"]
    assert val("Base pressure") == pytest.approx(101.325) and unit("Base pressure") == "kPa abs"
    assert val("Base temperature") == pytest.approx(0.0, abs=1e-12)
    assert val("Atmospheric pressure") == RESULT.method["atmospheric_pressure_source"]
    assert val("Interval table file") == "FV-M1_2026-10_intervals.csv"
    r = _label_row(ws, "fv-m1_2026-10.csv")
    assert ws.cell(row=r, column=3).value == "a" * 64
    r = _label_row(ws, "elevation")
    assert ws.cell(row=r, column=2).value == pytest.approx(RESULT.settings.elevation)
    assert ws.cell(row=r, column=4).value == "option"
    assert val("Invoice − ours") == pytest.approx(RESULT.reconciliation.totals["energy_difference_pct"], rel=1e-12)
    assert val("Site corrector − ours") == pytest.approx(RESULT.corrector_check.size_pct, rel=1e-12)


def test_gas_days_and_month_row(book):
    wb, _ = book
    ws = wb["Gas days"]
    g = RESULT.gas_days
    n = len(g)
    assert ws.cell(row=2, column=1).value == dt.datetime(2026, 10, 1)  # a date cell, read back as midnight
    assert ws.cell(row=2, column=1).number_format == "yyyy-mm-dd"
    h = "Base volume [m3 at base]"
    assert _column_values(ws, h, 2, n + 1) == pytest.approx(list(g["volume_base"]), rel=1e-12)
    assert _column_values(ws, "Ideal-gas error [%]", 2, n + 1) == pytest.approx(list(g["ideal_gas_error_pct"]),
                                                                                rel=1e-12)
    assert _column_values(ws, "Expanded uncertainty, volume [%]", 2, n + 1) == pytest.approx(
        list(RESULT.uncertainty.gas_days["expanded_pct"]), rel=1e-12)
    # Zb/Zf of a day = its real-gas volume over its ideal-gas volume
    assert _column_values(ws, "Zb/Zf, volume-weighted [-]", 2, n + 1) == pytest.approx(
        list(g["volume_base"] / g["volume_base_ideal"]), rel=1e-12)
    r = _label_row(ws, "Month 2026-10")
    m = RESULT.months.loc["2026-10"]
    assert ws.cell(row=r, column=_col(ws, h)).value == pytest.approx(m["volume_base"], rel=1e-12)
    assert ws.cell(row=r, column=_col(ws, "Energy [GJ]")).value == pytest.approx(m["energy"] / 1e9, rel=1e-12)


def _series_refs(chart):
    out = []
    for sub in [chart] + list(getattr(chart, "_charts", [])[1:]):
        for s in sub.series:
            y = s.yVal.numRef.f if s.yVal is not None else s.val.numRef.f
            x = s.xVal.numRef.f if s.xVal is not None else (s.cat.numRef or s.cat.strRef).f if s.cat else None
            out.append((x, y))
    return out


def _ref(ws, header, first, last):
    letter = ws.cell(row=1, column=_col(ws, header)).column_letter
    return f"'{ws.title}'!${letter}${first}:${letter}${last}"


def test_charts_plot_the_right_cells(book):
    wb, _ = book
    charts = wb["Charts"]._charts
    assert len(charts) == 4
    iv, gd = wb["Intervals"], wb["Gas days"]
    n_days = len(RESULT.gas_days)
    local = _ref(iv, "Interval end [local, Europe/Berlin]", 2, N + 1)
    pt = _series_refs(charts[0])
    assert pt == [(local, _ref(iv, "Line pressure [kPa abs]", 2, N + 1)),
                  (local, _ref(iv, "Line temperature [°C]", 2, N + 1))]
    assert charts[0]._charts[1].y_axis.axId != charts[0].y_axis.axId  # temperature on a secondary axis
    assert _series_refs(charts[1]) == [(local, _ref(iv, "Zb/Zf = Fpv² [-]", 2, N + 1))]
    days = f"'Gas days'!$A$2:$A${n_days + 1}"
    assert _series_refs(charts[2]) == [
        (days, _ref(gd, "Base volume [m3 at base]", 2, n_days + 1)),
        (days, _ref(gd, "Base volume, ideal gas (Z = 1) [m3 at base]", 2, n_days + 1))]
    assert charts[2].grouping == "clustered"
    assert _series_refs(charts[3]) == [(days, _ref(gd, "Ideal-gas error [%]", 2, n_days + 1))]
    # every error is negative here (Z < 1 at 40 bar): the axis ends at zero so bars hang from it
    assert charts[3].y_axis.scaling.max == 0
    # axes are shown (not written as deleted; an absent <c:delete> reads back as None)
    assert all(not c.x_axis.delete and not c.y_axis.delete for c in charts)
    # the daily volumes compare sizes: their axis starts at zero
    assert charts[2].y_axis.scaling.min == 0


def test_waterfall_chart_and_helper_table(book):
    wb, _ = book
    ws = wb["Invoice check"]
    (ch,) = ws._charts
    assert ch.grouping == "stacked" and ch.overlap == 100 and len(ch.series) == 6
    assert ch.series[0].spPr.noFill  # the invisible base
    att = RESULT.reconciliation.attribution
    first = _label_row(ws, "ours", col=9)
    last = first + len(att) - 1
    assert ws.cell(row=last, column=9).value == "invoice"
    assert [s.val.numRef.f for s in ch.series] == [f"'Invoice check'!${c}${first}:${c}${last}" for c in "JKLMNO"]
    # the waterfall charts the difference from our figure (ours = 0, the last bar invoice - ours):
    # base + visible part of each step bar lands on the cumulative energy less ours [GJ]
    cum = list((att["cumulative_energy_MJ"] - att["cumulative_energy_MJ"].iat[0]) / 1e3)
    for i in range(len(att)):
        vals = [ws.cell(row=first + i, column=c).value for c in range(10, 16)]
        base, total, up, up2, down, down2 = vals
        if att["kind"].iat[i] == "step":
            top = base + up + up2 + down + down2
            lo_hi = sorted((cum[i - 1], cum[i]))
            assert top in (pytest.approx(lo_hi[0], rel=1e-12), pytest.approx(lo_hi[1], rel=1e-12))
        else:
            assert total == pytest.approx(cum[i], rel=1e-12)
    # bars compare sizes: the value axis is not cut above zero, and the helper series has no legend entry
    assert ch.y_axis.scaling.min is None or ch.y_axis.scaling.min <= 0
    assert ch.legend is None
    # the totals and periods against the reconciliation's own fields
    r = _label_row(ws, "Energy difference")
    assert ws.cell(row=r, column=2).value == pytest.approx(RESULT.reconciliation.totals["energy_difference_MJ"] / 1e3,
                                                           rel=1e-12)


@pytest.mark.parametrize("values", [[10.0, -3.0, -9.0, 4.0, 2.0], [-5.0, -2.0, 3.0, 6.0, 2.0], [0.0, 1.0, -1.0, 0.0]])
def test_waterfall_parts_rebuild_each_level(values):
    """Excel stacks positives up and negatives down from zero, in series order; rebuild both ends of every bar."""
    kinds = ["start"] + ["step"] * (len(values) - 1) + ["end"]
    levels = list(np.cumsum(values))
    vals = values + [levels[-1]]
    p = waterfall_parts([str(i) for i in range(len(vals))], kinds, vals)
    for i in range(1, len(values)):
        parts = [p[k][i] for k in ("base", "up", "up2", "down", "down2")]
        pos = sum(x for x in parts if x > 0)
        neg = sum(x for x in parts if x < 0)
        visible_pos = sum(x for x in parts[1:] if x > 0)
        visible_neg = sum(x for x in parts[1:] if x < 0)
        lo, hi = sorted((levels[i - 1], levels[i]))
        if lo >= 0:
            assert (pos - visible_pos, pos) == pytest.approx((lo, hi))
        elif hi <= 0:
            assert (neg - visible_neg, neg) == pytest.approx((hi, lo))
        else:
            assert (pos, neg) == pytest.approx((hi, lo))
    assert p["total"][-1] == levels[-1]


def test_corrector_sheet_and_ratio_chart(book):
    wb, _ = book
    ws = wb["Corrector check"]
    best = RESULT.corrector_check.best
    assert ws.cell(row=_label_row(ws, "Corrector − ours"), column=2).value is not None
    assert ws.cell(row=_label_row(ws, "Most likely explanation"), column=2).value == "corrector set to ideal gas (Z = 1)"
    r = _label_row(ws, "1. corrector set to ideal gas (Z = 1)")
    assert ws.cell(row=r, column=3).value == pytest.approx(best["size_pct"], rel=1e-12)
    (ch,) = ws._charts
    iv = wb["Intervals"]
    local = _ref(iv, "Interval end [local, Europe/Berlin]", 2, N + 1)
    assert _series_refs(ch) == [(local, _ref(iv, "Fitted ratio, best explanation [-]", 2, N + 1)),
                                (local, _ref(iv, "Site corrector ÷ ours [-]", 2, N + 1))]


def test_uncertainty_budget_readable(book):
    wb, _ = book
    ws = wb["Uncertainty"]
    b = RESULT.uncertainty.budget
    r = _label_row(ws, "Input")
    h = _headers(ws, r)
    for want in ("Value", "Unit", "Uncertainty (as stated)", "Distribution", "Sensitivity coefficient [-]",
                 "Contribution to u(V) [%]", "Share of the variance [%]", "Source"):
        assert want in h
    rows = list(range(r + 1, r + 1 + len(b)))
    assert [ws.cell(row=i, column=1).value for i in rows] == list(b["input"])
    share = [ws.cell(row=i, column=h.index("Share of the variance [%]") + 1).value for i in rows]
    assert share == pytest.approx(list(b["share_pct"]), rel=1e-12)
    # SI budget values in display units: line pressure in kPa abs, temperature in degC
    k = list(b["input"]).index("line pressure")
    assert ws.cell(row=rows[k], column=2).value == pytest.approx(b["value"].iat[k] / 1e3, rel=1e-12)
    assert ws.cell(row=rows[k], column=3).value == "kPa abs"
    assert ws.cell(row=_label_row(ws, "Expanded uncertainty, base volume"), column=2).value == pytest.approx(
        RESULT.uncertainty.expanded_pct, rel=1e-12)
    assert len(ws._charts) == 1


def test_findings_and_flags(book):
    wb, _ = book
    ws = wb["Findings"]
    f = RESULT.findings
    r = _label_row(ws, "Rank") + 1
    assert [ws.cell(row=r + i, column=6).value for i in range(len(f))] == pytest.approx(
        list(f["ideal_gas_error_pct"]), rel=1e-12)
    r = _label_row(ws, "gap")
    assert ws.cell(row=r, column=2).value == RESULT.flags["gap"]


def test_too_many_intervals_go_to_csv(tmp_path, monkeypatch):
    monkeypatch.setattr(W, "MAX_INTERVAL_ROWS", 100)
    p = W.write_workbook(RESULT, tmp_path / "big.xlsx", interval_csv="FV-M1_2026-10_intervals.csv")
    wb = load_workbook(p)
    ws = wb["Intervals"]
    text = " ".join(str(c.value) for row in ws.iter_rows() for c in row if c.value)
    assert "FV-M1_2026-10_intervals.csv" in text and f"{N:,} intervals" in text
    assert ws.max_row < 10
    ov = wb["Overview"]
    r = _label_row(ov, "Interval table file")
    assert "too many intervals" in ov.cell(row=r, column=4).value
    # the time-series charts now plot gas-day means
    charts = wb["Charts"]._charts
    n_days = len(RESULT.gas_days)
    gd = wb["Gas days"]
    assert _series_refs(charts[0])[0] == (f"'Gas days'!$A$2:$A${n_days + 1}",
                                          _ref(gd, "Mean line pressure [kPa abs]", 2, n_days + 1))
    assert "Corrector check" in wb.sheetnames and not wb["Corrector check"]._charts


def test_same_result_same_bytes_and_no_overwrite(tmp_path):
    a = W.write_workbook(RESULT, tmp_path / "a.xlsx")
    b = W.write_workbook(RESULT, tmp_path / "b.xlsx")
    assert a.read_bytes() == b.read_bytes()
    core = zipfile.ZipFile(io.BytesIO(a.read_bytes())).read("docProps/core.xml").decode()
    assert "2000-01-01T00:00:00Z" in core
    with pytest.raises(InputError, match="already exists"):
        W.write_workbook(RESULT, a)
    W.write_workbook(RESULT, a, overwrite=True)
    assert not list(tmp_path.glob(".*part"))


def test_text_that_looks_like_a_formula_stays_text(tmp_path):
    r, _ = plain_month(site="=HYPERLINK(\"http://x\")", meter="+M1")
    wb = load_workbook(W.write_workbook(r, tmp_path / "f.xlsx"))
    for ws in wb.worksheets:
        for row in ws.iter_rows():
            for c in row:
                assert c.data_type != "f", (ws.title, c.coordinate, c.value)
    ov = wb["Overview"]
    assert ov.cell(row=_label_row(ov, "site_name"), column=2).value.startswith("'=")


def test_display_units_from_the_site_table(tmp_path):
    r, _ = plain_month()
    r.settings.display_units = {"pressure": "bar", "energy": "MWh", "temperature": "K"}
    wb = load_workbook(W.write_workbook(r, tmp_path / "u.xlsx"))
    ws = wb["Intervals"]
    h = _headers(ws)
    assert "Line pressure [bar abs]" in h and "Energy [MWh]" in h and "Line temperature [K]" in h
    # 1 bar = 1e5 Pa, 1 MWh = 3.6e9 J (NIST SP 811)
    assert ws.cell(row=2, column=_col(ws, "Line pressure [bar abs]")).value == pytest.approx(
        r.intervals["pressure_line"].iat[0] / 1e5, rel=1e-12)
    e = [v for v in _column_values(ws, "Energy [MWh]") if v is not None]
    assert sum(e) == pytest.approx(r.totals["energy_MJ"] / 3600.0, rel=1e-12)
    r.settings.display_units = {"pressure": "psig"}
    with pytest.raises(SettingsError, match="absolute"):
        W.write_workbook(r, tmp_path / "g.xlsx")
    r.settings.display_units = {"speed": "m/s"}
    with pytest.raises(SettingsError, match="unknown kind"):
        W.write_workbook(r, tmp_path / "h.xlsx")


def test_analyses_sheet(book):
    wb, _ = book
    ws = wb["Analyses"]
    r = _label_row(ws, "methane")
    assert ws.cell(row=r, column=3).value == pytest.approx(93.12)
    assert ws.cell(row=r, column=4).value == pytest.approx(91.05)
    r = _label_row(ws, "Effective from (local)")
    assert ws.cell(row=r, column=4).value == dt.datetime(2026, 10, 15, 6, 0)
    r = _label_row(ws, "Zb at base conditions")
    assert ws.cell(row=r, column=3).value == pytest.approx(RESULT.analyses[0].z_base, rel=1e-12)


def test_write_outputs_writes_the_workbook(tmp_path):
    from meterfix.writers import write_outputs

    r, _ = plain_month()
    written = write_outputs(r, tmp_path / "out")
    assert written["workbook"].name == "FV-M1_2026-10.xlsx"
    wb = load_workbook(written["workbook"])
    ov = wb["Overview"]
    assert ov.cell(row=_label_row(ov, "Interval table file"), column=2).value == written["intervals"].name


def test_history_sheet_from_the_store(tmp_path):
    import pandas as pd

    r, _ = plain_month()
    r.history = pd.DataFrame({"month": ["2026-08", "2026-09", "2026-10"], "version": [1, 1, 2],
                              "stored_at": pd.to_datetime(["2026-09-02 08:00", "2026-10-02 08:00",
                                                           "2026-11-02 09:30"]).tz_localize("UTC"),
                              "base_volume_m3": [1.2e6, 1.25e6, 1.31e6], "energy_MJ": [4.9e7, 5.1e7, 5.3e7],
                              "ideal_gas_error_pct": [-7.1, -7.3, -7.2]})
    wb = load_workbook(W.write_workbook(r, tmp_path / "h.xlsx"))
    assert wb.sheetnames[-1] == "History"
    ws = wb["History"]
    top = _label_row(ws, "Gas month")
    # the vocabulary's words and the display units (GJ by default), as the rest of the workbook
    assert _headers(ws, top)[:6] == ["Gas month", "Version", "Closed at (UTC)", "Base volume [m3 at base]",
                                     "Energy [GJ]", "Ideal-gas error [%]"]
    assert ws.cell(row=top + 3, column=4).value == pytest.approx(1.31e6)
    assert ws.cell(row=top + 3, column=5).value == pytest.approx(5.3e4)   # 5.3e7 MJ = 5.3e4 GJ
    assert ws.cell(row=top + 3, column=4).number_format == "#,##0.0"      # _m3
    assert ws.cell(row=top + 3, column=6).number_format == "0.000"        # _pct
    assert ws.cell(row=top + 3, column=3).value == dt.datetime(2026, 11, 2, 9, 30)  # UTC, as the note says
    ov = wb["Overview"]
    assert _label_row(ov, "History")
    r.history = pd.DataFrame()
    assert "History" not in load_workbook(W.write_workbook(r, tmp_path / "e.xlsx")).sheetnames


def test_print_ready(book):
    """Pages fit the width (landscape where wide), titles repeat, columns hold what they show."""
    from meterfix.writers.xlsx_cells import shown_text

    wb, _ = book
    for ws in wb.worksheets:
        assert ws.page_setup.paperSize in (9, "9")
        if ws.title != "Intervals":
            assert ws.sheet_properties.pageSetUpPr.fitToPage and ws.page_setup.fitToWidth in (1, None)
    assert wb["Gas days"].page_setup.orientation == "landscape"
    iv = wb["Intervals"]
    assert iv.print_title_rows == "$1:$1" and iv.print_title_cols == "$A:$B"
    # no '###': every number fits its column as its format shows it
    for name in ("Gas days", "Overview", "Invoice check", "Findings"):
        ws = wb[name]
        merged = {c for m in ws.merged_cells.ranges for row in m.cells for c in [row]}
        for row in ws.iter_rows():
            for c in row:
                if isinstance(c.value, (int, float)) and not isinstance(c.value, bool) and \
                        (c.row, c.column) not in merged:
                    width = next(d.width for d in ws.column_dimensions.values()
                                 if d.min and d.max and d.min <= c.column <= d.max)  # neighbours may share one <col>
                    assert width >= len(shown_text(c.value, c.number_format)) + 1, (name, c.coordinate, width)


def test_overview_names_the_energy_standard(tmp_path):
    """The energy edition is named in every output (issue 17): the Overview carries it."""
    from openpyxl import load_workbook

    from meterfix.cli.demo import run_demo

    out = tmp_path / "demo"
    run_demo(out)
    book = load_workbook(next(out.glob("*.xlsx")), read_only=True)
    cells = [str(c) for row in book["Overview"].iter_rows(values_only=True) for c in row if c is not None]
    i = cells.index("Energy standard")
    assert cells[i + 1].startswith("ISO 6976:2016")
