"""ISO 6976 calorific values, density, relative density and Wobbe index from composition.

The method of ISO 6976:2016 (clauses 5–9; the 1995 edition selectable for contracts that cite it):

    Z     = 1 − (p2/p0) (Σ x_j s_j(t2))²                          summation factors, p0 = 101.325 kPa
    M     = Σ x_j M_j
    Hc,G  = Σ x_j Hc_j(t1)                                         ideal-gas gross molar value
    Hc,N  = Hc,G − (L0(t1)/2) Σ x_j n_H,j                          net: the water formed stays vapour
    Hm    = Hc / M                                                 mass basis
    Hv    = Hc · p2 / (Z R T2)                                     real-gas volumetric basis
    ρ     = M p2 / (Z R T2),   d = (M / M_air)(Z_air(p2) / Z),   Z_air(p2) = 1 − (p2/p0)(1 − Z_air)
    W     = Hv / sqrt(d)

Uncertainty: ISO 6976:2016 Annex B (law of propagation of uncertainty, JCGM 100:2008 §5.2): the
analysis' standard uncertainties u(x_j) and correlation matrix r (identity when none is given),
plus the tabulated uncertainties of the component values (u(Hc_j), u(s_j), the atomic weights for
u(M_j), u(L0)) and of the constants (R, M_air, Z_air), all independent of the analysis.

Input compositions are mole fractions over the standard's component list
(:mod:`meterfix.gas.iso6976_components`), summing to 1 (normalise first: the standard requires a
complete, normalised analysis).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import CompositionError, SettingsError
from ..gas import iso6976_components as C
from .tables import iso6976_1995 as T1995
from .tables import iso6976_2016 as T2016

EDITIONS = ("2016", "1995")

#: keys of the result in SI, in the order of the properties command's JSON
KEYS = ("molar_mass", "compression_factor", "gross_heating_value_molar", "net_heating_value_molar",
        "gross_heating_value_mass", "net_heating_value_mass", "gross_heating_value_volumetric",
        "net_heating_value_volumetric", "density", "relative_density", "wobbe_index_gross", "wobbe_index_net")
UNITS = {"molar_mass": "kg/mol", "compression_factor": "-", "gross_heating_value_molar": "J/mol",
         "net_heating_value_molar": "J/mol", "gross_heating_value_mass": "J/kg", "net_heating_value_mass": "J/kg",
         "gross_heating_value_volumetric": "J/m3", "net_heating_value_volumetric": "J/m3", "density": "kg/m3",
         "relative_density": "-", "wobbe_index_gross": "J/m3", "wobbe_index_net": "J/m3"}


@dataclass(frozen=True)
class Tables:
    """One edition's component data over the standard's component list (SI-free: as tabulated)."""

    edition: str
    names: tuple
    M: np.ndarray            # [g/mol]
    nH: np.ndarray           # hydrogen atoms per molecule
    s: np.ndarray            # (n, len(t2)) summation factors
    u_s: np.ndarray          # (n,)
    Hg: np.ndarray           # (n, len(t1)) gross [kJ/mol]
    Hn: np.ndarray | None    # (n, len(t1)) net [kJ/mol] where tabulated (1995), else from L0
    u_H: np.ndarray | None   # (n,) or None (1995: not tabulated)
    cov_M: np.ndarray | None  # (n, n) covariance of the molar masses from the atomic weights
    t1: tuple
    t2: tuple
    R: float
    u_R: float
    M_air: float
    u_M_air: float
    Z_air: tuple
    u_Z_air: float
    L0: tuple | None
    u_L0: float
    p_range_kpa: tuple
    p0_kpa: float = 101.325
    z_min: float = 0.9
    index: dict = field(default_factory=dict)


def _tables_2016() -> Tables:
    T = T2016
    names = C.NAMES
    rows = [T.ROWS[n] for n in names]
    M = np.array([r[0] for r in rows])
    atoms = np.array([r[1] for r in rows], float)
    ua = np.array(T.U_ATOMIC_WEIGHT)
    cov_M = (atoms * ua**2) @ atoms.T
    return Tables("ISO 6976:2016", names, M, atoms[:, 1], np.array([r[2] for r in rows]), np.array([r[3] for r in rows]),
                  np.array([r[4] for r in rows]), None, np.array([r[5] for r in rows]), cov_M,
                  T.COMBUSTION_TEMPERATURES_C, T.METERING_TEMPERATURES_C, T.R, T.U_R, T.MOLAR_MASS_AIR,
                  T.U_MOLAR_MASS_AIR, T.Z_AIR, T.U_Z_AIR, T.L0_WATER, T.U_L0_WATER, T.PRESSURE_RANGE_KPA,
                  T.P0_KPA, T.Z_MIN, {n: i for i, n in enumerate(names)})


def _tables_1995() -> Tables:
    T = T1995
    names = tuple(n for n in C.NAMES if n in T.ROWS)
    rows = [T.ROWS[n] for n in names]
    M = np.array([r[0] for r in rows])
    nH = np.array([_hydrogen_atoms(n) for n in names], float)
    return Tables("ISO 6976:1995", names, M, nH, np.array([r[1] for r in rows]), np.zeros(len(names)),
                  np.array([r[2] for r in rows]), np.array([r[3] for r in rows]), None, None,
                  T.COMBUSTION_TEMPERATURES_C, T.METERING_TEMPERATURES_C, T.R, 0.0, T.MOLAR_MASS_AIR, 0.0,
                  T.Z_AIR, 0.0, None, 0.0, T.PRESSURE_RANGE_KPA, T.P0_KPA, T.Z_MIN,
                  {n: i for i, n in enumerate(names)})


def _hydrogen_atoms(name: str) -> int:
    return T2016.ROWS[name][1][1]


_CACHE: dict = {}


def tables(edition: str = "2016") -> Tables:
    """The component tables of an edition (``"2016"`` or ``"1995"``)."""
    ed = str(edition).replace("ISO 6976:", "").strip()
    if ed not in EDITIONS:
        raise SettingsError(f"unknown ISO 6976 edition '{edition}'", hint="use --edition 2016 (default) or 1995")
    if ed not in _CACHE:
        _CACHE[ed] = _tables_2016() if ed == "2016" else _tables_1995()
    return _CACHE[ed]


def _column(temps_c: tuple, t_kelvin: float, what: str, edition: str) -> int:
    t = float(t_kelvin) - 273.15
    for k, tc in enumerate(temps_c):
        # 60 degF = 15.5556 degC is the standard's "15.55 degC"
        if abs(t - tc) < 0.011 or (tc == 15.55 and abs(t - 15.5556) < 0.011):
            return k
    listed = ", ".join(f"{x:g}" for x in temps_c)
    raise SettingsError(f"{what} {t:.4g} degC is not tabulated in {edition}",
                        hint=f"{edition} tabulates {what}s of {listed} degC (15.55 degC = 60 degF)")


def column_of(edition: str, temperature_combustion: float | None = None, temperature_metering: float | None = None):
    """Table columns for a combustion and/or metering temperature [K]; SettingsError when not tabulated."""
    T = tables(edition)
    k1 = _column(T.t1, temperature_combustion, "combustion temperature", T.edition) \
        if temperature_combustion is not None else None
    k2 = _column(T.t2, temperature_metering, "metering temperature", T.edition) \
        if temperature_metering is not None else None
    return k1, k2


@dataclass(frozen=True)
class Iso6976Result:
    """Properties of one composition by ISO 6976 (SI units; keys as :data:`KEYS`).

    Attributes
    ----------
    edition : str
    temperature_combustion, temperature_metering : float [K]
    pressure_metering : float [Pa]
    values : dict      KEYS → value in SI (kg/mol, -, J/mol, J/kg, J/m3, kg/m3)
    ideal : dict       ideal-gas volumetric values, density, relative density, Wobbe indices (Z = 1)
    standard_uncertainty : dict or None   KEYS → u (k = 1), in the same units
    """

    edition: str
    temperature_combustion: float
    temperature_metering: float
    pressure_metering: float
    values: dict
    ideal: dict
    standard_uncertainty: dict | None = None

    def __getitem__(self, key):
        return self.values[key]

    def as_dict(self) -> dict:
        out = {k: float(self.values[k]) for k in KEYS}
        if self.standard_uncertainty is not None:
            out["standard_uncertainty"] = {k: float(self.standard_uncertainty[k]) for k in KEYS}
        return out


def vector(mapping, edition: str = "2016") -> np.ndarray:
    """Mole fractions over an edition's component list from ``{ISO 6976 name: fraction}``."""
    T = tables(edition)
    x = np.zeros(len(T.names))
    for name, v in mapping.items():
        if name not in T.index:
            raise CompositionError(f"'{C.DISPLAY.get(name, name)}' is not in the component table of {T.edition}",
                                   hint="use --edition 2016, which lists it" if name in C.INDEX else None)
        x[T.index[name]] += float(v)
    return x


def properties(x, *, temperature_combustion: float, temperature_metering: float, pressure_metering: float = 101325.0,
               edition: str = "2016", u_x=None, correlation=None) -> Iso6976Result:
    """All ISO 6976 properties of one composition, and their uncertainties when u_x is given.

    Parameters
    ----------
    x : ndarray (n,) or mapping      mole fractions over the edition's component list (sum 1) [mol/mol]
    temperature_combustion : float [K]   one of the tabulated combustion temperatures
    temperature_metering : float [K]     one of the tabulated metering temperatures
    pressure_metering : float [Pa]       90–110 kPa (2016); 101.325 kPa (1995)
    edition : {"2016", "1995"}
    u_x : ndarray (n,) or mapping, optional   standard uncertainties of the mole fractions [mol/mol]
    correlation : ndarray (n, n), optional    their correlation matrix (identity when None)

    Raises
    ------
    SettingsError     temperature not tabulated, pressure outside the standard's range
    CompositionError  Z below 0.9 at the metering reference (outside the standard's scope)
    """
    T = tables(edition)
    x = vector(x, edition) if hasattr(x, "items") else np.asarray(x, float)
    if x.shape != (len(T.names),):
        raise CompositionError(f"an {T.edition} composition needs {len(T.names)} fractions, got {x.shape}")
    k1, k2 = column_of(edition, temperature_combustion, temperature_metering)
    p_kpa = float(pressure_metering) / 1000.0
    lo, hi = T.p_range_kpa
    if not (lo - 1e-9 <= p_kpa <= hi + 1e-9):
        rng = f"{lo:g}-{hi:g} kPa" if lo != hi else f"{lo:g} kPa"
        raise SettingsError(f"metering pressure {p_kpa:g} kPa is outside {T.edition} ({rng})",
                            hint="give a metering reference pressure within the standard's range")
    # the ideal molar volume uses the metering temperature as given: the column "15.55 degC" serves
    # 60 degF = 288.7056 K, and Annex D example 2 (60 degF) is matched only with the exact value
    t2 = float(temperature_metering)
    pr = p_kpa / T.p0_kpa
    S = float(x @ T.s[:, k2])
    Z = 1.0 - pr * S * S
    if Z < T.z_min:
        raise CompositionError(
            f"compression factor {Z:.4f} at the metering reference is below {T.z_min} (outside the scope of "
            f"{T.edition}): volumetric values refused", hint="check the analysis (units, a doubled heavy component)")
    M = float(x @ T.M)                           # g/mol
    Hg = float(x @ T.Hg[:, k1])                  # kJ/mol
    nH = float(x @ T.nH)
    if T.Hn is not None:
        Hn = float(x @ T.Hn[:, k1])
    else:
        Hn = Hg - T.L0[k1] / 2.0 * nH
    Vo = T.R * t2 / (p_kpa * 1000.0)             # m3/mol, ideal
    V = Z * Vo
    z_air = 1.0 - pr * (1.0 - T.Z_air[k2])
    d_ideal = M / T.M_air
    d = d_ideal * z_air / Z
    values = {
        "molar_mass": M / 1000.0, "compression_factor": Z,
        "gross_heating_value_molar": Hg * 1e3, "net_heating_value_molar": Hn * 1e3,
        "gross_heating_value_mass": Hg / M * 1e6, "net_heating_value_mass": Hn / M * 1e6,
        "gross_heating_value_volumetric": Hg * 1e3 / V, "net_heating_value_volumetric": Hn * 1e3 / V,
        "density": M / 1000.0 / V, "relative_density": d,
        "wobbe_index_gross": Hg * 1e3 / V / np.sqrt(d), "wobbe_index_net": Hn * 1e3 / V / np.sqrt(d),
    }
    ideal = {"gross_heating_value_volumetric": Hg * 1e3 / Vo, "net_heating_value_volumetric": Hn * 1e3 / Vo,
             "density": M / 1000.0 / Vo, "relative_density": d_ideal,
             "wobbe_index_gross": Hg * 1e3 / Vo / np.sqrt(d_ideal), "wobbe_index_net": Hn * 1e3 / Vo / np.sqrt(d_ideal)}
    u = None
    if u_x is not None:
        u = _uncertainty(T, x, u_x, correlation, k1, k2, pr, S, Z, M, Hg, Hn, nH, values)
    return Iso6976Result(T.edition, float(temperature_combustion), float(temperature_metering),
                         float(pressure_metering), values, ideal, u)


def _uncertainty(T: Tables, x, u_x, r, k1, k2, pr, S, Z, M, Hg, Hn, nH, values) -> dict:
    """ISO 6976:2016 Annex B: relative standard uncertainty of every property (returned absolute)."""
    if T.u_H is None:
        raise SettingsError(f"{T.edition} states no uncertainties of its component values",
                            hint="uncertainties per Annex B need --edition 2016")
    n = len(T.names)
    u_x = vector(u_x, "2016") if hasattr(u_x, "items") else np.asarray(u_x, float)
    if u_x.shape != (n,) or np.any(~np.isfinite(u_x)) or np.any(u_x < 0):
        raise CompositionError("standard uncertainties of the mole fractions must be finite, zero or positive")
    r = np.eye(n) if r is None else np.asarray(r, float)
    if r.shape != (n, n):
        raise CompositionError(f"the correlation matrix needs shape ({n}, {n}), got {r.shape}")
    V = r * np.outer(u_x, u_x)                   # covariance of the analysis

    def comp(g):                                 # composition term gᵀ V g
        return float(g @ V @ g)

    L = T.L0[k1]
    Hj = T.Hg[:, k1]
    Hnj = Hj - L / 2.0 * T.nH
    sj = T.s[:, k2]
    zeta = 2.0 * pr * S / Z                      # ∂ln(1/Z)/∂x_j = zeta s_j
    tab_Hg = float(np.sum((x * T.u_H) ** 2))                       # kJ²/mol²
    tab_Hn = tab_Hg + (nH / 2.0) ** 2 * T.u_L0**2
    tab_s = float(np.sum((x * T.u_s) ** 2))                        # of S
    tab_M = float(x @ T.cov_M @ x)                                 # g²/mol²
    rel_R = (T.u_R / T.R) ** 2
    z_air = 1.0 - pr * (1.0 - T.Z_air[k2])
    rel_Zair = (pr * T.u_Z_air / z_air) ** 2
    rel_Mair = (T.u_M_air / T.M_air) ** 2

    var = {}
    var["molar_mass"] = (comp(T.M) + tab_M) / M**2
    # Z: dZ = −2 pr S dS, relative to Z
    var["compression_factor"] = (2 * pr * S / Z) ** 2 * (comp(sj) + tab_s)
    var["gross_heating_value_molar"] = (comp(Hj) + tab_Hg) / Hg**2
    var["net_heating_value_molar"] = (comp(Hnj) + tab_Hn) / Hn**2
    var["gross_heating_value_mass"] = comp(Hj / Hg - T.M / M) + tab_Hg / Hg**2 + tab_M / M**2
    var["net_heating_value_mass"] = comp(Hnj / Hn - T.M / M) + tab_Hn / Hn**2 + tab_M / M**2
    z_tab = zeta**2 * tab_s
    var["gross_heating_value_volumetric"] = comp(Hj / Hg + zeta * sj) + tab_Hg / Hg**2 + z_tab + rel_R
    var["net_heating_value_volumetric"] = comp(Hnj / Hn + zeta * sj) + tab_Hn / Hn**2 + z_tab + rel_R
    var["density"] = comp(T.M / M + zeta * sj) + tab_M / M**2 + z_tab + rel_R
    var["relative_density"] = comp(T.M / M + zeta * sj) + tab_M / M**2 + z_tab + rel_Zair + rel_Mair
    w_const = rel_R + rel_Mair / 4.0 + rel_Zair / 4.0 + tab_M / (4.0 * M**2) + z_tab / 4.0
    var["wobbe_index_gross"] = comp(Hj / Hg + zeta * sj / 2.0 - T.M / (2.0 * M)) + tab_Hg / Hg**2 + w_const
    var["wobbe_index_net"] = comp(Hnj / Hn + zeta * sj / 2.0 - T.M / (2.0 * M)) + tab_Hn / Hn**2 + w_const
    return {k: float(np.sqrt(var[k]) * abs(values[k])) for k in KEYS}
