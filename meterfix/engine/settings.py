"""Site settings for a month run: from a TOML file and/or CLI options (the option wins).

Every setting is one row of :data:`meterfix.engine.settings_table.SETTINGS`: its one name is the
site-file key (at the top level or in ``[site]``; table keys in ``[uncertainty]``, ``[files]``)
and, with dashes, the option (``base_pressure`` ⇔ ``--base-pressure``). :class:`Settings` has one
field per setting, by that name, in SI. Quantities are strings with units (``"14.73 psia"``,
``"15 degC"``, ``"180 m"``) and are converted to SI here.
"""

from __future__ import annotations

import math
import re
import tomllib
from dataclasses import asdict, field, fields, make_dataclass
from pathlib import Path

from ..errors import SettingsError, UnitError
from ..units import parse_quantity, parse_unit
from .settings_table import (BASE_PRESETS, BASE_PRESET_ALIASES, BY_OPTION, ENERGY_EDITIONS, MAPPING_TABLES, TABLES,
                             SETTINGS, SUBSTITUTION_POLICIES, Setting, base_preset_name, label, settings_of)

__all__ = ["BASE_PRESETS", "SUBSTITUTION_POLICIES", "Settings", "build_settings", "load_site_file",
           "settings_from_record", "SETTINGS", "RECORD_RENAMES"]

_PY_TYPES = {"text": str | None, "choice": str, "bool": bool, "int": int | None, "number": float | None,
             "hour": int, "base": str | None, "price": float | None, "list": list, "mapping": dict,
             "month": str | None}
_QUANTITY_KINDS = ("pressure", "temperature", "length", "volume", "heating_value", "viscosity",
                   "expansion_coefficient")


def _si_default(s: Setting):
    if s.default is None or s.kind not in _QUANTITY_KINDS:
        return s.default
    return parse_quantity(str(s.default), s.kind).value


def _make_settings_class():
    spec = []
    for s in SETTINGS:
        if s.table in TABLES:
            continue
        typ = _PY_TYPES.get(s.kind, float | None)
        if s.kind == "mapping":
            spec.append((s.name, dict, field(default_factory=dict)))
        else:
            spec.append((s.name, typ, field(default=_si_default(s))))
    spec += [(table, dict, field(default_factory=dict)) for table in TABLES]  # a table's keys -> their values
    spec += [
        ("currency", str, field(default="")),                # of price (derived from it)
        ("sources", dict, field(default_factory=dict)),      # setting label -> 'default' | 'site file' | 'option'
    ]
    doc = ["Validated settings of one meter-month, in SI: one field per row of the settings table.", "",
           "Attributes", "----------"]
    for s in SETTINGS:
        if s.table in TABLES:
            continue
        doc.append(f"{s.name} : {s.kind}{f' [{s.unit}]' if s.unit else ''}   {s.help}")
    doc += ["uncertainty : dict   the [uncertainty] table's texts by key (read by meterfix.uncertainty.inputs)",
            "files : dict         the [files] table (logs, composition, invoice; relative to the site file)",
            "currency : str       currency of price",
            "sources : dict       where each setting came from: 'default', 'site file' or 'option'"]
    cls = make_dataclass("Settings", spec, namespace={
        "to_record": lambda self: asdict(self),
        "__doc__": "\n".join(doc),
        "__module__": __name__,
    })
    return cls


Settings = _make_settings_class()

#: field names of earlier versions (manifests and stores written before the settings table)
RECORD_RENAMES = {
    "pressure_base": "base_pressure", "temperature_base": "base_temperature", "base_preset": "base",
    "pressure_atm": "atmospheric_pressure", "gas_day_start_hour": "gas_day_start",
    "temperature_combustion": "combustion_temperature", "ideal_gas_threshold_pct": "ideal_gas_threshold",
    "price_per_energy": "price", "invoice_tolerance_pct": "invoice_tolerance",
    "invoice_pressure_base": "invoice_base_pressure", "invoice_temperature_base": "invoice_base_temperature",
    "column_map": "columns", "site": "site_name",
}
#: site-file keys of earlier versions, still read
KEY_ALIASES = {"site": "site_name"}


def settings_from_record(record: dict, where=None):
    """Settings exactly as recorded (SI values, sources); earlier field names are read too."""
    from ..errors import InputError

    names = {f.name for f in fields(Settings)}
    rec = {RECORD_RENAMES.get(k, k): v for k, v in record.items()}
    if rec.get("base"):
        rec["base"] = base_preset_name(rec["base"]) or rec["base"]
    rec["sources"] = {RECORD_RENAMES.get(k, k): v for k, v in (rec.get("sources") or {}).items()}
    unknown = sorted(set(rec) - names)
    if unknown:
        raise InputError(f"the record has unknown setting(s) {', '.join(unknown)}", file=where,
                         hint="it was written by another meterfix version; run the month anew")
    return Settings(**rec)


# --------------------------------------------------------------------------------------------
# reading the site file

def load_site_file(path) -> dict:
    """Read a site TOML file into ``{(table, key): raw value}`` (table "" for the top level and [site]).

    The whole-mapping tables (``[columns]``, ``[display_units]``) come back under ``("", name)``.
    Unknown keys and tables are refused, with the known ones listed.
    """
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
    out: dict = {}
    tables = sorted({s.table for s in SETTINGS if s.table and s.kind != "mapping"})  # a stable message
    top = settings_of("")
    for key, value in data.items():
        if isinstance(value, dict) and key in ("site", "settings"):
            items = value.items()
        elif isinstance(value, dict) and key in MAPPING_TABLES:
            out[("", key)] = dict(value)
            continue
        elif isinstance(value, dict) and key in tables:
            known = settings_of(key)
            for k, v in value.items():
                if k not in known:
                    raise SettingsError(f"unknown setting '{k}' in the [{key}] table", file=p,
                                        hint=f"known keys of [{key}]: " + ", ".join(known))
                out[(key, k)] = v
            continue
        else:
            items = [(key, value)]
        for k, v in items:
            k = KEY_ALIASES.get(k, k) if not isinstance(v, dict) else k
            if k not in top or isinstance(v, dict):
                raise SettingsError(f"unknown setting '{k}'", file=p,
                                    hint="known settings: " + ", ".join(top) + "; tables: "
                                         + ", ".join(f"[{t}]" for t in (*tables, *MAPPING_TABLES)))
            out[("", k)] = v
    return out


# --------------------------------------------------------------------------------------------
# one reader per kind of value: (setting, raw value, fail) -> value inside

def _fail_for(setting: Setting, where: str | None):
    def fail(msg, hint=None):
        raise SettingsError(f"setting '{label(setting)}': {msg}", file=where,
                            hint=hint or f"set it in the site file as {label(setting)} = ... "
                                         f"or with {setting.option_name}")
    return fail


def _read_text(s, v, fail):
    return str(v)


def _read_choice(s, v, fail):
    t = str(v).strip()
    if s.name == "energy_edition":
        t = t.replace("ISO 6976:", "").replace("ISO6976:", "").strip()
    if t not in s.choices:
        fail(f"'{v}' is not one of {', '.join(s.choices)}")
    return t


def _read_bool(s, v, fail):
    if isinstance(v, str):
        if v.lower() not in ("true", "false", "yes", "no", "1", "0"):
            fail(f"'{v}' is not true or false")
        return v.lower() in ("true", "yes", "1")
    if not isinstance(v, bool):
        fail(f"'{v}' is not true or false")
    return v


def _read_number(s, v, fail):
    try:
        if isinstance(v, bool):
            raise ValueError
        x = float(v)
    except (TypeError, ValueError):
        fail(f"'{v}' is not a number", f"write e.g. {s.name} = {s.example}"
             + (" (percent)" if s.unit == "%" else ""))
    if not math.isfinite(x):
        fail(f"'{v}' is not a finite number")
    if s.kind == "int" and x != int(x):
        fail(f"'{v}' is not a whole number")
    if (s.low is not None and x < s.low) or (s.high is not None and x > s.high):
        fail(f"{v} is outside the range {s.low:g}-{s.high:g} {s.unit}".rstrip())
    return int(x) if s.kind == "int" else x


def _read_quantity(s, v, fail):
    try:
        q = parse_quantity(str(v), s.kind)
    except UnitError as exc:
        fail(exc.message, exc.hint)
    if s.kind == "pressure" and q.is_gauge:
        fail("this pressure is absolute; got a gauge unit", "write e.g. '14.73 psia' or '101.325 kPa'")
    if not math.isfinite(q.value) or (s.low is not None and q.value < s.low) or (
            s.high is not None and q.value > s.high):
        what = "is not a plausible base condition" if "base_" in s.name else "is outside the plausible range"
        fail(f"'{v}' {what} {s.range_text or f'{s.low:g} or more {s.unit}'}")
    return q.value


def _read_hour(s, text, fail) -> int:
    """'06:00', '6' or 6 → 6; anything else (6.5, '06:30', inf, 24) is refused."""
    hint = "write e.g. '06:00' or '09:00'"
    if isinstance(text, bool):
        fail(f"'{text}' is not a time of day", hint)
    t = str(text).strip()
    try:
        if ":" in t:
            h, mnt = t.split(":", 1)
            if int(mnt) != 0:
                fail(f"'{text}': only whole hours are supported", hint)
            h = int(h)
        else:
            x = float(t)
            if not math.isfinite(x):
                fail(f"'{text}' is not a time of day", hint)
            if x != int(x):
                fail(f"'{text}': only whole hours are supported", hint)
            h = int(x)
    except ValueError:
        fail(f"'{text}' is not a time of day", hint)
    if not 0 <= h <= 23:
        fail(f"'{text}' is not between 00:00 and 23:00", hint)
    return h


def _read_base(s, v, fail):
    name = base_preset_name(v)
    if name is None:
        fail(f"unknown base preset '{v}'", "known presets: " + ", ".join(BASE_PRESETS)
             + " (earlier names " + ", ".join(BASE_PRESET_ALIASES) + ")")
    return name


def _read_price(s, text, fail):
    m = re.match(r"^\s*([-+]?[\d.,]+(?:[eE][-+]?\d+)?)\s*([A-Za-z$€£]*)\s*/\s*(\S+)\s*$", str(text))
    if not m:
        fail(f"'{text}' is not a price per energy unit", "write e.g. '3.20 USD/MMBtu'")
    try:
        value = float(m.group(1).replace(",", "."))
        unit = parse_unit(m.group(3), "energy")
    except ValueError:
        fail(f"'{text}' is not a price per energy unit", "write e.g. '3.20 USD/MMBtu'")
    except UnitError as exc:
        fail(exc.message, exc.hint)
    price = value / unit.scale
    if not (math.isfinite(price) and price >= 0):
        fail(f"'{text}' is not a finite price of zero or more")
    return price, m.group(2)


def _read_mapping(s, v, fail):
    if isinstance(v, dict):
        return {str(k): str(x) for k, x in v.items()}
    out = {}
    for item in (v if isinstance(v, (list, tuple)) else [v]):
        if "=" not in str(item):
            fail(f"'{item}' is not KEY=VALUE", f"e.g. {s.option_name} '{next(iter(s.example))}={next(iter(s.example.values()))}'")
        k, x = str(item).rsplit("=", 1)
        out[k.strip()] = x.strip()
    return out


def _read_list(s, v, fail):
    return [str(x) for x in v] if isinstance(v, (list, tuple)) else [str(v)]


def _read_month(s, v, fail):
    """A gas month 'YYYY-MM' (engine.gas_month), normalised to two month digits."""
    import re

    m = re.fullmatch(r"\s*(\d{4})-(\d{1,2})\s*", v if isinstance(v, str) else "")
    if not m or not 1 <= int(m.group(2)) <= 12:
        fail(f"'{v}' is not a gas month YYYY-MM", "write e.g. '2026-06' (quoted in the site file)")
    return f"{int(m.group(1)):04d}-{int(m.group(2)):02d}"


def _read_kept_text(s, v, fail):
    """Uncertainty texts and flow rates: kept as written, read by meterfix.uncertainty.inputs."""
    if isinstance(v, bool):
        fail(f"'{v}' is not an uncertainty", f"write e.g. {s.example!r}")
    return v if isinstance(v, (int, float)) else str(v)


def _read_curve(s, v, fail):
    """An error curve: [[Q, e], ...] as TOML writes it, or the option's text 'Q:e,Q:e,...'."""
    if isinstance(v, str):
        try:
            v = [[float(x) for x in pair.split(":")] for pair in v.replace(";", ",").split(",") if pair.strip()]
        except ValueError:
            fail(f"'{v}' is not a list of flow rate:error pairs", "write e.g. '50:1.2,150:0.4,300:-0.2' "
                                                                   "(m3/h at line conditions : percent)")
    from ..meters.error_curve import error_curve_checked

    try:
        error_curve_checked(v, setting="the curve")
    except SettingsError as exc:
        fail(exc.message, exc.hint.replace("give the curve", f"give {label(s)}"))
    return [[float(q), float(e)] for q, e in v]


_READERS = {
    "text": _read_text, "choice": _read_choice, "bool": _read_bool, "int": _read_number,
    "number": _read_number, "hour": _read_hour, "base": _read_base, "price": _read_price,
    "mapping": _read_mapping, "list": _read_list, "uncertainty": _read_kept_text, "flow_rate": _read_kept_text,
    "curve": _read_curve, "month": _read_month,
    **{k: _read_quantity for k in _QUANTITY_KINDS},
}


# --------------------------------------------------------------------------------------------
# the steps of build_settings

def _gather(site_file, options):
    """Raw values by (table, key) and their source; the option wins."""
    raw, src = {}, {}
    if site_file is not None:
        for k, v in load_site_file(site_file).items():
            raw[k] = v
            src[k] = "site file"
    for param, v in _flat_options(options):
        s = _setting_of_option(param)
        key = (s.table if s.kind != "mapping" else "", s.name)
        if s.kind == "mapping" and key in raw:
            merged = dict(raw[key])
            merged.update(_read_mapping(s, v, _fail_for(s, None)))
            v = merged
        raw[key] = v
        src[key] = "option"
    return raw, src


_BY_PARAM = {s.param: s for s in SETTINGS}


def _flat_options(options):
    """(parameter, value) pairs; a table given as a dict (``uncertainty={"meter": "1 %"}``) by key."""
    for param, v in (options or {}).items():
        if v is None or v == [] or v == {}:
            continue
        param = {"column_map": "columns", **KEY_ALIASES}.get(param, param)  # earlier names
        if param in TABLES and isinstance(v, dict):
            known = settings_of(param)
            for k, x in v.items():
                if x is None:
                    continue
                if k not in known:
                    raise SettingsError(f"unknown setting '{k}' of [{param}]",
                                        hint=f"known keys of [{param}]: " + ", ".join(known))
                yield known[k].param, x
            continue
        yield param, v


def _setting_of_option(param: str) -> Setting:
    if param in _BY_PARAM:
        return _BY_PARAM[param]
    if ("--" + param.replace("_", "-")) in BY_OPTION:
        return BY_OPTION["--" + param.replace("_", "-")]
    top = settings_of("")
    if param in top:
        return top[param]
    raise SettingsError(f"unknown setting '{param}'", hint="known settings: " + ", ".join(top))


def _assign(s, raw, src, file_label):
    """Every given value read by its kind and set on the Settings object."""
    for setting in SETTINGS:
        key = (setting.table if setting.kind != "mapping" else "", setting.name)
        if key not in raw:
            continue
        fail = _fail_for(setting, file_label if src.get(key) == "site file" else None)
        value = _READERS[setting.kind](setting, raw[key], fail)
        if setting.table in TABLES:
            getattr(s, setting.table)[setting.name] = value
        elif setting.kind == "price":
            s.price, s.currency = value
        else:
            setattr(s, setting.name, value)


def _apply_presets(s, raw):
    """A named base sets its pressure and temperature unless they are given themselves (for the
    contract's base, giving either means the conditions are no longer the preset's)."""
    for preset, pressure, temperature, drop in (("base", "base_pressure", "base_temperature", True),
                                                ("invoice_base", "invoice_base_pressure", "invoice_base_temperature",
                                                 False)):
        name = getattr(s, preset)
        if name is None:
            continue
        pb, tb, _ = BASE_PRESETS[name]
        given = [("", k) in raw for k in (pressure, temperature)]
        if not given[0]:
            setattr(s, pressure, parse_quantity(pb, "pressure").value)
        if not given[1]:
            setattr(s, temperature, parse_quantity(tb, "temperature").value)
        if drop and any(given):
            setattr(s, preset, None)


def _check_combinations(s, require_base):
    """What no single value can say: the zone, the method, the base being given."""
    fail = _fail_for(settings_of("")["timezone"], None)
    try:
        from zoneinfo import ZoneInfo

        ZoneInfo(s.timezone)
    except Exception:  # noqa: BLE001 - zoneinfo raises several types for a bad key
        fail(f"unknown time zone '{s.timezone}'", "use an IANA name such as 'Europe/Berlin' or 'America/Chicago'")
    from ..z.registry import get_method

    try:
        s.method = get_method(s.method).name
    except SettingsError as exc:
        _fail_for(settings_of("")["method"], None)(exc.message, exc.hint)
    if require_base and (s.base_pressure is None or s.base_temperature is None):
        missing = "base_pressure" if s.base_pressure is None else "base_temperature"
        raise SettingsError(
            f"no contract {missing.replace('_', ' ')} is set",
            hint=f"give --{missing.replace('_', '-')} (e.g. '14.73 psia' / '60 degF'), --base PRESET "
                 f"({', '.join(BASE_PRESETS)}), or set it in the site file",
        )


def build_settings(site_file=None, options: dict | None = None, *, require_base: bool = True):
    """Merge defaults, the site file and CLI options (the option wins) into validated SI Settings.

    Parameters
    ----------
    site_file : path or None
    options : dict
        Raw option values by setting name or option parameter name (strings with units for
        quantities); None values are ignored.
    require_base : bool
        Raise when no base pressure/temperature is given (the contract must say).
    """
    raw, src = _gather(site_file, options)
    s = Settings()
    _assign(s, raw, src, str(site_file) if site_file is not None else None)
    _apply_presets(s, raw)
    _check_combinations(s, require_base)
    if s.flow_meter:  # the meter kind's keys checked together (a bore inside the pipe, a curve or a factor ...)
        from .flow_meter import parse_flow_meter

        from_file = any(t == "flow_meter" and w == "site file" for (t, _), w in src.items())
        parse_flow_meter(s.flow_meter, file=str(site_file) if from_file and site_file is not None else None)
    s.sources = {label(x): "default" for x in SETTINGS if x.table not in TABLES}
    for (table, name), where in src.items():
        s.sources[f"[{table}] {name}" if table else name] = where
    for derived, by in (("base_pressure", "base"), ("base_temperature", "base"),
                        ("invoice_base_pressure", "invoice_base"), ("invoice_base_temperature", "invoice_base")):
        if s.sources.get(derived) == "default" and s.sources.get(by) != "default":
            s.sources[derived] = s.sources[by]
    return s


# the energy editions and substitution policies other modules name
_ = ENERGY_EDITIONS
