"""Gas constant against scipy.constants; component data against the chemicals package."""

import numpy as np
import pytest
import scipy.constants

from meterfix import constants as C
from meterfix.gas.components import COMPONENTS, NAMES, canonical_name


def test_gas_constant_exact_2019_si():
    # library: scipy.constants.R (CODATA 2018, exact since the 2019 SI)
    assert C.R == pytest.approx(scipy.constants.R, rel=1e-15)


def test_gas_constant_us_customary():
    # published conversions (NIST SP 811 factors, 2019 SI R): 10.731 577 psia ft3/(lbmol R), 1545.347 ft lbf/(lbmol R),
    # 1.985 875 Btu_IT/(lbmol R)
    assert C.R_PSIA_FT3_PER_LBMOL_R == pytest.approx(10.731577, abs=5e-7)
    assert C.R_FT_LBF_PER_LBMOL_R == pytest.approx(1545.347, abs=5e-4)
    assert C.R_BTU_PER_LBMOL_R == pytest.approx(1.985875, abs=5e-7)


def test_specific_gas_constant_of_methane():
    # R/M with M(CH4) = 16.04246 g/mol (chemicals.MW) -> 518.28 J/(kg K) (handbook value, from memory)
    assert C.specific_gas_constant(0.01604246) == pytest.approx(518.28, abs=0.01)


_CAS = {c.name: c.cas for c in COMPONENTS}


@pytest.mark.parametrize("name", NAMES)
def test_critical_constants_match_chemicals(name):
    # library: chemicals 1.5 (Tc, Pc, Vc, omega, MW of each CAS number)
    import chemicals

    c = COMPONENTS[NAMES.index(name)]
    cas = _CAS[name]
    assert c.molar_mass * 1000 == pytest.approx(chemicals.MW(cas), rel=1e-6)
    assert c.critical_temperature == pytest.approx(chemicals.Tc(cas), rel=1e-3)
    assert c.critical_pressure == pytest.approx(chemicals.Pc(cas), rel=1e-3)
    assert c.critical_volume == pytest.approx(chemicals.Vc(cas), rel=2e-2)
    assert c.acentric_factor == pytest.approx(chemicals.omega(cas), abs=5e-3)


def test_21_components_in_aga8_order():
    assert len(NAMES) == 21
    assert NAMES[:5] == ("methane", "nitrogen", "carbon_dioxide", "ethane", "propane")
    assert NAMES[-1] == "argon"


@pytest.mark.parametrize("alias,name", [("CH4", "methane"), ("C1", "methane"), ("Methane", "methane"),
                                        ("iC4", "isobutane"), ("i-Butane", "isobutane"), ("nC4", "n_butane"),
                                        ("n-Butane", "n_butane"), ("CO2", "carbon_dioxide"),
                                        ("Carbon dioxide", "carbon_dioxide"), ("N2", "nitrogen"),
                                        ("H2S", "hydrogen_sulfide"), ("neo-pentane", None)])
def test_aliases(alias, name):
    assert canonical_name(alias) == name


def test_arrays_consistent():
    from meterfix.gas import components as m

    assert np.all(m.CRITICAL_TEMPERATURE > 0) and m.MOLAR_MASS.shape == (21,)
