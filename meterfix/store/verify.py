"""Proof that a stored month still stands: its hashes, and the month recomputed from its records.

:func:`verify_closing` checks, for one closing:

1. every record, every edit and the closing itself against the hashes stored with them, and
   the link to the meter's previous closing (the hash chain);
2. the month recomputed by the engine (``run_month``) from the stored raw records with the
   stored edit layer applied, the stored settings and analyses, against every stored interval
   result and the stored totals: each agrees within 50 ppm (the recalculation tolerance of
   API MPMS Chapter 21.1 practice) or is named.
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field

import numpy as np

from .db import Store, StoreError
from . import records as R

#: relative agreement required between stored and recomputed values
TOLERANCE_PPM = 50.0
#: totals compared (keys of the JSON summary's totals)
VERIFIED_TOTALS = ("uncorrected_volume_m3", "base_volume_m3", "ideal_gas_base_volume_m3", "energy_MJ", "mass_kg",
                   "intervals")
_SHOWN = 8  # differences named per kind before "... and N more"


@dataclass
class Verification:
    meter: str
    month: str
    version: int
    closed_at: str
    intervals: int
    problems: list = field(default_factory=list)
    largest_ppm: float = 0.0
    recomputed: bool = False

    @property
    def ok(self) -> bool:
        return not self.problems


def _load(c, meter, month, version):
    cols = R.HASHED_FIELDS + ("closing_hash",)
    sql = f"SELECT {', '.join(cols)} FROM mf_closings WHERE meter = :m AND month = :mo"
    params = {"m": meter, "mo": month}
    if version is not None:
        sql += " AND version = :v"
        params["v"] = int(version)
    rows = c.rows(sql + " ORDER BY version DESC LIMIT 1", params)
    if not rows:
        have = c.rows("SELECT DISTINCT month FROM mf_closings WHERE meter = :m ORDER BY month", {"m": meter})
        what = f"{meter} {month}" + (f" version {version}" if version is not None else "")
        hint = ("stored months of this meter: " + ", ".join(r[0] for r in have)) if have else \
            "no month of this meter is stored; 'meterfix history --store STORE' lists the meters"
        raise StoreError(f"{what} is not in the store", file=c.store.name, hint=hint)
    return dict(zip(cols, rows[0]))


def _rel_ppm(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """|a − b| / max(|a|, |b|) in ppm; 0 where both are equal (NaN with NaN included)."""
    a = np.asarray(a, float)
    b = np.asarray(b, float)
    both_nan = np.isnan(a) & np.isnan(b)
    with np.errstate(invalid="ignore", divide="ignore"):
        scale = np.maximum(np.abs(a), np.abs(b))
        ppm = np.where(scale > 0, 1e6 * np.abs(a - b) / scale, 0.0)
    ppm = np.where(both_nan, 0.0, ppm)
    return np.where(np.isnan(a) ^ np.isnan(b), np.inf, ppm)


def verify_closing(store: Store, meter: str, month: str, version: int | None = None) -> Verification:
    """Check the hashes of a stored closing and recompute it (see the module docstring)."""
    with store.read("verifying") as c:
        c.check_schema(writing=False)
        row = _load(c, meter, month, version)
        records = c.rows("SELECT seq, time_ns, payload, record_hash FROM mf_records WHERE closing_id = :i ORDER BY seq",
                         {"i": row["id"]})
        ecols = ("seq", "record_seq", "time_utc", "what", "original_value", "new_value", "rule", "cause",
                 "edited_by", "why", "edit_hash")
        edits = [dict(zip(ecols, r)) for r in c.rows(f"SELECT {', '.join(ecols)} FROM mf_edits WHERE closing_id = :i "
                                                      "ORDER BY seq", {"i": row["id"]})]
        previous = c.rows("SELECT closing_hash FROM mf_closings WHERE meter = :m AND chain_index = :k",
                          {"m": meter, "k": int(row["chain_index"]) - 1})
    v = Verification(meter=meter, month=month, version=int(row["version"]), closed_at=row["closed_at"],
                     intervals=len(records))
    _check_hashes(v, row, records, edits, previous)
    _recompute(v, row, records, edits)
    return v


def _more(items, shown=_SHOWN):
    extra = len(items) - shown
    return items[:shown] + ([f"... and {extra} more"] if extra > 0 else [])


def _iso(ns) -> str:
    import pandas as pd

    return pd.Timestamp(int(ns), tz="UTC").isoformat().replace("+00:00", "Z")


def _check_hashes(v: Verification, row, records, edits, previous):
    bad = [f"record {seq} ({_iso(t)}) changed after closing: its content no longer matches its hash"
           for seq, t, payload, h in records if R.record_hash(row["id"], seq, payload) != h]
    gaps = [i for i, r in enumerate(records) if r[0] != i]
    if gaps:
        bad.append(f"records missing or out of order from position {gaps[0]}")
    if len(records) != int(row["intervals"]):
        bad.append(f"{len(records)} records stored for {row['intervals']} intervals closed")
    v.problems += _more(bad)
    bad_e = [f"edit {e['seq']} ({e['what']} at {e['time_utc']}) changed after closing"
             for e in edits if R.edit_hash(row["id"], e) != e["edit_hash"]]
    v.problems += _more(bad_e)
    if R.digest(r[3] for r in records) != row["records_digest"]:
        v.problems.append("the set of record hashes differs from the one sealed at closing (a record was "
                          "added, removed or re-hashed)")
    if R.digest(e["edit_hash"] for e in edits) != row["edits_digest"]:
        v.problems.append("the edit layer differs from the one sealed at closing (an edit was added, removed or re-hashed)")
    if R.closing_hash(row) != row["closing_hash"]:
        v.problems.append("the closing's own fields (settings, totals, inputs, summary or who/why) changed after closing")
    if int(row["chain_index"]) > 1 and (not previous or previous[0][0] != row["previous_hash"]):
        v.problems.append("the link to the meter's previous closing is broken (that closing was changed or removed)")


def _recompute(v: Verification, row, records, edits):
    from ..engine.pipeline import run_month
    from ..errors import MeterfixError
    from ..writers.manifest import settings_from_record

    try:
        settings = settings_from_record(json.loads(row["settings_json"]))
        analyses = R.analyses_from_record(json.loads(row["analyses_json"]))
        frame = R.frame_from_records(json.loads(row["columns_json"]), [r[:3] for r in records], edits)
        result = run_month(frame, analyses, settings, edits=None)
    except (MeterfixError, ValueError, KeyError, TypeError) as exc:
        v.problems.append(f"the month could not be recomputed from the stored records: {exc}")
        return
    v.recomputed = True
    stored = R.stored_results([r[:3] for r in records])
    worst = 0.0
    for col, values in stored.items():
        if len(values) != len(result.intervals):
            v.problems.append(f"{col}: {len(result.intervals)} intervals recomputed, {len(values)} stored")
            continue
        new = result.intervals[col].to_numpy(float)
        ppm = _rel_ppm(new, values)
        worst = max(worst, float(np.nanmax(np.where(np.isinf(ppm), 0, ppm), initial=0.0)))
        off = np.flatnonzero(ppm > TOLERANCE_PPM)
        v.problems += _more([f"interval {_iso(records[i][1])}: {col} recomputed {new[i]:.10g}, stored {values[i]:.10g}"
                             f" ({_ppm_text(ppm[i])})" for i in off])
    totals = json.loads(row["totals_json"])
    for k in VERIFIED_TOTALS:
        a, b = result.totals.get(k), totals.get(k)
        if a is None and b is None:
            continue
        ppm = float(_rel_ppm(np.array([np.nan if a is None else a]), np.array([np.nan if b is None else b]))[0])
        if np.isfinite(ppm):
            worst = max(worst, ppm)
        if ppm > TOLERANCE_PPM:
            v.problems.append(f"total {k}: recomputed {a:.10g}, stored {b:.10g} ({_ppm_text(ppm)})"
                              if a is not None and b is not None else f"total {k}: recomputed {a}, stored {b}")
    v.largest_ppm = worst


def _ppm_text(ppm: float) -> str:
    return "one value missing" if not np.isfinite(ppm) else f"{ppm:.3g} ppm"
