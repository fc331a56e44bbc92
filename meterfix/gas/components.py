"""The 21 components of AGA Report No. 8 / GERG-2008 and their general properties.

Order (used for every composition array in meterfix) is the order of AGA Report No. 8 (2017)
and ISO 20765-2 Table 1: methane, nitrogen, carbon dioxide, ethane, propane, isobutane,
n-butane, isopentane, n-pentane, n-hexane, n-heptane, n-octane, n-nonane, n-decane, hydrogen,
oxygen, carbon monoxide, water, hydrogen sulfide, helium, argon.

Source of the general properties (used by the generalized-chart methods and for molar mass
of a composition): the `chemicals` package 1.5.2 (Caleb Bell, Chemical Engineering Design
Library), methods ``MW`` and ``HEOS`` for ``Tc``, ``Pc``, ``Vc`` and ``omega``, i.e. the
critical constants of the reference Helmholtz equations of state of each fluid as compiled
there. The equations of state (AGA8 DETAIL, GERG-2008) keep their own molar masses.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class Component:
    """General properties of one pure component.

    Attributes
    ----------
    name : str            canonical name (glossary)
    formula : str
    cas : str
    molar_mass : float    [kg/mol]
    critical_temperature : float [K]
    critical_pressure : float    [Pa]
    critical_volume : float      [m3/mol]
    acentric_factor : float      [-]
    """

    name: str
    formula: str
    cas: str
    molar_mass: float
    critical_temperature: float
    critical_pressure: float
    critical_volume: float
    acentric_factor: float


# name, formula, CAS, M [g/mol], Tc [K], Pc [Pa], Vc [m3/mol], omega  (chemicals 1.5.2, HEOS)
_TABLE = [
    ("methane", "CH4", "74-82-8", 16.04246, 190.564, 4599200.0, 9.86278109912e-05, 0.01142),
    ("nitrogen", "N2", "7727-37-9", 28.0134, 126.192, 3395800.0, 8.94142472662e-05, 0.0372),
    ("carbon_dioxide", "CO2", "124-38-9", 44.0095, 304.1282, 7377300.0, 9.41184770731e-05, 0.22394),
    ("ethane", "C2H6", "74-84-0", 30.06904, 305.322, 4872200.0, 0.000145838781642, 0.0995),
    ("propane", "C3H8", "74-98-6", 44.09562, 369.89, 4251200.0, 0.0002, 0.1521),
    ("isobutane", "i-C4H10", "75-28-5", 58.1222, 407.81, 3629000.0, 0.000257748115318, 0.184),
    ("n_butane", "n-C4H10", "106-97-8", 58.1222, 425.125, 3796000.0, 0.000254921929824, 0.201),
    ("isopentane", "i-C5H12", "78-78-4", 72.14878, 460.35, 3378000.0, 0.000305716906145, 0.2274),
    ("n_pentane", "n-C5H12", "109-66-0", 72.14878, 469.7, 3367500.0, 0.000311526479751, 0.251),
    ("n_hexane", "n-C6H14", "110-54-3", 86.17536, 507.82, 3044100.0, 0.000369549150037, 0.3),
    ("n_heptane", "n-C7H16", "142-82-5", 100.20194, 540.2, 2735730.0, 0.000429184549356, 0.349),
    ("n_octane", "n-C8H18", "111-65-9", 114.22852, 568.74, 2483590.0, 0.000492368291482, 0.398),
    ("n_nonane", "n-C9H20", "111-84-2", 128.2551, 594.55, 2281000.0, 0.000552486187845, 0.4433),
    ("n_decane", "n-C10H22", "124-18-5", 142.28168, 617.7, 2103000.0, 0.000609756097561, 0.4884),
    ("hydrogen", "H2", "1333-74-0", 2.01588, 33.145, 1296400.0, 6.44828475625e-05, -0.219),
    ("oxygen", "O2", "7782-44-7", 31.9988, 154.581, 5043000.0, 7.33675715334e-05, 0.0222),
    ("carbon_monoxide", "CO", "630-08-0", 28.0101, 132.86, 3494000.0, 9.21658986175e-05, 0.0497),
    ("water", "H2O", "7732-18-5", 18.01528, 647.096, 22064000.0, 5.59480372671e-05, 0.3443),
    ("hydrogen_sulfide", "H2S", "7783-06-4", 34.08088, 373.1, 9000000.0, 9.81354268891e-05, 0.1005),
    ("helium", "He", "7440-59-7", 4.002602, 5.1953, 228320.0, 5.75251528731e-05, -0.3836),
    ("argon", "Ar", "7440-37-1", 39.948, 150.687, 4863000.0, 7.45855116234e-05, -0.00219),
]

COMPONENTS: tuple[Component, ...] = tuple(
    Component(n, f, cas, m / 1000.0, tc, pc, vc, w) for n, f, cas, m, tc, pc, vc, w in _TABLE
)
NAMES: tuple[str, ...] = tuple(c.name for c in COMPONENTS)
INDEX: dict[str, int] = {n: i for i, n in enumerate(NAMES)}
N_COMPONENTS = len(NAMES)

MOLAR_MASS = np.array([c.molar_mass for c in COMPONENTS])  # [kg/mol]
CRITICAL_TEMPERATURE = np.array([c.critical_temperature for c in COMPONENTS])  # [K]
CRITICAL_PRESSURE = np.array([c.critical_pressure for c in COMPONENTS])  # [Pa]
CRITICAL_VOLUME = np.array([c.critical_volume for c in COMPONENTS])  # [m3/mol]
ACENTRIC_FACTOR = np.array([c.acentric_factor for c in COMPONENTS])  # [-]

# Aliases as found in laboratory reports and chromatograph exports. Keys are normalised by
# _key(): lower case, spaces, hyphens, dots and underscores removed.
_ALIASES = {
    "methane": ["ch4", "c1", "methane", "metano", "methan"],
    "nitrogen": ["n2", "nitrogen", "nitrogene", "stickstoff"],
    "carbon_dioxide": ["co2", "carbondioxide", "carbonicacid", "dioxide"],
    "ethane": ["c2h6", "c2", "ethane", "ethan"],
    "propane": ["c3h8", "c3", "propane", "propan"],
    "isobutane": ["ic4", "ic4h10", "isobutane", "ibutane", "2methylpropane", "isobutan"],
    "n_butane": ["nc4", "nc4h10", "nbutane", "butane", "normalbutane", "c4"],
    "isopentane": ["ic5", "ic5h12", "isopentane", "ipentane", "2methylbutane"],
    "n_pentane": ["nc5", "nc5h12", "npentane", "pentane", "normalpentane", "c5"],
    "n_hexane": ["nc6", "c6", "nhexane", "hexane", "c6h14", "nc6h14"],
    "n_heptane": ["nc7", "c7", "nheptane", "heptane", "c7h16"],
    "n_octane": ["nc8", "c8", "noctane", "octane", "c8h18"],
    "n_nonane": ["nc9", "c9", "nnonane", "nonane", "c9h20"],
    "n_decane": ["nc10", "c10", "ndecane", "decane", "c10h22"],
    "hydrogen": ["h2", "hydrogen"],
    "oxygen": ["o2", "oxygen"],
    "carbon_monoxide": ["co", "carbonmonoxide"],
    "water": ["h2o", "water", "watervapour", "watervapor", "moisture"],
    "hydrogen_sulfide": ["h2s", "hydrogensulfide", "hydrogensulphide"],
    "helium": ["he", "helium"],
    "argon": ["ar", "argon"],
}


def _key(text: str) -> str:
    return re.sub(r"[\s\-_.,()/]", "", str(text).strip().lower())


ALIASES: dict[str, str] = {}
for _canon, _names in _ALIASES.items():
    ALIASES[_key(_canon)] = _canon
    for _a in _names:
        ALIASES[_key(_a)] = _canon


def canonical_name(text: str) -> str | None:
    """Canonical component name for an alias (``"iC4"`` → ``"isobutane"``), or None."""
    return ALIASES.get(_key(text))
