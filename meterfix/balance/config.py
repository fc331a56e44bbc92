"""The balance file (TOML) → a typed BalanceConfig; paths are relative to the balance file.

```toml
name = "Ashgrove zone"
month = "2026-10"                 # or --month; else the month the meters' logs agree on
base_pressure = "101.325 kPa"     # optional: the balance's base; default the first meter's (said so)
base_temperature = "15 degC"
method = "aga8-detail"            # Z method of the linepack (default aga8-detail)
[[meters]]
name = "R1"
folder = "meters/R1"              # a meter folder as `meterfix fleet` reads it (site.toml, logs)
role = "receipt"                  # receipt | delivery | own_use
correlation_group = "lab-A"       # optional
[[linepack]]
name = "main"
volume = "6000 m3"                # or length = "12 km" and diameter = "0.5 m" (internal)
pressure_log = "linepack/main.csv"
composition = "R1"                # a meter named above whose analysis applies, or an analysis file
timezone = "Europe/Berlin"        # of the log's clock (default: the meters' gas-day zone)
volume_uncertainty = "2 %"        # optional, standard uncertainties (k = 1)
pressure_uncertainty = "0.5 %"
temperature_uncertainty = "1 K"
atmospheric_pressure = "1.013 bar(a)"   # only for a gauge pressure log
[[fixed]]
name = "vented, station maintenance"
volume = "1200 m3"                # at the balance's base
uncertainty = "30 %"              # standard uncertainty (k = 1), relative or as a volume
gas_day = "2026-10-14"            # optional: the day it happened (else spread over the month)
```

Every rule refused here raises SettingsError naming the file, the entry and the fix (exit 2).
"""

from __future__ import annotations

import math
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

from ..errors import SettingsError
from .ufg import ROLES

#: linepack uncertainties when the file gives none (k = 1): geometric volume from drawings 2 %,
#: one pressure and one temperature reading standing for a whole section 0.5 % and 1 K
#: (our judgement of a representative figure, not a published one; give your own)
LINEPACK_DEFAULTS = {"volume_uncertainty": "2 %", "pressure_uncertainty": "0.5 %", "temperature_uncertainty": "1 K"}

_TOP = {"name", "month", "base_pressure", "base_temperature", "method", "meters", "linepack", "fixed"}
_METER = {"name", "folder", "role", "correlation_group"}
_LINEPACK = {"name", "volume", "length", "diameter", "pressure_log", "composition", "timezone", "volume_uncertainty",
             "pressure_uncertainty", "temperature_uncertainty", "atmospheric_pressure", "sheet"}
_FIXED = {"name", "volume", "uncertainty", "gas_day"}


@dataclass
class MeterEntry:
    name: str
    folder: Path
    role: str
    correlation_group: str | None = None


@dataclass
class LinepackEntry:
    """volume [m3]; uncertainties as relative [-] (pressure, volume) and [K] (temperature)."""

    name: str
    volume: float
    pressure_log: Path
    composition: str | Path
    timezone: str | None
    u_volume_rel: float
    u_pressure_rel: float
    u_temperature: float
    atmospheric_pressure: float | None = None
    sheet: str | None = None


@dataclass
class FixedEntry:
    """volume [m3 at the balance's base]; u_rel [-] (k = 1)."""

    name: str
    volume: float
    u_rel: float
    gas_day: str | None = None


@dataclass
class BalanceConfig:
    file: Path
    name: str
    month: str | None
    pressure_base: float | None
    temperature_base: float | None
    method: str
    meters: list = field(default_factory=list)
    linepacks: list = field(default_factory=list)
    fixed: list = field(default_factory=list)


def _fail(file, text, hint):
    raise SettingsError(text, file=file, hint=hint)


def _str(file, where, d, key, required=True):
    v = d.get(key)
    if v is None:
        if required:
            _fail(file, f"{where}: '{key}' is missing", f"add {key} = \"...\" to {where}")
        return None
    if not isinstance(v, str) or not v.strip():
        _fail(file, f"{where}: '{key}' must be a text", f"write {key} = \"...\"")
    return v.strip()


def _unknown(file, where, d, allowed):
    extra = sorted(set(d) - allowed)
    if extra:
        _fail(file, f"{where}: unknown key '{extra[0]}'", f"use only: {', '.join(sorted(allowed))}")


def _relative(file, where, key, text, reference: float | None = None, kind: str = "volume") -> float:
    """'30 %' → 0.3; '0.5 K' → 0.5 (temperature); '360 m3' → 360 / reference."""
    from ..units import parse_quantity

    t = str(text).strip()
    m = re.fullmatch(r"([0-9.eE+-]+)\s*%", t)
    if m:
        v = float(m.group(1)) / 100.0
    else:
        try:
            q = parse_quantity(t, kind)
        except Exception:
            _fail(file, f"{where}: {key} '{t}' is not a percentage or a {kind}", f"write e.g. {key} = \"30 %\"")
        v = q.value if kind == "temperature_difference" else (q.value / reference if reference else math.nan)
    if not (math.isfinite(v) and 0 <= v < 10):
        _fail(file, f"{where}: {key} '{t}' is out of range", f"write e.g. {key} = \"30 %\"")
    return v


def _temperature_u(file, where, text) -> float:
    t = str(text).strip()
    m = re.fullmatch(r"([0-9.eE+-]+)\s*(K|°C|degC|C)", t)
    if not m:
        _fail(file, f"{where}: temperature_uncertainty '{t}' is not a temperature difference", "write e.g. \"1 K\"")
    v = float(m.group(1))
    if not (math.isfinite(v) and 0 <= v <= 50):
        _fail(file, f"{where}: temperature_uncertainty '{t}' is out of range", "write e.g. \"1 K\"")
    return v


def _month(file, text) -> str:
    if not re.fullmatch(r"\d{4}-(0[1-9]|1[0-2])", text or ""):
        _fail(file, f"month '{text}' is not a gas month", "write month = \"YYYY-MM\", e.g. \"2026-10\"")
    return text


def read_balance_config(path, *, month: str | None = None) -> BalanceConfig:
    """Read and check a balance file.

    Parameters
    ----------
    path : path        the balance TOML
    month : str, optional   YYYY-MM, wins over the file's ``month``

    Raises
    ------
    SettingsError   a rule broken: naming the entry and the fix
    """
    from ..units import parse_pressure, parse_quantity, parse_temperature

    file = Path(path)
    if not file.is_file():
        _fail(file, "balance file not found", "give the path of a balance TOML (see the README, Balances)")
    try:
        raw = tomllib.loads(file.read_text(encoding="utf-8"))
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        _fail(file, f"not a readable TOML file: {exc}", "check the balance file's syntax")
    base = file.parent
    _unknown(file, "the balance file", raw, _TOP)
    name = _str(file, "the balance file", raw, "name")
    mo = month or raw.get("month")
    mo = _month(file, mo) if mo is not None else None
    pb = tb = None
    if raw.get("base_pressure") is not None:
        pb = parse_pressure(str(raw["base_pressure"]), unmarked="absolute")
    if raw.get("base_temperature") is not None:
        tb = parse_temperature(str(raw["base_temperature"]))
    if (pb is None) != (tb is None):
        _fail(file, "give both base_pressure and base_temperature, or neither", "e.g. base_pressure = \"101.325 kPa\", "
              "base_temperature = \"15 degC\"")
    method = raw.get("method") or "aga8-detail"
    from ..z.registry import get_method

    try:
        get_method(method)
    except Exception:
        _fail(file, f"method '{method}' is not a Z method", "see `meterfix methods`")
    cfg = BalanceConfig(file=file, name=name, month=mo, pressure_base=pb, temperature_base=tb, method=method)

    meters = raw.get("meters") or []
    if not isinstance(meters, list) or not meters:
        _fail(file, "no [[meters]] entries", "add one [[meters]] table per meter: name, folder, role")
    seen, folders = {}, {}
    for i, m in enumerate(meters, 1):
        if not isinstance(m, dict):
            _fail(file, f"[[meters]] entry {i} is not a table", "write [[meters]] then name = ..., folder = ..., role = ...")
        nm = _str(file, f"[[meters]] entry {i}", m, "name")
        where = f"meter '{nm}'"
        _unknown(file, where, m, _METER)
        if nm in seen:
            _fail(file, f"meter '{nm}' is named twice (entries {seen[nm]} and {i})", "give each meter its own name")
        seen[nm] = i
        role = _str(file, where, m, "role")
        if role not in ROLES:
            _fail(file, f"{where}: role '{role}' is not one of {', '.join(ROLES)}",
                  "write role = \"receipt\", \"delivery\" or \"own_use\"")
        folder = (base / _str(file, where, m, "folder")).resolve()
        if not (folder / "site.toml").is_file():
            _fail(file, f"{where}: folder '{m['folder']}' is not a meter (no site.toml in it)",
                  "point folder at a meter folder as `meterfix fleet` reads it (site.toml and logs)")
        if folder in folders:
            _fail(file, f"{where}: folder '{m['folder']}' is also meter '{folders[folder]}'",
                  "each meter folder belongs to one entry")
        folders[folder] = nm
        grp = _str(file, where, m, "correlation_group", required=False)
        cfg.meters.append(MeterEntry(name=nm, folder=folder, role=role, correlation_group=grp))

    lps = raw.get("linepack") or []
    for i, lp in enumerate(lps, 1):
        nm = _str(file, f"[[linepack]] entry {i}", lp, "name")
        where = f"linepack '{nm}'"
        _unknown(file, where, lp, _LINEPACK)
        if lp.get("volume") is not None:
            vol = parse_quantity(str(lp["volume"]), "volume").value
        elif lp.get("length") is not None and lp.get("diameter") is not None:
            L = parse_quantity(str(lp["length"]), "length").value
            d = parse_quantity(str(lp["diameter"]), "length").value
            vol = math.pi * d * d / 4.0 * L
        else:
            _fail(file, f"{where}: give its volume, or its length and internal diameter",
                  "write volume = \"6000 m3\" (or length = \"12 km\", diameter = \"0.8 m\")")
        if not (math.isfinite(vol) and vol > 0):
            _fail(file, f"{where}: the volume must be positive", "write volume = \"6000 m3\"")
        log = base / _str(file, where, lp, "pressure_log")
        if not log.is_file():
            _fail(file, f"{where}: pressure_log '{lp['pressure_log']}' not found", "give the section's pressure and "
                  "temperature log, relative to the balance file")
        comp = _str(file, where, lp, "composition")
        if comp in seen:
            composition = comp
        else:
            composition = base / comp
            if not composition.is_file():
                _fail(file, f"{where}: composition '{comp}' is neither a meter of this balance nor a file",
                      "name a meter above (its analysis applies) or give an analysis file")
        q = {k: lp.get(k, LINEPACK_DEFAULTS[k]) for k in LINEPACK_DEFAULTS}
        atm = lp.get("atmospheric_pressure")
        cfg.linepacks.append(LinepackEntry(
            name=nm, volume=vol, pressure_log=log, composition=composition, timezone=lp.get("timezone"),
            u_volume_rel=_relative(file, where, "volume_uncertainty", q["volume_uncertainty"], vol),
            u_pressure_rel=_relative(file, where, "pressure_uncertainty", q["pressure_uncertainty"], None, "pressure"),
            u_temperature=_temperature_u(file, where, q["temperature_uncertainty"]),
            atmospheric_pressure=None if atm is None else parse_pressure(str(atm), unmarked="absolute"),
            sheet=lp.get("sheet")))

    for i, f in enumerate(raw.get("fixed") or [], 1):
        nm = _str(file, f"[[fixed]] entry {i}", f, "name")
        where = f"fixed quantity '{nm}'"
        _unknown(file, where, f, _FIXED)
        vol = parse_quantity(_str(file, where, f, "volume"), "volume").value
        u = _relative(file, where, "uncertainty", _str(file, where, f, "uncertainty"), abs(vol) or None)
        day = _str(file, where, f, "gas_day", required=False)
        if day is not None and not re.fullmatch(r"\d{4}-\d{2}-\d{2}", day):
            _fail(file, f"{where}: gas_day '{day}' is not a date", "write gas_day = \"YYYY-MM-DD\"")
        cfg.fixed.append(FixedEntry(name=nm, volume=vol, u_rel=u, gas_day=day))
    return cfg
