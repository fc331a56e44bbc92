"""The month workbook: time to write it for months of 744 to 50,000 intervals.

For each size the month is corrected once (GERG-2008, invented data), then the workbook is
written (openpyxl, standard mode, as meterfix.writers.workbook does) and, for comparison, the
interval table alone is written in openpyxl's standard and write-only modes. Prints seconds,
rows per second and the write-only / standard ratio (the machines are shared: compare ratios
within one run).

    python benchmarks/bench_workbook.py [--sizes 744 8760 50000]
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd
from openpyxl import Workbook
from openpyxl.cell import WriteOnlyCell

from meterfix.engine.pipeline import run_month
from meterfix.engine.settings import build_settings
from meterfix.gas import Composition
from meterfix.writers import workbook as W
from meterfix.writers.workbook_sheets import interval_columns
from meterfix.writers.xlsx_common import DisplayUnits

GAS = Composition.from_mapping({"methane": 0.93, "ethane": 0.035, "propane": 0.008, "nitrogen": 0.015,
                                "carbon_dioxide": 0.012})


def month(n: int):
    idx = pd.date_range("2026-01-01 07:00", periods=n, freq="h", tz="Europe/Berlin").tz_convert("UTC")
    rng = np.random.default_rng(7)
    h = np.arange(n)
    frame = pd.DataFrame({"pressure_gauge": 39.5e5 + 1.2e5 * np.sin(h / 24 * 2 * np.pi) + 2e4 * rng.standard_normal(n),
                          "temperature_line": 285.0 + 4 * np.sin(h / 24 * 2 * np.pi) + 0.3 * rng.standard_normal(n),
                          "volume_line": 1150 + 30 * rng.standard_normal(n), "duration": 3600.0}, index=idx)
    s = build_settings(None, {"meter": "BENCH", "base": "normal-0c", "timezone": "Europe/Berlin", "elevation": "240 m",
                              "method": "gerg-2008"})
    return run_month(frame, [(None, GAS)], s)


def table_standard(cols, path):
    wb = Workbook()
    ws = wb.active
    ws.append(list(cols))
    for row in zip(*[c["values"] for c in cols.values()]):
        ws.append(row)
    for j, c in enumerate(cols.values(), start=1):
        if c["fmt"]:
            for (cell,) in ws.iter_rows(min_row=2, min_col=j, max_col=j):
                cell.number_format = c["fmt"]
    wb.save(path)


def table_write_only(cols, path):
    wb = Workbook(write_only=True)
    ws = wb.create_sheet("Intervals")
    ws.append(list(cols))
    cells = []
    for c in cols.values():
        cell = WriteOnlyCell(ws)
        if c["fmt"]:
            cell.number_format = c["fmt"]
        cells.append(cell)
    for row in zip(*[c["values"] for c in cols.values()]):
        for cell, v in zip(cells, row):
            cell.value = v
        ws.append(cells)
    wb.save(path)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--sizes", type=int, nargs="+", default=[744, 8760, 50_000])
    a = ap.parse_args()
    print(f"{'intervals':>10} {'workbook s':>11} {'rows/s':>9} {'table std s':>12} {'table w-o s':>12} {'w-o/std':>8}")
    with tempfile.TemporaryDirectory() as tmp:
        for n in a.sizes:
            r = month(n)
            t = time.perf_counter()
            W.write_workbook(r, Path(tmp) / f"wb_{n}.xlsx", overwrite=True)
            t_wb = time.perf_counter() - t
            cols = interval_columns(r, DisplayUnits())
            t = time.perf_counter()
            table_standard(cols, Path(tmp) / f"std_{n}.xlsx")
            t_std = time.perf_counter() - t
            t = time.perf_counter()
            table_write_only(cols, Path(tmp) / f"wo_{n}.xlsx")
            t_wo = time.perf_counter() - t
            print(f"{n:>10,} {t_wb:>11.2f} {n / t_wb:>9,.0f} {t_std:>12.2f} {t_wo:>12.2f} {t_wo / t_std:>8.2f}")


if __name__ == "__main__":
    main()
