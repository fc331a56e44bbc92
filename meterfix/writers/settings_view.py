"""The settings of a run as people read them: the site-file names, values in display units.

One row per setting of the settings table (:data:`meterfix.engine.settings_table.SETTINGS`) that
has a value: its site-file name (``[uncertainty] meter`` for a table key), the value in the site's
display units, the unit, and where it came from (default, site file, option). The manifest and
the JSON keep the SI values; this is the workbook's and console's view of them.
"""

from __future__ import annotations

import json

from ..engine.settings_table import SETTINGS, TABLES, label

_DISPLAY_KIND = {"pressure": "pressure", "temperature": "temperature", "heating_value": "heating_value",
                 "volume": "volume"}


def _fmt(x: float) -> float:
    """A number to 10 significant digits (the cell stays a number)."""
    return float(f"{x:.10g}")


def setting_rows(settings, du) -> list[list]:
    """[[site-file name, value (number or text), unit, source], ...] for every setting with a value."""
    rows = []
    for s in SETTINGS:
        if s.table in TABLES:
            v = getattr(settings, s.table).get(s.name)
        else:
            v = getattr(settings, s.name)
        if v is None or v == {} or v == [] or v == "":
            continue
        name = label(s)
        unit = ""
        if s.kind in _DISPLAY_KIND and isinstance(v, (int, float)):
            text, unit = _fmt(du.scalar(_DISPLAY_KIND[s.kind], v)), du.label(_DISPLAY_KIND[s.kind])
        elif s.kind == "length":
            text, unit = _fmt(v), "m"
        elif s.kind == "price":
            per = float(du.convert("energy", 1.0))  # display energy units in one joule
            text = _fmt(v / per)
            unit = f"{settings.currency or 'currency'}/{du.label('energy')}"
        elif s.kind == "hour":
            text = f"{int(v):02d}:00"
        elif s.kind == "bool":
            text = "true" if v else "false"
        elif s.kind in ("mapping", "list"):
            text = "; ".join(f"{k} = {x}" for k, x in v.items()) if isinstance(v, dict) else ", ".join(map(str, v))
        elif isinstance(v, float):
            text, unit = _fmt(v), s.unit
        elif isinstance(v, (dict, list)):
            text = json.dumps(v, sort_keys=True, ensure_ascii=False)
        else:
            text, unit = v, (s.unit if s.kind in ("number", "int") else "")
        rows.append([name, text, unit, settings.sources.get(name, "default")])
    return rows
