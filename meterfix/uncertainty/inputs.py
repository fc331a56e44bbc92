"""Uncertainty inputs of a month run: settings strings → standard uncertainties with a distribution.

Each input of the budget is written as a short string, in the site file's ``[uncertainty]`` table
or as a CLI option (``--meter-uncertainty`` ...)::

    "1 %"            expanded uncertainty, k = 2, normal, relative to the quantity itself
    "2 kPa"          the same, absolute (a unit of the quantity's kind)
    "mpe 1 %"        a maximum permissible error: rectangular, half-width 1 %, u = a/sqrt(3)
    "0.3 K k=1"      a standard uncertainty (any k may be given)
    "0.5 % rectangular"  half-width of a rectangular distribution (also ``triangular``: u = a/sqrt(6))
    "0.25 % random"  correlation class across intervals: ``random`` (averages down over the
                     month) or ``systematic`` (does not); each input has a default class
    "0.1 % type A"   GUM evaluation type (default B)
    "0"              no uncertainty from this input

A percentage is relative to the quantity: the meter's volume, the absolute line pressure, the
atmospheric pressure, the absolute temperature [K], Z, the heating value, each mole fraction.
Temperature values with units are temperature differences (``0.9 degF`` = 0.5 K).

Keys of the ``[uncertainty]`` table: see :data:`INPUT_KEYS`; ``meter_qt`` and ``meter_qmax`` are
flow rates at line conditions (``"65 m3/h"``) that split the meter's uncertainty by flow range.
Keys ending in ``_pct`` belong to other steps (invoice reconciliation, corrector check) and are
left to them.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field, replace

from ..errors import SettingsError, UnitError
from ..units import parse_quantity, parse_unit

SQRT3 = math.sqrt(3.0)
SQRT6 = math.sqrt(6.0)

#: setting key -> (label in the budget, kind of absolute value accepted or None, default correlation)
INPUT_KEYS = {
    "meter": ("meter, rated flow range", None, "systematic"),
    "meter_below_qt": ("meter, below Qt or above Qmax", None, "systematic"),
    "pressure": ("line pressure", "pressure", "systematic"),
    "atmospheric": ("atmospheric pressure", "pressure", "systematic"),
    "temperature": ("line temperature", "temperature", "systematic"),
    "z": ("Z method at line conditions", None, "systematic"),
    "z_outside": ("Z method outside its range", None, "systematic"),
    "base_z": ("Z at base conditions", None, "systematic"),
    "composition": ("gas composition", None, "systematic"),
    "heating_value": ("heating value", "heating_value", "systematic"),
    "estimated": ("estimated intervals", None, "random"),
    # meter kinds (meterfix.meters): orifice plates, Coriolis meters, calibrated volume meters
    "discharge_coefficient": ("orifice discharge coefficient C", None, "systematic"),
    "expansibility": ("orifice expansibility factor", None, "systematic"),
    "differential_pressure": ("differential pressure transmitter", None, "systematic"),
    "bore_diameter": ("orifice bore diameter d", None, "systematic"),
    "pipe_diameter": ("pipe diameter D", None, "systematic"),
    "coriolis_mass": ("Coriolis meter, mass", None, "systematic"),
    "calibration": ("meter calibration (error curve or factor)", None, "systematic"),
}
#: flow-range settings of the meter (not uncertainties)
FLOW_KEYS = ("meter_qt", "meter_qmax")

#: Defaults that need no run context: (text, source). Every one is listed in the budget with
#: is_default True and can be set, to zero too.
DEFAULTS = {
    "meter": ("1 %", "common practice: class 1.0 gas meter (MID MI-002 / OIML R 137), MPE ±1 % between "
                     "Qt and Qmax, taken as an expanded uncertainty (k = 2); from memory"),
    "meter_below_qt": ("2 %", "common practice: class 1.0 gas meter (MID MI-002 / OIML R 137), MPE ±2 % "
                              "between Qmin and Qt, taken as an expanded uncertainty (k = 2); also used above "
                              "Qmax, outside the rated range; from memory"),
    "pressure": ("0.25 %", "common practice: pressure transmitter 0.1-0.25 % of reading (k = 2), upper end "
                           "taken; from memory"),
    "temperature": ("0.5 K", "common practice: resistance thermometer and transmitter in a thermowell, "
                             "0.3-0.5 K (k = 2), upper end taken; from memory"),
    "base_z": ("0.05 %", "from memory: Z of a pipeline gas at base conditions (about 0.997) is known to a few "
                         "parts in 10^4 from any equation of state or summation-factor method; 0.05 % (k = 2) "
                         "taken as a bound"),
    "composition": ("2 %", "common practice: gas-chromatograph analysis of the minor components, about 1-2 % "
                           "of each mole fraction (k = 2), upper end taken; each fraction perturbed, then the "
                           "analysis renormalised to sum 1; from memory"),
    "differential_pressure": ("0.3 %", "common practice: smart differential-pressure transmitter, 0.1-0.3 % of "
                                       "reading (k = 2) over its turndown, upper end taken; from memory"),
    "bore_diameter": ("0.05 %", "ISO 5167-2:2003, 5.1.8 (from memory): the bore measured to 0.05 % (k = 2)"),
    "pipe_diameter": ("0.4 %", "ISO 5167-1:2003, 7.1.5 (from memory): the pipe's mean diameter known to 0.4 % (k = 2)"),
    "coriolis_mass": ("0.5 %", "common practice: Coriolis meter on gas, 0.35-1 % of mass (k = 2) by AGA Report "
                               "No. 11 practice, a mid value taken; from memory"),
    "calibration": ("0.3 %", "common practice: a gas-meter calibration's expanded uncertainty, 0.2-0.3 % "
                             "(k = 2), upper end taken; set it to the calibration certificate's figure; from memory"),
    "estimated": ("10 % random", "assumed: an estimated (substituted) interval's volume known to ±10 % (k = 2), "
                                 "independent from interval to interval; set it to the contract's estimation rule"),
}
ATMOSPHERIC_DEFAULTS = {
    "barometer": ("0.2 kPa", "common practice: station barometer 0.1-0.2 kPa (k = 2); from memory"),
    "fixed": ("2 kPa", "common practice: weather moves barometric pressure by a few kPa about a fixed or "
                       "standard-atmosphere value, and not at random from hour to hour; from memory"),
}
HEATING_VALUE_DEFAULTS = {
    "composition": ("0.05 %", "from memory: ISO 6976 component heating values are known to about 0.02 % "
                              "(methane); the analysis itself is the composition row"),
    "supplied": ("0.5 %", "common practice: heating value from a process gas chromatograph or calorimeter, "
                          "0.1-0.5 % (k = 2), upper end taken; from memory"),
}

_DISTRIBUTIONS = {"normal": "normal", "gaussian": "normal", "rectangular": "rectangular",
                  "uniform": "rectangular", "triangular": "triangular"}
_NUMBER = re.compile(r"^\s*(?P<v>[-+]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][-+]?\d+)?)\s*(?P<u>.*?)\s*$")


@dataclass(frozen=True)
class InputSpec:
    """One uncertainty input as set (or defaulted).

    Attributes
    ----------
    key : str                 setting key (``pressure``)
    text : str                the string as given, or the default's text
    relative : bool           True for a percentage of the quantity, False for an absolute value
    value : float             the figure as written, in SI or as a fraction (1 % → 0.01)
    standard : float          standard uncertainty: a fraction (relative) or SI [Pa, K, J/m3]
    distribution : str        ``normal``, ``rectangular`` or ``triangular``
    coverage_factor : float or None  k of a normal value; None for a bound (rectangular, triangular)
    mpe : bool                written as a maximum permissible error
    type : str                GUM evaluation type, ``A`` or ``B``
    correlation : str         ``random`` or ``systematic`` across intervals
    is_default : bool
    source : str              where the figure comes from
    """

    key: str
    text: str
    relative: bool
    value: float
    standard: float
    distribution: str = "normal"
    coverage_factor: float | None = 2.0
    mpe: bool = False
    type: str = "B"
    correlation: str = "systematic"
    is_default: bool = False
    source: str = "setting"

    def standard_at(self, quantity):
        """Relative standard uncertainty [-] at the quantity's value(s) (SI, same kind)."""
        if self.relative:
            return self.standard + 0.0 * quantity
        return self.standard / quantity


@dataclass
class UncertaintySettings:
    """The parsed ``[uncertainty]`` table.

    Attributes
    ----------
    given : dict of str -> InputSpec   the inputs the user set
    meter_qt, meter_qmax : float or None [m3/s]   the meter's transition and maximum flow rates
    left_to_other_steps : dict         ``*_pct`` keys, untouched
    """

    given: dict = field(default_factory=dict)
    meter_qt: float | None = None
    meter_qmax: float | None = None
    left_to_other_steps: dict = field(default_factory=dict)

    def resolve(self, key: str, default_text: str | None = None, default_source: str = "") -> InputSpec:
        """The user's input for ``key``, else the default (``DEFAULTS`` or the one passed)."""
        if key in self.given:
            return self.given[key]
        if default_text is None:
            default_text, default_source = DEFAULTS[key]
        spec = parse_uncertainty(key, default_text)
        return replace(spec, is_default=True, source=default_source)


def _fail(key: str, text, message: str, extra_hint: str = "") -> SettingsError:
    option = "--" + key.replace("_", "-") + "-uncertainty"
    examples = {"pressure": "'0.25 %', '2 kPa', 'mpe 0.5 %'", "atmospheric": "'0.5 kPa', 'mpe 1 kPa'",
                "temperature": "'0.5 K', 'mpe 0.3 K', '0.9 degF'", "heating_value": "'0.3 %', '0.1 MJ/m3'"}
    ex = examples.get(key, "'1 %', 'mpe 1 %', '0.5 % k=1', '0'")
    hint = (extra_hint + "; " if extra_hint else "") + f"write e.g. {ex}"
    hint += (f" as {option} or" if key in ("meter", "pressure", "temperature", "atmospheric", "z") else "") + \
        f" in the site file's [uncertainty] table as {key} = \"...\""
    return SettingsError(f"uncertainty setting '{key}' ({text!r}): {message}", hint=hint)


def parse_uncertainty(key: str, text) -> InputSpec:
    """Parse one uncertainty string for input ``key`` (see the module docstring for the forms).

    Parameters
    ----------
    key : str     one of :data:`INPUT_KEYS`
    text : str    e.g. ``"0.25 %"``, ``"2 kPa"``, ``"mpe 1 %"``, ``"0.3 K k=1 random"``; the number 0
                  is accepted for "no uncertainty"

    Returns
    -------
    InputSpec   (``is_default`` False, ``source`` "setting")

    Raises
    ------
    SettingsError   naming the setting, with examples of what to write
    """
    if key not in INPUT_KEYS:
        raise SettingsError(f"unknown uncertainty setting '{key}'",
                            hint="known: " + ", ".join(list(INPUT_KEYS) + list(FLOW_KEYS)))
    label, abs_kind, correlation = INPUT_KEYS[key]
    if isinstance(text, bool) or not isinstance(text, (str, int, float)):
        raise _fail(key, text, "not a text")
    if isinstance(text, (int, float)):
        if text == 0:
            return InputSpec(key, "0", True, 0.0, 0.0, correlation=correlation)
        raise _fail(key, text, "a bare number says neither percent nor unit")
    s = " " + str(text).strip() + " "
    s = s.replace(",", " ").replace("±", " ").replace("+/-", " ")
    mpe = False
    dist = None
    k = None
    typ = "B"
    corr = correlation
    m = re.search(r"\s(mpe|max(?:imum)?\s+permissible\s+error)\s", s, re.I)
    if m:
        mpe = True
        s = s[:m.start()] + " " + s[m.end():]
    m = re.search(r"\sk\s*=\s*([0-9.]+)\s", s, re.I)
    if m:
        try:
            k = float(m.group(1))
        except ValueError:
            raise _fail(key, text, f"coverage factor '{m.group(1)}' is not a number") from None
        if not (k > 0 and math.isfinite(k)):
            raise _fail(key, text, "the coverage factor k must be positive")
        s = s[:m.start()] + " " + s[m.end():]
    m = re.search(r"\stype\s*-?\s*([ab])\s", s, re.I)
    if m:
        typ = m.group(1).upper()
        s = s[:m.start()] + " " + s[m.end():]
    for word, canon in _DISTRIBUTIONS.items():
        m = re.search(rf"\s{word}\s", s, re.I)
        if m:
            if dist is not None and dist != canon:
                raise _fail(key, text, "two distributions given")
            dist = canon
            s = s[:m.start()] + " " + s[m.end():]
    found = [w for w in ("random", "systematic") if re.search(rf"\s{w}\s", s, re.I)]
    if len(found) > 1:
        raise _fail(key, text, "both random and systematic given")
    if found:
        corr = found[0]
        s = re.sub(rf"\s{corr}\s", " ", s, flags=re.I)
    if mpe and dist not in (None, "rectangular"):
        raise _fail(key, text, f"a maximum permissible error is read as rectangular, not {dist}")
    if mpe or dist in ("rectangular", "triangular"):
        if k is not None:
            raise _fail(key, text, "a coverage factor k applies to a normal distribution, not to a bound")
        dist = dist or "rectangular"
    dist = dist or "normal"
    body = s.strip()
    m = _NUMBER.match(body)
    if not m:
        raise _fail(key, text, "no number found")
    number = float(m.group("v").replace(",", "."))
    unit = m.group("u").strip()
    if not math.isfinite(number) or number < 0:
        raise _fail(key, text, "an uncertainty is a finite number, zero or positive")
    if unit.lower() in ("%", "percent", "pct"):
        relative, value = True, number / 100.0
    elif unit.lower() == "ppm":
        relative, value = True, number * 1e-6
    elif unit == "":
        if number != 0:
            raise _fail(key, text, "a number without a unit says neither percent nor unit",
                        "add '%' for a relative value" + ("" if abs_kind is None else f" or a {abs_kind} unit"))
        relative, value = True, 0.0
    else:
        if abs_kind is None:
            raise _fail(key, text, f"'{unit}' is not accepted here: this input takes a percentage")
        try:
            value = _absolute(number, unit, abs_kind)
        except UnitError as exc:
            raise _fail(key, text, exc.message, exc.hint or "") from None
        relative = False
    if dist == "normal":
        k = 2.0 if k is None else k
        standard = value / k
    elif dist == "rectangular":
        standard = value / SQRT3
    else:
        standard = value / SQRT6
    return InputSpec(key, str(text).strip(), relative, value, standard, dist, k if dist == "normal" else None,
                     mpe, typ, corr)


def _absolute(number: float, unit: str, kind: str) -> float:
    """An absolute uncertainty with its unit → SI. Temperatures are differences (scale only)."""
    if kind == "temperature":
        u = parse_unit(unit, "temperature")
        return number * u.scale
    if kind == "pressure":
        return number * parse_unit(unit, "pressure").scale
    return parse_quantity(f"{number} {unit}", kind).value


def _flow(key: str, text) -> float:
    try:
        q = parse_quantity(str(text), "flow")
    except UnitError as exc:
        raise SettingsError(f"uncertainty setting '{key}' ({text!r}): {exc.message}",
                            hint="a flow rate at line conditions, e.g. '65 m3/h' or '2300 cfh'") from None
    if not q.value > 0:
        raise SettingsError(f"uncertainty setting '{key}' ({text!r}): a flow rate must be positive",
                            hint="e.g. '65 m3/h'")
    return q.value


def parse_uncertainty_settings(settings_dict: dict | None) -> UncertaintySettings:
    """Parse the ``[uncertainty]`` table (or the CLI's uncertainty options).

    Parameters
    ----------
    settings_dict : dict of str -> str
        Keys of :data:`INPUT_KEYS` with strings such as ``"1 %"``, ``"mpe 1 %"``, ``"2 kPa"``,
        ``"0.5 K"``; ``meter_qt`` / ``meter_qmax`` as flow rates [e.g. ``"65 m3/h"``]. Keys ending in
        ``_pct`` are left to the steps that use them.

    Returns
    -------
    UncertaintySettings   the given inputs in SI / as fractions; defaults are resolved later with
                          the run's context (:meth:`UncertaintySettings.resolve`)

    Raises
    ------
    SettingsError   an unknown key (listing the known ones) or a value that cannot be read
    """
    out = UncertaintySettings()
    for key, text in (settings_dict or {}).items():
        k = str(key).strip().lower().replace("-", "_")
        if k.endswith("_uncertainty"):
            k = k[: -len("_uncertainty")]
        if text is None:
            continue
        if k.endswith("_pct"):
            out.left_to_other_steps[k] = text
        elif k == "meter_qt":
            out.meter_qt = _flow(k, text)
        elif k == "meter_qmax":
            out.meter_qmax = _flow(k, text)
        elif k in INPUT_KEYS:
            out.given[k] = parse_uncertainty(k, text)
        else:
            raise SettingsError(f"unknown uncertainty setting '{key}'",
                                hint="known: " + ", ".join(list(INPUT_KEYS) + list(FLOW_KEYS)) +
                                     " (keys ending in _pct belong to the invoice and corrector checks)")
    if out.meter_qt is not None and out.meter_qmax is not None and out.meter_qt >= out.meter_qmax:
        raise SettingsError("uncertainty settings 'meter_qt' and 'meter_qmax': Qt must be below Qmax",
                            hint="e.g. meter_qt = \"65 m3/h\", meter_qmax = \"650 m3/h\"")
    return out


def relative_only(spec: InputSpec) -> None:
    """Refuse an input that must be a percentage but was given in a unit."""
    if not spec.relative:
        raise SettingsError(f"uncertainty setting '{spec.key}' ({spec.text!r}) must be a percentage",
                            hint="write e.g. '0.1 %'")
