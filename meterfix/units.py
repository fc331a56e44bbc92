"""Quantity strings and unit names → SI, with the gauge/absolute logic of pressure.

SI inside, units at the edges: readers and the CLI call this module, model functions never do.

Conversion factors are the exact or recommended values of NIST Special Publication 811
(2008 edition, appendix B.8/B.9). Each unit has a linear form ``si = (value + offset) * scale``.

Pressure units carry a reference: absolute (``psia``, ``bar(a)``, ``kPaa``), gauge
(``psig``, ``barg``, ``bar(g)``, ``kPa(g)``, ``kPag``) or unmarked (``kPa``, ``bar``). A gauge
value needs an atmospheric pressure: :func:`to_absolute` refuses to guess one.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from .constants import ATM, BTU_IT, FOOT, G_N, PSI, RANKINE, T0
from .errors import UnitError

KINDS = ("pressure", "temperature", "volume", "flow", "energy", "heating_value", "length",
         "density", "molar_energy", "fraction", "time", "pressure_differential", "mass", "mass_flow",
         "speed", "viscosity", "expansion_coefficient", "root_pressure_differential")

_FT3 = FOOT**3  # 0.028316846592 m3, exact


@dataclass(frozen=True)
class Unit:
    """A unit of one kind: ``si = (value + offset) * scale``.

    ``reference`` is ``"absolute"``, ``"gauge"`` or ``None`` (unmarked) for pressure units and
    ``None`` for every other kind. ``basis`` is ``"base"`` for volumes stated at base conditions
    (``scf``, ``Sm3``, ``Nm3``) and ``None`` otherwise.
    """

    name: str
    kind: str
    scale: float
    offset: float = 0.0
    reference: str | None = None
    basis: str | None = None

    def to_si(self, value):
        """Convert ``value`` in this unit to SI (for pressure: without the gauge offset)."""
        if self.offset == 0.0:
            return np.multiply(value, self.scale) if not np.isscalar(value) else value * self.scale
        return (np.add(value, self.offset)) * self.scale

    def from_si(self, value):
        """Convert an SI value to this unit."""
        return np.divide(value, self.scale) - self.offset


# ---------------------------------------------------------------------------------------------
# unit tables: canonical spelling → (scale to SI, offset)
_PRESSURE = {
    "Pa": 1.0, "hPa": 100.0, "kPa": 1e3, "MPa": 1e6, "bar": 1e5, "mbar": 100.0,
    "psi": PSI, "ksi": 1000.0 * PSI, "atm": ATM,
    # inch of water, conventional: 1000 kg/m3 x g_n x 0.0254 m (NIST SP 811 lists 249.082 Pa
    # at 39.2 degF and 248.84 Pa at 60 degF; the conventional value is the one transmitters use)
    "inH2O": 1000.0 * G_N * 0.0254, "mmH2O": 1000.0 * G_N * 0.001, "mbar_": 100.0,
    "inHg": 3386.389,  # NIST SP 811: inch of mercury, conventional
    "mmHg": 133.322387415,  # NIST SP 811: millimetre of mercury, conventional
    "kgf/cm2": 98066.5,  # NIST SP 811: kilogram-force per square centimetre, exact
    "torr": ATM / 760.0,
}
_PRESSURE.pop("mbar_")
_TEMPERATURE = {"K": (1.0, 0.0), "degC": (1.0, T0), "degF": (RANKINE, 459.67), "degR": (RANKINE, 0.0)}
_VOLUME = {
    "m3": 1.0, "L": 1e-3, "dm3": 1e-3, "cm3": 1e-6, "ft3": _FT3, "ccf": 100 * _FT3,
    "Mcf": 1e3 * _FT3, "MMcf": 1e6 * _FT3, "Bcf": 1e9 * _FT3, "e3m3": 1e3, "e6m3": 1e6,
    "gal": 3.785411784e-3,
}
_BASE_VOLUME = {"scf": _FT3, "Mscf": 1e3 * _FT3, "MMscf": 1e6 * _FT3, "Sm3": 1.0, "Nm3": 1.0,
                "sm3": 1.0, "nm3": 1.0}
_TIME = {"s": 1.0, "min": 60.0, "h": 3600.0, "d": 86400.0}
_ENERGY = {
    "J": 1.0, "kJ": 1e3, "MJ": 1e6, "GJ": 1e9, "TJ": 1e12, "Wh": 3600.0, "kWh": 3.6e6,
    "MWh": 3.6e9, "GWh": 3.6e12, "Btu": BTU_IT, "MBtu": 1e3 * BTU_IT, "MMBtu": 1e6 * BTU_IT,
    # therm = 100 000 Btu_IT (the gas-trade therm; NIST SP 811 lists the EC therm 1.05506e8 J
    # and the US therm 1.054804e8 J, the latter available as therm_us)
    "therm": 1e5 * BTU_IT, "therm_us": 1.054804e8, "Dth": 1e6 * BTU_IT, "kcal": 4186.8,
}
_LENGTH = {"m": 1.0, "km": 1e3, "ft": FOOT, "mm": 1e-3, "cm": 1e-2, "in": 0.0254}  # inch: NIST SP 811, exact
_DENSITY = {"kg/m3": 1.0, "g/L": 1.0, "lb/ft3": 0.45359237 / _FT3}
#: differential pressure (orifice plates): an inch of water in a differential column is the inch of
#: water at 60 degF of gas-flow practice, 248.84 Pa (NIST SP 811 appendix B.8: inch of water (60 degF)
#: = 2.4884 E+02 Pa); at 39.2 degF (4 degC) 249.082 Pa (the same table)
_DIFFERENTIAL = {"Pa": 1.0, "hPa": 100.0, "kPa": 1e3, "mbar": 100.0, "bar": 1e5, "psi": PSI,
                 "inH2O": 248.84, "inH2O(4degC)": 249.082, "mmH2O": 1000.0 * G_N * 0.001}
_DIFFERENTIAL_CI = {k.lower(): k for k in _DIFFERENTIAL}
_DIFFERENTIAL_CI.update({
    "in h2o": "inH2O", "inwc": "inH2O", "in wc": "inH2O", '"h2o': "inH2O", "inh2o (60 degf)": "inH2O",
    "inh2o(60degf)": "inH2O", "inh2o @ 60 degf": "inH2O", "inh2o@60f": "inH2O", "inh2o (60 °f)": "inH2O",
    "inh2o(60°f)": "inH2O", "in h2o (60 °f)": "inH2O", "inh2o (4 degc)": "inH2O(4degC)", "inh2o (4 °c)": "inH2O(4degC)",
    "inh2o (39.2 degf)": "inH2O(4degC)", "mm h2o": "mmH2O", "millibar": "mbar", "mb": "mbar", "pascal": "Pa",
    "mbard": "mbar", "mbar(d)": "mbar", "kpad": "kPa", "kpa(d)": "kPa", "psid": "psi"})
#: mass (the avoirdupois pound, NIST SP 811: 0.45359237 kg exactly; the metric tonne)
_MASS = {"kg": 1.0, "g": 1e-3, "t": 1e3, "lb": 0.45359237, "klb": 453.59237}
_MASS_CI = {k.lower(): k for k in _MASS}
_MASS_CI.update({"tonne": "t", "tonnes": "t", "lbs": "lb", "lbm": "lb", "kilogram": "kg", "kgs": "kg"})
_SPEED = {"m/s": 1.0, "ft/s": FOOT}
_SPEED_CI = {"m/s": "m/s", "ms-1": "m/s", "m s-1": "m/s", "mps": "m/s", "ft/s": "ft/s", "fps": "ft/s",
             "ft s-1": "ft/s"}
_VISCOSITY = {"Pa s": 1.0, "mPa s": 1e-3, "uPa s": 1e-6, "µPa s": 1e-6, "cP": 1e-3, "P": 0.1}
_VISCOSITY_CI = {k.lower(): k for k in _VISCOSITY}
_VISCOSITY_CI.update({"pa.s": "Pa s", "pas": "Pa s", "pa*s": "Pa s", "mpa.s": "mPa s", "cp": "cP",
                      "centipoise": "cP", "upa.s": "uPa s", "µpa.s": "uPa s"})
_EXPANSION = {"1/K": 1.0, "1/degC": 1.0, "1/degF": 1.8}
_EXPANSION_CI = {"1/k": "1/K", "/k": "1/K", "k-1": "1/K", "1/degc": "1/degC", "/degc": "1/degC", "1/°c": "1/degC",
                 "/°c": "1/degC", "1/degf": "1/degF", "/degf": "1/degF", "1/°f": "1/degF", "/°f": "1/degF"}

# aliases (lower-case keys) → canonical
_ALIASES_TEMPERATURE = {
    "k": "K", "kelvin": "K", "degc": "degC", "°c": "degC", "c": "degC", "celsius": "degC",
    "deg c": "degC", "ºc": "degC", "degf": "degF", "°f": "degF", "f": "degF", "fahrenheit": "degF",
    "deg f": "degF", "ºf": "degF", "degr": "degR", "°r": "degR", "rankine": "degR", "deg r": "degR",
}
_TIME_ALIASES = {"s": "s", "sec": "s", "second": "s", "min": "min", "minute": "min", "m": "min",
                 "h": "h", "hr": "h", "hour": "h", "d": "d", "day": "d"}


def _ci(table):
    return {k.lower(): k for k in table}


_P_CI = _ci(_PRESSURE)
_P_CI.update({"pascal": "Pa", "kg/cm2": "kgf/cm2", "kgf/cm²": "kgf/cm2", "kg/cm²": "kgf/cm2",
              "in h2o": "inH2O", "inwc": "inH2O", "in wc": "inH2O", '"h2o': "inH2O", "mm h2o": "mmH2O",
              "in hg": "inHg", "mm hg": "mmHg", "lbf/in2": "psi", "lb/in2": "psi", "mpa": "MPa",
              "atm": "atm", "millibar": "mbar", "mb": "mbar"})
_V_CI = _ci(_VOLUME)
_V_CI.update({"m³": "m3", "m^3": "m3", "cu m": "m3", "l": "L", "litre": "L", "liter": "L",
              "ft³": "ft3", "ft^3": "ft3", "cf": "ft3", "cu ft": "ft3", "cuft": "ft3", "acf": "ft3",
              "mcf": "Mcf", "mmcf": "MMcf", "10^3 m3": "e3m3", "10³m³": "e3m3", "km3": "e3m3"})
_BV_CI = _ci(_BASE_VOLUME)
_BV_CI.update({"sm³": "Sm3", "nm³": "Nm3", "m3(n)": "Nm3", "m3(s)": "Sm3", "std m3": "Sm3",
               "mscf": "Mscf", "mmscf": "MMscf"})
_E_CI = _ci(_ENERGY)
_E_CI.update({"btu": "Btu", "mmbtu": "MMBtu", "mbtu": "MBtu", "dth": "Dth", "dekatherm": "Dth",
              "therms": "therm", "thm": "therm", "kw h": "kWh", "kw·h": "kWh"})

_GAUGE_PATTERNS = [
    # explicit forms first: "bar(g)", "kPa (g)", "bar g", "psig", "kPag", "barg"
    (re.compile(r"^(?P<u>.+?)\s*\(\s*(?P<r>g|a|gauge|abs|absolute)\s*\)$", re.I), None),
    (re.compile(r"^(?P<u>.+?)\s+(?P<r>g|a|gauge|abs|absolute|gage)$", re.I), None),
    (re.compile(r"^(?P<u>psi|bar|kpa|mpa|pa|kgf/cm2|kg/cm2|inh2o|mbar)(?P<r>g|a)$", re.I), None),
]


def _split_reference(text: str):
    """'psig' → ('psi', 'gauge'); 'bar(a)' → ('bar', 'absolute'); 'kPa' → ('kPa', None)."""
    t = text.strip()
    for pattern, _ in _GAUGE_PATTERNS:
        m = pattern.match(t)
        if m:
            unit = m.group("u").strip()
            if unit.lower() in _P_CI:
                r = m.group("r").lower()
                return unit, ("gauge" if r.startswith("g") else "absolute")
    return t, None


def _norm(text: str) -> str:
    t = text.strip().replace("²", "2").replace("³", "3").replace("·", " ")
    t = re.sub(r"\s+", " ", t)
    return t


def accepted_units(kind: str) -> list[str]:
    """The canonical unit names accepted for ``kind`` (for error messages and docs)."""
    if kind == "pressure":
        base = list(_PRESSURE)
        return base + ["psig", "psia", "barg", "bara", "bar(g)", "bar(a)", "kPa(g)", "kPag", "kPaa"]
    if kind == "temperature":
        return list(_TEMPERATURE) + ["°C", "°F", "°R"]
    if kind == "volume":
        return list(_VOLUME) + list(_BASE_VOLUME)
    if kind == "flow":
        return [f"{v}/{t}" for v in ("m3", "ft3", "Mcf") for t in ("h", "d", "min")] + [
            "scfh", "scfd", "scfm", "acfh", "acfm", "cfh", "Mcfd", "MMcfd", "MMscfd", "Sm3/h", "Nm3/h"]
    if kind == "energy":
        return list(_ENERGY)
    if kind == "heating_value":
        return ["MJ/m3", "kJ/m3", "kWh/m3", "Btu/ft3", "Btu/scf", "MJ/Sm3", "MJ/Nm3"]
    if kind == "length":
        return list(_LENGTH)
    if kind == "density":
        return list(_DENSITY)
    if kind == "time":
        return list(_TIME)
    if kind == "pressure_differential":
        return list(_DIFFERENTIAL)
    if kind == "mass":
        return list(_MASS)
    if kind == "mass_flow":
        return [f"{m}/{t}" for m in ("kg", "t", "lb") for t in ("s", "h", "d")]
    if kind == "speed":
        return list(_SPEED)
    if kind == "viscosity":
        return list(_VISCOSITY)
    if kind == "expansion_coefficient":
        return list(_EXPANSION)
    if kind == "root_pressure_differential":
        return [f"sqrt({u})" for u in _DIFFERENTIAL] + ["mbar^0.5", "√mbar"]
    if kind == "fraction":
        return ["%", "mol%", "fraction", "ppm"]
    raise ValueError(f"unknown unit kind {kind!r}; known kinds: {', '.join(KINDS)}")


def _unknown(text, kind):
    return UnitError(
        f"unknown {kind} unit '{text}'",
        hint=f"accepted {kind} units: {', '.join(accepted_units(kind))}",
    )


def parse_unit(text: str, kind: str) -> Unit:
    """Parse a unit name of a given kind.

    Parameters
    ----------
    text : str
        The unit as written, e.g. ``"psig"``, ``"bar(a)"``, ``"°F"``, ``"Mcf"``, ``"m3/h"``.
    kind : str
        One of ``pressure, temperature, volume, flow, energy, heating_value, length, density,
        time, fraction``.

    Returns
    -------
    Unit

    Raises
    ------
    UnitError
        For an unknown unit; the message lists the accepted ones.
    """
    t = _norm(text)
    low = t.lower()
    if kind == "pressure":
        unit, ref = _split_reference(t)
        key = _P_CI.get(unit.lower())
        if key is None:
            raise _unknown(text, kind)
        return Unit(t, "pressure", _PRESSURE[key], 0.0, ref)
    if kind == "temperature":
        key = _ALIASES_TEMPERATURE.get(low) or (t if t in _TEMPERATURE else None)
        if key is None:
            raise _unknown(text, kind)
        scale, offset = _TEMPERATURE[key]
        return Unit(t, "temperature", scale, offset)
    if kind == "volume":
        if low in _V_CI:
            return Unit(t, "volume", _VOLUME[_V_CI[low]])
        if low in _BV_CI:
            return Unit(t, "volume", _BASE_VOLUME[_BV_CI[low]], basis="base")
        raise _unknown(text, kind)
    if kind == "flow":
        return _parse_flow(t, text)
    if kind == "energy":
        key = _E_CI.get(low)
        if key is None:
            raise _unknown(text, kind)
        return Unit(t, "energy", _ENERGY[key])
    if kind == "heating_value":
        m = re.match(r"^(.+?)\s*/\s*(.+)$", t)
        if not m:
            raise _unknown(text, kind)
        try:
            e = parse_unit(m.group(1), "energy")
            v = parse_unit(m.group(2), "volume")
        except UnitError:
            raise _unknown(text, kind) from None
        return Unit(t, "heating_value", e.scale / v.scale, basis=v.basis)
    if kind == "length":
        key = {k.lower(): k for k in _LENGTH}.get({"inch": "in", "inches": "in", '"': "in"}.get(low, low).replace(
            "feet", "ft").replace("metres", "m").replace("meters", "m"))
        if key is None:
            raise _unknown(text, kind)
        return Unit(t, "length", _LENGTH[key])
    if kind == "density":
        key = {k.lower(): k for k in _DENSITY}.get(low.replace("³", "3"))
        if key is None:
            raise _unknown(text, kind)
        return Unit(t, "density", _DENSITY[key])
    if kind == "time":
        key = _TIME_ALIASES.get(low.rstrip("s") if low not in _TIME_ALIASES else low)
        if key is None:
            raise _unknown(text, kind)
        return Unit(t, "time", _TIME[key])
    if kind in _SIMPLE_KINDS:
        table, ci = _SIMPLE_KINDS[kind]
        key = ci.get(re.sub(r"\s+", " ", low.replace("·", " ")))
        if key is None:
            raise _unknown(text, kind)
        return Unit(t, kind, table[key])
    if kind == "root_pressure_differential":
        # the interval mean of sqrt(dp) (a flow computer's 'extension'): sqrt(mbar), mbar^0.5, √mbar ...
        m = re.match(r"^(?:sqrt\s*\(\s*(.+?)\s*\)|√\s*\(?\s*(.+?)\s*\)?|(.+?)\s*\^\s*0?\.5)$", t, re.I)
        if not m:
            raise _unknown(text, kind)
        try:
            du = parse_unit(next(g for g in m.groups() if g), "pressure_differential")
        except UnitError:
            raise _unknown(text, kind) from None
        return Unit(t, kind, float(np.sqrt(du.scale)))
    if kind == "mass_flow":
        m = re.match(r"^(.+?)\s*(?:/|per\s+)\s*(.+)$", t, re.I)
        if not m:
            raise _unknown(text, kind)
        try:
            mu = parse_unit(m.group(1), "mass")
            tu = parse_unit(m.group(2), "time")
        except UnitError:
            raise _unknown(text, kind) from None
        return Unit(t, "mass_flow", mu.scale / tu.scale)
    if kind == "fraction":
        if low in ("%", "mol%", "mol %", "mole %", "mole%", "percent", "mol-%"):
            return Unit(t, "fraction", 0.01)
        if low in ("fraction", "mol/mol", "mole fraction", "-", ""):
            return Unit(t, "fraction", 1.0)
        if low == "ppm":
            return Unit(t, "fraction", 1e-6)
        raise _unknown(text, kind)
    raise ValueError(f"unknown unit kind {kind!r}; known kinds: {', '.join(KINDS)}")


_SIMPLE_KINDS = {"pressure_differential": (_DIFFERENTIAL, _DIFFERENTIAL_CI), "mass": (_MASS, _MASS_CI),
                 "speed": (_SPEED, _SPEED_CI), "viscosity": (_VISCOSITY, _VISCOSITY_CI),
                 "expansion_coefficient": (_EXPANSION, _EXPANSION_CI)}

_FLOW_SHORT = {
    # (volume unit, time unit) for the compact forms of the trade
    "scfh": ("scf", "h"), "scfd": ("scf", "d"), "scfm": ("scf", "min"), "cfh": ("ft3", "h"),
    "cfd": ("ft3", "d"), "cfm": ("ft3", "min"), "acfh": ("ft3", "h"), "acfm": ("ft3", "min"),
    "acfd": ("ft3", "d"), "mcfd": ("Mcf", "d"), "mcfh": ("Mcf", "h"), "mmcfd": ("MMcf", "d"),
    "mscfd": ("Mscf", "d"), "mmscfd": ("MMscf", "d"), "mscfh": ("Mscf", "h"),
}


def _parse_flow(t: str, original: str) -> Unit:
    low = t.lower()
    if low in _FLOW_SHORT:
        v, tm = _FLOW_SHORT[low]
        vu = parse_unit(v, "volume")
        return Unit(t, "flow", vu.scale / _TIME[tm], basis=vu.basis)
    m = re.match(r"^(.+?)\s*(?:/|per\s+)\s*(.+)$", t, re.I)
    if not m:
        raise _unknown(original, "flow")
    try:
        vu = parse_unit(m.group(1), "volume")
        tu = parse_unit(m.group(2), "time")
    except UnitError:
        raise _unknown(original, "flow") from None
    return Unit(t, "flow", vu.scale / tu.scale, basis=vu.basis)


# ---------------------------------------------------------------------------------------------
_QTY = re.compile(r"^\s*(?P<v>[-+]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][-+]?\d+)?)\s*(?P<u>.*?)\s*$")


@dataclass(frozen=True)
class Quantity:
    """A parsed quantity: SI value, the unit it was written in, and for pressure its reference."""

    value: float  # SI; for a gauge pressure: the gauge value in Pa (not yet absolute)
    unit: Unit
    text: str

    @property
    def is_gauge(self) -> bool:
        return self.unit.reference == "gauge"


def parse_quantity(text: str, kind: str) -> Quantity:
    """Parse ``"14.73 psia"``, ``"60 degF"``, ``"180 m"`` into SI.

    Parameters
    ----------
    text : str
        A number followed by a unit. A decimal comma is accepted when there is no other comma.
    kind : str
        The expected kind (see :func:`parse_unit`).

    Returns
    -------
    Quantity
        ``value`` is SI: Pa, K, m3, m3/s, J, J/m3, m, kg/m3, s or a fraction.
    """
    if not isinstance(text, str):
        raise UnitError(f"expected a {kind} with a unit, e.g. {_example(kind)}; got {text!r}")
    m = _QTY.match(text)
    if not m or not m.group("u"):
        raise UnitError(
            f"'{text}' is not a {kind} with a unit",
            hint=f"write a number and a unit, e.g. '{_example(kind)}'",
        )
    number = float(m.group("v").replace(",", "."))
    unit = parse_unit(m.group("u"), kind)
    value = float(unit.to_si(number))
    if kind == "temperature" and value <= 0.0:
        raise UnitError(f"temperature '{text}' is at or below absolute zero",
                        hint="check the unit (degC, degF, K)")
    return Quantity(value, unit, text)


def _example(kind: str) -> str:
    return {"pressure": "14.73 psia", "temperature": "60 degF", "volume": "1000 m3",
            "flow": "250 m3/h", "energy": "100 MJ", "heating_value": "38.5 MJ/m3",
            "length": "180 m", "density": "0.8 kg/m3", "time": "1 h", "fraction": "2 %",
            "pressure_differential": "250 mbar", "mass": "1200 kg", "mass_flow": "900 kg/h", "speed": "410 m/s",
            "viscosity": "1.1e-5 Pa s", "expansion_coefficient": "11.6e-6 1/K",
            "root_pressure_differential": "11.2 sqrt(mbar)"}.get(kind, "1")


def to_absolute(pressure, unit: Unit, atmospheric=None, *, unmarked: str = "absolute",
                name: str = "pressure"):
    """Pressure values in ``unit`` → absolute pressure [Pa].

    Parameters
    ----------
    pressure : float or ndarray
        Values in ``unit``.
    unit : Unit
        A pressure unit; its ``reference`` says gauge, absolute or unmarked.
    atmospheric : float or ndarray [Pa], optional
        Atmospheric pressure to add to gauge values. Required for gauge units: there is no
        silent default.
    unmarked : {"absolute", "gauge", "error"}
        How to read a unit with no gauge/absolute mark (``bar``, ``kPa``, ``psi``).
    name : str
        What the value is, for the error message.

    Returns
    -------
    float or ndarray [Pa]
    """
    if unit.kind != "pressure":
        raise UnitError(f"{name}: '{unit.name}' is not a pressure unit")
    ref = unit.reference
    if ref is None:
        if unmarked == "error":
            raise UnitError(
                f"{name} unit '{unit.name}' does not say gauge or absolute",
                hint=f"write e.g. '{unit.name}g' / '{unit.name}(g)' for gauge or "
                     f"'{unit.name}a' / '{unit.name}(a)' for absolute",
            )
        ref = unmarked
    p = unit.to_si(pressure)
    if ref == "gauge":
        if atmospheric is None:
            raise UnitError(
                f"{name} is gauge ('{unit.name}') but no atmospheric pressure is set",
                hint="give --atmospheric-pressure (e.g. '14.4 psia'), --elevation, or a barometer column",
            )
        p = p + atmospheric
    return p


def parse_pressure(text: str, atmospheric=None, *, unmarked: str = "absolute") -> float:
    """Parse a pressure string to absolute Pa (see :func:`to_absolute`)."""
    q = parse_quantity(text, "pressure")
    number = float(_QTY.match(text).group("v").replace(",", "."))
    p = float(to_absolute(number, q.unit, atmospheric, unmarked=unmarked, name=f"pressure '{text}'"))
    return p


def parse_temperature(text: str) -> float:
    """Parse a temperature string to K."""
    return parse_quantity(text, "temperature").value


def format_quantity(value: float, unit: str, kind: str, digits: int = 6) -> str:
    """SI value → ``"<number> <unit>"`` in a display unit."""
    u = parse_unit(unit, kind)
    return f"{float(u.from_si(value)):.{digits}g} {unit}"
