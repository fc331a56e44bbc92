"""Site settings for a month run: from a TOML file and/or CLI options (the option wins).

Every setting has one name, used the same way in the site file (``[site]`` table keys, or
top-level keys) and as a CLI option (``base_pressure`` ⇔ ``--base-pressure``). Quantities are
strings with units (``"14.73 psia"``, ``"15 degC"``, ``"180 m"``) and are converted to SI here.
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import asdict, dataclass, field, fields
from pathlib import Path

from ..errors import SettingsError, UnitError
from ..units import parse_quantity, parse_unit

#: Named base conditions of common contracts (common practice: 14.73 psia / 60 degF in US interstate
#: contracts, 101.325 kPa / 15 degC the ISO 13443 standard reference conditions, 101.325 kPa / 0 degC the
#: "normal" conditions of European contracts; 1 psi = 6894.757 Pa and degF by NIST SP 811 appendix B).
BASE_PRESETS = {
    "us-14.73-60f": ("14.73 psia", "60 degF", "US interstate contracts: 14.73 psia, 60 degF"),
    "us-14.65-60f": ("14.65 psia", "60 degF", "some US contracts: 14.65 psia, 60 degF"),
    "us-14.696-60f": ("14.696 psia", "60 degF", "14.696 psia (1 atm), 60 degF"),
    "iso-15c": ("101.325 kPa", "15 degC", "ISO 13443 standard reference: 101.325 kPa, 15 degC"),
    "normal-0c": ("101.325 kPa", "0 degC", "normal conditions: 101.325 kPa, 0 degC"),
    "metric-20c": ("101.325 kPa", "20 degC", "101.325 kPa, 20 degC"),
}

#: Substitution policies for missing or bad intervals (see meterfix.engine.quality).
SUBSTITUTION_POLICIES = ("none", "interpolate", "hold", "profile")


@dataclass
class Settings:
    """Validated settings of one meter-month, in SI.

    Attributes
    ----------
    meter : str                       meter name (display only; sanitised before any file name)
    site : str                        site name (display only)
    pressure_base : float [Pa]        contract base pressure (absolute)
    temperature_base : float [K]      contract base temperature
    base_preset : str or None         the preset name if one was used
    pressure_atm : float or None [Pa] fixed atmospheric pressure for gauge → absolute
    elevation : float or None [m]     site elevation, used for pressure_atm when it is not given
    use_barometer : bool              use a logged barometer column where present
    timezone : str                    IANA time zone of the logs' local clock times
    gas_day_start_hour : int          local hour the gas day starts (e.g. 6 or 9)
    interval_label : str              'end' (default) or 'start'
    method : str                      Z method name
    heating_value : float or None [J/m3]  supplied gross heating value (None: from composition)
    heating_value_reference_temperature : float or None [K]  metering reference of the supplied value
    heating_value_reference_pressure : float or None [Pa]
    temperature_combustion : float [K]  combustion reference temperature for heating value (25 degC)
    energy_edition : str               ISO 6976 edition for energy from the analysis: "2016" (default)
                                        or "1995" (for contracts that cite it)
    ideal_gas_threshold_pct : float   |ideal − real| above this is a finding (default 0.5 %)
    substitution : str                none, interpolate, hold or profile
    max_gap_intervals : int           longest gap filled by interpolate/hold (intervals)
    price_per_energy : float or None [currency/J]
    currency : str
    invoice_tolerance_pct : float or None  contract tolerance for invoice differences
    uncertainty : dict                uncertainty inputs by name (see meterfix.uncertainty)
    column_map : dict                 explicit source header → canonical name
    display_units : dict              output display units by kind (volume, energy, pressure ...)
    fail_on : float or None           exit 1 when a finding exceeds this (percent)
    invoice_pressure_base : float or None [Pa]   the invoice's base pressure when it does not state it
    invoice_temperature_base : float or None [K] the invoice's base temperature when it does not state it
    store : str or None               where closed months are kept: a SQLite file (relative to the
                                      site file) or a PostgreSQL URL (meterfix.store); --store wins
    sheet : str or None               workbook sheet holding the log (None: found, see readers.tables)
    bidirectional : bool              the meter measures flow both ways: negative interval volumes
                                      are reverse flow and count (default False: flagged, left out)
    opening_index : float or None [m3]  index reading at the start of the first logged interval
    """

    meter: str = "meter"
    site: str = ""
    pressure_base: float | None = None
    temperature_base: float | None = None
    base_preset: str | None = None
    pressure_atm: float | None = None
    elevation: float | None = None
    use_barometer: bool = True
    timezone: str = "UTC"
    gas_day_start_hour: int = 6
    interval_label: str = "end"
    method: str = "aga8-detail"
    heating_value: float | None = None
    heating_value_reference_temperature: float | None = None
    heating_value_reference_pressure: float | None = None
    temperature_combustion: float = 298.15
    energy_edition: str = "2016"
    ideal_gas_threshold_pct: float = 0.5
    substitution: str = "none"
    max_gap_intervals: int = 3
    price_per_energy: float | None = None
    currency: str = ""
    invoice_tolerance_pct: float | None = None
    uncertainty: dict = field(default_factory=dict)
    column_map: dict = field(default_factory=dict)
    display_units: dict = field(default_factory=dict)
    fail_on: float | None = None
    register_digits: int | None = None
    invoice_pressure_base: float | None = None
    invoice_temperature_base: float | None = None
    store: str | None = None
    sheet: str | None = None
    bidirectional: bool = False
    opening_index: float | None = None
    files: dict = field(default_factory=dict)  # [files] table: logs (globs), composition, invoice
    sources: dict = field(default_factory=dict)  # setting name -> 'default' | 'site file' | 'option'

    def to_record(self) -> dict:
        """Plain dict for the manifest and JSON summary (SI values)."""
        d = asdict(self)
        return d


# setting name -> (kind of quantity or type, description) ; used by the TOML loader and CLI
SETTING_KINDS = {
    "meter": (str, "meter name"),
    "site": (str, "site name"),
    "base": (str, "named base conditions: " + ", ".join(BASE_PRESETS)),
    "base_pressure": ("pressure", "contract base pressure, absolute, e.g. '14.73 psia'"),
    "base_temperature": ("temperature", "contract base temperature, e.g. '60 degF'"),
    "atmospheric_pressure": ("pressure", "fixed atmospheric pressure, e.g. '14.4 psia'"),
    "elevation": ("length", "site elevation for the standard atmosphere, e.g. '180 m'"),
    "use_barometer": (bool, "use a logged barometer column where present"),
    "timezone": (str, "IANA time zone of the logs' clock, e.g. 'America/Chicago'"),
    "gas_day_start": (str, "local start of the gas day, 'HH:MM' or hour, e.g. '09:00'"),
    "interval_label": (str, "'end' (default) or 'start': which end of its interval a timestamp marks"),
    "method": (str, "Z method"),
    "heating_value": ("heating_value", "supplied gross heating value, e.g. '38.6 MJ/m3' or '1030 Btu/scf'"),
    "heating_value_reference_temperature": ("temperature", "metering reference temperature of the supplied heating value"),
    "heating_value_reference_pressure": ("pressure", "metering reference pressure of the supplied heating value"),
    "combustion_temperature": ("temperature", "combustion reference temperature, default 25 degC"),
    "energy_edition": (str, "ISO 6976 edition for energy from the analysis: 2016 (default) or 1995"),
    "ideal_gas_threshold": (float, "percent; |ideal − real| above this is a finding"),
    "substitution": (str, "none, interpolate, hold or profile"),
    "max_gap_intervals": (int, "longest gap substituted, in intervals"),
    "price": ("price", "price of energy, e.g. '3.20 USD/MMBtu' or '0.031 EUR/kWh'"),
    "invoice_tolerance": (float, "percent; contract tolerance for invoice differences"),
    "invoice_base": (str, "named base conditions of the invoice's volumes when the invoice does not state them"),
    "invoice_base_pressure": ("pressure", "base pressure of the invoice's volumes when the invoice does not state it"),
    "invoice_base_temperature": ("temperature", "base temperature of the invoice's volumes when the invoice does "
                                                "not state it"),
    "fail_on": (float, "percent; exit code 1 when a finding exceeds it"),
    "register_digits": (int, "digits of the meter index register (rollover at 10^n)"),
    "store": (str, "where closed months are kept: a SQLite file (relative to this file) or a PostgreSQL URL"),
    "sheet": (str, "workbook sheet holding the log, e.g. 'Data' (default: the one sheet holding a log)"),
    "bidirectional": (bool, "the meter measures both flow directions: negative interval volumes count"),
    "opening_index": ("volume", "meter index at the start of the first logged interval, e.g. '123456 m3'"),
}


def _parse_price(text: str):
    import re

    m = re.match(r"^\s*([-+]?[\d.,]+(?:[eE][-+]?\d+)?)\s*([A-Za-z$€£]*)\s*/\s*(\S+)\s*$", str(text))
    if not m:
        raise SettingsError(f"price '{text}' is not a price per energy unit", hint="write e.g. '3.20 USD/MMBtu'")
    value = float(m.group(1).replace(",", "."))
    unit = parse_unit(m.group(3), "energy")
    return value / unit.scale, m.group(2)


def _hour(text) -> int:
    """'06:00', '6' or 6 → 6; anything else (6.5, '06:30', inf, 24) is refused."""
    if isinstance(text, bool):
        raise SettingsError(f"gas_day_start '{text}' is not a time of day", hint="write e.g. '06:00' or '09:00'")
    s = str(text).strip()
    try:
        if ":" in s:
            h, mnt = s.split(":", 1)
            if int(mnt) != 0:
                raise SettingsError(f"gas_day_start '{text}': only whole hours are supported", hint="e.g. '06:00'")
            h = int(h)
        else:
            x = float(s)
            if not math.isfinite(x):
                raise SettingsError(f"gas_day_start '{text}' is not a time of day", hint="write e.g. '06:00' or '09:00'")
            if x != int(x):
                raise SettingsError(f"gas_day_start '{text}': only whole hours are supported",
                                    hint="write e.g. '06:00' or '09:00'")
            h = int(x)
    except ValueError:
        raise SettingsError(f"gas_day_start '{text}' is not a time of day", hint="write e.g. '06:00' or '09:00'") from None
    if not 0 <= h <= 23:
        raise SettingsError(f"gas_day_start '{text}' is not between 00:00 and 23:00", hint="write e.g. '06:00'")
    return h


#: numeric settings: name → (attribute, type, lowest, highest, unit text); every value must be finite and in range
NUMBER_RANGES = {
    "ideal_gas_threshold": ("ideal_gas_threshold_pct", float, 0.0, 100.0, "%"),
    "invoice_tolerance": ("invoice_tolerance_pct", float, 0.0, 100.0, "%"),
    "fail_on": ("fail_on", float, 0.0, 1000.0, "%"),
    "max_gap_intervals": ("max_gap_intervals", int, 0, 100_000, "intervals"),
    # 15 digits: the largest register float64 holds exactly (2^53 ≈ 9.0e15)
    "register_digits": ("register_digits", int, 1, 15, "digits"),
}

#: quantity settings: name → (attribute, kind, lowest, highest [SI], text of the range)
QUANTITY_RANGES = {
    "atmospheric_pressure": ("pressure_atm", "pressure", 40e3, 110e3, "40-110 kPa"),
    # the lowest land (about -430 m) to well above any gas metering site
    "elevation": ("elevation", "length", -500.0, 9000.0, "-500 to 9000 m"),
    # low-calorific process gas (a few MJ/m3) to butane (about 130 MJ/m3)
    "heating_value": ("heating_value", "heating_value", 1e6, 250e6, "1-250 MJ/m3"),
    "heating_value_reference_temperature": ("heating_value_reference_temperature", "temperature", 250.0, 310.0,
                                            "250-310 K"),
    "heating_value_reference_pressure": ("heating_value_reference_pressure", "pressure", 50e3, 200e3, "50-200 kPa"),
    # ISO 6976:2016 gives combustion references of 0, 15, 15.55, 20 and 25 degC
    "combustion_temperature": ("temperature_combustion", "temperature", 273.15, 303.15, "0-30 degC"),
}


def load_site_file(path) -> dict:
    """Read a site TOML file into a flat dict of raw setting values."""
    p = Path(path)
    if not p.exists():
        raise SettingsError("site file not found", file=p, hint="check the path given to --site")
    if p.is_dir():
        raise SettingsError("site file is a folder, not a TOML file", file=p)
    try:
        data = tomllib.loads(p.read_text(encoding="utf-8-sig"))
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise SettingsError(f"site file is not valid TOML: {exc}", file=p,
                            hint="see templates/site.toml for the layout") from None
    flat = {}
    for key, value in data.items():
        if isinstance(value, dict) and key in ("site", "settings", "uncertainty", "columns", "display_units", "files"):
            if key == "files":
                flat["files"] = dict(value)
            elif key == "uncertainty":
                flat["uncertainty"] = dict(value)
            elif key == "columns":
                flat["column_map"] = dict(value)
            elif key == "display_units":
                flat["display_units"] = dict(value)
            else:
                flat.update(value)
        else:
            flat[key] = value
    unknown = [k for k in flat if k not in SETTING_KINDS and k not in ("uncertainty", "column_map", "display_units", "files")]
    if unknown:
        raise SettingsError(f"unknown setting(s) {', '.join(unknown)}", file=p,
                            hint="known settings: " + ", ".join(SETTING_KINDS))
    return flat


def build_settings(site_file=None, options: dict | None = None, *, require_base: bool = True) -> Settings:
    """Merge defaults, the site file and CLI options (the option wins) into validated SI Settings.

    Parameters
    ----------
    site_file : path or None
    options : dict
        Raw option values by setting name (strings with units for quantities); None values are
        ignored.
    require_base : bool
        Raise when no base pressure/temperature is given (the contract must say).
    """
    raw: dict = {}
    src: dict = {}
    file_label = None
    if site_file is not None:
        file_label = str(site_file)
        for k, v in load_site_file(site_file).items():
            raw[k] = v
            src[k] = "site file"
    for k, v in (options or {}).items():
        if v is None:
            continue
        if k in ("uncertainty", "column_map", "display_units") and isinstance(v, dict):
            merged = dict(raw.get(k, {}))
            merged.update({kk: vv for kk, vv in v.items() if vv is not None})
            raw[k] = merged
        else:
            raw[k] = v
        src[k] = "option"

    s = Settings()

    def fail(name, msg, hint=None):
        raise SettingsError(f"setting '{name}': {msg}", file=file_label if src.get(name) == "site file" else None,
                            hint=hint or f"set it in the site file as {name} = ... or with --{name.replace('_', '-')}")

    def qty(name, kind):
        v = raw[name]
        try:
            return parse_quantity(str(v), kind)
        except UnitError as exc:
            fail(name, exc.message, exc.hint)

    for name in ("meter", "site", "timezone", "method", "substitution", "interval_label", "store"):
        if name in raw:
            setattr(s, name, str(raw[name]))
    if "energy_edition" in raw:
        ed = str(raw["energy_edition"]).replace("ISO 6976:", "").replace("ISO6976:", "").strip()
        if ed not in ("2016", "1995"):
            fail("energy_edition", f"unknown ISO 6976 edition '{raw['energy_edition']}'", "use 2016 or 1995")
        s.energy_edition = ed
    if "base" in raw:
        key = str(raw["base"]).strip().lower()
        if key not in BASE_PRESETS:
            fail("base", f"unknown base preset '{raw['base']}'", "known presets: " + ", ".join(BASE_PRESETS))
        pb, tb, _ = BASE_PRESETS[key]
        s.pressure_base = parse_quantity(pb, "pressure").value
        s.temperature_base = parse_quantity(tb, "temperature").value
        s.base_preset = key
    if "base_pressure" in raw:
        q = qty("base_pressure", "pressure")
        if q.is_gauge:
            fail("base_pressure", "a base pressure is absolute; got a gauge unit", "write e.g. '14.73 psia' or '101.325 kPa'")
        s.pressure_base = q.value
        s.base_preset = None
    if "base_temperature" in raw:
        s.temperature_base = qty("base_temperature", "temperature").value
        s.base_preset = None if "base_pressure" in raw else s.base_preset
    for name, (attr, kind, lo, hi, text) in QUANTITY_RANGES.items():
        if name in raw:
            q = qty(name, kind)
            if kind == "pressure" and q.is_gauge:
                fail(name, "this pressure is absolute; got a gauge unit", "write e.g. '14.4 psia' or '99.2 kPa'")
            if not (math.isfinite(q.value) and lo <= q.value <= hi):
                fail(name, f"'{raw[name]}' is outside the plausible range {text}")
            setattr(s, attr, q.value)
    for prefix in ("invoice_",):
        if prefix + "base" in raw:
            key = str(raw[prefix + "base"]).strip().lower()
            if key not in BASE_PRESETS:
                fail(prefix + "base", f"unknown base preset '{raw[prefix + 'base']}'",
                     "known presets: " + ", ".join(BASE_PRESETS))
            s.invoice_pressure_base = parse_quantity(BASE_PRESETS[key][0], "pressure").value
            s.invoice_temperature_base = parse_quantity(BASE_PRESETS[key][1], "temperature").value
        if prefix + "base_pressure" in raw:
            q = qty(prefix + "base_pressure", "pressure")
            if q.is_gauge:
                fail(prefix + "base_pressure", "a base pressure is absolute; got a gauge unit",
                     "write e.g. '14.73 psia' or '101.325 kPa'")
            s.invoice_pressure_base = q.value
        if prefix + "base_temperature" in raw:
            s.invoice_temperature_base = qty(prefix + "base_temperature", "temperature").value
    if "gas_day_start" in raw:
        s.gas_day_start_hour = _hour(raw["gas_day_start"])
    for name, (attr, typ, lo, hi, unit) in NUMBER_RANGES.items():
        if name in raw:
            v = raw[name]
            try:
                if isinstance(v, bool):
                    raise ValueError
                x = float(v)
            except (TypeError, ValueError):
                fail(name, f"'{v}' is not a number")
            if not math.isfinite(x):
                fail(name, f"'{v}' is not a finite number")
            if typ is int and x != int(x):
                fail(name, f"'{v}' is not a whole number")
            if not lo <= x <= hi:
                fail(name, f"{v} is outside the range {lo:g}-{hi:g} {unit}")
            setattr(s, attr, typ(x))
    if "sheet" in raw and str(raw["sheet"]).strip():
        s.sheet = str(raw["sheet"]).strip()
    if "opening_index" in raw:
        q = qty("opening_index", "volume")
        if not (math.isfinite(q.value) and q.value >= 0):
            fail("opening_index", f"'{raw['opening_index']}' is not a finite, non-negative reading")
        s.opening_index = q.value
    for name in ("use_barometer", "bidirectional"):
        if name in raw:
            v = raw[name]
            if isinstance(v, str):
                if v.lower() not in ("true", "false", "yes", "no", "1", "0"):
                    fail(name, f"'{v}' is not true or false")
                v = v.lower() in ("true", "yes", "1")
            setattr(s, name, bool(v))
    if "price" in raw:
        try:
            s.price_per_energy, s.currency = _parse_price(raw["price"])
        except ValueError:
            fail("price", f"'{raw['price']}' is not a price per energy unit", "write e.g. '3.20 USD/MMBtu'")
        except (SettingsError, UnitError) as exc:
            fail("price", exc.message, exc.hint)
        if not (math.isfinite(s.price_per_energy) and s.price_per_energy >= 0):
            fail("price", f"'{raw['price']}' is not a finite price of zero or more")
    for name in ("uncertainty", "column_map", "display_units", "files"):
        if name in raw:
            setattr(s, name, dict(raw[name]))

    # validation
    for key, v in (s.uncertainty or {}).items():
        # percent keys of the invoice and corrector checks (invoice_meter_pct, corrector_check_pct):
        # the uncertainty stage reads the others
        if str(key).endswith("_pct"):
            try:
                if isinstance(v, bool):
                    raise ValueError
                x = float(v)
            except (TypeError, ValueError):
                fail("uncertainty", f"{key} = '{v}' is not a number", f"write e.g. {key} = 1.0 (percent)")
            if not (math.isfinite(x) and 0.0 <= x <= 100.0):
                fail("uncertainty", f"{key} = {v} is outside 0-100 %", f"write e.g. {key} = 1.0 (percent)")
    if s.interval_label not in ("end", "start"):
        fail("interval_label", f"'{s.interval_label}' is not 'end' or 'start'")
    if s.substitution not in SUBSTITUTION_POLICIES:
        fail("substitution", f"'{s.substitution}' is not one of {', '.join(SUBSTITUTION_POLICIES)}")
    try:
        from zoneinfo import ZoneInfo

        ZoneInfo(s.timezone)
    except Exception:  # noqa: BLE001 - zoneinfo raises several types for a bad key
        fail("timezone", f"unknown time zone '{s.timezone}'", "use an IANA name such as 'Europe/Berlin' or 'America/Chicago'")
    from ..z import method_names
    from ..z.registry import get_method

    try:
        s.method = get_method(s.method).name
    except SettingsError as exc:
        fail("method", exc.message, exc.hint)
    if require_base and (s.pressure_base is None or s.temperature_base is None):
        missing = "base_pressure" if s.pressure_base is None else "base_temperature"
        raise SettingsError(
            f"no contract {missing.replace('_', ' ')} is set",
            hint=f"give --{missing.replace('_', '-')} (e.g. '14.73 psia' / '60 degF'), --base PRESET "
                 f"({', '.join(BASE_PRESETS)}), or set it in the site file",
        )
    if s.pressure_base is not None and not (math.isfinite(s.pressure_base) and 50e3 <= s.pressure_base <= 200e3):
        fail("base_pressure", f"{s.pressure_base:.0f} Pa is not a plausible base pressure (50-200 kPa)")
    if s.temperature_base is not None and not (math.isfinite(s.temperature_base)
                                               and 250.0 <= s.temperature_base <= 310.0):
        fail("base_temperature", f"{s.temperature_base:.2f} K is not a plausible base temperature")
    for name, value, lo, hi, text in (
            ("invoice_base_pressure", s.invoice_pressure_base, 50e3, 200e3, "50-200 kPa"),
            ("invoice_base_temperature", s.invoice_temperature_base, 250.0, 310.0, "250-310 K")):
        if value is not None and not (math.isfinite(value) and lo <= value <= hi):
            fail(name, f"'{raw.get(name)}' is not a plausible base condition ({text})")
    s.sources = {f.name: "default" for f in fields(Settings)}
    for k, v in src.items():
        s.sources[k] = v
    _ = method_names
    return s
