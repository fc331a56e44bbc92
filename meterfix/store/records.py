"""What a closing stores, as plain text that both databases keep exactly, and its hashes.

Interval records
    One row per interval of the frame the engine ran on, in time order. ``payload`` is canonical
    JSON (sorted keys, floats written by ``repr``, so every double comes back bit for bit; NaN as
    null; a flag that is false left out): ``t`` the interval end [ns since 1970, UTC], ``in`` the
    values *as read* (where the
    quality stage substituted a value, the original from its ``<column>_raw``), ``out`` what the
    month run computed for the interval (Z at line conditions, base volume real and ideal, mass,
    energy; SI).
Edit layer
    Each substitution: record, time, column, original and new value, rule, cause, and who and
    why when given (``--by``, ``--reason``).
Hashes
    Each record and each edit has its SHA-256 (FIPS 180-4); a closing's hash covers its fields,
    the digests of its records and edits, and the hash of the meter's previous closing (a hash
    chain per meter). A record changed after closing, even in its last digit, no longer matches.
"""

from __future__ import annotations

import hashlib
import json
import math

import numpy as np
import pandas as pd

#: interval results kept with each record (and compared by ``verify``)
RESULT_COLUMNS = ("z_line", "volume_base", "volume_base_ideal", "mass", "energy")


def sha256_text(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def _plain(v):
    if v is None:
        return None
    if isinstance(v, (bool, np.bool_)):
        return bool(v)
    if isinstance(v, (int, np.integer)):
        return int(v)
    if isinstance(v, (float, np.floating)):
        v = float(v)
        return v if math.isfinite(v) else None
    if isinstance(v, pd.Timestamp):
        return v.isoformat()
    return str(v)


def canonical(obj) -> str:
    """Canonical JSON: sorted keys, no spaces, floats by repr (exact), no NaN."""
    return json.dumps(obj, sort_keys=True, separators=(",", ":"), ensure_ascii=False, allow_nan=False)


def plain(obj):
    """A JSON-safe copy of nested dicts/lists (NaN and inf become None, numpy scalars Python)."""
    if isinstance(obj, dict):
        return {str(k): plain(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [plain(v) for v in obj]
    return _plain(obj)


# ---------------------------------------------------------------------------------------------
def frame_columns(frame: pd.DataFrame) -> list:
    """[[name, dtype], ...] of the frame's columns as read (the ``_raw`` copies folded back)."""
    return [[c, str(frame[c].dtype)] for c in frame.columns if not c.endswith("_raw")]


def record_payloads(frame: pd.DataFrame, intervals: pd.DataFrame) -> tuple[np.ndarray, list[str]]:
    """(time_ns, payload text) of every record; ``intervals`` is the month run's interval table."""
    cols = [c for c, _ in frame_columns(frame)]
    values = {}
    for c in cols:
        raw = c + "_raw"
        values[c] = (frame[raw] if raw in frame.columns else frame[c]).tolist()
    out = {c: intervals[c].to_numpy(float).tolist() for c in RESULT_COLUMNS if c in intervals.columns}
    t = frame.index.as_unit("ns").asi8
    flags = {c for c, dtype in frame_columns(frame) if dtype == "bool"}
    payloads = []
    for i in range(len(frame)):
        rec = {c: _plain(values[c][i]) for c in cols}
        payloads.append(canonical({"t": int(t[i]), "in": {c: v for c, v in rec.items() if not (v is False and c in flags)},
                                   "out": {c: _plain(out[c][i]) for c in out}}))
    return t, payloads


def record_hash(closing_id: str, seq: int, payload: str) -> str:
    return sha256_text(f"{closing_id}|{seq}|{payload}")


def edit_rows(frame: pd.DataFrame, edits: pd.DataFrame, by: str | None, why: str | None) -> list[dict]:
    """The edit layer as rows (SI values), each tied to its record by position."""
    if edits is None or not len(edits):
        return []
    index = frame.index.as_unit("ns")
    times = pd.DatetimeIndex(pd.to_datetime(edits["time"], utc=True)).as_unit("ns")
    pos = index.get_indexer(times) if index.is_unique else np.searchsorted(index.asi8, times.asi8)
    rows = []
    for k, (p, (_, e)) in enumerate(zip(pos, edits.iterrows())):
        rows.append({"seq": k, "record_seq": int(p), "time_utc": pd.Timestamp(e["time"]).isoformat(),
                     "what": str(e["what"]), "original_value": _plain(e["original"]),
                     "new_value": _plain(e["new"]), "rule": str(e["method"]), "cause": str(e["reason"]),
                     "edited_by": by, "why": why})
    return rows


def edit_hash(closing_id: str, row: dict) -> str:
    keys = ("seq", "record_seq", "time_utc", "what", "original_value", "new_value", "rule", "cause",
            "edited_by", "why")
    return sha256_text(closing_id + "|" + canonical({k: _plain(row.get(k)) for k in keys}))


def digest(hashes) -> str:
    return sha256_text("\n".join(hashes))


#: closing fields covered by the closing hash (with the digests and the previous hash)
HASHED_FIELDS = ("id", "meter", "month", "version", "chain_index", "closed_at", "closed_by", "reason",
                 "tool_version", "method", "edition", "intervals", "uncorrected_volume_m3", "base_volume_m3",
                 "ideal_gas_base_volume_m3", "energy_mj", "mass_kg", "ideal_gas_error_pct",
                 "invoice_difference_pct", "corrector_deviation_pct", "expanded_uncertainty_pct",
                 "settings_json", "analyses_json", "inputs_json", "columns_json", "totals_json", "summary_json",
                 "differences_json", "records_digest", "edits_digest", "previous_hash")


def closing_hash(row: dict) -> str:
    return sha256_text(canonical({k: _plain(row.get(k)) for k in HASHED_FIELDS}))


# ---------------------------------------------------------------------------------------------
def _encode(v):
    """A dataclass field as plain JSON data; arrays keep their shape, tuples their kind."""
    if isinstance(v, np.ndarray):
        return {"__array__": [float(x) for x in v.astype(float).ravel()], "shape": list(v.shape)}
    if isinstance(v, tuple):
        return {"__tuple__": [_encode(x) for x in v]}
    if isinstance(v, dict):
        return {str(k): _encode(x) for k, x in v.items()}
    if isinstance(v, list):
        return [_encode(x) for x in v]
    return _plain(v)


def _decode(v):
    if isinstance(v, dict):
        if "__array__" in v:
            return np.asarray(v["__array__"], float).reshape(v["shape"])
        if "__tuple__" in v:
            return tuple(_decode(x) for x in v["__tuple__"])
        return {k: _decode(x) for k, x in v.items()}
    if isinstance(v, list):
        return [_decode(x) for x in v]
    return v


def analyses_record(analyses) -> list:
    """The analyses in force (effective time and every field of the gas) as plain data."""
    import dataclasses

    out = []
    for a in analyses:
        gas = a.gas
        when = None if a.effective_from is None else pd.Timestamp(a.effective_from).isoformat()
        if gas is None:
            out.append({"effective_from": when, "kind": "none"})
            continue
        kind = "composition" if hasattr(gas, "fractions") else "gross"
        fields = {f.name: _encode(getattr(gas, f.name)) for f in dataclasses.fields(gas)}
        out.append({"effective_from": when, "kind": kind, "fields": fields})
    return out


def analyses_from_record(items) -> list:
    """(effective_from, gas) pairs for run_month from :func:`analyses_record`."""
    from ..gas.composition import Composition
    from ..gas.gross import GrossCharacterization

    out = []
    for a in items:
        when = None if a.get("effective_from") is None else pd.Timestamp(a["effective_from"])
        kind = a.get("kind")
        if kind == "none":
            out.append((when, None))
            continue
        cls = Composition if kind == "composition" else GrossCharacterization
        out.append((when, cls(**{k: _decode(v) for k, v in a["fields"].items()})))
    return out


def frame_from_records(columns: list, records: list, edits: list) -> pd.DataFrame:
    """The frame the engine ran on, rebuilt from the raw records with the edit layer applied.

    ``records``: (seq, time_ns, payload) in order; ``edits``: rows as stored. Substituted columns
    get their ``<column>_raw`` back, as the quality stage left them.
    """
    data = [json.loads(p) for _, _, p in records]
    index = pd.DatetimeIndex(np.array([d["t"] for d in data], dtype=np.int64).view("datetime64[ns]"),
                             tz="UTC")
    cols = {}
    for name, dtype in columns:
        vals = [d["in"].get(name) for d in data]
        if dtype == "bool":
            cols[name] = np.array([bool(v) for v in vals], dtype=bool)  # a false flag is left out
        elif dtype.startswith("float"):
            cols[name] = np.array([np.nan if v is None else v for v in vals], dtype=float)
        elif dtype.startswith(("int", "uint")) and not any(v is None for v in vals):
            cols[name] = np.array(vals, dtype=dtype)
        else:
            cols[name] = pd.array(vals, dtype=object)
    frame = pd.DataFrame(cols, index=index)
    for col in dict.fromkeys(e["what"] for e in edits):
        raw = frame[col].to_numpy(float).copy()
        new = raw.copy()
        for e in edits:
            if e["what"] == col:
                new[int(e["record_seq"])] = np.nan if e["new_value"] is None else float(e["new_value"])
        frame[col] = new
        frame[col + "_raw"] = raw
    return frame


def stored_results(records: list) -> dict:
    """The interval results kept with each record: {column: ndarray}."""
    data = [json.loads(p)["out"] for _, _, p in records]
    return {c: np.array([np.nan if d.get(c) is None else d[c] for d in data], dtype=float)
            for c in RESULT_COLUMNS if data and c in data[0]}
