"""The component list of ISO 6976:2016 (60 components) and how each one is named in analyses.

Order is the order of the standard's component tables (ISO 6976:2016, Annex A: molar masses,
summation factors and calorific values, components 1 to 60). Energy (``meterfix.energy``) uses
every component exactly; the equations of state use the 21 components of AGA8 / GERG-2008
(:mod:`meterfix.gas.components`), so a component outside that list is assigned to one of them by
:data:`Z_ASSIGNMENT`.

Assignment rule for Z (from memory; common practice in the trade, in the spirit of AGA Report No. 8
Part 1's guidance for unlisted hydrocarbons, not a rule printed in ISO 6976): a hydrocarbon outside
the list counts as the normal alkane with the same number of carbon atoms (isomers such as
neopentane and the hexane isomers, alkenes, alkynes, cycloalkanes, aromatics, methanol's carbon
is not a hydrocarbon and is not assigned); alkanes above C10 count as n-decane; neon counts as
argon (both inert monatomic gases). Components with no counterpart (ammonia, hydrogen cyanide,
carbonyl sulphide, carbon disulphide, sulphur dioxide, methanol, methanethiol) are refused for Z
with a message naming them. The assignment is recorded in the composition's notes.
"""

from __future__ import annotations

import difflib

from .components import _key

#: (canonical name, display name, formula, [aliases]) in the standard's order
_TABLE = [
    ("methane", "methane", "CH4", []),
    ("ethane", "ethane", "C2H6", []),
    ("propane", "propane", "C3H8", []),
    ("n_butane", "n-butane", "C4H10", []),
    ("isobutane", "2-methylpropane (isobutane)", "C4H10", ["2methylpropane"]),
    ("n_pentane", "n-pentane", "C5H12", []),
    ("isopentane", "2-methylbutane (isopentane)", "C5H12", ["2methylbutane"]),
    ("neopentane", "2,2-dimethylpropane (neopentane)", "C5H12",
     ["neopentane", "neoc5", "neoc5h12", "22dimethylpropane", "dimethylpropane", "nc5neo", "neopent"]),
    ("n_hexane", "n-hexane", "C6H14", []),
    ("2_methylpentane", "2-methylpentane", "C6H14", ["2methylpentane", "2mc5", "isohexane", "ic6", "2mp"]),
    ("3_methylpentane", "3-methylpentane", "C6H14", ["3methylpentane", "3mc5", "3mp"]),
    ("2_2_dimethylbutane", "2,2-dimethylbutane (neohexane)", "C6H14",
     ["22dimethylbutane", "neohexane", "22dmb", "22dmc4"]),
    ("2_3_dimethylbutane", "2,3-dimethylbutane", "C6H14", ["23dimethylbutane", "23dmb", "23dmc4"]),
    ("n_heptane", "n-heptane", "C7H16", []),
    ("n_octane", "n-octane", "C8H18", []),
    ("n_nonane", "n-nonane", "C9H20", []),
    ("n_decane", "n-decane", "C10H22", []),
    ("ethylene", "ethene (ethylene)", "C2H4", ["ethylene", "ethene", "c2h4", "c2="]),
    ("propylene", "propene (propylene)", "C3H6", ["propylene", "propene", "c3h6", "c3="]),
    ("1_butene", "1-butene", "C4H8", ["1butene", "but1ene", "1c4="]),
    ("cis_2_butene", "cis-2-butene", "C4H8", ["cis2butene", "c2butene"]),
    ("trans_2_butene", "trans-2-butene", "C4H8", ["trans2butene", "t2butene"]),
    ("isobutylene", "2-methylpropene (isobutylene)", "C4H8", ["isobutylene", "isobutene", "2methylpropene"]),
    ("1_pentene", "1-pentene", "C5H10", ["1pentene", "pent1ene"]),
    ("propadiene", "propadiene", "C3H4", ["propadiene", "allene"]),
    ("1_2_butadiene", "1,2-butadiene", "C4H6", ["12butadiene"]),
    ("1_3_butadiene", "1,3-butadiene", "C4H6", ["13butadiene", "butadiene"]),
    ("acetylene", "ethyne (acetylene)", "C2H2", ["acetylene", "ethyne", "c2h2"]),
    ("cyclopentane", "cyclopentane", "C5H10", ["cyclopentane", "cc5"]),
    ("methylcyclopentane", "methylcyclopentane", "C6H12", ["methylcyclopentane", "mcc5", "mcp"]),
    ("ethylcyclopentane", "ethylcyclopentane", "C7H14", ["ethylcyclopentane", "ecp"]),
    ("cyclohexane", "cyclohexane", "C6H12", ["cyclohexane", "cc6", "c6h12"]),
    ("methylcyclohexane", "methylcyclohexane", "C7H14", ["methylcyclohexane", "mcc6", "mch"]),
    ("ethylcyclohexane", "ethylcyclohexane", "C8H16", ["ethylcyclohexane", "ech"]),
    ("benzene", "benzene", "C6H6", ["benzene", "c6h6", "benzol"]),
    ("toluene", "toluene", "C7H8", ["toluene", "c7h8", "methylbenzene", "toluol"]),
    ("ethylbenzene", "ethylbenzene", "C8H10", ["ethylbenzene"]),
    ("o_xylene", "o-xylene", "C8H10", ["oxylene", "12dimethylbenzene", "xylene"]),
    ("methanol", "methanol", "CH4O", ["methanol", "ch3oh", "meoh"]),
    ("methanethiol", "methanethiol (methyl mercaptan)", "CH4S", ["methanethiol", "methylmercaptan", "ch3sh", "mesh"]),
    ("hydrogen", "hydrogen", "H2", []),
    ("water", "water", "H2O", []),
    ("hydrogen_sulfide", "hydrogen sulphide", "H2S", []),
    ("ammonia", "ammonia", "NH3", ["ammonia", "nh3"]),
    ("hydrogen_cyanide", "hydrogen cyanide", "HCN", ["hydrogencyanide", "hcn"]),
    ("carbon_monoxide", "carbon monoxide", "CO", []),
    ("carbonyl_sulfide", "carbonyl sulphide", "COS", ["carbonylsulfide", "carbonylsulphide", "cos"]),
    ("carbon_disulfide", "carbon disulphide", "CS2", ["carbondisulfide", "carbondisulphide", "cs2"]),
    ("helium", "helium", "He", []),
    ("neon", "neon", "Ne", ["neon", "ne"]),
    ("argon", "argon", "Ar", []),
    ("nitrogen", "nitrogen", "N2", []),
    ("oxygen", "oxygen", "O2", []),
    ("carbon_dioxide", "carbon dioxide", "CO2", []),
    ("sulfur_dioxide", "sulphur dioxide", "SO2", ["sulfurdioxide", "sulphurdioxide", "so2"]),
    ("n_undecane", "n-undecane", "C11H24", ["nundecane", "undecane", "nc11", "c11"]),
    ("n_dodecane", "n-dodecane", "C12H26", ["ndodecane", "dodecane", "nc12", "c12"]),
    ("n_tridecane", "n-tridecane", "C13H28", ["ntridecane", "tridecane", "nc13", "c13"]),
    ("n_tetradecane", "n-tetradecane", "C14H30", ["ntetradecane", "tetradecane", "nc14", "c14"]),
    ("n_pentadecane", "n-pentadecane", "C15H32", ["npentadecane", "pentadecane", "nc15", "c15"]),
]

NAMES: tuple[str, ...] = tuple(r[0] for r in _TABLE)
DISPLAY: dict[str, str] = {r[0]: r[1] for r in _TABLE}
FORMULA: dict[str, str] = {r[0]: r[2] for r in _TABLE}
INDEX: dict[str, int] = {n: i for i, n in enumerate(NAMES)}
N_COMPONENTS = len(NAMES)

#: component outside the 21 of the Z methods → the Z component it counts as (module docstring)
Z_ASSIGNMENT: dict[str, str] = {
    "neopentane": "n_pentane", "2_methylpentane": "n_hexane", "3_methylpentane": "n_hexane",
    "2_2_dimethylbutane": "n_hexane", "2_3_dimethylbutane": "n_hexane",
    "ethylene": "ethane", "acetylene": "ethane", "propylene": "propane", "propadiene": "propane",
    "1_butene": "n_butane", "cis_2_butene": "n_butane", "trans_2_butene": "n_butane", "isobutylene": "n_butane",
    "1_2_butadiene": "n_butane", "1_3_butadiene": "n_butane", "1_pentene": "n_pentane", "cyclopentane": "n_pentane",
    "methylcyclopentane": "n_hexane", "cyclohexane": "n_hexane", "benzene": "n_hexane",
    "ethylcyclopentane": "n_heptane", "methylcyclohexane": "n_heptane", "toluene": "n_heptane",
    "ethylcyclohexane": "n_octane", "ethylbenzene": "n_octane", "o_xylene": "n_octane",
    "n_undecane": "n_decane", "n_dodecane": "n_decane", "n_tridecane": "n_decane", "n_tetradecane": "n_decane",
    "n_pentadecane": "n_decane", "neon": "argon",
}

#: components with no counterpart among the Z methods' 21 (refused for Z, used by energy)
NO_Z_COUNTERPART = frozenset({"methanol", "methanethiol", "ammonia", "hydrogen_cyanide", "carbonyl_sulfide",
                              "carbon_disulfide", "sulfur_dioxide"})

#: lumped heavy ends → the component they are counted as. Rule (stated, conservative): a "Cn+" lump
#: is counted as the normal alkane with n carbon atoms (its lightest member); the analysis' own
#: heavier split, when the laboratory gives one, is always better. Recorded in the notes.
LUMPS: dict[str, str] = {
    "c5+": "n_pentane", "c5plus": "n_pentane", "pentanesplus": "n_pentane", "pentanes+": "n_pentane",
    "c6+": "n_hexane", "c6plus": "n_hexane", "hexanes+": "n_hexane", "hexanesplus": "n_hexane",
    "c7+": "n_heptane", "c7plus": "n_heptane", "heptanes+": "n_heptane", "heptanesplus": "n_heptane",
    "c8+": "n_octane", "c8plus": "n_octane", "c9+": "n_nonane", "c9plus": "n_nonane",
    "c10+": "n_decane", "c10plus": "n_decane",
}


def _aliases() -> dict[str, str]:
    from .components import ALIASES as Z_ALIASES

    out = dict(Z_ALIASES)  # the 21 components' aliases (CH4, C1, iC4, ...)
    for name, display, formula, extra in _TABLE:
        out.setdefault(_key(name), name)
        out.setdefault(_key(display.split(" (")[0]), name)
        for a in extra:
            out.setdefault(_key(a), name)
    return out


ALIASES: dict[str, str] = _aliases()


def iso_name(text: str) -> str | None:
    """Canonical ISO 6976 component name for a name or alias (``"neo-C5"`` → ``"neopentane"``), or None."""
    return ALIASES.get(_key(text))


def lump_name(text: str) -> str | None:
    """The component a lumped heavy-end label (``C6+``, ``C9+``, ``hexanes plus``) is counted as, or None."""
    k = _key(text).replace("+", "plus")
    for label, comp in LUMPS.items():
        if label.replace("+", "plus") == k:
            return comp
    return None


def closest_names(text: str, n: int = 3) -> list[str]:
    """The known component names closest to an unknown one (for the error message)."""
    k = _key(text)
    keys = difflib.get_close_matches(k, list(ALIASES), n=8, cutoff=0.5)
    out = []
    for key in keys:
        name = ALIASES[key]
        if name not in out:
            out.append(name)
    if not out:
        out = [n for n in NAMES if k and (k in _key(n) or _key(n) in k)]
    return out[:n]
