"""The interval table as Parquet (issue 6: intervals as CSV, Parquet when pyarrow is installed).

pyarrow is the optional ``parquet`` extra: the tests that read Parquet skip without it (the test
extra does not install it). The Parquet file is read back and compared with the CSV written beside
it and with the MonthResult's own interval fields.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from openpyxl import load_workbook

from meterfix.writers import write_outputs
from meterfix.writers.tables import interval_parquet_bytes, write_interval_parquet
from workbook_month import plain_month


@pytest.fixture(scope="module")
def month(tmp_path_factory):
    pytest.importorskip("pyarrow")
    r, _ = plain_month()
    out = tmp_path_factory.mktemp("pq") / "out"
    return r, write_outputs(r, out)


def test_parquet_has_the_csv_columns_and_values(month):
    r, written = month
    path = written["parquet"]
    assert path.name == "FV-M1_2026-10_intervals.parquet" and path.parent == written["intervals"].parent
    pq = pd.read_parquet(path)
    csv = pd.read_csv(written["intervals"], keep_default_na=False, na_values=[""])
    assert list(pq.columns) == list(csv.columns)
    assert len(pq) == len(csv) == len(r.intervals)
    assert "volume_base [m3]" in pq.columns and "pressure_line [Pa]" in pq.columns  # units in the names
    # times: a UTC timestamp in Parquet, ISO text in the CSV, the result's own index in both
    t = pd.DatetimeIndex(pq["interval_end_utc"])
    assert str(t.tz) == "UTC"
    assert (t == pd.DatetimeIndex(pd.to_datetime(csv["interval_end_utc"], utc=True))).all()
    assert (t == r.intervals.index).all()
    for c in csv.columns[1:]:
        a, b = pq[c], csv[c]
        if pd.api.types.is_bool_dtype(a):
            assert (a.to_numpy() == b.astype(str).eq("True").to_numpy()).all(), c
        elif pd.api.types.is_float_dtype(a) or pd.api.types.is_integer_dtype(a):
            # the CSV keeps 10 significant digits, Parquet every digit
            assert a.to_numpy(float) == pytest.approx(b.to_numpy(float), rel=1e-9, nan_ok=True), c
        else:
            assert a.fillna("").astype(str).tolist() == b.fillna("").astype(str).tolist(), c
    # full precision: the Parquet values are the result's own fields
    for name, unit in (("volume_base", "m3"), ("z_line", None), ("energy", "J")):
        col = f"{name} [{unit}]" if unit else name
        assert np.array_equal(pq[col].to_numpy(float), r.intervals[name].to_numpy(float), equal_nan=True), col


def test_parquet_bytes_repeat_and_write_is_atomic(month, tmp_path):
    r, written = month
    assert interval_parquet_bytes(r) == written["parquet"].read_bytes()
    p = write_interval_parquet(r, tmp_path / "a.parquet")
    assert p.read_bytes() == written["parquet"].read_bytes()
    assert not [q for q in tmp_path.iterdir() if q.name.startswith(".")]  # no temporary file left
    from meterfix.errors import InputError

    with pytest.raises(InputError, match="already exists"):
        write_interval_parquet(r, p)


def test_overview_names_the_parquet_file(month):
    _, written = month
    ov = load_workbook(written["workbook"])["Overview"]
    labels = {ov.cell(row=i, column=1).value: ov.cell(row=i, column=2).value for i in range(1, ov.max_row + 1)}
    assert labels["Interval table file"] == written["intervals"].name
    assert labels["Interval table, Parquet"] == written["parquet"].name


def test_without_pyarrow_no_parquet_is_written(tmp_path, monkeypatch):
    import meterfix.writers as W
    import meterfix.writers.tables as T

    monkeypatch.setattr(W, "parquet_available", lambda: False)
    monkeypatch.setattr(T, "parquet_available", lambda: False)
    r, _ = plain_month()
    written = write_outputs(r, tmp_path / "out")
    assert "parquet" not in written
    assert not list((tmp_path / "out").glob("*.parquet"))
    assert write_interval_parquet(r, tmp_path / "x.parquet") is None
    ov = load_workbook(written["workbook"])["Overview"]
    assert "Interval table, Parquet" not in [ov.cell(row=i, column=1).value for i in range(1, ov.max_row + 1)]
