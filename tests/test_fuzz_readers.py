"""Fuzzing the readers with hypothesis (issue 9): random bytes, random table shapes and random
cells. Only meterfix's own error types may escape; whatever is read is a canonical frame whose
rows with a NaN value carry a flag.
"""

from __future__ import annotations

import io

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from meterfix import MeterfixError
from meterfix.readers import parse_analyses, parse_log

FUZZ = settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])

HEADERS = ["Interval end", "Line pressure [bar(g)]", "Line temperature [degC]", "Uncorrected volume [m3]",
           "Meter index [m3]", "Flow rate [m3/h]", "Barometric pressure [kPa]", "Date", "Time", "Status",
           "P [psig]", "Temp (degF)", "Volume (ft3)", "", "x"]
CELLS = st.one_of(
    st.floats(-1e7, 1e7).map(lambda x: f"{x:.6g}"),
    st.sampled_from(["", "n/a", "#DIV/0!", "--", "1,5", "1.234,5", "2026-10-01 06:00", "2026-10-25 02:00",
                     "31/02/2026", "45123.25", "=1+1", "+41", "-0", "1e400", "NaN", "inf", "\u00b0C", "\x00"]),
    st.text(max_size=12),
)


@FUZZ
@given(data=st.binary(max_size=3000), ext=st.sampled_from([".csv", ".txt", ".xlsx", ".xls", ".ods", ".xlsm"]))
def test_random_bytes(data, ext):
    for parse in (parse_log, parse_analyses):
        try:
            parse(io.BytesIO(data), name="fuzz" + ext)
        except MeterfixError:
            pass


@FUZZ
@given(header=st.lists(st.sampled_from(HEADERS), min_size=1, max_size=7),
       body=st.lists(st.lists(CELLS, min_size=0, max_size=8), min_size=0, max_size=30),
       sep=st.sampled_from([",", ";", "\t"]),
       tz=st.sampled_from(["UTC", "Europe/Berlin", "America/Chicago"]))
def test_random_tables(header, body, sep, tz):
    text = "\n".join(sep.join(c.replace(sep, " ").replace("\n", " ") for c in row) for row in [header] + body)
    try:
        frame, meta = parse_log(io.BytesIO(text.encode("utf-8", "surrogatepass")), name="fuzz.csv", timezone=tz)
    except MeterfixError:
        return
    flags = [c for c in frame.columns if c.startswith("flag_")]
    flagged = frame[flags].any(axis=1).to_numpy() if flags else np.zeros(len(frame), bool)
    for col in ("temperature_line", "volume_line"):
        if col in frame.columns:
            nan = ~np.isfinite(frame[col].to_numpy(float))
            assert (flagged | ~nan).all(), f"{col}: NaN without a flag"
    assert frame.index.tz is not None and str(frame.index.tz) == "UTC"
