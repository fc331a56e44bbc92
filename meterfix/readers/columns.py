"""Header recognition: source column headers → canonical names and units.

A header names a quantity and carries its unit in brackets, parentheses or as a last word::

    Line pressure [bar(g)]    Pressure (psig)    P [bar(g)]    Line pressure kPa(a)
    Temp (°F)    Temperature [degC]    Volume (ft3)    Uncorrected volume [m3]
    Meter index [m3]    Flow rate (m3/h)    Barometric pressure [kPa]
    Corrected volume (scf)    Converted volume [m3]    Site corrected volume [m3]
    Interval end    Interval start    Timestamp    Date + Time    Status

Canonical names (what a column becomes; also the values an explicit column map may give):

=============================== ===================================================== ==========
name                            meaning                                               unit kind
=============================== ===================================================== ==========
``time``                        date and time of the row (label from the setting)     –
``interval_end``                the same, stated to be the interval's end             –
``interval_start``              the same, stated to be the interval's start           –
``date``, ``clock``             separate date and time-of-day columns                 –
``hour_ending``                 with ``date``: hour number 1..24, the hour ending then  –
                                (hour 24 ends at midnight; ``Hour ending``, ``HE``)
``hour_beginning``              with ``date``: hour number 0..23, the hour starting then –
                                (``Hour beginning``, ``Hour starting``, ``HB``)
``pressure_gauge``              line pressure, gauge                                  pressure
``pressure_line``               line pressure, absolute                               pressure
``pressure_atm``                barometer (absolute)                                  pressure
``temperature_line``            gas temperature                                       temperature
``volume_line``                 uncorrected volume in the interval                    volume
``volume_index``                uncorrected meter index (cumulative)                  volume
``flow_rate``                   uncorrected flow rate                                 flow
``volume_corrected_site``       the site corrector's own corrected volume (interval)  volume
``volume_corrected_site_index`` the site corrector's corrected index (cumulative)     volume
``duration``                    length of the row's interval                          time
``status``                      free text, kept in the metadata                       –
``pressure_differential``       orifice differential pressure, interval mean          pressure_differential
``mass``                        mass in the interval (Coriolis)                       mass
``mass_flow``                   mass flow rate (Coriolis)                             mass_flow
``speed_of_sound``              the ultrasonic meter's speed of sound                 speed
``pressure_differential_root``  interval mean of sqrt(dp) (a flow computer's          root_pressure_differential
                                extension), e.g. 'Mean root differential pressure [sqrt(mbar)]'
``ignore``                      (column map only) do not read this column             –
=============================== ===================================================== ==========

Rules: a pressure unit must say gauge or absolute (``psig``, ``bar(g)``, ``kPa(a)``, ``psia``) unless
the header says so in words (``Gauge pressure [bar]``) or the column map names the column
``pressure_gauge`` / ``pressure_line``. A volume in a base-condition unit (``scf``, ``Sm3``,
``Nm3``) without words saying it is uncorrected is read as the site's corrected volume. Headers
that name nothing known are ignored (and listed in the metadata).
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from ..errors import InputError, SettingsError, UnitError
from ..units import Unit, parse_unit

#: canonical name → unit kind (None: no unit)
CANONICAL = {
    "time": None, "interval_end": None, "interval_start": None, "date": None, "clock": None,
    "hour_ending": None, "hour_beginning": None, "pressure_gauge": "pressure", "pressure_line": "pressure", "pressure_atm": "pressure",
    "temperature_line": "temperature", "volume_line": "volume", "volume_index": "volume",
    "flow_rate": "flow", "volume_corrected_site": "volume", "volume_corrected_site_index": "volume",
    "duration": "time", "status": None, "ignore": None,
    "pressure_differential": "pressure_differential", "mass": "mass", "mass_flow": "mass_flow",
    "speed_of_sound": "speed", "pressure_differential_root": "root_pressure_differential",
}
#: the primary measurement of each meter kind: one of these stands for the uncorrected volume
_PRIMARY = ("volume_line", "volume_index", "flow_rate", "pressure_differential", "mass", "mass_flow",
            "pressure_differential_root")
_TIME_ROLES = ("time", "interval_end", "interval_start", "date", "clock", "hour_ending", "hour_beginning")
#: example headers for messages
EXAMPLES = {
    "time": "'Interval end' (or 'Date' and 'Time')", "pressure": "'Line pressure [bar(g)]'",
    "temperature_line": "'Line temperature [degC]'",
    "volume": "'Uncorrected volume [m3]', 'Meter index [m3]', 'Flow rate [m3/h]', 'Differential pressure [mbar]' "
              "or 'Mass [kg]'",
}


@dataclass(frozen=True)
class ColumnSpec:
    """One recognised column.

    Attributes
    ----------
    name : str          canonical name (see the module table)
    index : int         0-based position in the table
    header : str        the header as written
    unit : Unit or None
    unit_text : str     the unit as written ('' when none)
    zone : str or None  for time columns: 'utc' or 'local' when the header says so
    weak : bool         the role rests on weak evidence (a word such as 'Consumption' that
                        billing exports also use for corrected volumes)
    """

    name: str
    index: int
    header: str
    unit: Unit | None = None
    unit_text: str = ""
    zone: str | None = None
    weak: bool = False


@dataclass
class ColumnMapping:
    """How the headers of one table were read."""

    columns: dict = field(default_factory=dict)   # canonical name → ColumnSpec
    ignored: list = field(default_factory=list)   # headers not used
    map_keys_used: set = field(default_factory=set)

    def __contains__(self, name):
        return name in self.columns

    def __getitem__(self, name) -> ColumnSpec:
        return self.columns[name]


def _norm(text: str) -> str:
    t = str(text).strip().lower().replace("°", " deg ").replace("º", " deg ")
    t = re.sub(r"[_\-/.:,;#*]+", " ", t)
    return re.sub(r"\s+", " ", t).strip()


def _key(text: str) -> str:
    return re.sub(r"\s+", " ", str(text).strip()).lower()


_END = {"interval end", "end", "end time", "time end", "interval ending", "period end", "end of interval",
        "interval end time", "timestamp end", "end timestamp", "to", "until",
        "interval to", "period to", "end date time", "end datetime"}
_START = {"interval start", "start", "start time", "time start", "interval beginning", "period start",
          "start of interval", "from", "begin", "interval from", "period from",
          "start date time", "start datetime"}
_DATETIME = {"timestamp", "time stamp", "datetime", "date time", "date and time", "logged at", "reading time",
             "time of reading", "log time", "date time local", "date time utc"}
_DATE = {"date", "day", "reading date", "log date", "gas date", "flow date"}
#: hour numbers beside a date column (US gas-day data: hour ending 1..24, common practice); without a
#: date column these headers hold a full date-time stamped at the interval's end or start
_HOUR_ENDING = {"hour ending", "hour end", "he", "hr ending", "hr end", "ending hour", "hour ended"}
_HOUR_BEGINNING = {"hour beginning", "hour start", "hour starting", "hb", "hr beginning", "hr start",
                   "beginning hour", "starting hour", "start hour"}
_CLOCK = {"time", "hour", "clock", "time of day", "clock time"}
_STATUS = {"status", "state", "alarm", "alarms", "event", "events", "remark", "remarks", "comment", "comments",
           "note", "notes", "flags", "flag", "quality", "status text"}
_INDEX_WORDS = ("index", "register", "reading", "totaliser", "totalizer", "counter", "cumulative", "totalised",
                "totalized")
#: words of the trade for corrected (base-condition) and uncorrected (line, metered) volumes, with
#: their usual abbreviations (corr/cor, uncorr/unc, Vb/Vm; common practice)
_CORR_WORDS = ("corrected", "converted", "standard", "normal", "base", "compensated", "std", "vb", "vn", "corr",
               "cor", "conv", "stp")
_UNCORR_WORDS = ("uncorrected", "unconverted", "actual", "raw", "measured", "vm", "uncompensated", "line", "uncorr",
                 "unc", "uncor", "unconv", "metered")
_VOL_WORDS = ("volume", "vol", "consumption", "quantity", "throughput", "vm", "vb", "vn", "usage", "qty")
#: volume words that alone are weak evidence of an uncorrected volume (billing exports use them for
#: corrected volumes too)
_WEAK_VOL_WORDS = ("consumption", "quantity", "throughput", "usage", "qty")


def classify(name: str):
    """Normalised header name → (canonical name or 'pressure'/'volume*' family, hints) or (None, {})."""
    n = _norm(name)
    toks = n.split()
    if not toks:
        return None, {}
    if n in _STATUS:
        return "status", {}
    if toks[0] == "duration" or n in ("interval length", "period length", "interval duration", "log interval"):
        return "duration", {}
    if n in _HOUR_ENDING:
        return "hour_ending", {}
    if n in _HOUR_BEGINNING:
        return "hour_beginning", {}
    if n in _END:
        return "interval_end", {}
    if n in _START:
        return "interval_start", {}
    if n in _DATETIME:
        return "time", {}
    if n in _DATE:
        return "date", {}
    if n in _CLOCK:
        return "clock", {}
    if any(t.startswith("baro") for t in toks) or "atmospheric" in toks or n in (
            "patm", "p atm", "ambient pressure", "air pressure", "atm pressure", "atmosphere"):
        return "pressure_atm", {}
    if "sound" in toks or n in ("sos", "vos", "c sound", "sound velocity"):
        return "speed_of_sound", {}
    if "mass" in toks:
        if any(t in ("base", "contract", "reference", "density", "corrected") for t in toks):
            return None, {}
        return ("mass_flow" if any(t.startswith("flow") or t == "rate" for t in toks) else "mass"), {}
    if n in ("dp", "delta p", "diff p", "hw", "h w", "dpf", "dp mean") or (
            any(t.startswith("press") for t in toks) and any(t in ("differential", "dp", "diff", "delta") for t in toks)):
        if any(t in ("base", "contract", "reference", "set", "setpoint") for t in toks):
            return None, {}
        if any(t in ("root", "sqrt", "extension") for t in toks):
            return "pressure_differential_root", {}
        return "pressure_differential", {}
    if any(t.startswith("press") for t in toks) or n in ("p", "pf", "p1", "pline", "p line", "line p", "gas p",
                                                         "pg", "pabs", "p abs", "p gauge"):
        if any(t in ("base", "contract", "reference", "differential", "dp", "set", "setpoint") for t in toks):
            return None, {}
        hint = None
        if any(t in ("gauge", "gage", "g") for t in toks) and not any(t in ("absolute", "abs") for t in toks):
            hint = "gauge"
        elif any(t in ("absolute", "abs") for t in toks):
            hint = "absolute"
        return "pressure", {"reference": hint}
    if any(t.startswith("temp") for t in toks) or n in ("t", "tf", "t1", "tline", "t line", "gas t", "tgas"):
        if any(t in ("ambient", "air", "room", "base", "contract", "reference", "outside", "enclosure") for t in toks):
            return None, {}
        return "temperature_line", {}
    if any(t.startswith("flow") for t in toks) or "rate" in toks:
        if any(t in _CORR_WORDS for t in toks) and not any(t in _UNCORR_WORDS for t in toks):
            return None, {}
        return "flow_rate", {}
    is_index = any(t in _INDEX_WORDS for t in toks) or n in ("meter", "meter index")
    has_vol = any(t in _VOL_WORDS for t in toks)
    if is_index or has_vol:
        uncorr = any(t in _UNCORR_WORDS for t in toks)
        corr = any(t in _CORR_WORDS for t in toks) and not uncorr
        weak = not is_index and not uncorr and not corr and not any(
            t in _VOL_WORDS and t not in _WEAK_VOL_WORDS for t in toks)
        if is_index:
            return ("volume_corrected_site_index" if corr else "volume_index"), {"explicit": uncorr}
        return ("volume_corrected_site" if corr else "volume_line"), {"explicit": uncorr, "weak": weak}
    return None, {}


def _candidates(header: str):
    """(name, unit text, explicit) splits of a header, most explicit first."""
    h = re.sub(r"\s+", " ", str(header).strip())
    out = []
    m = re.match(r"^(.*?)\s*\[(.*)\]\s*$", h)
    if m:
        out.append((m.group(1), m.group(2).strip(), True))
    if h.endswith(")"):
        depth = 0
        for i in range(len(h) - 1, -1, -1):
            if h[i] == ")":
                depth += 1
            elif h[i] == "(":
                depth -= 1
                if depth == 0:
                    if i > 0:
                        out.append((h[:i].strip(), h[i + 1:-1].strip(), True))
                    break
    m = re.match(r"^(.*\S)[\s,_]+(\S+[\s_]+\S+)$", h)
    if m:
        out.append((m.group(1), m.group(2), False))
    m = re.match(r"^(.*\S)[\s,_]+(\S+)$", h)
    if m:
        out.append((m.group(1), m.group(2), False))
    out.append((h, "", False))
    return out


def _time_zone_word(unit_text: str):
    u = unit_text.strip().lower()
    if u in ("utc", "gmt", "z", "utc+0", "utc+00:00"):
        return "utc"
    if u in ("local", "lt", "local time", "site time", "clock time"):
        return "local"
    return None


def _parse_unit(kind, text):
    try:
        return parse_unit(text, kind), None
    except UnitError as exc:
        return None, exc


def read_header(header: str, index: int, where: dict) -> ColumnSpec | None:
    """One header → ColumnSpec (or None when it names nothing known).

    Raises
    ------
    UnitError
        The header names a known quantity but its unit is unknown, missing or of the wrong kind.
    """
    first_error = None
    for name, unit_text, explicit in _candidates(header):
        family, hints = classify(name)
        if family is None:
            continue
        if family in _TIME_ROLES or family == "status":
            if unit_text and not explicit:
                continue  # 'Interval end' is not 'Interval' in unit 'end'
            return ColumnSpec(family, index, header, None, unit_text, _time_zone_word(unit_text))
        kind = "volume" if family.startswith("volume") else CANONICAL.get(family) or family
        if not unit_text:
            if first_error is None:
                first_error = UnitError(f"column '{header}' has no unit", **where, column=header,
                                        hint=f"write the unit in the header, e.g. '{_example(family)}'")
            continue
        unit, err = _parse_unit(kind, unit_text)
        if unit is None:
            if explicit and first_error is None:
                first_error = UnitError(f"unknown {kind} unit '{unit_text}' in column '{header}'", **where,
                                        column=header, hint=err.hint)
            continue
        if family == "pressure":
            ref = unit.reference or hints.get("reference")
            if ref is None:
                raise UnitError(f"column '{header}': the pressure unit '{unit_text}' does not say gauge or absolute",
                                **where, column=header,
                                hint=f"write '{unit_text}(g)' or '{unit_text}(a)' in the header, or map the column "
                                     f"with --column '{header}=pressure_gauge' (or =pressure_line)")
            family = "pressure_gauge" if ref == "gauge" else "pressure_line"
        if family == "pressure_atm" and unit.reference == "gauge":
            raise UnitError(f"column '{header}': a barometer reads absolute pressure, not '{unit_text}'", **where,
                            column=header, hint="write e.g. 'Atmospheric pressure [kPa]' or '[mbar]'")
        if family in ("volume_line", "volume_index") and unit.basis == "base" and not hints.get("explicit"):
            family = "volume_corrected_site" if family == "volume_line" else "volume_corrected_site_index"
        if family in ("volume_line", "volume_index", "flow_rate") and unit.basis == "base":
            raise UnitError(f"column '{header}' says uncorrected but its unit '{unit_text}' is at base conditions",
                            **where, column=header, hint="write the uncorrected volume in m3 or ft3")
        weak = bool(hints.get("weak")) and family == "volume_line"
        return ColumnSpec(family, index, header, unit, unit_text, weak=weak)
    if first_error is not None:
        raise first_error
    return None


def _example(family):
    return {"pressure": "Line pressure [bar(g)]", "pressure_atm": "Atmospheric pressure [kPa]",
            "temperature_line": "Line temperature [degC]", "volume_line": "Uncorrected volume [m3]",
            "volume_index": "Meter index [m3]", "flow_rate": "Flow rate [m3/h]",
            "volume_corrected_site": "Site corrected volume [m3]",
            "volume_corrected_site_index": "Corrected index [m3]", "duration": "Duration [min]",
            "pressure_differential": "Differential pressure [mbar]", "mass": "Mass [kg]",
            "mass_flow": "Mass flow [kg/h]", "speed_of_sound": "Speed of sound [m/s]",
            "pressure_differential_root": "Mean root differential pressure [sqrt(mbar)]"}.get(family, family)


def _mapped(header, index, target: str, where) -> ColumnSpec | None:
    """An explicit map entry: 'pressure_gauge' or 'pressure_gauge [bar]' (the unit then wins)."""
    m = re.match(r"^\s*([A-Za-z_]+)\s*(?:[\[(:]\s*(.*?)\s*[\])]?\s*)?$", str(target))
    name = m.group(1).strip().lower() if m else str(target)
    if not m or name not in CANONICAL:
        raise SettingsError(f"column map: '{target}' for column '{header}' is not a canonical name",
                            hint="use one of: " + ", ".join(CANONICAL))
    if name == "ignore":
        return None
    kind = CANONICAL[name]
    if kind is None:
        return ColumnSpec(name, index, header)
    unit_text = (m.group(2) or "").strip()
    if not unit_text:
        for _, ut, explicit in _candidates(header):
            if ut and _parse_unit(kind, ut)[0] is not None:
                unit_text = ut
                break
    if not unit_text:
        raise UnitError(f"column '{header}' is mapped to {name} but no unit is known", **where, column=header,
                        hint=f"give the unit in the map, e.g. '{header}={name} [{ {'pressure': 'bar', 'temperature': 'degC', 'volume': 'm3', 'flow': 'm3/h', 'time': 's', 'pressure_differential': 'mbar', 'mass': 'kg', 'mass_flow': 'kg/h', 'speed': 'm/s', 'root_pressure_differential': 'sqrt(mbar)'}[kind]}]'")
    unit, err = _parse_unit(kind, unit_text)
    if unit is None:
        raise UnitError(f"unknown {kind} unit '{unit_text}' for column '{header}'", **where, column=header,
                        hint=err.hint)
    if name == "pressure_gauge" and unit.reference == "absolute" or name == "pressure_line" and unit.reference == "gauge":
        raise UnitError(f"column '{header}' is mapped to {name} but its unit '{unit_text}' says otherwise", **where,
                        column=header, hint="fix the map or the header")
    return ColumnSpec(name, index, header, unit, unit_text)


def map_columns(header, column_map=None, *, where=None) -> ColumnMapping:
    """Recognise every header of a table.

    Parameters
    ----------
    header : list of str
    column_map : dict, optional   source header → canonical name (optionally with a unit, e.g.
                                  ``{"P1": "pressure_gauge [bar]"}``); matched ignoring case and
                                  repeated spaces; overrides detection
    where : dict                  file/sheet/row for errors

    Raises
    ------
    UnitError, InputError
        Unknown unit in a recognised header; two columns for the same quantity.
    """
    where = dict(where or {})
    where.pop("column", None)
    cmap = {_key(k): v for k, v in (column_map or {}).items()}
    out = ColumnMapping()
    specs = []
    for j, h in enumerate(header):
        if not str(h).strip():
            continue
        k = _key(h)
        if k in cmap:
            out.map_keys_used.add(k)
            specs.append((_mapped(h, j, cmap[k], where), True, h))
        else:
            specs.append((read_header(h, j, where), False, h))
    # a role given by the column map is that column's alone: other columns detected for it are not used
    mapped_roles = {s.name for s, m, _ in specs if m and s is not None}
    for spec, mapped, h in specs:
        if spec is None or (not mapped and spec.name in _role_group(mapped_roles)):
            out.ignored.append(str(h))
            continue
        name = spec.name
        clash = _clash(out.columns, name)
        if clash is not None:
            others = [s.header for s, m, _ in specs if s is not None and s.name in _role_group({name})]
            listing = ", ".join(f"'{o}'" for o in others)
            raise InputError(f"two columns for the same quantity: {listing} could each be the "
                             f"{_ROLE_WORDS.get(name, name)} (all read as {name})",
                             **where, column=str(h),
                             hint=f"pick one with --column '{others[0]}={name}' (or --column '{others[1]}={name}'); "
                                  f"the others are then not used")
        out.columns[name] = spec
    return out


_ROLE_WORDS = {"volume_line": "uncorrected volume per interval", "volume_index": "uncorrected meter index",
               "flow_rate": "flow rate", "pressure_gauge": "line pressure", "pressure_line": "line pressure",
               "temperature_line": "line temperature", "volume_corrected_site": "site corrected volume",
               "volume_corrected_site_index": "site corrected index", "pressure_atm": "atmospheric pressure",
               "pressure_differential": "differential pressure", "mass": "mass per interval",
               "mass_flow": "mass flow rate", "speed_of_sound": "speed of sound",
               "pressure_differential_root": "interval mean of sqrt(dp)"}


def _role_group(names) -> set:
    """The names that compete with ``names`` for one role."""
    out = set(names)
    for g in (("pressure_gauge", "pressure_line"), ("time", "interval_end", "interval_start"),
              ("hour_ending", "hour_beginning", "clock")):
        if out & set(g):
            out |= set(g)
    return out


def _clash(columns, name):
    if name in columns:
        return columns[name]
    groups = (("pressure_gauge", "pressure_line"), ("time", "interval_end", "interval_start"),
              ("hour_ending", "hour_beginning", "clock"))
    for g in groups:
        if name in g:
            for other in g:
                if other in columns:
                    return columns[other]
    return None


def require_log_columns(mapping: ColumnMapping, header, where) -> None:
    """Raise an InputError listing required versus found columns when the log lacks one."""
    c = mapping.columns
    missing = []
    has_time = any(n in c for n in ("time", "interval_end", "interval_start", "hour_ending", "hour_beginning")) \
        or "date" in c or "clock" in c
    if not has_time:
        missing.append(("time", EXAMPLES["time"]))
    if "pressure_gauge" not in c and "pressure_line" not in c:
        missing.append(("line pressure", EXAMPLES["pressure"]))
    if "temperature_line" not in c:
        missing.append(("line temperature", EXAMPLES["temperature_line"]))
    if not any(n in c for n in _PRIMARY):
        missing.append(("uncorrected volume", EXAMPLES["volume"]))
    if not any(n in c for n in _PRIMARY):
        corr = [s for n, s in c.items() if n in ("volume_corrected_site", "volume_corrected_site_index")]
        if corr and len(missing) == 1:
            s0 = corr[0]
            raise InputError(
                f"no uncorrected volume: '{s0.header}' is a corrected (base-condition) volume"
                + (f" by its unit '{s0.unit_text}'" if s0.unit is not None and s0.unit.basis == "base" else "")
                + " and cannot be corrected again", **where, column=s0.header,
                hint=f"give the meter's uncorrected volume, index or flow rate; only if '{s0.header}' really is "
                     f"the uncorrected volume, say so with --column '{s0.header}=volume_line [m3]' (its unit)")
    weak = [s for n, s in c.items() if n == "volume_line" and s.weak]
    if weak and not any(n in c for n in ("volume_index", "flow_rate")) and not missing:
        s0 = weak[0]
        raise InputError(
            f"column '{s0.header}' may be the uncorrected volume, but its name is weak evidence "
            "(billing exports use it for corrected volumes too)", **where, column=s0.header,
            hint=f"if it is the meter's uncorrected volume per interval, say so with "
                 f"--column '{s0.header}=volume_line'; if it is corrected, --column '{s0.header}=volume_corrected_site'")
    if missing:
        found = [f"'{s.header}' → {s.name}" for s in c.values()] + [f"'{h}' (not used)" for h in mapping.ignored]
        raise InputError(
            "missing required column(s): " + "; ".join(f"{what} (e.g. {ex})" for what, ex in missing),
            **where, column=missing[0][0],
            hint="required: time, line pressure, line temperature and an uncorrected volume, index or flow rate "
                 "(orifice meters: a differential pressure; Coriolis meters: a mass or mass flow rate); "
                 "found: " + (", ".join(found) if found else "nothing recognisable")
                 + "; rename the header or map it with --column 'HEADER=NAME'")
