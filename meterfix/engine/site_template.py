"""The commented site-file template (templates/site.toml), made from the settings table.

Every row of :data:`meterfix.engine.settings_table.SETTINGS` gets its explanation and a
commented example line, grouped by section; tables (``[uncertainty]``, ``[files]``, ``[columns]``,
``[display_units]``) get their own blocks. No setting is live: a month run with the blank
template is refused until the contract's base conditions are written in.
"""

from __future__ import annotations

import json
import textwrap

from .settings_table import SETTINGS, TABLES, Setting, base_presets_text

_HEAD = [
    "# meterfix site file: the settings of one meter.",
    "#",
    "# Every setting is also a command-line option of the same name with dashes",
    "# (base_pressure <-> --base-pressure); an option given on the command line wins.",
    "# Quantities are text with a unit: \"14.73 psia\", \"101.325 kPa\", \"15 degC\", \"180 m\".",
    "# A line starting with '#' is a comment: remove the '#' in front of a setting to use it.",
    "# Every setting is commented out: a month is refused until the contract's base conditions",
    "# are set (base, or base_pressure and base_temperature). The example values describe an",
    "# invented meter; replace them with your own.",
]
_TABLE_NOTES = {
    "uncertainty": ["Expanded uncertainty with k = 2 unless the text says otherwise: \"1 %\", \"2 kPa\", \"mpe 1 %\"",
                    "(rectangular), \"0.3 K k=1\", \"0.25 % random\". Each input left out takes its default, stated in",
                    "the workbook's Uncertainty sheet. Options: --meter-uncertainty, --pressure-uncertainty, ..."],
    "files": ["Paths relative to this file; read by 'meterfix correct --site' and 'meterfix fleet'",
              "(log files given on the command line win)."],
    "flow_meter": ["The meter's kind and primary element; without it the meter counts volume at line conditions.",
                   "Orifice plates (ISO 5167-2:2003) need pipe_diameter and bore_diameter; a Coriolis meter needs",
                   "only its kind; a volume meter may carry its calibration as error_curve or meter_factor (not",
                   "both). The example describes an orifice plate: error_curve and meter_factor are volume meters'."],
}


def _toml(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, (int, float)):
        return repr(v)
    if isinstance(v, list):
        return "[" + ", ".join(_toml(x) for x in v) + "]"
    return json.dumps(str(v), ensure_ascii=False)


def _describe(s: Setting, method_names) -> str:
    desc = s.help
    if s.name == "method" and not s.table:
        desc += ": " + ", ".join(method_names)
    if s.kind == "base":
        desc = ("named base conditions: " if s.name == "base" else "named base conditions of the invoice's volumes "
                "when the invoice does not state them: ") + base_presets_text()
    if s.choices:
        desc += " (" + ", ".join(s.choices) + ")"
    if s.unit == "%":
        desc += " [%]"
    return desc


def site_template(method_names=()) -> str:
    out = list(_HEAD)
    section = None
    for s in SETTINGS:
        if s.table or s.kind == "mapping":
            continue
        if s.section != section:
            section = s.section
            out += ["", f"# --- {section} " + "-" * max(3, 92 - len(section)), ""]
        out += textwrap.wrap(f"{s.name}: {_describe(s, method_names)}", 96, initial_indent="#   ",
                             subsequent_indent="#     ")
        out.append(f"# {s.name} = {_toml(s.example)}")
    for table in TABLES:
        rows = [s for s in SETTINGS if s.table == table]
        out += ["", f"# --- {rows[0].section} " + "-" * max(3, 92 - len(rows[0].section))]
        out += ["# " + line for line in _TABLE_NOTES.get(table, [])]
        out.append(f"# [{table}]")
        for s in rows:
            out.append(f"# {s.name} = {_toml(s.example)}".ljust(40) + f"  # {_describe(s, method_names)}")
    for s in SETTINGS:
        if s.kind != "mapping":
            continue
        out += ["", f"# --- {s.section}: [{s.name}] " + "-" * max(3, 88 - len(s.section) - len(s.name))]
        out += textwrap.wrap(s.help, 94, initial_indent="# ", subsequent_indent="# ")
        out.append(f"# [{s.name}]")
        for k, v in s.example.items():
            key = k if k.replace("_", "").isalnum() else json.dumps(k)
            out.append(f"# {key} = {_toml(v)}")
    out.append("")
    return "\n".join(out)
