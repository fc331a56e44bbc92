"""The month through files: identities that must hold whatever the layout (issue 5).

- the same month written in SI units and in US customary units gives the same SI totals
  (unit factors of NIST SP 811, appendix B: 1 psi = 6894.757293168 Pa, 1 ft3 = 0.028316846592 m3,
  degF = 1.8 degC + 32);
- splitting a log in two files (with an overlapping hour) changes no total;
- changing only the display units changes no SI total in the JSON summary.

Scenario (invented): meter "Heron Fen M4", hourly, 2026-10-20 to 2026-10-27 in Europe/Berlin
(the 25-hour day of 25 October inside), about 32 bar(g).
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

from meterfix.cli import app

PSI = 6894.757293168361  # Pa, NIST SP 811 appendix B
FT3 = 0.028316846592  # m3, NIST SP 811 appendix B
GAS = "methane=0.93,ethane=0.035,propane=0.008,nitrogen=0.015,carbon_dioxide=0.012"
ARGS = ["--gas", GAS, "--base", "normal-0c", "--atmospheric-pressure", "100.9 kPa", "--timezone",
        "Europe/Berlin", "--gas-day-start", "06:00", "--meter", "Heron Fen M4", "--quiet"]


def _month():
    idx = pd.date_range("2026-10-20 01:00", "2026-10-27 00:00", freq="h", tz="Europe/Berlin")
    n = len(idx)
    rng = np.random.default_rng(44)
    p_barg = 32.0 + 1.5 * np.sin(np.arange(n) / 24 * 2 * np.pi) + 0.1 * rng.standard_normal(n)
    t_c = 9.0 + 3.0 * np.sin((np.arange(n) - 6) / 24 * 2 * np.pi)
    v_m3 = 700.0 + 80.0 * rng.standard_normal(n)
    # local wall-clock labels: the repeated hour of 25 October appears twice, in order
    labels = idx.tz_localize(None).strftime("%Y-%m-%d %H:%M")
    return labels, p_barg, t_c, v_m3


def _write_si(path, labels, p, t, v):
    pd.DataFrame({"Interval end": labels, "Line pressure [bar(g)]": [f"{x:.12g}" for x in p],
                  "Line temperature [degC]": [f"{x:.12g}" for x in t],
                  "Uncorrected volume [m3]": [f"{x:.12g}" for x in v]}).to_csv(path, index=False)


def _write_us(path, labels, p, t, v):
    pd.DataFrame({"Interval end": labels, "Line pressure [psig]": [f"{x * 1e5 / PSI:.15g}" for x in p],
                  "Line temperature [degF]": [f"{x * 1.8 + 32:.15g}" for x in t],
                  "Uncorrected volume [ft3]": [f"{x / FT3:.15g}" for x in v]}).to_csv(path, index=False)


def _run(tmp_path, name, logs, extra=()):
    out = tmp_path / name
    r = CliRunner().invoke(app, ["correct", *map(str, logs), *ARGS, *extra, "--out", str(out)])
    assert r.exit_code == 0, r.output
    return json.loads(next(out.glob("*_summary.json")).read_text())


def test_si_and_us_units_give_the_same_totals(tmp_path):
    labels, p, t, v = _month()
    _write_si(tmp_path / "si.csv", labels, p, t, v)
    _write_us(tmp_path / "us.csv", labels, p, t, v)
    a = _run(tmp_path, "si", [tmp_path / "si.csv"])
    b = _run(tmp_path, "us", [tmp_path / "us.csv"])
    for k in ("uncorrected_volume_m3", "base_volume_m3", "ideal_gas_base_volume_m3", "energy_MJ"):
        assert b["totals"][k] == pytest.approx(a["totals"][k], rel=1e-9), k
    # hand check of the uncorrected total: the sum of the written volumes
    assert a["totals"]["uncorrected_volume_m3"] == pytest.approx(float(np.sum(v)), rel=1e-11)
    # the 25-hour gas day (25 October, Europe/Berlin, gas day from 06:00) is there with 25 intervals
    days = {d["gas_day"]: d for d in a["gas_days"]}
    assert "2026-10-25" in days


def test_splitting_a_log_changes_no_total(tmp_path):
    labels, p, t, v = _month()
    _write_si(tmp_path / "whole.csv", labels, p, t, v)
    k = len(labels) // 2
    _write_si(tmp_path / "part1.csv", labels[: k + 1], p[: k + 1], t[: k + 1], v[: k + 1])  # one hour overlap
    _write_si(tmp_path / "part2.csv", labels[k:], p[k:], t[k:], v[k:])
    a = _run(tmp_path, "whole", [tmp_path / "whole.csv"])
    b = _run(tmp_path, "split", [tmp_path / "part2.csv", tmp_path / "part1.csv"])  # any order
    for key in ("intervals", "uncorrected_volume_m3", "base_volume_m3", "ideal_gas_base_volume_m3", "energy_MJ"):
        assert b["totals"][key] == pytest.approx(a["totals"][key], rel=1e-12), key


def test_display_units_change_no_si_total(tmp_path):
    labels, p, t, v = _month()
    _write_si(tmp_path / "log.csv", labels, p, t, v)
    site = tmp_path / "site.toml"
    site.write_text('[display_units]\nvolume = "ft3"\npressure = "psi"\ntemperature = "degF"\n', encoding="utf-8")
    a = _run(tmp_path, "plain", [tmp_path / "log.csv"])
    b = _run(tmp_path, "us_display", [tmp_path / "log.csv"], ["--site", str(site)])
    assert a["totals"] == b["totals"]
