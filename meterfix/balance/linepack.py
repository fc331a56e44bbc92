"""Gas held in a pipeline section (linepack) at the gas-day boundaries, and its change.

Amount of gas in a section of geometric volume V at the section's pressure p and temperature T
(the real-gas law, Z from the chosen method at (p, T))::

    n = V · p / (Z R T)                                   [mol]
    V_b = n · Z_b R T_b / p_b = V · (p / p_b) (T_b / T) (Z_b / Z)   [m3 at base]
    E = V_b · H_v                                         [J]  (H_v: volumetric heating value at base)

p and T at a boundary are the logged reading there, or linear in time between the readings
either side of it; a log that does not reach both ends of the month is refused (it would need an
extrapolation). The change over a gas day is its closing value minus its opening value.

Uncertainty (GUM, k = 1): the geometric volume's relative uncertainty acts on every boundary alike
(systematic: it scales the change); the pressure and temperature readings stand for the whole
section, and their uncertainty is taken as independent from one boundary to the next (a one-point
reading's representativeness changes with the flow; a calibration offset largely cancels in a
change). Sensitivities through the Z method: c_p = 1 − ∂lnZ/∂lnp, c_T = −1 − ∂lnZ/∂lnT.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..constants import R
from ..errors import InputError


@dataclass
class Linepack:
    """One section's linepack at the gas-day boundaries (D days → D + 1 boundaries).

    Attributes
    ----------
    name : str
    boundaries : ndarray (D+1,) datetime64[ns] UTC
    pressure : ndarray (D+1,) [Pa absolute]
    temperature : ndarray (D+1,) [K]
    z : ndarray (D+1,) [-]                Z at (p, T)
    z_base : float [-]
    amount_mol : ndarray (D+1,) [mol]     V p / (Z R T)
    volume_base : ndarray (D+1,) [m3]     as base volume
    energy : ndarray (D+1,) or None [J]
    u_random_volume : ndarray (D+1,) [m3] per boundary, independent (pressure, temperature), k = 1
    u_systematic_rel : float [-]          geometric volume, relative, k = 1
    """

    name: str
    boundaries: np.ndarray
    pressure: np.ndarray
    temperature: np.ndarray
    z: np.ndarray
    z_base: float
    amount_mol: np.ndarray
    volume_base: np.ndarray
    energy: np.ndarray | None
    u_random_volume: np.ndarray
    u_systematic_rel: float

    @property
    def change(self) -> np.ndarray:
        """Δ linepack per gas day [m3 at base]: closing − opening."""
        return np.diff(self.volume_base)

    @property
    def change_energy(self):
        return None if self.energy is None else np.diff(self.energy)

    @property
    def heating_value(self) -> float:
        e = self.energy
        return float(e[0] / self.volume_base[0]) if e is not None and self.volume_base[0] else float("nan")


def at_boundaries(times, values, boundaries, *, what: str = "reading", file=None) -> np.ndarray:
    """Values at the boundary instants: the reading there, else linear in time between neighbours.

    Parameters
    ----------
    times : array of datetime64[ns] (UTC), increasing
    values : array [SI]
    boundaries : array of datetime64[ns] (UTC)

    Raises
    ------
    InputError   a boundary before the first or after the last reading (naming it)
    """
    t = np.asarray(times, "datetime64[ns]").astype(np.int64).astype(float)
    v = np.asarray(values, float)
    ok = np.isfinite(v)
    t, v = t[ok], v[ok]
    b = np.asarray(boundaries, "datetime64[ns]")
    bf = b.astype(np.int64).astype(float)
    if not t.size or bf[0] < t[0] or bf[-1] > t[-1]:
        first = np.datetime_as_string(b[0], unit="m") + "Z"
        last = np.datetime_as_string(b[-1], unit="m") + "Z"
        raise InputError(f"the linepack log does not cover both month boundaries ({first} to {last}) with {what}s",
                         file=file, hint="give a log with readings at or around the start of the first and the end of "
                              "the last gas day")
    return np.interp(bf, t, v)


def linepack(name, boundaries, pressure, temperature, *, volume: float, gas, method: str,
             pressure_base: float, temperature_base: float, heating_value: float | None = None,
             u_volume_rel: float = 0.0, u_pressure_rel: float = 0.0, u_temperature: float = 0.0) -> Linepack:
    """Linepack of one section at the boundaries.

    Parameters
    ----------
    name : str
    boundaries : array (D+1,) datetime64[ns] UTC   gas-day starts and the month's end
    pressure : array (D+1,) [Pa absolute]          at the boundaries
    temperature : array (D+1,) [K]
    volume : float [m3]                            geometric volume of the section
    gas : Composition                              the gas in the section
    method : str                                   Z method (registry name)
    pressure_base, temperature_base : float [Pa, K]   base conditions of the balance
    heating_value : float [J/m3 at base], optional  gives the energy
    u_volume_rel : float [-]                       standard uncertainty of V, relative
    u_pressure_rel : float [-]                     of one pressure reading as the section's, relative
    u_temperature : float [K]                      of one temperature reading as the section's
    """
    from ..uncertainty.budget import z_log_derivatives
    from ..z import evaluate_z

    p = np.asarray(pressure, float)
    t = np.asarray(temperature, float)
    z = np.asarray(evaluate_z(p, t, gas, method, speed_of_sound=False).z, float)
    zb = float(np.asarray(evaluate_z(np.array([pressure_base]), np.array([temperature_base]), gas, method,
                                     speed_of_sound=False).z, float)[0])
    if not (np.all(np.isfinite(z)) and np.isfinite(zb)):
        raise InputError(f"linepack '{name}': Z has no result at some boundary (pressure/temperature outside the "
                         f"method '{method}')", hint="check the section's pressure and temperature log")
    n = volume * p / (z * R * t)
    vb = n * zb * R * temperature_base / pressure_base
    d = z_log_derivatives(p, t, gas, method, z0=z)
    cp = 1.0 - d["p"]
    ct = -1.0 - d["t"]
    u_rand = np.abs(vb) * np.sqrt((cp * u_pressure_rel) ** 2 + (ct * u_temperature / t) ** 2)
    energy = None if heating_value is None else vb * heating_value
    return Linepack(name=name, boundaries=np.asarray(boundaries, "datetime64[ns]"), pressure=p, temperature=t, z=z,
                    z_base=zb, amount_mol=n, volume_base=vb, energy=energy, u_random_volume=u_rand,
                    u_systematic_rel=float(u_volume_rel))


def read_linepack_log(path, *, timezone: str = "UTC", atmospheric_pressure: float | None = None, sheet=None):
    """A section's pressure and temperature log → (UTC times, pressure [Pa abs], temperature [K]).

    Headers are recognised as in a meter log (``Time``, ``Pressure [bar(a)]`` or ``[bar(g)]``,
    ``Temperature [degC]``); a gauge pressure needs ``atmospheric_pressure`` [Pa]. Rows with a
    time or a value that cannot be read are refused with their row.
    """
    from ..readers.columns import map_columns
    from ..readers.tables import read_table, to_numbers
    from ..readers.times import localize, parse_datetimes
    from ..units import to_absolute

    t = read_table(path, sheet=sheet)
    where = t.where()
    cm = map_columns(t.header, where=where)
    tcol = next((cm[n] for n in ("time", "interval_end", "interval_start", "clock") if n in cm), None)
    pcol = cm["pressure_line"] if "pressure_line" in cm else (cm["pressure_gauge"] if "pressure_gauge" in cm else None)
    Tcol = cm["temperature_line"] if "temperature_line" in cm else None
    for col, what, ex in ((tcol, "time", "'Time'"), (pcol, "pressure", "'Pressure [bar(a)]'"),
                          (Tcol, "temperature", "'Temperature [degC]'")):
        if col is None:
            raise InputError(f"the linepack log has no {what} column", **where,
                             hint=f"name its header e.g. {ex} (time, line pressure and line temperature are needed)")
    instants, bad, is_utc = parse_datetimes(t.cells[tcol.index].to_numpy(), t.where(column=tcol.header))
    if bad.any():
        raise InputError("a time that cannot be read", **t.where(row=int(t.rows[np.argmax(bad)]), column=tcol.header),
                         hint="write times as YYYY-MM-DD HH:MM")
    if not is_utc:
        instants, nonexist, _ = localize(instants, timezone)
        if nonexist.any():
            raise InputError(f"a clock time that does not exist in {timezone} (a clock change)",
                             **t.where(row=int(t.rows[np.argmax(nonexist)]), column=tcol.header),
                             hint="check the log's time zone (linepack 'timezone')")
    out = []
    for col in (pcol, Tcol):
        v, empty, badv = to_numbers(t.cells[col.index], t.decimal)
        if (empty | badv).any():
            raise InputError("a value that cannot be read", **t.where(row=int(t.rows[np.argmax(empty | badv)]),
                             column=col.header), hint="every row needs a pressure and a temperature")
        out.append(v)
    gauge = pcol.name == "pressure_gauge" or pcol.unit.reference == "gauge"
    if gauge and atmospheric_pressure is None:
        raise InputError("the section's pressure is gauge and its linepack entry has no atmospheric_pressure",
                         **t.where(column=pcol.header),
                         hint="add atmospheric_pressure = \"1.013 bar(a)\" to its [[linepack]] entry, or log absolute pressure")
    p = to_absolute(out[0], pcol.unit, atmospheric_pressure, unmarked="gauge" if gauge else "absolute",
                    name=f"column '{pcol.header}'")
    temp = Tcol.unit.to_si(out[1])
    order = np.argsort(np.asarray(instants, "datetime64[ns]"), kind="stable")
    return np.asarray(instants, "datetime64[ns]")[order], np.asarray(p, float)[order], np.asarray(temp, float)[order]
