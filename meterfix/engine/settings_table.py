"""The table of settings: every setting of meterfix, defined once.

Each :class:`Setting` is one row: its one name (the site-file key; the command-line option is the
same name with dashes, ``base_pressure`` ⇔ ``--base-pressure``), the kind of value and its unit
inside (SI), the plausible range, the default with its source, the help text, the table of the
site file it lives in (top level, or ``[uncertainty]``, ``[files]`` ...), and the commands that
take it. From this table come

- the :class:`meterfix.engine.settings.Settings` object (one field per setting, SI values),
- reading the site file and the option values (:func:`meterfix.engine.settings.build_settings`),
- the range checks,
- the options of ``meterfix correct``, ``fleet`` and ``balance`` and their ``--help`` text
  (:mod:`meterfix.cli.options`),
- the workbook's "Settings of this run" table (names and values in display units),
- the settings list of the README and the commented template ``site.toml``.

Adding a setting is one entry here plus the code that uses it (DEVELOPERS.md shows an example).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

#: commands that take the per-meter settings
METER_COMMANDS = ("correct", "fleet", "balance")
CORRECT_ONLY = ("correct",)

#: Named base conditions, named by their conditions (common practice: 14.73 psia / 60 degF in US
#: interstate contracts, 101.325 kPa / 15 degC the ISO 13443 standard reference conditions,
#: 101.325 kPa / 0 degC the "normal" conditions of European contracts; 1 psi = 6894.757 Pa and
#: degF by NIST SP 811 appendix B). name -> (pressure, temperature, description)
BASE_PRESETS = {
    "14.73psia-60F": ("14.73 psia", "60 degF", "14.73 psia, 60 degF (US interstate contracts)"),
    "14.65psia-60F": ("14.65 psia", "60 degF", "14.65 psia, 60 degF (some US contracts)"),
    "14.696psia-60F": ("14.696 psia", "60 degF", "14.696 psia (1 atm), 60 degF"),
    "101.325kPa-15C": ("101.325 kPa", "15 degC", "101.325 kPa, 15 degC (ISO 13443 standard reference)"),
    "101.325kPa-0C": ("101.325 kPa", "0 degC", "101.325 kPa, 0 degC (normal conditions)"),
    "101.325kPa-20C": ("101.325 kPa", "20 degC", "101.325 kPa, 20 degC"),
}
#: earlier preset names, still accepted
BASE_PRESET_ALIASES = {
    "us-14.73-60f": "14.73psia-60F", "us-14.65-60f": "14.65psia-60F", "us-14.696-60f": "14.696psia-60F",
    "iso-15c": "101.325kPa-15C", "normal-0c": "101.325kPa-0C", "metric-20c": "101.325kPa-20C",
}


def base_preset_name(text) -> str | None:
    """The canonical preset name for ``text`` (any case, earlier names too), or None."""
    key = str(text).strip().lower()
    for name in BASE_PRESETS:
        if name.lower() == key:
            return name
    return BASE_PRESET_ALIASES.get(key)


def base_presets_text() -> str:
    return "; ".join(f"{n} ({v[2]})" for n, v in BASE_PRESETS.items())


#: option strings used in several places
DEFAULT_METHOD = "aga8-detail"
INTERVAL_LABELS = ("end", "start")
SUBSTITUTION_POLICIES = ("none", "interpolate", "hold", "profile")
ENERGY_EDITIONS = ("2016", "1995")


@dataclass(frozen=True)
class Setting:
    """One setting.

    name      the site-file key; the option is ``--`` + name with dashes (``option`` overrides it
              only where a table's key would clash with another setting's option)
    kind      how the value is read: text, choice, bool, int, number (percent or count), pressure,
              temperature, length, volume, heating_value, flow_rate, price, hour, base, month,
              mapping (KEY=VALUE items), list, uncertainty (an uncertainty text), curve
    help      one line for --help, the README and the template
    default   the default value as the site file would write it (None: not set)
    source    where the default comes from (standard, common practice ...)
    unit      the unit of the value inside (SI) or of a plain number (%, intervals, digits)
    low, high plausible range in that unit (None: no bound); range_text says it for people
    choices   the accepted values of a choice
    table     the site file's table holding the key ("" for the top level or [site])
    commands  the commands that take it as an option
    section   heading of the group in --help, the README and the template
    example   an example value for the template
    """

    name: str
    kind: str
    help: str
    default: Any = None
    source: str = ""
    unit: str = ""
    low: float | None = None
    high: float | None = None
    range_text: str = ""
    choices: tuple = ()
    table: str = ""
    commands: tuple = METER_COMMANDS
    section: str = ""
    example: Any = None
    option: str = ""

    @property
    def option_name(self) -> str:
        return self.option or "--" + self.name.replace("_", "-")

    @property
    def param(self) -> str:
        """The Python parameter name of the option."""
        return self.option_name[2:].replace("-", "_")


S = Setting
_M, _B, _A, _C, _E, _Q, _I, _ST, _R, _F, _U, _D, _K = (
    "The meter", "Contract base conditions", "Atmospheric pressure for gauge pressure", "Clock and gas day",
    "Compressibility and energy", "Findings and data quality", "Invoice", "Closed months", "Reading the log",
    "Input files", "Uncertainty inputs", "Display", "Meter kind and primary element")
#: meter kinds (meterfix.engine.flow_meter): a volume meter (with or without an error curve or meter
#: factor), an orifice plate (differential pressure), a Coriolis meter (mass); tap arrangements of ISO 5167-2:2003
VOLUME_METER, ORIFICE_METER, CORIOLIS_METER = "volume", "orifice", "coriolis"
METER_KINDS = (VOLUME_METER, ORIFICE_METER, CORIOLIS_METER)
ORIFICE_STANDARDS = ("iso-5167-2:2003",)
from ..meters.orifice_iso5167 import TAPS as ORIFICE_TAPS  # noqa: E402  (corner, flange, d-d2)
from ..readers.join import OVERLAP_CHOICES  # noqa: E402  (which file wins where files overlap)
STATIC_TAPS = ("upstream", "downstream")

def U(name: str, help: str, **kw) -> Setting:
    """A key of the [uncertainty] table holding an uncertainty text: its option is the key with
    dashes and "-uncertainty" (the key alone would clash with the quantity's own setting)."""
    return Setting(name, "uncertainty", help, table="uncertainty", section=_U,
                   option=f"--{name.replace('_', '-')}-uncertainty", **kw)


_U_SRC = "meterfix.uncertainty.inputs (defaults with their sources in the workbook's Uncertainty sheet)"

#: every setting, in the order of --help, the README and the template
SETTINGS: tuple[Setting, ...] = (
    S("meter", "text", "meter name used in outputs", "meter", "", section=_M, example="FV-M1"),
    S("site_name", "text", "site name used in outputs", "", section=_M,
      example="Fennick Valley kiln works (invented)"),
    S("base", "base", "named base conditions: " + ", ".join(BASE_PRESETS) + " (earlier names accepted)",
      section=_B, example="101.325kPa-0C"),
    S("base_pressure", "pressure", "contract base pressure, absolute, e.g. '14.73 psia'", unit="Pa", low=50e3,
      high=200e3, range_text="50-200 kPa", section=_B, example="101.325 kPa"),
    S("base_temperature", "temperature", "contract base temperature, e.g. '60 degF'", unit="K", low=250.0,
      high=310.0, range_text="250-310 K", section=_B, example="0 degC"),
    S("atmospheric_pressure", "pressure", "fixed atmospheric pressure for gauge logs, e.g. '14.4 psia'", unit="Pa",
      low=40e3, high=110e3, range_text="40-110 kPa", section=_A, example="98.5 kPa"),
    S("elevation", "length", "site elevation for the standard atmosphere (US 1976), e.g. '180 m'", unit="m",
      low=-500.0, high=9000.0, range_text="-500 to 9000 m", section=_A, example="240 m"),
    S("use_barometer", "bool", "use a logged atmospheric pressure column where present", True, section=_A,
      example=True),
    S("timezone", "text", "IANA time zone of the logs' clock, e.g. 'America/Chicago'", "UTC", section=_C,
      example="Europe/Berlin"),
    S("gas_day_start", "hour", "local start of the gas day, 'HH:MM' on the whole hour, e.g. '09:00'", 6,
      "common practice: 06:00 in Europe, 09:00 in North America", unit="h", section=_C, example="06:00"),
    S("interval_label", "choice", "which end of its interval a timestamp marks", "end", choices=INTERVAL_LABELS,
      section=_C, example="end"),
    S("month", "month", "close exactly this gas month, 'YYYY-MM', from logs that may cover more (intervals "
      "outside it left out and counted)", section=_C, example="2026-10"),
    S("gas", "text", "gas as 'methane=0.95,ethane=0.03,...' instead of a composition file", section=_E,
      example="methane=0.95,ethane=0.03,nitrogen=0.01,carbon_dioxide=0.01"),
    S("method", "text", "Z method ('meterfix methods' lists them)", DEFAULT_METHOD, section=_E,
      example=DEFAULT_METHOD),
    S("heating_value", "heating_value", "supplied gross heating value instead of the analysis, e.g. '38.6 MJ/m3'",
      unit="J/m3", low=1e6, high=250e6, range_text="1-250 MJ/m3", section=_E, example="40.5 MJ/m3"),
    S("heating_value_reference_temperature", "temperature", "metering reference temperature of heating_value",
      unit="K", low=250.0, high=310.0, range_text="250-310 K", section=_E, example="0 degC"),
    S("heating_value_reference_pressure", "pressure", "metering reference pressure of heating_value", unit="Pa",
      low=50e3, high=200e3, range_text="50-200 kPa", section=_E, example="101.325 kPa"),
    S("combustion_temperature", "temperature",
      "combustion reference temperature of the heating value (ISO 6976 tabulates 0, 15, 15.55, 20, 25 degC)",
      "25 degC", "ISO 6976:2016 (25 degC is its first-listed reference)", unit="K", low=273.15, high=303.15,
      range_text="0-30 degC", section=_E, example="25 degC"),
    S("energy_edition", "choice", "ISO 6976 edition for energy from the analysis", "2016", choices=ENERGY_EDITIONS,
      section=_E, example="2016"),
    S("ideal_gas_threshold", "number", "|ideal − real| above this is a finding", 0.5, unit="%", low=0.0,
      high=100.0, section=_Q, example=0.5),
    S("substitution", "choice", "how gaps are filled", "none", choices=SUBSTITUTION_POLICIES, section=_Q,
      example="none"),
    S("max_gap_intervals", "int", "longest gap substituted", 3, unit="intervals", low=0, high=100_000, section=_Q,
      example=3),
    # 15 digits: the largest register float64 holds exactly (2^53 ≈ 9.0e15)
    S("register_digits", "int", "digits of the meter index register (rollover at 10^n)", unit="digits", low=1,
      high=15, section=_Q, example=8),
    S("fail_on", "number", "exit code 1 when a finding (ideal-gas, invoice or corrector) exceeds this", unit="%",
      low=0.0, high=1000.0, section=_Q, example=1.0),
    S("speed_of_sound_threshold", "number", "deviation of an ultrasonic meter's logged speed of sound from the "
      "equation of state's above which an interval is counted", 0.2, "AGA Report No. 10 / ISO 17089-1 practice",
      unit="%", low=0.0, high=10.0, section=_Q, example=0.2),
    S("price", "price", "price of energy, e.g. '3.20 USD/MMBtu' or '0.031 EUR/kWh'", unit="currency/J", section=_I,
      example="35 EUR/MWh"),
    S("invoice_tolerance", "number", "contract tolerance for invoice differences", unit="%", low=0.0, high=100.0,
      section=_I, example=1.0),
    S("invoice_base", "base", "named base conditions of the invoice's volumes when the invoice does not state "
      "them (same names as base)", section=_I, example="14.73psia-60F"),
    S("invoice_base_pressure", "pressure", "base pressure of the invoice's volumes when the invoice does not "
      "state it", unit="Pa", low=50e3, high=200e3, range_text="50-200 kPa", section=_I, example="14.73 psia"),
    S("invoice_base_temperature", "temperature", "base temperature of the invoice's volumes when the invoice "
      "does not state it", unit="K", low=250.0, high=310.0, range_text="250-310 K", section=_I,
      example="60 degF"),
    S("store", "text", "where closed months are kept: a SQLite file (relative to the site file) or a "
      "PostgreSQL URL", section=_ST, example="months.sqlite"),
    S("sheet", "text", "workbook sheet holding the log (default: the one sheet holding a log)", section=_R,
      commands=CORRECT_ONLY + ("fleet",), example="Log"),
    S("opening_index", "volume", "meter index at the start of the first logged interval, e.g. '123456 m3'",
      unit="m3", low=0.0, section=_R, example="123456 m3"),
    S("overlap", "choice", "files that overlap with different values: keep the later or the earlier file's "
      "rows (by the order given; default: refused)", choices=OVERLAP_CHOICES, section=_R, example="later"),
    S("bidirectional", "bool", "the meter measures both flow directions: negative interval volumes count",
      False, section=_R, example=False),
    S("columns", "mapping", "source header = canonical name, for a column not recognised (option: "
      "'SOURCE=NAME', repeatable)", section=_R, example={"P1 (barg)": "pressure_gauge"}),
    S("display_units", "mapping", "units shown in the workbook and console by kind (pressure, temperature, "
      "volume, energy, heating_value, mass; option: 'KIND=UNIT', repeatable); the JSON is always SI",
      section=_D, example={"pressure": "bar", "energy": "MWh"}),
    # [files]: relative to the site file; the log files on the command line win
    S("logs", "list", "log files of the meter (globs, relative to the site file); on the command line the LOGS "
      "arguments", table="files", section=_F, commands=(), example=["logs/*.csv"]),
    S("composition", "text", "gas-analysis file (one analysis, or a table with effective-from times)",
      table="files", section=_F, commands=CORRECT_ONLY, example="analyses.xlsx"),
    S("invoice", "text", "supplier invoice to check (CSV/XLSX)", table="files", section=_F, commands=CORRECT_ONLY,
      example="invoice.xlsx"),
    # [flow_meter]: the meter's kind and primary element (meterfix.engine.flow_meter checks them together)
    S("kind", "choice", "meter kind: volume (counts volume at line conditions), orifice (differential pressure) "
      "or coriolis (mass)", VOLUME_METER, choices=METER_KINDS, table="flow_meter", section=_K, example="orifice"),
    S("standard", "choice", "orifice plates: the standard computed", "iso-5167-2:2003", choices=ORIFICE_STANDARDS,
      table="flow_meter", section=_K, example="iso-5167-2:2003"),
    S("pipe_diameter", "length", "orifice: internal pipe diameter D at diameters_at, e.g. '102.26 mm'", unit="m",
      low=0.001, high=10.0, range_text="1 mm to 10 m", table="flow_meter", section=_K, example="102.26 mm"),
    S("bore_diameter", "length", "orifice: bore d of the plate at diameters_at, e.g. '50.8 mm'", unit="m",
      low=0.001, high=10.0, range_text="1 mm to 10 m", table="flow_meter", section=_K, example="50.8 mm"),
    S("diameters_at", "temperature", "orifice: temperature at which d and D were measured", "20 degC",
      "ISO 5167-1:2003 (d and D stated at 20 degC unless measured otherwise; from memory)", unit="K", low=173.15,
      high=473.15, range_text="-100 to 200 degC", table="flow_meter", section=_K, example="20 degC"),
    S("pipe_expansion", "expansion_coefficient", "orifice: linear expansion coefficient of the pipe",
      "11.6e-6 1/K", "carbon steel, typical handbook value at 20-100 degC (from memory)", unit="1/K", low=0.0,
      high=1e-4, range_text="0 to 1e-4 1/K", table="flow_meter", section=_K, example="11.6e-6 1/K"),
    S("bore_expansion", "expansion_coefficient", "orifice: linear expansion coefficient of the plate",
      "16.0e-6 1/K", "austenitic stainless steel (304/316), typical handbook value at 20-100 degC (from memory)",
      unit="1/K", low=0.0, high=1e-4, range_text="0 to 1e-4 1/K", table="flow_meter", section=_K,
      example="16.0e-6 1/K"),
    S("taps", "choice", "orifice: pressure tap arrangement (ISO 5167-2:2003, 5.2)", "flange", choices=ORIFICE_TAPS,
      table="flow_meter", section=_K, example="flange"),
    S("static_tap", "choice", "orifice: where the logged line pressure is taken", "upstream", choices=STATIC_TAPS,
      table="flow_meter", section=_K, example="upstream"),
    S("viscosity", "viscosity", "orifice: dynamic viscosity of the gas (default: Lee, Gonzalez and Eakin 1966 "
      "at each interval's state)", unit="Pa s", low=1e-6, high=1e-3, range_text="1e-6 to 1e-3 Pa s",
      table="flow_meter", section=_K, example="1.1e-5 Pa s"),
    S("isentropic_exponent", "number", "orifice: isentropic exponent (default: w^2 rho / p of the Z method's "
      "equation of state)", unit="-", low=1.0, high=2.0, table="flow_meter", section=_K, example=1.3),
    S("error_curve", "curve", "volume meters: the calibration, [[flow rate m3/h at line conditions, error %], "
      "...] (option: '50:1.2,150:0.4,300:-0.2')", table="flow_meter", section=_K,
      example=[[50, 1.2], [150, 0.4], [300, -0.2]]),
    S("meter_factor", "number", "volume meters: one meter factor instead of an error curve (not both)", unit="-",
      low=0.5, high=2.0, table="flow_meter", section=_K, example=1.0021),
    # [uncertainty]: texts like "1 %", "2 kPa", "mpe 1 %", "0.3 K k=1", "0.25 % random"
    U("meter", "meter, rated flow range (default 1 %)", source=_U_SRC, example="1 %"),
    U("meter_below_qt", "meter, below Qt or above Qmax (default 2 %)", example="2 %"),
    U("pressure", "line pressure (default 0.25 %)", example="0.25 %"),
    U("atmospheric", "atmospheric pressure (default 0.2 kPa barometer, 2 kPa fixed)", example="0.5 kPa"),
    U("temperature", "line temperature (default 0.5 K)", example="0.5 K"),
    U("z", "Z method at line conditions (default from the method's range)", example="0.1 %"),
    U("z_outside", "Z method outside its range", example="0.5 %"),
    U("base_z", "Z at base conditions (default 0.05 %)", example="0.05 %"),
    U("composition", "gas composition, each mole fraction (default 2 %)", example="2 %"),
    U("heating_value", "heating value", example="0.1 %"),
    U("estimated", "estimated intervals (default 10 % random)", example="10 % random"),
    U("discharge_coefficient", "orifice discharge coefficient C (default ISO 5167-2:2003 5.3.3.1 "
      "by beta and Re_D)",
      example="0.5 %"),
    U("expansibility", "orifice expansibility factor (default 3.5 dp/(kappa p1) %, ISO 5167-2:2003 "
      "5.3.3.2)", example="0.01 %"),
    U("differential_pressure", "differential pressure transmitter (default 0.3 %)", example="0.3 %"),
    U("bore_diameter", "orifice bore d (default 0.05 %)", example="0.05 %"),
    U("pipe_diameter", "pipe diameter D (default 0.4 %)", example="0.4 %"),
    U("coriolis_mass", "Coriolis meter's mass (default 0.5 %)", example="0.5 %"),
    U("calibration", "calibration of a meter with an error curve or meter factor (default 0.3 %)", example="0.3 %"),
    S("meter_qt", "flow_rate", "transition flow rate Qt of the meter at line conditions", table="uncertainty",
      section=_U, option="--meter-qt", example="65 m3/h"),
    S("meter_qmax", "flow_rate", "maximum flow rate Qmax of the meter at line conditions", table="uncertainty",
      section=_U, option="--meter-qmax", example="1000 m3/h"),
    S("invoice_meter_pct", "number", "the supplier's meter, expanded uncertainty", unit="%", low=0.0, high=100.0,
      table="uncertainty", section=_U, option="--invoice-meter-uncertainty", example=1.0),
    S("corrector_check_pct", "number", "threshold of the corrector check", unit="%", low=0.0, high=100.0,
      table="uncertainty", section=_U, option="--corrector-check-threshold", example=0.15),
)

#: the site file's tables whose keys are settings of this table (a key at the top level or in [site]
#: has table "")
TABLES = ("uncertainty", "files", "flow_meter")
#: tables read as a whole mapping (free keys)
MAPPING_TABLES = ("columns", "display_units")


def settings_of(table: str = "") -> dict[str, Setting]:
    return {s.name: s for s in SETTINGS if s.table == table and s.kind != "mapping"}


TOP = settings_of("")
BY_OPTION = {s.option_name: s for s in SETTINGS}
assert len(BY_OPTION) == len(SETTINGS), "two settings share an option name"


def options_for(command: str) -> list[Setting]:
    """The settings ``command`` takes as options, in table order."""
    return [s for s in SETTINGS if command in s.commands]


def label(s: Setting) -> str:
    """The name as the site file writes it (``[uncertainty] meter`` for a table key)."""
    return f"[{s.table}] {s.name}" if s.table and s.kind != "mapping" else (f"[{s.name}]" if s.kind == "mapping"
                                                                            else s.name)


def help_text(s: Setting) -> str:
    """The --help line of a setting: its help, choices, default and range, and its site-file key."""
    bits = [s.help[0].upper() + s.help[1:]]
    if s.choices:
        bits.append("one of " + ", ".join(s.choices))
    if s.default not in (None, ""):
        d = s.default
        if s.kind == "hour":
            d = f"{int(d):02d}:00"
        elif isinstance(d, bool):
            d = "true" if d else "false"
        bits.append(f"default {d}{(' ' + s.unit) if s.unit in ('%',) else ''}")
    if s.range_text or (s.low is not None and s.high is not None and s.kind in ("number", "int")):
        bits.append("range " + (s.range_text or f"{s.low:g}-{s.high:g} {s.unit}"))
    elif s.unit == "%":
        bits.append("percent")
    return "; ".join(bits) + f". Site file: {label(s)}."


def readme_table() -> str:
    """The README's settings list (Markdown), made from this table."""
    lines = ["| site-file key | option | what it is | default |", "|---|---|---|---|"]
    for s in SETTINGS:
        opt = f"`{s.option_name}`" if s.commands else "LOGS arguments" if s.name == "logs" else "—"
        d = s.default
        if s.kind == "hour" and d is not None:
            d = f"{int(d):02d}:00"
        elif isinstance(d, bool):
            d = "true" if d else "false"
        default = "" if d in (None, "") else f"{d}{' %' if s.unit == '%' else ''}"
        what = s.help + (f" (one of {', '.join(s.choices)})" if s.choices else "")
        if s.range_text or (s.kind in ("number", "int") and s.low is not None and s.high is not None):
            what += f"; range {s.range_text or f'{s.low:g}-{s.high:g} {s.unit}'}"
        what = what.replace("|", "\\|")
        cmds = ", ".join(s.commands)
        lines.append(f"| `{label(s)}` | {opt}{(' (' + cmds + ')') if s.commands else ''} | {what} | {default} |")
    return "\n".join(lines)


README_BEGIN = "<!-- settings table: made by meterfix.engine.settings_table.readme_table(); do not edit by hand -->"
README_END = "<!-- end of settings table -->"
