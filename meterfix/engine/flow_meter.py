"""The meter's kind and primary element: the site file's ``[flow_meter]`` table → a FlowMeter in SI.

```toml
[flow_meter]
kind = "orifice"                 # "volume" (default) | "orifice" | "coriolis"
standard = "iso-5167-2:2003"     # orifice plates
pipe_diameter = "102.26 mm"      # internal diameter D at diameters_at
bore_diameter = "50.8 mm"        # orifice bore d at diameters_at
diameters_at = "20 degC"
pipe_expansion = "11.6e-6 1/K"   # linear expansion coefficients
bore_expansion = "16.0e-6 1/K"
taps = "flange"                  # corner | flange | d-d2
static_tap = "upstream"          # upstream | downstream: where the logged line pressure is taken
viscosity = "1.1e-5 Pa s"        # optional: default Lee-Gonzalez-Eakin (1966)
isentropic_exponent = 1.3        # optional: default w^2 rho / p of the Z method's equation of state
error_curve = [[50, 1.2], [150, 0.4], [300, -0.2]]   # volume meters: [m3/h at line, error %]
meter_factor = 1.0021            # volume meters: one factor instead of a curve (not both)
```

Each key is a row of the settings table (meterfix.engine.settings_table, table "flow_meter"), so
also an option (``--kind orifice``, ``--bore-diameter "50.8 mm"``); the settings step reads each
value by its kind (quantities to SI) and this module checks them together.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

import numpy as np

from ..errors import SettingsError, UnitError
from ..meters import orifice_iso5167 as O
from ..meters.error_curve import error_curve_checked
from ..units import parse_quantity

from .settings_table import METER_KINDS as KINDS
from .settings_table import CORIOLIS_METER, ORIFICE_METER, VOLUME_METER  # noqa: F401  (re-exported)
from .settings_table import SETTINGS

STANDARDS = {"iso-5167-2:2003": O.STANDARD}


def _default(name: str):
    """The settings table's default of a [flow_meter] key, in SI (one definition, with its source there)."""
    row = next(x for x in SETTINGS if x.table == "flow_meter" and x.name == name)
    if isinstance(row.default, str) and row.kind not in ("choice", "text"):
        return parse_quantity(row.default, row.kind).value
    return row.default


#: defaults (settings table): carbon steel pipe, austenitic stainless plate (typical handbook values at
#: 20-100 degC, from memory), d and D stated at 20 degC, flange taps, line pressure at the upstream tap
PIPE_EXPANSION_DEFAULT = _default("pipe_expansion")
BORE_EXPANSION_DEFAULT = _default("bore_expansion")
DIAMETERS_AT_DEFAULT = _default("diameters_at")
TAPS_DEFAULT = _default("taps")
STATIC_TAP_DEFAULT = _default("static_tap")

#: key -> what it is (for messages and the template)
KEYS = {
    "kind": "volume (default), orifice or coriolis",
    "standard": "orifice plates: iso-5167-2:2003",
    "pipe_diameter": "internal pipe diameter D at diameters_at, e.g. '102.26 mm'",
    "bore_diameter": "orifice bore d at diameters_at, e.g. '50.8 mm'",
    "diameters_at": "temperature at which the diameters were measured, default '20 degC'",
    "pipe_expansion": "linear expansion coefficient of the pipe, default '11.6e-6 1/K' (carbon steel)",
    "bore_expansion": "linear expansion coefficient of the plate, default '16.0e-6 1/K' (austenitic stainless)",
    "taps": "corner, flange (default) or d-d2",
    "static_tap": "upstream (default) or downstream: where the logged line pressure is taken",
    "viscosity": "dynamic viscosity, e.g. '1.1e-5 Pa s' (default: Lee-Gonzalez-Eakin 1966)",
    "isentropic_exponent": "isentropic exponent, e.g. 1.3 (default: from the Z method's equation of state)",
    "error_curve": "volume meters: [[flow rate m3/h at line, error %], ...]",
    "meter_factor": "volume meters: one meter factor, e.g. 1.0021 (not with error_curve)",
}


@dataclass
class FlowMeter:
    """What kind of meter this is and its primary element, in SI.

    kind : str                       'volume', 'orifice' or 'coriolis'
    standard : str or None           orifice: the standard's name ('ISO 5167-2:2003')
    pipe_diameter, bore_diameter : float or None [m]   at diameters_at
    diameters_at : float [K]
    pipe_expansion, bore_expansion : float [1/K]
    taps : str                       'corner', 'flange' or 'd-d2'
    static_tap : str                 'upstream' or 'downstream'
    viscosity : float or None [Pa s]
    isentropic_exponent : float or None [-]
    error_curve : list of [m3/h, %] or None (as given; checked)
    meter_factor : float or None [-]
    """

    kind: str = VOLUME_METER
    standard: str | None = None
    pipe_diameter: float | None = None
    bore_diameter: float | None = None
    diameters_at: float = DIAMETERS_AT_DEFAULT
    pipe_expansion: float = PIPE_EXPANSION_DEFAULT
    bore_expansion: float = BORE_EXPANSION_DEFAULT
    taps: str = TAPS_DEFAULT
    static_tap: str = STATIC_TAP_DEFAULT
    viscosity: float | None = None
    isentropic_exponent: float | None = None
    error_curve: list | None = None
    meter_factor: float | None = None

    def to_record(self) -> dict:
        return asdict(self)

    @property
    def curve(self):
        """(flow rates [m3/s], errors [%]) of the error curve, or None."""
        return None if self.error_curve is None else error_curve_checked(self.error_curve, setting="error_curve")


def parse_flow_meter(table: dict | None, *, file=None) -> FlowMeter:
    """The ``[flow_meter]`` table (raw TOML values or option strings) → a checked FlowMeter.

    Raises
    ------
    SettingsError   naming the key and the fix: an unknown key or kind, a missing or non-positive
                    diameter, a bore not smaller than the pipe, beta or D outside the standard,
                    an error curve with unsorted or duplicated flow rates, both a curve and a factor
    """
    raw = {k: v for k, v in (table or {}).items() if v is not None}
    fm = FlowMeter()

    def fail(key, msg, hint=None):
        raise SettingsError(f"setting '[flow_meter] {key}': {msg}", file=file,
                            hint=hint or f"set it in the site file's [flow_meter] table: {key} = ... ({KEYS.get(key, '')}), "
                                         f"or with --{key.replace('_', '-')}")

    unknown = [k for k in raw if k not in KEYS]
    if unknown:
        raise SettingsError(f"unknown key(s) {', '.join(unknown)} in [flow_meter]", file=file,
                            hint="known keys: " + ", ".join(KEYS))

    def qty(key, kind, lo, hi, text):
        v = raw[key]
        if isinstance(v, (int, float)) and not isinstance(v, bool):
            x = float(v)  # already in SI (the settings step read the text)
        else:
            try:
                x = parse_quantity(str(v), kind).value
            except UnitError as exc:
                fail(key, exc.message, exc.hint)
        if not (math.isfinite(x) and lo <= x <= hi):
            fail(key, f"'{v}' is outside {text}")
        return x

    def number(key, lo, hi, text):
        v = raw[key]
        try:
            if isinstance(v, bool):
                raise ValueError
            x = float(v)
        except (TypeError, ValueError):
            fail(key, f"'{v}' is not a number")
        if not (math.isfinite(x) and lo <= x <= hi):
            fail(key, f"{v} is outside {text}")
        return x

    if "kind" in raw:
        k = str(raw["kind"]).strip().lower()
        if k not in KINDS:
            fail("kind", f"unknown meter kind '{raw['kind']}'", "use " + ", ".join(KINDS))
        fm.kind = k
    for key in ("taps", "static_tap"):
        if key in raw:
            setattr(fm, key, str(raw[key]).strip().lower().replace("d and d/2", "d-d2").replace("d-d/2", "d-d2"))
    if fm.taps not in O.TAPS:
        fail("taps", f"'{raw.get('taps')}' is not a tap arrangement of ISO 5167-2", "use " + ", ".join(O.TAPS))
    if fm.static_tap not in ("upstream", "downstream"):
        fail("static_tap", f"'{raw.get('static_tap')}' is not upstream or downstream")
    if "diameters_at" in raw:
        fm.diameters_at = qty("diameters_at", "temperature", 173.15, 473.15, "-100 to 200 degC")
    for key in ("pipe_expansion", "bore_expansion"):
        if key in raw:
            setattr(fm, key, qty(key, "expansion_coefficient", 0.0, 1e-4, "0 to 1e-4 1/K"))
    if "viscosity" in raw:
        fm.viscosity = qty("viscosity", "viscosity", 1e-6, 1e-3, "1e-6 to 1e-3 Pa s")
    if "isentropic_exponent" in raw:
        fm.isentropic_exponent = number("isentropic_exponent", 1.0, 2.0, "1.0-2.0")
    for key in ("pipe_diameter", "bore_diameter"):
        if key in raw:
            setattr(fm, key, qty(key, "length", 1e-9, 10.0, "a positive diameter up to 10 m"))
    if "meter_factor" in raw:
        fm.meter_factor = number("meter_factor", 0.5, 2.0, "0.5-2.0")
    if "error_curve" in raw:
        try:
            error_curve_checked(raw["error_curve"], setting="error_curve")
        except SettingsError as exc:
            fail("error_curve", exc.message, exc.hint)
        fm.error_curve = [list(map(float, row)) for row in raw["error_curve"]]
    if fm.error_curve is not None and fm.meter_factor is not None:
        fail("meter_factor", "both error_curve and meter_factor are given",
             "keep one: the error curve (error at each flow rate) or one meter factor")
    if fm.kind != VOLUME_METER and (fm.error_curve is not None or fm.meter_factor is not None):
        key = "error_curve" if fm.error_curve is not None else "meter_factor"
        fail(key, f"an error curve or meter factor is for volume meters, this meter is kind = '{fm.kind}'",
             f"remove {key} or set kind = \"volume\"")
    if fm.kind == ORIFICE_METER:
        std = str(raw.get("standard", "iso-5167-2:2003")).strip().lower().replace(" ", "-")
        if std not in STANDARDS:
            fail("standard", f"'{raw['standard']}' is not a supported orifice standard",
                 "use standard = \"iso-5167-2:2003\" (AGA 3 is not implemented)")
        fm.standard = STANDARDS[std]
        for key in ("pipe_diameter", "bore_diameter"):
            if getattr(fm, key) is None:
                fail(key, "an orifice meter needs its pipe and bore diameters",
                     f"set {key} = \"... mm\" in [flow_meter] (at diameters_at, default 20 degC)")
        problem = O.geometry_problem_iso5167_2_2003(fm.pipe_diameter, fm.bore_diameter)
        if problem is not None:
            key = "pipe_diameter" if ("pipe diameter" in problem) else "bore_diameter"
            fail(key, problem, "check pipe_diameter and bore_diameter (internal pipe diameter D, bore d, same unit "
                               "written with each); a plate outside the standard cannot be computed by it")
    elif "standard" in raw:
        fail("standard", f"a standard is for orifice meters, this meter is kind = '{fm.kind}'")
    return fm


def bore_and_pipe_at(fm: FlowMeter, temperature):
    """d and D at the flowing temperature [m] (ISO 5167-1:2003, 7.4.1).

    Parameters
    ----------
    fm : FlowMeter
    temperature : ndarray [K]
    """
    t = np.asarray(temperature, float)
    return (O.diameter_at_temperature(fm.bore_diameter, fm.bore_expansion, t, fm.diameters_at),
            O.diameter_at_temperature(fm.pipe_diameter, fm.pipe_expansion, t, fm.diameters_at))
