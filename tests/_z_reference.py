"""Shared helpers for the Z tests: reference gases, a strategy of natural gases, CoolProp oracles."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

DATA = Path(__file__).parent / "data"

#: meterfix component name -> CoolProp fluid name
COOLPROP_NAMES = {
    "methane": "Methane", "nitrogen": "Nitrogen", "carbon_dioxide": "CarbonDioxide", "ethane": "Ethane",
    "propane": "n-Propane", "isobutane": "IsoButane", "n_butane": "n-Butane", "isopentane": "Isopentane",
    "n_pentane": "n-Pentane", "n_hexane": "n-Hexane", "n_heptane": "n-Heptane", "n_octane": "n-Octane",
    "n_nonane": "n-Nonane", "n_decane": "n-Decane", "hydrogen": "Hydrogen", "oxygen": "Oxygen",
    "carbon_monoxide": "CarbonMonoxide", "water": "Water", "hydrogen_sulfide": "HydrogenSulfide",
    "helium": "Helium", "argon": "Argon",
}


def five_gases():
    """The five AGA8 reference gases (AGA Report No. 8 / ISO 20765 tables, via usnistgov/AGA8
    TESTDATA/Tables.xls, copied into tests/data): {name: {component: fraction}}."""
    comp = pd.read_csv(DATA / "aga8_five_gases_composition.csv", index_col=0)
    return {g: {k: v / 100.0 for k, v in comp[g].items() if v > 0} for g in comp.columns}


def five_gases_z(model: str = "DETAIL"):
    """Published Z of the five gases on the 273.15-333.15 K, 0.101325/6/12 MPa grid."""
    z = pd.read_csv(DATA / "aga8_five_gases_z.csv")
    return z[z.model == model].reset_index(drop=True)


def coolprop_z_mixture(fractions: dict, pressure, temperature, gas_phase: bool = False):
    """Z from CoolProp's HEOS mixture model (GERG-2008-type departure functions); ``gas_phase``
    asks CoolProp for the gas root instead of letting it decide the phase."""
    import CoolProp.CoolProp as CP

    names = list(fractions)
    x = np.array([fractions[n] for n in names], dtype=float)
    state = CP.AbstractState("HEOS", "&".join(COOLPROP_NAMES[n] for n in names))
    state.set_mole_fractions(list(x / x.sum()))
    p, t = np.broadcast_arrays(np.asarray(pressure, float), np.asarray(temperature, float))
    out = np.empty(p.shape)
    for i in np.ndindex(p.shape):
        if gas_phase:
            state.specify_phase(CP.iphase_gas)
        state.update(CP.PT_INPUTS, float(p[i]), float(t[i]))
        out[i] = state.compressibility_factor()
    return out


def coolprop_gas_points(fluid: str, temperatures, pressures, margin: float = 0.98):
    """(p, T, Z) of CoolProp's pure-fluid equation at the gas-phase points of a grid: every
    supercritical point, and below Tc only pressures under margin x the vapour pressure."""
    import CoolProp.CoolProp as CP

    tc = CP.PropsSI("Tcrit", fluid)
    rows = []
    for t in temperatures:
        psat = CP.PropsSI("P", "T", t, "Q", 1, fluid) if t < tc else np.inf
        for p in pressures:
            if p < margin * psat:
                rows.append((p, t, CP.PropsSI("Z", "P", p, "T", t, fluid)))
    a = np.array(rows)
    return a[:, 0], a[:, 1], a[:, 2]


def five_gas_compositions():
    """The five AGA8 reference gases as Compositions: {name: Composition}."""
    from meterfix.gas.composition import Composition

    comp = pd.read_csv(DATA / "aga8_five_gases_composition.csv", index_col=0)
    return {g: Composition.from_mapping({k: v for k, v in comp[g].items() if v > 0}, unit="percent")
            for g in comp.columns}


def _natural_gases():
    """Hypothesis strategy: methane-rich gases with a random set of the other 20 components."""
    from hypothesis import strategies as st

    from meterfix.gas.components import NAMES
    from meterfix.gas.composition import Composition

    main = ["methane", "nitrogen", "carbon_dioxide", "ethane", "propane"]
    minor = [n for n in NAMES if n not in main]

    @st.composite
    def gases(draw):
        x = dict(methane=draw(st.floats(0.55, 0.98)))
        for name in main[1:]:
            if draw(st.booleans()):
                x[name] = draw(st.floats(1e-4, 0.12))
        for name in draw(st.lists(st.sampled_from(minor), max_size=6, unique=True)):
            x[name] = draw(st.floats(1e-5, 0.02))
        total = sum(x.values())
        return Composition.from_mapping({k: v / total for k, v in x.items()})

    return gases


natural_gases = _natural_gases()


#: AGA8 reference code, NIST usnistgov/AGA8 test files: the 21-component gas of the AGA8 reference code's DETAIL and GERG-2008 tests
#: (AGA8CODE/C/Detail_test_01.cpp, GERG2008_test_01.cpp), mole fractions in canonical order
REFERENCE_CODE_GAS = [0.77824, 0.02, 0.06, 0.08, 0.03, 0.0015, 0.003, 0.0005, 0.00165, 0.00215, 0.00088,
                      0.00024, 0.00015, 0.00009, 0.004, 0.005, 0.002, 0.0001, 0.0025, 0.007, 0.001]


def reference_code_gas():
    """The reference code's test gas as a Composition."""
    from meterfix.gas.composition import Composition

    return Composition.from_array(np.array(REFERENCE_CODE_GAS))
