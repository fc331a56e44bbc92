"""Unaccounted-for gas per gas day and for the month, with its GUM uncertainty and the verdict.

    UFG = receipts − deliveries − own use − fixed − Δlinepack        [m3 at base, or J]

Uncertainty (JCGM 100:2008 §5.1–5.2, k = 1, expanded with k = 2): each meter's month budget splits
into a random part, independent per meter and gas day (u_r,m,d [m3]), and a systematic part, one
relative error δ_m shared by every gas day of the meter (u_s,m [-]); meters of one
``correlation_group`` share it (correlation 1 between their systematic errors: one cause, such as
one laboratory's analysis or one calibration rig). A fixed quantity carries its own relative
uncertainty; the linepack its boundary readings' (independent per boundary) and its geometric
volume's (systematic). With s_m = +1 for a receipt and −1 for a delivery or own use::

    u²(UFG) = Σ_m Σ_d u_r,m,d² + Σ_groups (Σ_{m∈g} s_m u_s,m V_m)² + Σ_fixed u_f² + u²(ΔLP)

over the gas days d of the total (one day, or the month). Consistent: |UFG| ≤ U = 2 u.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

ROLES = ("receipt", "delivery", "own_use")
SIGN = {"receipt": 1.0, "delivery": -1.0, "own_use": -1.0}
COVERAGE_FACTOR = 2.0


@dataclass
class MeterMonth:
    """One meter's month as the balance uses it (SI).

    Attributes
    ----------
    name : str
    role : str                           receipt | delivery | own_use
    gas_days : list of str               ISO dates of the balance's gas days
    volume : ndarray (D,) [m3]           base volume per gas day (NaN: no result that day)
    energy : ndarray (D,) or None [J]
    u_random : ndarray (D,) [m3]         random standard uncertainty per gas day, k = 1
    u_systematic_rel : float [-]         systematic standard uncertainty, relative, k = 1
    u_random_energy : ndarray (D,) or None [J]
    u_systematic_energy_rel : float or None [-]
    correlation_group : str or None
    kind : str                           the meter's kind: volume, orifice or coriolis (its summary's flow_meter)
    source : str                         where the month came from (run, written summary, store version)
    notes : list of str
    """

    name: str
    role: str
    gas_days: list
    volume: np.ndarray
    energy: np.ndarray | None
    u_random: np.ndarray
    u_systematic_rel: float
    u_random_energy: np.ndarray | None = None
    u_systematic_energy_rel: float | None = None
    correlation_group: str | None = None
    kind: str = "volume"
    source: str = ""
    notes: list = field(default_factory=list)

    @property
    def sign(self) -> float:
        return SIGN[self.role]


@dataclass
class Fixed:
    """An estimated quantity (vented, purged, theft estimate): total, its relative u, its gas day.

    Attributes
    ----------
    name : str
    volume : float [m3 at base]
    u_rel : float [-]                   standard uncertainty, relative, k = 1
    gas_day : str or None               the day it happened; None: spread evenly over the month
    energy : float or None [J]
    """

    name: str
    volume: float
    u_rel: float
    gas_day: str | None = None
    energy: float | None = None

    def per_day(self, gas_days: list, energy: bool = False) -> np.ndarray:
        total = self.energy if energy else self.volume
        out = np.zeros(len(gas_days))
        if total is None:
            return out * np.nan
        if self.gas_day is None:
            out[:] = total / len(gas_days)
        else:
            out[gas_days.index(self.gas_day)] = total
        return out


@dataclass
class Totals:
    """The balance of one quantity (volume [m3] or energy [J]) per gas day and for the month.

    Day arrays have shape (D,); month figures are floats; u are standard uncertainties (k = 1).
    """

    receipts: np.ndarray
    deliveries: np.ndarray
    own_use: np.ndarray
    fixed: np.ndarray
    linepack_change: np.ndarray
    ufg: np.ndarray
    u_ufg: np.ndarray
    u_random_ufg: np.ndarray            # the random part alone (what the meter search weighs by)
    month: dict                         # receipts, deliveries, own_use, fixed, linepack_change, ufg, u_ufg
    meter_variance: dict                # meter name → its own share of the month variance [unit²]

    @property
    def ufg_pct(self) -> float:
        r = self.month["receipts"]
        return 100.0 * self.month["ufg"] / r if r else float("nan")

    @property
    def expanded(self) -> float:
        return COVERAGE_FACTOR * self.month["u_ufg"]

    @property
    def consistent(self) -> bool:
        return bool(abs(self.month["ufg"]) <= self.expanded)

    @property
    def sigmas(self) -> float:
        """|UFG| in standard uncertainties."""
        u = self.month["u_ufg"]
        return abs(self.month["ufg"]) / u if u > 0 else float("inf")


def _groups(meters):
    keys = {}
    for i, m in enumerate(meters):
        keys.setdefault(m.correlation_group or f"\0{m.name}", []).append(i)
    return list(keys.values())


def totals(meters: list, fixed: list, linepacks: list, gas_days: list, *, energy: bool = False) -> Totals:
    """Daily and monthly balance of the base volume (or of the energy) with its uncertainty.

    Parameters
    ----------
    meters : list of MeterMonth       over the same ``gas_days``
    fixed : list of Fixed
    linepacks : list of Linepack      D + 1 boundaries each
    gas_days : list of str
    energy : bool                     the energy balance [J] instead of base volume [m3]

    Returns
    -------
    Totals
    """
    D = len(gas_days)
    V = np.array([(m.energy if energy else m.volume) for m in meters], float).reshape(len(meters), D)
    Ur = np.array([(m.u_random_energy if energy else m.u_random) for m in meters], float).reshape(len(meters), D)
    us = np.array([(m.u_systematic_energy_rel if energy else m.u_systematic_rel) for m in meters], float)
    s = np.array([m.sign for m in meters], float)
    roles = np.array([m.role for m in meters])
    Vz = np.nan_to_num(V)
    rec = Vz[roles == "receipt"].sum(axis=0)
    dlv = Vz[roles == "delivery"].sum(axis=0)
    own = Vz[roles == "own_use"].sum(axis=0)
    fx = np.zeros(D)
    var_fixed_d = np.zeros(D)
    var_fixed_m = 0.0
    for f in fixed:
        per = f.per_day(gas_days, energy)
        fx += np.nan_to_num(per)
        var_fixed_d += (per * f.u_rel) ** 2
        tot = np.nansum(per)
        var_fixed_m += (tot * f.u_rel) ** 2
    lp = np.zeros(D)
    var_lp_d = np.zeros(D)
    var_lp_m = 0.0
    for p in linepacks:
        val = p.energy if energy else p.volume_base
        if val is None:
            lp = lp * np.nan
            continue
        ur = p.u_random_volume * (val / p.volume_base)
        ch = np.diff(val)
        lp += ch
        var_lp_d += ur[:-1] ** 2 + ur[1:] ** 2 + (ch * p.u_systematic_rel) ** 2
        var_lp_m += ur[0] ** 2 + ur[-1] ** 2 + ((val[-1] - val[0]) * p.u_systematic_rel) ** 2
    ufg = rec - dlv - own - fx - lp
    rand_d = np.sum(np.nan_to_num(Ur) ** 2, axis=0)
    sys_d = np.zeros(D)
    sys_m = 0.0
    meter_var = {}
    month_v = Vz.sum(axis=1)
    for g in _groups(meters):
        a = (s[g] * us[g])[:, None] * Vz[g]           # (members, D)
        sys_d += np.sum(a, axis=0) ** 2
        sys_m += float(np.sum(a)) ** 2
    for i, m in enumerate(meters):
        meter_var[m.name] = float(np.sum(np.nan_to_num(Ur[i]) ** 2) + (us[i] * month_v[i]) ** 2)
    var_d = rand_d + sys_d + var_fixed_d + var_lp_d
    var_m = float(np.sum(rand_d)) + sys_m + var_fixed_m + var_lp_m
    month = {"receipts": float(rec.sum()), "deliveries": float(dlv.sum()), "own_use": float(own.sum()),
             "fixed": float(fx.sum()), "linepack_change": float(lp.sum()), "ufg": float(ufg.sum()),
             "u_ufg": float(np.sqrt(var_m)), "u_linepack": float(np.sqrt(var_lp_m)),
             "u_fixed": float(np.sqrt(var_fixed_m))}
    return Totals(receipts=rec, deliveries=dlv, own_use=own, fixed=fx, linepack_change=lp, ufg=ufg,
                  u_ufg=np.sqrt(var_d), u_random_ufg=np.sqrt(rand_d + var_lp_d), month=month,
                  meter_variance=meter_var)


def month_covariance(meters: list, *, energy: bool = False) -> np.ndarray:
    """Covariance matrix of the meters' month totals [unit²]: random parts on the diagonal, the
    systematic parts shared within a meter and, with correlation 1, within a correlation group."""
    V = np.array([np.nansum(m.energy if energy else m.volume) for m in meters], float)
    Ur = np.array([np.sqrt(np.nansum(np.asarray(m.u_random_energy if energy else m.u_random, float) ** 2))
                   for m in meters])
    us = np.array([(m.u_systematic_energy_rel if energy else m.u_systematic_rel) for m in meters], float)
    a = us * V
    S = np.diag(Ur**2)
    for g in _groups(meters):
        S[np.ix_(g, g)] += np.outer(a[g], a[g])
    return S
