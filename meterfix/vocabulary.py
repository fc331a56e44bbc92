"""One name per thing: the words every output uses for a quantity, a flag and a recurring label.

The console, the workbook, the fleet table, the CSV headers and the JSON keys take their names
from here, so that a quantity is called the same everywhere (the glossary of DEVELOPERS.md lists
them). Machine names (CSV columns, JSON keys) are the canonical frame names with their SI unit;
labels are plain words for people, with the display unit added where they are shown.
"""

from __future__ import annotations

# --- quantities: canonical name -> label for people ------------------------------------------------
UNCORRECTED_VOLUME = "Uncorrected volume"            # volume_line, at line conditions
BASE_VOLUME = "Base volume"                          # volume_base, real gas, at the contract's base
BASE_VOLUME_IDEAL = "Base volume, ideal gas (Z = 1)"  # volume_base_ideal
IDEAL_GAS_ERROR = "Ideal-gas error"                  # (ideal − real) / real
ENERGY = "Energy"
MASS = "Mass"
LINE_PRESSURE = "Line pressure"
ATMOSPHERIC_PRESSURE = "Atmospheric pressure"        # never "barometric": the setting is atmospheric_pressure
LINE_TEMPERATURE = "Line temperature"
HEATING_VALUE = "Heating value (gross)"
EXPANDED_UNCERTAINTY = "Expanded uncertainty (k = 2)"
EFFECTIVE_FROM = "Effective from"                    # an analysis applies from this time
NOT_EXPLAINED = "not explained"                      # what no credited cause accounts for
INVOICE_MINUS_OURS = "Invoice − ours"
INTERVALS_WITHOUT_RESULT = "intervals without result"  # volume logged, no base volume (counted, not in totals)
AT_BASE = "at base"                                  # every base volume says at which base
AT_INVOICE_BASE = "at the invoice's base"
AT_CORRECTOR_BASE = "at the corrector's base"
GAS_MONTH = "Gas month"                              # gas days of one calendar month, from the gas-day start
ROWS_LEFT_OUT = "rows left out"                      # rows of a log not used (time unreadable, not on the clock)
BASE_CONDITIONS = "Base conditions"                  # "101.325 kPa abs, 0 °C" (DisplayUnits.base_text)

# --- the system balance (meterfix.balance): one label per part of the balance ----------------------
RECEIPTS = "Receipts"                                # receipts_m3: gas entering the system, at base
DELIVERIES = "Deliveries"                            # deliveries_m3
OWN_USE = "Own use"                                  # own_use_m3: the system's own consumption (fuel, heaters)
FIXED_QUANTITIES = "Fixed quantities"                # fixed_m3: estimated quantities (vents, purges)
LINEPACK_CHANGE = "Linepack change"                  # linepack_change_m3: gas held in the pipe, closing − opening
UFG = "UFG"                                          # ufg_m3 = receipts − deliveries − own use − fixed − Δlinepack
UFG_LONG = "Unaccounted-for gas (UFG)"
UFG_OF_RECEIPTS = "UFG, % of receipts"               # ufg_pct
VERDICT = "Verdict"                                  # consistent: |UFG| within its expanded uncertainty
WHICH_METER = "Which meter"                          # the meter search (findings)
RECONCILED = "Reconciled"                            # VDI 2048-1 reconciled value
NORMALIZED_ADJUSTMENT = "Normalized adjustment"      # VDI 2048-1 gross-error test statistic
ROLES = {"receipt": "receipt", "delivery": "delivery", "own_use": "own use"}
METER_KINDS = {"volume": "volume meter", "orifice": "orifice plate", "coriolis": "Coriolis meter"}
_PLURALS = {"receipt": "receipts", "delivery": "deliveries", "own use": "own use"}


def counted(words: list) -> str:
    """'2 receipts, 5 deliveries' or '5 volume meters, 1 orifice plate': how many of each word, in first-seen
    order (plural by an 's', or the few irregular ones)."""
    counts = {}
    for w in words:
        counts[w] = counts.get(w, 0) + 1
    return ", ".join(f"{n} {w if n == 1 else _PLURALS.get(w, w + 's')}" for w, n in counts.items())


def meters_text(meters: list) -> str:
    """'7 (2 receipts, 5 deliveries): 5 volume meters, 1 orifice plate, 1 Coriolis meter' from a balance's
    meter rows (dicts with role and kind), roles and kinds in the order of ROLES and METER_KINDS."""
    roles = sorted((m["role"] for m in meters), key=lambda r: list(ROLES).index(r) if r in ROLES else len(ROLES))
    kinds = sorted((m.get("kind") or "volume" for m in meters),
                   key=lambda k: list(METER_KINDS).index(k) if k in METER_KINDS else len(METER_KINDS))
    return (f"{len(meters)} ({counted([ROLES.get(r, r) for r in roles])}): "
            f"{counted([METER_KINDS.get(k, k) for k in kinds])}")

QUANTITY_LABELS = {
    "volume_line": UNCORRECTED_VOLUME, "volume_base": BASE_VOLUME, "volume_base_ideal": BASE_VOLUME_IDEAL,
    "energy": ENERGY, "mass": MASS, "pressure_line": LINE_PRESSURE, "pressure_atm": ATMOSPHERIC_PRESSURE,
    "temperature_line": LINE_TEMPERATURE, "heating_value": HEATING_VALUE, "ideal_gas_error_pct": IDEAL_GAS_ERROR,
    "pressure_differential": "Differential pressure", "speed_of_sound": "Speed of sound",
    "meter_error": "Meter error",
}

# --- flags: key (column flag_<key>) -> (plain words, what it means and what the run did) ------------
FLAGS = {
    "unreadable": ("unreadable cell", "a cell of the row could not be read (or the row follows a row left out); "
                                      "the value counts as empty"),
    "missing": ("empty cell", "an empty cell in a required column"),
    "duplicate": ("duplicate time", "the same interval end more than once with different values; the first "
                                    "(file order, then row) was kept"),
    "time_backwards": ("time went back", "the time goes back against the row above in the same file"),
    "rollover": ("index rollover", "the meter index rolled over; the difference was taken across the rollover"),
    "meter_change": ("meter exchange", "the meter index dropped too far for a rollover (meter exchange?); no "
                                       "volume taken"),
    "negative_delta": ("index went back", "the meter index went back a little; the negative difference is kept "
                                          "so that the total equals the index difference"),
    "implausible_delta": ("index jump", "an index difference beyond ten times the usual rate"),
    "negative_volume": ("negative volume", "a negative interval volume: left out unless the meter is bidirectional"),
    "volume_mismatch": ("volume differs from index difference", "the interval volume and the index difference "
                                                                "disagree; the interval is left without a volume"),
    "gap": ("gap", "no reading for the interval"),
    "pressure_range": ("pressure out of range", "line pressure outside its plausible range"),
    "temperature_range": ("temperature out of range", "line temperature outside its plausible range"),
    "stuck": ("stuck value", "a value that did not change for too long"),
    "spike": ("spike", "a value far from its neighbours on both sides (modified z-score above 3.5, Iglewicz & "
              "Hoaglin 1993; the log's first and last rows and the rows beside a gap are not tested)"),
    "flow_zero_pressure": ("flow at zero pressure", "volume counted while the line pressure reads zero or less"),
    "estimated": ("estimated", "a value substituted by the chosen policy (recorded in the edits)"),
    "z_outside_range": ("Z outside method range", "line state outside the Z method's range"),
    "no_result": ("no result", "volume but no base volume (missing pressure or temperature, or no Z)"),
    # meter kinds (meterfix.engine.meter_kinds)
    "orifice_reynolds": ("Re_D below ISO 5167-2 limit", "the pipe Reynolds number is below ISO 5167-2:2003's "
                                                        "limit for the taps and beta (5.3.1); computed, flagged"),
    "orifice_pressure_ratio": ("dp/p1 beyond ISO 5167-2 limit", "p2/p1 < 0.75: outside the expansibility "
                                                                "equation's range (ISO 5167-2:2003, 5.3.2.2)"),
    "orifice_beta": ("beta outside ISO 5167-2", "d/D at the flowing temperature outside 0.1-0.75"),
    "negative_differential_pressure": ("negative differential pressure", "dp below zero: no flow counted"),
    "negative_mass": ("negative mass", "a negative interval mass: left out unless the meter is bidirectional"),
    "outside_error_curve": ("outside the error curve", "flow rate outside the calibrated range: the end "
                                                       "value of the curve was held"),
    "speed_of_sound": ("speed of sound off", "the meter's speed of sound differs from the analysis' by more than "
                                             "speed_of_sound_threshold"),
}


def flag_label(key: str) -> str:
    """Plain words of a flag key ('pressure_range' or 'flag_pressure_range')."""
    k = key[5:] if key.startswith("flag_") else key
    return FLAGS[k][0] if k in FLAGS else k.replace("_", " ")


def flag_meaning(key: str) -> str:
    k = key[5:] if key.startswith("flag_") else key
    return FLAGS[k][1] if k in FLAGS else ""


def flags_breakdown(counts: dict) -> str:
    """'gap 6, spike 3' from flag counts (zero counts left out), in the order of FLAGS."""
    order = list(FLAGS)
    items = sorted(((k, n) for k, n in counts.items() if n), key=lambda kv: order.index(kv[0]) if kv[0] in order
                   else len(order))
    return ", ".join(f"{flag_label(k)} {n}" for k, n in items)

