"""Standard atmosphere against fluids.ATMOSPHERE_1976 and the printed 1976 tables (NIST SP 811 factors, 2019 SI R)."""

import numpy as np
import pytest

from meterfix.atmosphere import pressure_from_elevation
from meterfix.errors import InputError


@pytest.mark.parametrize("h,p", [(0.0, 101325.0), (500.0, 95461.0), (1000.0, 89876.0), (1500.0, 84560.0),
                                 (2000.0, 79501.0), (1524.0, 84311.0)])
def test_against_1976_table(h, p):
    # U.S. Standard Atmosphere 1976, printed tables (NIST SP 811 factors, 2019 SI R, published); 5000 ft = 1524 m
    assert pressure_from_elevation(h) == pytest.approx(p, abs=1.0)


def test_against_fluids():
    # library: fluids.ATMOSPHERE_1976
    fluids = pytest.importorskip("fluids")
    hs = np.linspace(-500, 10000, 23)
    ours = pressure_from_elevation(hs)
    ref = np.array([fluids.ATMOSPHERE_1976(h).P for h in hs])
    assert np.allclose(ours, ref, rtol=1e-6)


def test_out_of_range():
    with pytest.raises(InputError, match="elevation"):
        pressure_from_elevation(20000.0)
