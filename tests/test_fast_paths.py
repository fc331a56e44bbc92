"""The shortcuts taken for speed give what the plain formulation gives.

Each check compares a fast path of the reader, quality step or month run with the direct
computation it replaces, done with a reference library (numpy, pandas, the re module) on
invented data, including the awkward cases (NaN, inf, ties, unsorted groups, mixed cells).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from meterfix.engine import pipeline as P
from meterfix.engine import quality as Q
from meterfix.readers import logs as L
from meterfix.readers import tables as T
from meterfix.readers.columns import read_header
from meterfix.readers.times import parse_datetimes


def test_neighbour_median_matches_numpy_nanmedian():
    # reference: numpy.nanmedian over the neighbours of each point (the point itself left out)
    rng = np.random.default_rng(5)
    for trial in range(40):
        x = rng.standard_normal(60) * 10.0 ** rng.uniform(-2, 6)
        x[rng.random(60) < 0.2] = np.nan
        if trial % 4 == 0:
            x[rng.integers(0, 60)] = np.inf
        half = 1 + trial % 3
        got = Q._neighbour_median(x, half)
        for i in range(60):
            nb = [x[i - k] for k in range(1, half + 1) if i - k >= 0] + [x[i + k] for k in range(1, half + 1) if i + k < 60]
            nb = np.array(nb)
            if not np.isfinite(nb).any():
                assert np.isnan(got[i])
                continue
            with np.errstate(invalid="ignore"):
                want = np.nanmedian(nb)
            assert got[i] == want or (np.isnan(got[i]) and np.isnan(want)), (trial, i, nb)


def _group_totals_by_pandas(cols: dict, codes: np.ndarray) -> pd.DataFrame:
    """The plain formulation: one pandas groupby per column (sum with min_count=1, mean)."""
    df = pd.DataFrame({k: v for k, v in cols.items()})
    g = df.groupby(codes, sort=True)
    out = pd.DataFrame({
        "intervals": g.size(),
        "hours": g["duration"].sum() / 3600.0,
        "volume_line": g["volume_line"].sum(min_count=1),
        "volume_base": g["volume_base"].sum(min_count=1),
        "volume_base_ideal": g["volume_base_ideal"].sum(min_count=1),
        "mass": g["mass"].sum(min_count=1),
        "energy": g["energy"].sum(min_count=1),
        "pressure_line_mean": g["pressure_line"].mean(),
        "temperature_line_mean": g["temperature_line"].mean(),
        "estimated_intervals": g["estimated"].sum(),
        "flagged_intervals": g["flagged"].sum(),
    })
    out["ideal_gas_error_pct"] = 100.0 * (out["volume_base_ideal"] / out["volume_base"] - 1.0)
    est = df["volume_base"].where(df["estimated"]).groupby(codes).sum(min_count=1)
    out["estimated_volume_share_pct"] = (100.0 * est / out["volume_base"]).fillna(0.0)
    return out


@pytest.mark.parametrize("sorted_codes", [True, False])
def test_group_totals_match_a_groupby_per_column(sorted_codes):
    # reference: pandas groupby, column by column and grouping by grouping
    rng = np.random.default_rng(11)
    n = 500
    for trial in range(10):
        vb = rng.uniform(100, 900, n) * 10.0 ** rng.uniform(0, 4)
        cols = {"duration": np.full(n, 3600.0), "volume_line": vb * 0.02, "volume_base": vb,
                "volume_base_ideal": vb * 0.995, "mass": vb * 0.7, "energy": vb * 3.8e7,
                "pressure_line": rng.uniform(1e6, 8e6, n), "temperature_line": rng.uniform(270, 300, n),
                "estimated": rng.random(n) < 0.05 * (trial % 3), "flagged": rng.random(n) < 0.1}
        if trial % 2:
            for c in ("volume_base", "volume_base_ideal", "pressure_line"):
                cols[c][rng.random(n) < 0.03] = np.nan
        days = np.sort(rng.integers(0, 21, n)) if sorted_codes else rng.integers(0, 21, n)
        days = np.unique(days, return_inverse=True)[1]
        whole = np.zeros(n, np.int64)
        got = P._group_totals(cols, [(days, pd.Index(np.arange(days.max() + 1))),
                                     (whole, pd.Index([0]))])
        for frame, codes in zip(got, (days, whole)):
            want = _group_totals_by_pandas(cols, codes)
            pd.testing.assert_frame_equal(frame, want, check_exact=True, check_names=False,
                                          check_index_type=False)


def test_decimal_mark_matches_cell_by_cell_counts():
    # reference: the two patterns matched cell by cell with the re module
    rng = np.random.default_rng(3)
    cells = ["1.5", "1,5", "1.234,5", "1,234.5", "12", "", " 3.5 ", "-2.25", "+1 234,5", "1\u00a0234.5", "abc",
             "1.2.3", "12,345", "1'234.50", ".5", "5.", "1e5", "\uff11.\uff15", "1.5\n2.5", 7.5, None]

    def by_cell(df):
        comma = point = 0
        for j in df.columns:
            for c in df[j].iloc[:2000]:
                if type(c) is str:
                    t = c.strip()
                    comma += bool(T._COMMA_DEC.match(t))
                    point += bool(T._POINT_DEC.match(t))
        return "," if comma > point else "."

    for trial in range(400):
        k = int(rng.integers(1, 9))
        pool = cells if trial % 2 else cells[:8]
        df = pd.DataFrame({j: [pool[int(rng.integers(0, len(pool)))] for _ in range(k)] for j in range(3)},
                          dtype=object)
        assert T._decimal_of(df) == by_cell(df), df


def test_cells_without_letters_never_name_a_quantity():
    # reference: the header reader itself, on time stamps and numbers
    for cell in ["2026-10-01 01:00", "35.529", "1 234,5", "-", "01.10.2026 07:00", "46296.5", "12:00"]:
        assert L._MAY_NAME.search(cell) is None
        assert read_header(cell, 0, {}) is None
    assert L._known_text("Line pressure [bar(g)]") and L._known_text("Temp (°F)")
    assert L._score(["Timestamp", "Pressure [bar(a)]", "Temperature [degC]", "Volume [m3]"]) == 404.0
    assert L._score(["2026-10-01 01:00", "35.5", "10.2", "500.1"]) == 0.0
    assert read_header("+1e5", 0, {}) is None and not L._known_text("+1e5")


def test_plain_iso_times_read_as_the_general_path_reads_them():
    # reference: pandas.to_datetime(format='ISO8601'); one cell with spaces sends the column down
    # the general path, which must agree on every other cell
    stamps = [f"2026-10-{d:02d} {h:02d}:00" for d in range(1, 4) for h in range(24)] + ["2026-02-30 01:00"]
    got, bad, utc = parse_datetimes(np.array(stamps, dtype=object), {})
    want = pd.to_datetime(pd.Series(stamps), format="ISO8601", errors="coerce").to_numpy("datetime64[ns]")
    np.testing.assert_array_equal(got, want)
    assert bad.tolist() == [False] * (len(stamps) - 1) + [True] and not utc
    spaced = list(stamps)
    spaced[0] = " " + spaced[0] + " "
    got2, bad2, _ = parse_datetimes(np.array(spaced, dtype=object), {})
    np.testing.assert_array_equal(got2, got)
    np.testing.assert_array_equal(bad2, bad)


def test_exact_iso_reading_agrees_with_pandas_and_declines_the_rest():
    # reference: pandas.to_datetime(format='ISO8601') on columns the numpy reading takes
    from meterfix.readers.times import _exact_iso

    for stamps in ([f"2026-03-29 {h:02d}:00" for h in range(24)],
                   [f"2026-10-25T{h:02d}:00:{s:02d}" for h in range(24) for s in (0, 30)]):
        got = _exact_iso(np.array(stamps, dtype=object))
        want = pd.to_datetime(pd.Series(stamps), format="ISO8601").to_numpy("datetime64[ns]")
        np.testing.assert_array_equal(got, want)
    for odd in (["2026-10-01 01:00", "2026-10-01T02:00"], ["2026-10-01 24:00"], ["2026-10-01T01:00+01"],
                ["2500-01-01 00:00"], ["2026-10-01 01:00", "2026-10-01 01:00:00"], ["2026-10-01 01:00", None]):
        assert _exact_iso(np.array(odd, dtype=object)) is None, odd


def test_interval_csv_bytes_are_pandas_to_csv():
    # reference: pandas DataFrame.to_csv with the writer's options, on a month run's interval table
    # and on texts the csv module must quote (comma, quote, line break), formulas, NaN, -0, 1e-20
    import io

    from meterfix.cli.demo import demo_month
    from meterfix.engine.pipeline import run_month
    from meterfix.engine.settings import build_settings
    from meterfix.writers.tables import _csv_bytes, _neutralised, interval_table

    def ref(df):
        buf = io.StringIO()
        _neutralised(df).to_csv(buf, index=False, lineterminator="\n", float_format="%.10g")
        return buf.getvalue().encode("utf-8")

    frame, analyses = demo_month()
    s = build_settings(None, {"base": "normal-0c", "timezone": "Europe/Berlin", "gas_day_start": "06:00",
                              "elevation": "240 m"})
    df = interval_table(run_month(frame, analyses, s))
    assert _csv_bytes(df) == ref(df)
    odd = pd.DataFrame({"a": ["x,y", 'q"u', "=1+2", None, "line\nbreak"],
                        "b": [1.5, np.nan, 1e-20, -0.0, 123456789012.0], "c": [True, False, True, True, False],
                        "d": [1, 2, 3, 4, 5]})
    assert _csv_bytes(odd) == ref(odd)
    # blocks of rows, NaN here and there, carriage returns, empty and repeated texts, negative ints
    from meterfix.writers import tables as T

    rng = np.random.default_rng(8)
    n = 50
    x = rng.standard_normal(n) * 10.0 ** rng.integers(-12, 12, n)
    x[rng.random(n) < 0.2] = np.nan
    mixed = pd.DataFrame({"x": x, "y": rng.random(n), "t": rng.choice(["", "a\rb", "ok", "-5", "q,\"", None], n),
                          "i": rng.integers(-9, 9, n), "b": rng.random(n) < 0.5, "inf": np.full(n, np.inf)})
    old_rows = T._CSV_ROWS
    try:
        T._CSV_ROWS = 7
        assert _csv_bytes(mixed) == ref(mixed)
    finally:
        T._CSV_ROWS = old_rows


def test_csv_bytes_with_constant_and_neighbouring_discrete_columns_are_pandas_to_csv(tmp_path):
    # reference: pandas DataFrame.to_csv with the writer's options. Constant numbers (0.0 and -0.0
    # never mixed, NaN, an integer) are formatted once; neighbouring booleans and texts are joined
    # into one field per distinct combination; the interval table through interval_columns is the
    # interval CSV write_interval_csv writes
    import io

    from meterfix.writers.tables import (_csv_bytes, _neutralised, interval_columns, interval_csv_bytes,
                                        write_interval_csv)
    from workbook_month import plain_month

    def ref(df):
        buf = io.StringIO()
        _neutralised(df).to_csv(buf, index=False, lineterminator="\n", float_format="%.10g")
        return buf.getvalue().encode("utf-8")

    rng = np.random.default_rng(21)
    n = 40
    df = pd.DataFrame({"zero": np.zeros(n), "negzero": np.full(n, -0.0), "nan": np.full(n, np.nan),
                       "k": np.full(n, 7, dtype=np.int64), "c": np.full(n, 1.0 / 3.0),
                       "b1": rng.random(n) < 0.3, "t": rng.choice(["a,b", "=x", None, "ok"], n),
                       "b2": rng.random(n) < 0.5, "x": rng.standard_normal(n), "b3": rng.random(n) < 0.1,
                       "mixed": np.where(rng.random(n) < 0.5, 0.0, -0.0)})
    assert _csv_bytes(df) == ref(df)
    assert _csv_bytes(df.iloc[:0]) == ref(df.iloc[:0])
    r, _ = plain_month()
    csv = interval_csv_bytes(r, interval_columns(r))
    assert csv == write_interval_csv(r, tmp_path / "i.csv").read_bytes()
