"""Composition parsing, normalising and validation."""

import numpy as np
import pytest

from meterfix.errors import CompositionError
from meterfix.gas import Composition


def test_percent_and_aliases():
    c = Composition.from_mapping({"C1": 95.0, "C2": 3.0, "N2": 2.0})
    assert c["methane"] == pytest.approx(0.95)
    assert c.fractions.sum() == pytest.approx(1.0, abs=1e-15)
    assert c.notes == ()


def test_normalises_small_deviation_and_records_it():
    c = Composition.from_mapping({"methane": 0.951, "ethane": 0.03, "nitrogen": 0.02})
    assert c.sum_as_given == pytest.approx(1.001)
    assert c.fractions.sum() == pytest.approx(1.0)
    assert any("normalised" in n for n in c.notes)


def test_rejects_far_sum_unknown_and_negative():
    with pytest.raises(CompositionError, match="sums to"):
        Composition.from_mapping({"methane": 0.8, "ethane": 0.05})
    with pytest.raises(CompositionError, match="unknown gas component") as e:
        Composition.from_mapping({"methane": 0.9, "unobtainium": 0.1})
    assert "methane" in str(e.value)  # lists the known names
    with pytest.raises(CompositionError, match="negative"):
        Composition.from_mapping({"methane": 1.05, "ethane": -0.05})


def test_parse_string_and_molar_mass():
    c = Composition.parse("methane=0.95,ethane=0.03,nitrogen=0.02")
    # molar mass by hand from chemicals' MW: 0.95*16.04246 + 0.03*30.06904 + 0.02*28.0134
    assert c.molar_mass * 1000 == pytest.approx(0.95 * 16.04246 + 0.03 * 30.06904 + 0.02 * 28.0134, rel=1e-12)


def test_c6plus_lumped_and_recorded():
    c = Composition.from_mapping({"methane": 99.0, "C6+": 1.0})
    assert c["n_hexane"] == pytest.approx(0.01)
    assert any("lumped" in n for n in c.notes)


def test_kay_pseudo_criticals():
    c = Composition.from_mapping({"methane": 0.5, "ethane": 0.5})
    tpc, ppc, w = c.pseudo_critical_kay()
    # Kay's rule: mole-fraction averages (chemicals HEOS critical constants)
    assert tpc == pytest.approx(0.5 * 190.564 + 0.5 * 305.322)
    assert ppc == pytest.approx(0.5 * 4599200.0 + 0.5 * 4872200.0)


def test_immutable():
    c = Composition.parse("methane=1")
    with pytest.raises(ValueError):
        c.fractions[0] = 0.5
    assert np.isclose(c.fractions[0], 1.0)
