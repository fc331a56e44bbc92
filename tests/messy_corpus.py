"""A corpus of honest-but-messy meter exports, each with its true month total worked out by hand.

Every case is a function ``case(d: Path) -> Case`` that writes its files into ``d`` and says what
the command line is and what must come out:

- ``expect``: totals of the JSON summary (``uncorrected_volume_m3``, ``base_volume_m3`` ...) that
  must match to a relative 1e-6. Each is computed here, independently of meterfix, from the
  values as written in the file: unit factors from their definitions (NIST SP 811 (2008)
  appendix B: 1 ft = 0.3048 m, 1 psi = 0.45359237 kg x 9.80665 m/s2 / (0.0254 m)^2, degF =
  degC x 9/5 + 32) and the base volume by the gas law with Z = 1 (``--method ideal``):
  Vb = V (p / pb) (Tb / T), so that the hand total needs no equation of state.
- ``exit_code`` 2 and ``must_say``: the run is refused; the one-line message contains each
  fragment (case-insensitive): file, row or column, and the fix.
- ``flags``: flag kind → least count the summary's ``flags`` must show.
- ``check``: optional function of the summary dict (and the console text) for anything more.

The scenario is invented: meters of "Heron Lane" (hourly, a few bar(g)) and "Copper Flats"
(US units). Add a case by writing one more function and listing it in CASES.
"""

from __future__ import annotations

import io
from dataclasses import dataclass, field
from pathlib import Path

FT3 = 0.3048 ** 3                              # m3, NIST SP 811 (exact)
PSI = 0.45359237 * 9.80665 / 0.0254 ** 2       # Pa, NIST SP 811 (exact)
PB, TB = 101_325.0, 288.15                     # base conditions of the runs [Pa, K]
PATM = 101_325.0                               # fixed atmospheric pressure of the runs [Pa]
RUN = ["--method", "ideal", "--base-pressure", "101.325 kPa", "--base-temperature", "15 degC",
       "--atmospheric-pressure", "101.325 kPa", "--quiet"]
UTC = ["--timezone", "UTC"]


@dataclass
class Case:
    """One messy export and what the tool must do with it."""

    files: list                                    # input files (must not change)
    args: list                                     # arguments after 'meterfix correct' (--out/--json added)
    expect: dict = field(default_factory=dict)     # summary totals key → true value (rel 1e-6)
    exit_code: int = 0
    must_say: list = field(default_factory=list)   # fragments of the refusal message
    flags: dict = field(default_factory=dict)      # flag kind → least count in the summary
    check: object = None                           # callable(summary: dict, console: str) -> None


# ------------------------------------------------------------------------------------ helpers
def write(d: Path, name: str, data) -> Path:
    p = Path(d) / name
    p.parent.mkdir(parents=True, exist_ok=True)
    if isinstance(data, bytes):
        p.write_bytes(data)
    else:
        p.write_text(data, encoding="utf-8")
    return p


def csv(header, body, sep=",") -> str:
    return "\n".join(sep.join(str(c) for c in r) for r in [header] + body) + "\n"


def xlsx(sheets) -> bytes:
    """sheets: list of (name, rows, hidden)."""
    import openpyxl

    wb = openpyxl.Workbook()
    wb.remove(wb.active)
    for name, rows, hidden in sheets:
        ws = wb.create_sheet(name)
        for r in rows:
            ws.append(list(r))
        if hidden:
            ws.sheet_state = "hidden"
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def hourly(n, start="2026-03-02 01:00", step_min=60):
    """n time stamps 'YYYY-MM-DD HH:MM' from start, step_min apart."""
    import datetime as dt

    t0 = dt.datetime.fromisoformat(start)
    return [(t0 + dt.timedelta(minutes=step_min * i)).strftime("%Y-%m-%d %H:%M") for i in range(n)]


def values(n, p0=4.0, t0=8.0, v0=120.0):
    """n rows of (gauge pressure [bar], temperature [degC], volume [m3]) as written (text)."""
    return [(f"{p0 + 0.05 * (i % 7):.2f}", f"{t0 + 0.3 * (i % 5):.1f}", f"{v0 + 3 * (i % 4):.1f}") for i in range(n)]


def base(volume_m3, p_gauge_pa, t_k):
    """Base volume [m3] of one interval by the gas law with Z = 1 (hand formula)."""
    return volume_m3 * (p_gauge_pa + PATM) / PB * TB / t_k


def totals(rows):
    """(uncorrected, base) [m3] of rows of (volume m3, gauge pressure Pa, temperature K); a row
    whose volume is None is not counted; a row whose pressure or temperature is None counts only
    in the uncorrected volume (it has no base volume)."""
    vu = sum(v for v, p, t in rows if v is not None)
    vb = sum(base(v, p, t) for v, p, t in rows if v is not None and p is not None and t is not None)
    return vu, vb


def metric_rows(vals):
    return [(float(v), float(p) * 1e5, float(t) + 273.15) for p, t, v in vals]


HEADER = ["Interval end", "Line pressure [bar(g)]", "Line temperature [degC]", "Uncorrected volume [m3]"]


def simple(d, header=HEADER, n=24, name="heron_lane.csv", extra=(), sep=","):
    """A clean hourly log; returns (path, rows for totals)."""
    ts = hourly(n)
    vals = values(n)
    p = write(d, name, csv(header, [[t, *v] for t, v in zip(ts, vals)], sep))
    return p, metric_rows(vals)


def expect_of(rows):
    vu, vb = totals(rows)
    return {"uncorrected_volume_m3": vu, "base_volume_m3": vb}


# ------------------------------------------------------------------- 1. trade abbreviations
def us_corr_uncorr_mcf(d):
    """Corrected volume in MCF beside the uncorrected volume in CF: the CF column is the meter's."""
    n = 24
    ts = hourly(n)
    body, rows = [], []
    for i, t in enumerate(ts):
        psig, degf, cf = 58.0 + 0.5 * (i % 3), 41.0 + (i % 4), 4200 + 10 * (i % 5)
        mcf = cf * 4.9 / 1000.0  # the site's corrected volume: about 5x (would be 25x in MCF-as-CF)
        body.append([t, f"{psig:.1f}", f"{degf:.1f}", f"{cf:d}", f"{mcf:.4f}"])
        rows.append((cf * FT3, psig * PSI, (degf - 32) * 5 / 9 + 273.15))
    p = write(d, "copper_flats.csv", csv(["Date/Time", "Static Pressure (psig)", "Flowing Temp (F)",
                                          "Uncorr Vol (CF)", "Corr Vol (MCF)"], body))
    return Case([p], [str(p), *RUN, *UTC], expect=expect_of(rows))


def us_index_cf_corr_mcf(d):
    """An uncorrected index in CF beside a corrected volume in MCF (the issue's own case)."""
    n = 25
    ts = hourly(n)
    body, rows = [], []
    idx = 1_234_000
    prev = None
    for i, t in enumerate(ts):
        psig, degf = 58.0 + 0.5 * (i % 3), 41.0 + (i % 4)
        if i:
            idx += 4200 + 10 * (i % 5)
        body.append([t, f"{psig:.1f}", f"{degf:.1f}", f"{idx:d}", f"{(idx - (prev or idx)) * 4.9 / 1000:.4f}"])
        if prev is not None:
            rows.append(((idx - prev) * FT3, psig * PSI, (degf - 32) * 5 / 9 + 273.15))
        prev = idx
    p = write(d, "copper_flats_index.csv", csv(["Date/Time", "Static Pressure (psig)", "Flowing Temp (F)",
                                                "Uncorr Vol Index (CF)", "Corr Vol (MCF)"], body))
    return Case([p], [str(p), *RUN, *UTC], expect=expect_of(rows))


def vm_vb_columns(d):
    """Vm (measured) beside Vb (base): Vm is the uncorrected volume."""
    n = 24
    vals = values(n)
    body = [[t, p, tt, v, f"{float(v) * 5.1:.2f}"] for t, (p, tt, v) in zip(hourly(n), vals)]
    p = write(d, "vm_vb.csv", csv(["Interval end", "p [bar(g)]", "T [degC]", "Vb [m3]", "Vm [m3]"],
                                  [[r[0], r[1], r[2], r[4], r[3]] for r in body]))
    return Case([p], [str(p), *RUN, *UTC], expect=expect_of(metric_rows(vals)))


def cor_unc_columns(d):
    n = 24
    vals = values(n)
    body = [[t, p, tt, f"{float(v) * 5.1:.2f}", v] for t, (p, tt, v) in zip(hourly(n), vals)]
    p = write(d, "cor_unc.csv", csv(["Interval end", "Press. (bar g)", "Temp. (degC)", "Cor. Vol (m3)",
                                     "Unc. Vol (m3)"], body))
    return Case([p], [str(p), *RUN, *UTC], expect=expect_of(metric_rows(vals)))


def standard_volume_only(d):
    """Only a standard (corrected) volume in MSCF: there is no uncorrected volume to correct."""
    n = 24
    body = [[t, p, tt, f"{float(v) * 0.18:.4f}"] for t, (p, tt, v) in zip(hourly(n), values(n))]
    p = write(d, "mscf_only.csv", csv(["Interval end", "Line pressure [bar(g)]", "Line temperature [degC]",
                                       "Volume (MSCF)"], body))
    return Case([p], [str(p), *RUN, *UTC], exit_code=2,
                must_say=["mscf_only.csv", "Volume (MSCF)", "corrected", "--column"])


def two_volume_candidates(d):
    n = 24
    vals = values(n)
    body = [[t, p, tt, v, f"{float(v) + 1:.1f}"] for t, (p, tt, v) in zip(hourly(n), vals)]
    p = write(d, "two_volumes.csv", csv(["Interval end", "Line pressure [bar(g)]", "Line temperature [degC]",
                                         "Volume [m3]", "Meter volume [m3]"], body))
    return Case([p], [str(p), *RUN, *UTC], exit_code=2,
                must_say=["two_volumes.csv", "'Volume [m3]'", "'Meter volume [m3]'",
                          "--column 'Volume [m3]=volume_line'"])


def two_volume_candidates_picked(d):
    """The same file with the --column line the refusal gave: the picked column is read."""
    n = 24
    vals = values(n)
    body = [[t, p, tt, f"{float(v) + 1:.1f}", v] for t, (p, tt, v) in zip(hourly(n), vals)]
    p = write(d, "two_volumes.csv", csv(["Interval end", "Line pressure [bar(g)]", "Line temperature [degC]",
                                         "Volume [m3]", "Meter volume [m3]"], body))
    return Case([p], [str(p), *RUN, *UTC, "--column", "Meter volume [m3]=volume_line"],
                expect=expect_of(metric_rows(vals)))


def weak_volume_evidence(d):
    """'Consumption' alone: billed consumption is often at base conditions; the role is a guess."""
    n = 24
    body = [[t, p, tt, v] for t, (p, tt, v) in zip(hourly(n), values(n))]
    p = write(d, "consumption.csv", csv(["Interval end", "Line pressure [bar(g)]", "Line temperature [degC]",
                                         "Consumption (m3)"], body))
    return Case([p], [str(p), *RUN, *UTC], exit_code=2,
                must_say=["consumption.csv", "Consumption (m3)", "--column 'Consumption (m3)=volume_line'"])


# ------------------------------------------------------------ 2. redundant quantities (reader)
def _volume_and_index(d, name, factor=1.0, odd_row=None):
    n = 25
    vals = values(n)
    idx = 50_000.0
    body, rows = [], []
    for i, (t, (p, tt, v)) in enumerate(zip(hourly(n), vals)):
        if i:
            idx += float(v)
        vol = float(v) * factor
        if odd_row is not None and i == odd_row:
            vol += 40.0
        body.append([t, p, tt, f"{vol:.1f}", f"{idx:.1f}"])
        if i and i != odd_row:
            rows.append((vol, float(p) * 1e5, float(tt) + 273.15))
        elif i == odd_row:
            rows.append((None, None, None))
        else:
            rows.append((vol, float(p) * 1e5, float(tt) + 273.15))
    p = write(d, name, csv(HEADER + ["Meter index [m3]"], body))
    return p, rows


def volume_and_index_agree(d):
    """Interval volume and index difference agree (the first row's volume has no index difference)."""
    p, rows = _volume_and_index(d, "agree.csv")
    return Case([p], [str(p), *RUN, *UTC], expect=expect_of(rows),
                check=lambda s, out: _no_flag(s, "volume_mismatch"))


def volume_and_index_disagree(d):
    """The interval volumes are 1.25 x the index differences in every row: refused."""
    p, _ = _volume_and_index(d, "disagree.csv", factor=1.25)
    return Case([p], [str(p), *RUN, *UTC], exit_code=2,
                must_say=["disagree.csv", "Uncorrected volume [m3]", "Meter index [m3]", "--column"])


def volume_and_index_one_row(d):
    """One row's interval volume is 40 m3 off its index difference: flagged and left without a result."""
    p, rows = _volume_and_index(d, "one_row.csv", odd_row=9)
    return Case([p], [str(p), *RUN, *UTC], expect=expect_of(rows), flags={"volume_mismatch": 1})


def flow_rate_only(d):
    """Only a flow rate (m3/h) at hourly rows: each interval is rate x its duration (1 h)."""
    n = 24
    vals = values(n)
    body = [[t, p, tt, v] for t, (p, tt, v) in zip(hourly(n), vals)]
    path = write(d, "flow.csv", csv(["Interval end", "Line pressure [bar(g)]", "Line temperature [degC]",
                                     "Flow rate [m3/h]"], body))
    return Case([path], [str(path), *RUN, *UTC], expect=expect_of(metric_rows(vals)))


def flow_and_volume_disagree(d):
    """Interval volumes and a flow rate 20 % higher: the interval volumes count, the difference is noted."""
    n = 24
    vals = values(n)
    body = [[t, p, tt, v, f"{float(v) * 1.2:.2f}"] for t, (p, tt, v) in zip(hourly(n), vals)]
    path = write(d, "flow_vs_volume.csv", csv(HEADER + ["Flow rate [m3/h]"], body))

    def check(s, out):
        assert any("flow rate x duration differs" in n for n in s["log"]["notes"]), s["log"]["notes"]
    return Case([path], [str(path), *RUN, *UTC], expect=expect_of(metric_rows(vals)), check=check)


def _no_flag(s, kind):
    assert not s["flags"].get(kind), s["flags"]


# ---------------------------------------------------------------- 3. header repeated mid-file
def _joined_exports(d, first_unit, second_unit, name):
    n = 12
    vals1, vals2 = values(n), values(n, p0=4.4)
    f = {"kPa(g)": 1e3, "bar(g)": 1e5}
    w = {"kPa(g)": (lambda x: f"{float(x) * 100:.1f}"), "bar(g)": (lambda x: x)}
    h1 = ["Interval end", f"Line pressure [{first_unit}]", "Line temperature [degC]", "Uncorrected volume [m3]"]
    h2 = ["Interval end", f"Line pressure [{second_unit}]", "Line temperature [degC]", "Uncorrected volume [m3]"]
    ts = hourly(2 * n)
    body = [[t, w[first_unit](p), tt, v] for t, (p, tt, v) in zip(ts[:n], vals1)]
    body.append(h2)
    body += [[t, w[second_unit](p), tt, v] for t, (p, tt, v) in zip(ts[n:], vals2)]
    rows = [(float(v), float(w[first_unit](p)) * f[first_unit], float(tt) + 273.15) for p, tt, v in vals1]
    rows += [(float(v), float(w[second_unit](p)) * f[second_unit], float(tt) + 273.15) for p, tt, v in vals2]
    path = write(d, name, csv(h1, body))
    return Case([path], [str(path), *RUN, *UTC], expect=expect_of(rows))


def header_repeat_kpa_then_bar(d):
    return _joined_exports(d, "kPa(g)", "bar(g)", "joined_kpa_bar.csv")


def header_repeat_bar_then_kpa(d):
    return _joined_exports(d, "bar(g)", "kPa(g)", "joined_bar_kpa.csv")


# ------------------------------------------------------------------------ 4. non-finite cells
def non_finite_cells(d):
    n = 24
    ts = hourly(n)
    vals = [list(v) for v in values(n)]
    rows = metric_rows(vals)
    bad = {3: (0, "inf"), 7: (2, "-inf"), 11: (1, "NaN"), 15: (0, "1e308"), 19: (2, "1e308")}
    for i, (j, text) in bad.items():
        vals[i][j] = text
        v, p, t = rows[i]
        rows[i] = (None if j == 2 else v, None if j == 0 else p, None if j == 1 else t)
    p = write(d, "non_finite.csv", csv(HEADER, [[t, *v] for t, v in zip(ts, vals)]))

    def check(s, out):
        assert "RuntimeWarning" not in out and "overflow" not in out.lower(), out
        for k, v in s["totals"].items():
            assert v is None or not isinstance(v, float) or v == v and abs(v) < 1e300, (k, v)
    return Case([p], [str(p), *RUN, *UTC], expect=expect_of(rows), flags={"unreadable": 4}, check=check)


# ------------------------------------------------------------------------------ 5. summary rows
def _with_trailer(d, name, trailer):
    n = 24
    ts = hourly(n)
    vals = values(n)
    total = sum(float(v) for _, _, v in vals)
    body = [[t, *v] for t, v in zip(ts, vals)] + [trailer(total)]
    p = write(d, name, csv(HEADER, body))
    return Case([p], [str(p), *RUN, *UTC], expect=expect_of(metric_rows(vals)),
                check=lambda s, out: _summary_row_recorded(s))


def _summary_row_recorded(s):
    rows = s["log"]["dropped_rows"]["entries"]
    assert any("summary" in e["problem"] for e in rows), rows


def totals_row_date_only(d):
    """A totals row stamped with the next day's date only, after the data."""
    return _with_trailer(d, "totals_date.csv", lambda tot: ["2026-03-03", "", "", f"{tot:.1f}"])


def totals_row_word(d):
    return _with_trailer(d, "totals_word.csv", lambda tot: ["Total", "", "", f"{tot:.1f}"])


def average_row_word(d):
    return _with_trailer(d, "average_word.csv", lambda tot: ["Average", "4.15", "8.6", f"{tot / 24:.4f}"])


def sum_row_without_word(d):
    """The last row's volume is the sum of all the others (its time is the next hour)."""
    return _with_trailer(d, "sum_row.csv", lambda tot: ["2026-03-03 01:00", "", "", f"{tot:.1f}"])


# ----------------------------------------------------------------------- 6. mixed intervals
def mixed_intervals_interpolated(d):
    """Two hours of 5-minute rows, then hourly rows, substitution on: nothing is invented."""
    ts = hourly(24, "2026-03-02 00:05", 5) + hourly(12, "2026-03-02 03:00", 60)
    vals = values(24, v0=10.0) + values(12)
    p = write(d, "mixed.csv", csv(HEADER, [[t, *v] for t, v in zip(ts, vals)]))

    def check(s, out):
        assert not s["flags"].get("gap"), s["flags"]
        assert not s["flags"].get("estimated"), s["flags"]
        assert s["totals"]["intervals"] == 36, s["totals"]
    return Case([p], [str(p), *RUN, *UTC, "--substitution", "interpolate"], expect=expect_of(metric_rows(vals)),
                check=check)


def mixed_intervals_with_gap(d):
    """Hourly rows with three hours missing, interpolated: three hourly rows are filled, no more."""
    ts = hourly(10) + hourly(10, "2026-03-02 14:00")
    vals = values(20)
    p = write(d, "gap.csv", csv(HEADER, [[t, *v] for t, v in zip(ts, vals)]))

    def check(s, out):
        assert s["flags"].get("gap", 0) >= 1 and s["totals"]["intervals"] == 23, (s["flags"], s["totals"])
    return Case([p], [str(p), *RUN, *UTC], expect=expect_of(metric_rows(vals)), check=check)


# --------------------------------------------------------------------- 7. number format
def decimal_comma_contradiction(d):
    n = 24
    ts = hourly(n)
    vals = [list(v) for v in values(n)]
    rows = metric_rows(vals)
    vals[5][0] = "30.125"  # a decimal-point number (or 30 125 grouped) among decimal-comma values
    v, _, t = rows[5]
    rows[5] = (v, None, t)
    body = []
    for i, (tt, v) in enumerate(zip(ts, vals)):
        cells = [c.replace(".", ",") for c in v]
        if i == 5:
            cells[0] = "30.125"
        body.append([tt, *cells])
    p = write(d, "decimal_comma.csv", csv(HEADER, body, sep=";"))
    return Case([p], [str(p), *RUN, *UTC], expect=expect_of(rows), flags={"unreadable": 1})


# ----------------------------------------------------------------------- 8. negative volumes
def _negative(d, extra):
    n = 24
    ts = hourly(n)
    vals = [list(v) for v in values(n)]
    vals[6][2] = "-35.0"
    p = write(d, "negative.csv", csv(HEADER, [[t, *v] for t, v in zip(ts, vals)]))
    rows = metric_rows(vals)
    return p, rows


def negative_volume_left_out(d):
    p, rows = _negative(d, ())
    rows[6] = (None, None, None)
    return Case([p], [str(p), *RUN, *UTC], expect=expect_of(rows), flags={"negative_volume": 1})


def negative_volume_bidirectional(d):
    p, rows = _negative(d, ())
    return Case([p], [str(p), *RUN, *UTC, "--bidirectional"], expect=expect_of(rows))


# ------------------------------------------------------------------------- 9. empty columns
def volume_column_empty(d):
    n = 24
    body = [[t, p, tt, ""] for t, (p, tt, v) in zip(hourly(n), values(n))]
    p = write(d, "empty_volume.csv", csv(HEADER, body))
    return Case([p], [str(p), *RUN, *UTC], exit_code=2, must_say=["empty_volume.csv", "Uncorrected volume [m3]",
                                                               "empty"])


def formulas_without_values(d):
    """A workbook whose volume cells are formulas saved without their values (no cached result)."""
    import datetime as dt

    n = 24
    rows = [HEADER]
    for i, (t, (p, tt, v)) in enumerate(zip(hourly(n), values(n))):
        rows.append([dt.datetime.fromisoformat(t), float(p), float(tt), f"=E{i + 2}*1"])
    p = write(d, "formulas.xlsx", xlsx([("Log", rows, False)]))
    return Case([p], [str(p), *RUN, *UTC], exit_code=2, must_say=["formulas.xlsx", "Uncorrected volume [m3]",
                                                               "formula"])


# ------------------------------------------------------------------------------- 10. DST
def _dst_autumn(d):
    """Berlin clock through 2026-10-25 (03:00 CEST → 02:00 CET): 02:00-03:00 appears twice."""
    # interval ends on the wall clock: 02:00 CEST (00:00 UTC), then 02:00 CET (01:00 UTC)
    stamps = ["2026-10-25 00:00", "2026-10-25 01:00", "2026-10-25 02:00", "2026-10-25 02:00",
              "2026-10-25 03:00", "2026-10-25 04:00", "2026-10-25 05:00", "2026-10-25 06:00"]
    vals = values(len(stamps))
    p = write(d, "dst_autumn.csv", csv(HEADER, [[t, *v] for t, v in zip(stamps, vals)]))
    return p, metric_rows(vals)


def dst_autumn_without_zone(d):
    p, _ = _dst_autumn(d)
    args = [a for a in RUN]
    return Case([p], [str(p), *args], exit_code=2, must_say=["dst_autumn.csv", "--timezone"])


def dst_autumn_with_zone(d):
    p, rows = _dst_autumn(d)
    return Case([p], [str(p), *RUN, "--timezone", "Europe/Berlin"], expect=expect_of(rows))


def dst_spring_without_zone(d):
    """Berlin clock through 2026-03-29 (02:00 CET → 03:00 CEST): the wall time 02:00 does not
    exist, so the stamps jump from 01:00 (00:00 UTC) to 03:00 (01:00 UTC)."""
    stamps = ["2026-03-29 00:00", "2026-03-29 01:00", "2026-03-29 03:00", "2026-03-29 04:00",
              "2026-03-29 05:00", "2026-03-29 06:00", "2026-03-29 07:00"]
    vals = values(len(stamps))
    p = write(d, "dst_spring.csv", csv(HEADER, [[t, *v] for t, v in zip(stamps, vals)]))
    return Case([p], [str(p), *RUN], exit_code=2, must_say=["dst_spring.csv", "--timezone"])


# --------------------------------------------------------------------------- 11. bounded gaps
def sparse_second_blocks(d):
    """Two minutes of 1-second rows on 5 January and again on 20 March: a break, not 6 million rows."""
    ts = [f"2026-01-05 10:{m:02d}:{s:02d}" for m in range(2) for s in range(60)]
    ts += [f"2026-03-20 10:{m:02d}:{s:02d}" for m in range(2) for s in range(60)]
    vals = values(len(ts), v0=0.05)
    p = write(d, "sparse.csv", csv(HEADER, [[t, *v] for t, v in zip(ts, vals)]))

    def check(s, out):
        assert s["totals"]["intervals"] == 240, s["totals"]
        assert s["flags"].get("gap", 0) >= 1, s["flags"]
    return Case([p], [str(p), *RUN, *UTC, "--substitution", "interpolate"], expect=expect_of(metric_rows(vals)),
                check=check)


# ------------------------------------------------------------------ 15. files and sheets
def encrypted_workbook(d):
    """An OLE2 (compound file) container holding an encrypted package, its directory past 8 KiB."""
    head = bytearray(512)
    head[:8] = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"
    filler = bytes(12 * 1024)
    names = b"".join(n.encode("utf-16-le").ljust(128, b"\0") for n in
                     ("Root Entry", "EncryptionInfo", "EncryptedPackage", "\x06DataSpaces"))
    p = write(d, "locked.xlsx", bytes(head) + filler + names + bytes(512))
    return Case([p], [str(p), *RUN, *UTC], exit_code=2, must_say=["locked.xlsx", "encrypted"])


def utf16_without_bom(d):
    n = 24
    vals = values(n)
    text = csv(HEADER, [[t, *v] for t, v in zip(hourly(n), vals)], sep="\t")
    p = write(d, "utf16.txt", text.encode("utf-16-le"))
    return Case([p], [str(p), *RUN, *UTC], expect=expect_of(metric_rows(vals)))


def _log_rows(n=24, p0=4.0):
    import datetime as dt

    vals = values(n, p0=p0)
    rows = [HEADER] + [[dt.datetime.fromisoformat(t), float(p), float(tt), float(v)]
                       for t, (p, tt, v) in zip(hourly(n), vals)]
    return rows, metric_rows(vals)


def hidden_log_sheet(d):
    rows, _ = _log_rows()
    p = write(d, "hidden.xlsx", xlsx([("Cover", [["Heron Lane monthly export"], ["prepared by the logger"]], False),
                                      ("Data", rows, True)]))
    return Case([p], [str(p), *RUN, *UTC], exit_code=2, must_say=["hidden.xlsx", "Data", "hidden", "--sheet"])


def hidden_log_sheet_named(d):
    rows, metric = _log_rows()
    p = write(d, "hidden.xlsx", xlsx([("Cover", [["Heron Lane monthly export"]], False), ("Data", rows, True)]))
    return Case([p], [str(p), *RUN, *UTC, "--sheet", "Data"], expect=expect_of(metric))


def two_log_sheets(d):
    a, _ = _log_rows()
    b, _ = _log_rows(p0=5.0)
    p = write(d, "two_sheets.xlsx", xlsx([("Meter A", a, False), ("Meter B", b, False)]))
    return Case([p], [str(p), *RUN, *UTC], exit_code=2,
                must_say=["two_sheets.xlsx", "Meter A", "Meter B", "--sheet"])


# ------------------------------------------------------------------------- 16. opening index
def _index_log(d):
    n = 24
    vals = values(n)
    idx = 7_000.0
    body = []
    for t, (p, tt, v) in zip(hourly(n), vals):
        idx += float(v)
        body.append([t, p, tt, f"{idx:.1f}"])
    p = write(d, "index.csv", csv(HEADER[:3] + ["Meter index [m3]"], body))
    return p, metric_rows(vals)


def index_opening_reading(d):
    """The first reading opens the log: 23 intervals, and the opening reading is reported."""
    p, rows = _index_log(d)

    def check(s, out):
        assert s["log"]["opening_index_m3"] == 7120.0, s["log"]["opening_index_m3"]
    return Case([p], [str(p), *RUN, *UTC], expect=expect_of(rows[1:]), check=check)


def index_with_opening_option(d):
    """--opening-index gives the reading before the first row: the first interval counts too."""
    p, rows = _index_log(d)
    return Case([p], [str(p), *RUN, *UTC, "--opening-index", "7000 m3"], expect=expect_of(rows))



# ------------------------------------------------------------------------ 13. the time axis
def midnight_written_24_00(d):
    """A gas-day export that writes midnight as '24:00' of the day ending (common practice): all 48
    rows of two days count, none is lost."""
    ts = [f"2026-06-0{day} {h:02d}:00" for day in (1, 2) for h in range(1, 25)]
    vals = values(len(ts))
    p = write(d, "gas_day_24.csv", csv(HEADER, [[t, *v] for t, v in zip(ts, vals)]))
    return Case([p], [str(p), *RUN, *UTC], expect={**expect_of(metric_rows(vals)), "intervals": 48})


def us_hour_ending_columns(d):
    """Copper Flats, US gas-day layout: Date + HE 1..24, psig, degF, Mcf; the Chicago clock."""
    body, rows = [], []
    for day in ("2026-06-01", "2026-06-02"):
        for he in range(1, 25):
            pg, tf, mcf = 300 + he % 5, 50 + he % 3, 1.0 + 0.1 * (he % 4)
            body.append([day, he, pg, tf, f"{mcf:.1f}"])
            rows.append((float(f"{mcf:.1f}") * 1000 * FT3, pg * PSI, (tf - 32) * 5 / 9 + 273.15))
    p = write(d, "copper_flats_he.csv", csv(["Date", "HE", "Pressure (psig)", "Temperature (degF)", "Volume (Mcf)"],
                                            body))
    return Case([p], [str(p), *RUN, "--timezone", "America/Chicago"], expect=expect_of(rows))


def bare_hour_column(d):
    """A 'Hour' column of numbers 0..23 beside the date: start or end is not said, refused with the fix."""
    body = [["2026-06-01", h, "4.00", "8.0", "120.0"] for h in range(24)]
    p = write(d, "hours.csv", csv(["Date", "Hour", *HEADER[1:]], body))
    return Case([p], [str(p), *RUN, *UTC], exit_code=2, must_say=["hours.csv", "Hour", "hour_ending",
                                                                   "hour_beginning"])


def re_export_overlaps_with_other_values(d):
    """A re-export with corrected volumes overlapping the first export: refused unless --overlap."""
    ts = hourly(24)
    vals = values(24)
    first = write(d, "export_1.csv", csv(HEADER, [[t, *v] for t, v in zip(ts[:16], vals[:16])]))
    fixed = [(p_, t_, f"{float(v_) + 1:.1f}") if i < 4 else (p_, t_, v_) for i, (p_, t_, v_) in enumerate(vals[12:])]
    second = write(d, "export_2.csv", csv(HEADER, [[t, *v] for t, v in zip(ts[12:], fixed)]))
    return Case([first, second], [str(first), str(second), *RUN, *UTC], exit_code=2,
                must_say=["export_1.csv row 14", "export_2.csv row 2", "--overlap later", "--overlap earlier"])


def re_export_overlaps_later_wins(d):
    c = re_export_overlaps_with_other_values(d)
    vals = values(24)
    rows = metric_rows(vals[:12]) + [(float(v) + 1, float(p_) * 1e5, float(t_) + 273.15) for p_, t_, v in vals[12:16]] \
        + metric_rows(vals[16:])
    return Case(c.files, c.args + ["--overlap", "later"], expect=expect_of(rows))

CASES = [
    us_corr_uncorr_mcf, us_index_cf_corr_mcf, vm_vb_columns, cor_unc_columns, standard_volume_only,
    two_volume_candidates, two_volume_candidates_picked, weak_volume_evidence,
    volume_and_index_agree, volume_and_index_disagree, volume_and_index_one_row, flow_rate_only,
    flow_and_volume_disagree,
    header_repeat_kpa_then_bar, header_repeat_bar_then_kpa,
    non_finite_cells,
    totals_row_date_only, totals_row_word, average_row_word, sum_row_without_word,
    mixed_intervals_interpolated, mixed_intervals_with_gap,
    decimal_comma_contradiction,
    negative_volume_left_out, negative_volume_bidirectional,
    volume_column_empty, formulas_without_values,
    dst_autumn_without_zone, dst_autumn_with_zone, dst_spring_without_zone,
    sparse_second_blocks,
    encrypted_workbook, utf16_without_bom, hidden_log_sheet, hidden_log_sheet_named, two_log_sheets,
    index_opening_reading, index_with_opening_option,
    midnight_written_24_00, us_hour_ending_columns, bare_hour_column, re_export_overlaps_with_other_values,
    re_export_overlaps_later_wins,
]


# ------------------------------------------------------------------ meter kinds (issue 23)
def us_orifice_dst_gap(d):
    """A US flow computer's hourly orifice export (invented meter "Copper Flats O2"): Date and Time
    columns, psig, degF, inH2O (60 degF), America/Chicago clock through the spring change of
    2026-03-08 (02:00 CST → 03:00 CDT: the stamps jump from 01:00 to 03:00, one hour apart) and two
    lost hours. The true month is worked out here independently of meterfix: each row's mass by
    `fluids`' ISO 5167 orifice solver (differential_pressure_meter_solver, flange taps) with the
    ideal-gas density rho = p M / (R T) (M from `chemicals`' molar masses, R of the 2019 SI:
    scipy.constants), d and D at the line temperature from 4.250 in and 7.981 in at 68 degF
    (16.0e-6 and 11.6e-6 1/K), kappa 1.3, mu 1.1e-5 Pa s; base volume = mass / (pb M / (R Tb))."""
    import chemicals
    from fluids.flow_meter import differential_pressure_meter_solver
    from scipy.constants import R

    stamps = (["03/07/2026", f"{h:02d}:00"] for h in range(18, 24))
    stamps = list(stamps) + [["03/08/2026", f"{h:02d}:00"] for h in (0, 1, 3, 4, 5, 6, 7, 8, 9, 10)]
    n = len(stamps)
    psig = [round(600.0 + 3.1 * (i % 5), 1) for i in range(n)]
    degf = [round(52.0 + 0.7 * (i % 4), 1) for i in range(n)]
    inh2o = [round(35.0 + 4.3 * (i % 6), 2) for i in range(n)]
    lost = {9, 10}  # 05:00 and 06:00 CDT are not in the file
    body = [[*stamps[i], psig[i], degf[i], inh2o[i]] for i in range(n) if i not in lost]
    p = write(d, "copper_flats_o2.csv", csv(["Date", "Time", "Static Pressure (psig)", "Flowing Temp (°F)",
                                              "Diff Pressure (inH2O)"], body))
    m_gas = 0.95 * chemicals.MW("74-82-8") / 1000.0 + 0.05 * chemicals.MW("74-84-0") / 1000.0  # methane, ethane
    pb, tb = 14.73 * PSI, (60.0 - 32.0) / 1.8 + 273.15
    mass = 0.0
    for i in range(n):
        if i in lost:
            continue
        p1 = psig[i] * PSI + 14.4 * PSI
        t = (degf[i] - 32.0) / 1.8 + 273.15
        dt = t - ((68.0 - 32.0) / 1.8 + 273.15)
        pipe, bore = 7.981 * 0.0254 * (1 + 11.6e-6 * dt), 4.250 * 0.0254 * (1 + 16.0e-6 * dt)
        dp = inh2o[i] * 248.84  # inch of water at 60 degF, NIST SP 811 appendix B.8
        qm = differential_pressure_meter_solver(D=pipe, D2=bore, P1=p1, P2=p1 - dp, rho=p1 * m_gas / (R * t),
                                                mu=1.1e-5, k=1.3, meter_type="ISO 5167 orifice", taps="flange")
        mass += qm * 3600.0
    args = [str(p), "--method", "ideal", "--gas", "methane=0.95,ethane=0.05", "--base", "14.73psia-60F",
            "--atmospheric-pressure", "14.4 psia", "--timezone", "America/Chicago", "--kind", "orifice",
            "--pipe-diameter", "7.981 in", "--bore-diameter", "4.250 in", "--diameters-at", "68 degF",
            "--taps", "flange", "--viscosity", "1.1e-5 Pa s", "--isentropic-exponent", "1.3", "--quiet"]

    def check(s, out):
        assert s["flow_meter"]["kind"] == "orifice" and s["totals"]["intervals_without_result"] == 0
        assert s["totals"]["intervals"] == n  # the lost hours are gap rows; the spring hour is no gap
    return Case([p], args, expect={"mass_kg": mass, "base_volume_m3": mass / (pb * m_gas / (R * tb))},
                flags={"gap": 2}, check=check)


CASES.append(us_orifice_dst_gap)
