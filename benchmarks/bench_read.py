"""Reader speed: rows per second of read_log against plain pandas / openpyxl in the same run.

A generated one-minute log in our header convention (gauge pressure in bar(g), temperature in
degC, interval volume in m3, local time in Europe/Berlin) is read

- from CSV by ``read_log`` and by ``pandas.read_csv`` + the same unit conversions and time-zone
  placement (the floor: no header search, no checks, no flags);
- from XLSX by ``read_log`` (python-calamine, after the zip checks) and by openpyxl in read-only
  mode + the same conversions (the usual pure-Python way).

    python benchmarks/bench_read.py [--csv-rows 1000000] [--xlsx-rows 100000] [--quick]

Figures are wall-clock seconds on this machine; compare the ratios within one run.
"""

from __future__ import annotations

import argparse
import os
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

HEADER = ["Interval end", "Line pressure [bar(g)]", "Line temperature [degC]", "Uncorrected volume [m3]"]


def make_frame(rows: int) -> pd.DataFrame:
    # one-minute steps of real time shown as Europe/Berlin wall-clock time (both clock changes of 2026)
    idx = pd.date_range("2026-01-01 00:01", periods=rows, freq="min", tz="UTC").tz_convert("Europe/Berlin")
    rng = np.random.default_rng(4)
    return pd.DataFrame({HEADER[0]: idx.strftime("%Y-%m-%d %H:%M"),
                         HEADER[1]: np.round(38 + rng.standard_normal(rows), 3),
                         HEADER[2]: np.round(12 + 3 * rng.standard_normal(rows), 2),
                         HEADER[3]: np.round(20 + rng.random(rows), 3)})


def write_xlsx(path: Path, df: pd.DataFrame) -> None:
    import openpyxl

    wb = openpyxl.Workbook(write_only=True)
    ws = wb.create_sheet("Log")
    ws.append(["FV-M1 one-minute log (invented, generated)"])
    ws.append(HEADER)
    t = pd.to_datetime(df[HEADER[0]]).dt.to_pydatetime()  # naive wall-clock times, as a logger writes them
    for row in zip(t, df[HEADER[1]].tolist(), df[HEADER[2]].tolist(), df[HEADER[3]].tolist()):
        ws.append(list(row))
    wb.save(path)


def plain_pandas(path: Path) -> pd.DataFrame:
    d = pd.read_csv(path)
    t = pd.to_datetime(d[HEADER[0]], format="%Y-%m-%d %H:%M")
    t = pd.DatetimeIndex(t).tz_localize("Europe/Berlin", ambiguous="infer", nonexistent="NaT").tz_convert("UTC")
    return pd.DataFrame({"pressure_gauge": d[HEADER[1]].to_numpy() * 1e5,
                         "temperature_line": d[HEADER[2]].to_numpy() + 273.15,
                         "volume_line": d[HEADER[3]].to_numpy()}, index=t)


def plain_openpyxl(path: Path) -> pd.DataFrame:
    import openpyxl

    wb = openpyxl.load_workbook(path, read_only=True, data_only=True)
    rows = list(wb["Log"].iter_rows(min_row=3, values_only=True))
    wb.close()
    t = pd.DatetimeIndex([r[0] for r in rows]).tz_localize("Europe/Berlin", ambiguous="infer", nonexistent="NaT")
    a = np.array([r[1:] for r in rows], dtype=float)
    return pd.DataFrame({"pressure_gauge": a[:, 0] * 1e5, "temperature_line": a[:, 1] + 273.15,
                         "volume_line": a[:, 2]}, index=t.tz_convert("UTC"))


def timed(fn, *a, **k):
    t0 = time.perf_counter()
    out = fn(*a, **k)
    return time.perf_counter() - t0, out


def main(argv=None):
    ap = argparse.ArgumentParser()
    ap.add_argument("--csv-rows", type=int, default=1_000_000)
    ap.add_argument("--xlsx-rows", type=int, default=100_000)
    ap.add_argument("--quick", action="store_true", help="10,000 CSV rows and 2,000 XLSX rows (checks it runs)")
    a = ap.parse_args(argv)
    if a.quick:
        a.csv_rows, a.xlsx_rows = 10_000, 2_000
    print(f"load average {' '.join(f'{x:.2f}' for x in os.getloadavg())}")
    from meterfix.readers import read_log
    from meterfix.readers.tables import check_zip

    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        df = make_frame(a.csv_rows)
        csv_path = tmp / "log.csv"
        df.to_csv(csv_path, index=False)
        mb = csv_path.stat().st_size / 2**20
        t_ours, (f, _) = timed(read_log, csv_path, timezone="Europe/Berlin")
        t_pd, g = timed(plain_pandas, csv_path)
        assert len(f) == len(g) == a.csv_rows and np.allclose(f["pressure_gauge"], g["pressure_gauge"])
        print(f"CSV  {a.csv_rows:>9,d} rows ({mb:.0f} MiB)")
        print(f"  read_log            {t_ours:7.2f} s  {a.csv_rows / t_ours:12,.0f} rows/s")
        print(f"  pandas.read_csv     {t_pd:7.2f} s  {a.csv_rows / t_pd:12,.0f} rows/s")
        print(f"  ratio read_log / pandas time: {t_ours / t_pd:.2f}")
        from meterfix.engine.quality import apply_quality

        t_q, _ = timed(apply_quality, f, policy="interpolate")
        print(f"  apply_quality       {t_q:7.2f} s  {a.csv_rows / t_q:12,.0f} rows/s  (flags + interpolation)")

        dx = df.iloc[: a.xlsx_rows]
        xlsx_path = tmp / "log.xlsx"
        t_write, _ = timed(write_xlsx, xlsx_path, dx)
        mb = xlsx_path.stat().st_size / 2**20
        with open(xlsx_path, "rb") as fh:
            t_zip, _ = timed(check_zip, fh, "log.xlsx")
        t_ours, (f, _) = timed(read_log, xlsx_path, timezone="Europe/Berlin")
        t_op, g = timed(plain_openpyxl, xlsx_path)
        assert len(f) == len(g) == a.xlsx_rows and np.allclose(f["temperature_line"], g["temperature_line"])
        print(f"XLSX {a.xlsx_rows:>9,d} rows ({mb:.1f} MiB, written in {t_write:.1f} s)")
        print(f"  read_log (calamine) {t_ours:7.2f} s  {a.xlsx_rows / t_ours:12,.0f} rows/s"
              f"  (of which zip checks {t_zip:.2f} s)")
        print(f"  openpyxl read-only  {t_op:7.2f} s  {a.xlsx_rows / t_op:12,.0f} rows/s")
        print(f"  ratio openpyxl / read_log time: {t_op / t_ours:.2f}")


if __name__ == "__main__":
    main()
