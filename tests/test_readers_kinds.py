"""Log columns of the meter kinds: differential pressure, mass, mass flow rate, speed of sound.

Unit factors: NIST SP 811 (2008) appendix B: inch of water (60 degF) = 248.84 Pa, pound
(avoirdupois) = 0.45359237 kg, foot = 0.3048 m; mbar = 100 Pa, t = 1000 kg.
"""

from __future__ import annotations

import numpy as np
import pytest

from meterfix.errors import UnitError
from meterfix.readers import read_log
from meterfix.readers.columns import classify


def _write(tmp_path, header, rows, name="log.csv"):
    p = tmp_path / name
    p.write_text(",".join(header) + "\n" + "\n".join(",".join(map(str, r)) for r in rows) + "\n", encoding="utf-8")
    return p


TIMES = ["2026-05-01 01:00", "2026-05-01 02:00", "2026-05-01 03:00"]


@pytest.mark.parametrize("header,factor", [
    ("Differential pressure [mbar]", 100.0), ("Differential pressure [kPa]", 1000.0),
    ("Differential pressure [Pa]", 1.0), ("DP (inH2O)", 248.84), ("Differential pressure [inH2O (60 °F)]", 248.84),
    ("hw [inH2O]", 248.84)])
def test_differential_pressure_columns(tmp_path, header, factor):
    p = _write(tmp_path, ["Interval end", "Line pressure [bar(a)]", "Line temperature [degC]", header],
               [[t, 40.0, 10.0, v] for t, v in zip(TIMES, (12.5, 80.0, 200.0))])
    frame, meta = read_log(p)
    np.testing.assert_allclose(frame["pressure_differential"].to_numpy(), np.array([12.5, 80.0, 200.0]) * factor,
                               rtol=1e-15)
    assert frame["volume_line"].isna().all()


@pytest.mark.parametrize("header,values,want", [
    ("Mass [kg]", (10.0, 20.0, 30.0), (10.0, 20.0, 30.0)),
    ("Mass [t]", (1.5, 2.0, 2.5), (1500.0, 2000.0, 2500.0)),
    ("Mass [lb]", (100.0, 200.0, 300.0), (45.359237, 90.718474, 136.077711)),
])
def test_mass_columns(tmp_path, header, values, want):
    p = _write(tmp_path, ["Interval end", "Line pressure [bar(a)]", "Line temperature [degC]", header],
               [[t, 40.0, 10.0, v] for t, v in zip(TIMES, values)])
    frame, _ = read_log(p)
    np.testing.assert_allclose(frame["mass"].to_numpy(), want, rtol=1e-14)


def test_mass_flow_and_speed_of_sound_columns(tmp_path):
    p = _write(tmp_path, ["Interval end", "Line pressure [bar(a)]", "Line temperature [degC]", "Mass flow rate [lb/h]",
                          "Speed of sound [ft/s]"],
               [[t, 40.0, 10.0, 3600.0, 1350.0] for t in TIMES])
    frame, _ = read_log(p)
    np.testing.assert_allclose(frame["mass_flow"].to_numpy(), 0.45359237, rtol=1e-14)
    np.testing.assert_allclose(frame["speed_of_sound"].to_numpy(), 1350.0 * 0.3048, rtol=1e-14)


def test_differential_pressure_without_unit_is_refused_naming_the_column(tmp_path):
    p = _write(tmp_path, ["Interval end", "Line pressure [bar(a)]", "Line temperature [degC]", "Differential pressure"],
               [[t, 40.0, 10.0, 50.0] for t in TIMES])
    with pytest.raises(UnitError) as exc:
        read_log(p)
    assert "Differential pressure" in str(exc.value) and "no unit" in str(exc.value)
    assert "[mbar]" in exc.value.hint


def test_classify_keeps_old_meanings():
    assert classify("Line pressure")[0] == "pressure"
    assert classify("Base pressure")[0] is None
    assert classify("Flow rate")[0] == "flow_rate"
    assert classify("Mass flow")[0] == "mass_flow"
    assert classify("Differential pressure")[0] == "pressure_differential"
    assert classify("Speed of sound")[0] == "speed_of_sound"


def test_mean_root_differential_pressure_column(tmp_path):
    p = _write(tmp_path, ["Interval end", "Line pressure [bar(a)]", "Line temperature [degC]",
                          "Mean root differential pressure [sqrt(mbar)]"],
               [[t, 40.0, 10.0, 10.0] for t in TIMES])
    frame, _ = read_log(p)
    np.testing.assert_allclose(frame["pressure_differential_root"].to_numpy(), 100.0, rtol=1e-15)  # sqrt(100 mbar) Pa^0.5
