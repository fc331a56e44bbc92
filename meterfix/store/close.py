"""Closing a month into the store: one transaction per closing, never an overwrite.

A closing keeps the meter, gas month, version, time (UTC), tool version, settings, method and
edition, analyses, inputs (names, sha256), the raw interval records, the edit layer, totals,
the JSON summary (gas days, findings, invoice check, corrector check, uncertainty budget), its
differences from the version before and the configuration log (every setting that differs from
the meter's previous month). Closing a month again adds a version beside the old ones; a reason
is then required (electronic gas measurement practice keeps the original records unedited and
every change with who and why: API MPMS Chapter 21.1).

The flow used by the CLI: :func:`prepare` (pure, after the month is computed), :func:`plan`
(reads the store: version, reason required, history for the workbook), the outputs are written,
then :func:`commit` (one transaction under the store's write lock).
"""

from __future__ import annotations

import json
import uuid
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from .. import __version__
from .db import Store, StoreError, utc_now
from . import records as R

#: totals compared between versions, and their labels
COMPARED_TOTALS = ("uncorrected_volume_m3", "base_volume_m3", "ideal_gas_base_volume_m3", "energy_MJ", "mass_kg",
                   "intervals")
#: settings that are not settings of the meter (where the store is, where each setting came from, which
#: gas month was selected: it differs every month by nature)
_NOT_SETTINGS = ("store", "sources", "month")


@dataclass
class Draft:
    """A computed month ready to be closed (everything but its version and chain)."""

    meter: str
    month: str
    row: dict
    payloads: list
    times: np.ndarray
    edits: list
    settings: dict
    inputs: list
    totals: dict
    version: int | None = None
    differences: dict = field(default_factory=dict)
    config_log: list = field(default_factory=list)


def closing_month(result) -> str:
    """The gas month a result closes; a log spanning two months in earnest is refused."""
    months = result.months
    if not len(months):
        raise StoreError("the month has no intervals to close")
    hours = months["hours"].to_numpy(float)
    order = np.argsort(-hours, kind="stable")
    main = str(months.index[order[0]])
    if len(order) > 1 and hours[order[1]] > 72.0:
        others = ", ".join(str(months.index[i]) for i in order[1:])
        raise StoreError(f"the log covers more than one gas month ({main} and {others}): a closing is one "
                         "gas month", hint=f"close one gas month with --month {main} (or the site key month)")
    return main


def _metric(result):
    import math

    out = {"invoice_difference_pct": None, "corrector_deviation_pct": None, "expanded_uncertainty_pct": None}
    rec = result.reconciliation
    if rec is not None:
        for k in ("energy_difference_pct", "volume_difference_pct"):
            v = (rec.totals if rec is not None else {}).get(k)
            if isinstance(v, (int, float)) and math.isfinite(v):
                out["invoice_difference_pct"] = float(v)
                break
    cc = result.corrector_check
    v = cc.size_pct if cc is not None else None
    if isinstance(v, (int, float)) and math.isfinite(v):
        out["corrector_deviation_pct"] = float(v)
    v = result.uncertainty.expanded_pct if result.uncertainty is not None else None
    if isinstance(v, (int, float)) and math.isfinite(v):
        out["expanded_uncertainty_pct"] = float(v)
    return out


def settings_record(settings) -> dict:
    rec = R.plain(settings.to_record())
    return {k: v for k, v in rec.items() if k != "store"}


def prepare(result, frame: pd.DataFrame, *, by: str | None = None, reason: str | None = None) -> Draft:
    """Everything a closing stores, computed from the month run and the frame it ran on."""
    from ..writers.summary import summary_json

    month = closing_month(result)
    t = result.totals
    settings = settings_record(result.settings)
    inputs = R.plain(list(result.inputs))
    times, payloads = R.record_payloads(frame, result.intervals)
    row = {
        "meter": str(result.settings.meter), "month": month, "closed_by": by, "reason": reason,
        "tool_version": __version__, "method": str(result.method.get("name")),
        "edition": str(result.method.get("edition") or ""), "intervals": int(t["intervals"]),
        "uncorrected_volume_m3": t.get("uncorrected_volume_m3"), "base_volume_m3": t.get("base_volume_m3"),
        "ideal_gas_base_volume_m3": t.get("ideal_gas_base_volume_m3"), "energy_mj": t.get("energy_MJ"),
        "mass_kg": t.get("mass_kg"), "ideal_gas_error_pct": t.get("ideal_gas_error_pct"), **_metric(result),
        "settings_json": R.canonical(settings), "analyses_json": R.canonical(R.analyses_record(result.analyses)),
        "inputs_json": R.canonical(inputs), "columns_json": R.canonical(R.frame_columns(frame)),
        "totals_json": R.canonical(R.plain(t)), "summary_json": summary_json(result),
    }
    row = {k: R.plain(v) if not isinstance(v, str) else v for k, v in row.items()}
    return Draft(meter=row["meter"], month=month, row=row, payloads=payloads, times=times,
                 edits=R.edit_rows(frame, result.edits, by, reason), settings=settings, inputs=inputs,
                 totals=R.plain(dict(t)))


# ---------------------------------------------------------------------------------------------
def _flatten(d: dict, prefix: str = "") -> dict:
    out = {}
    for k, v in d.items():
        if k in _NOT_SETTINGS and not prefix:
            continue
        if isinstance(v, dict):
            out.update(_flatten(v, f"{prefix}{k}."))
        else:
            out[f"{prefix}{k}"] = v
    return out


def settings_changes(old: dict, new: dict) -> list[dict]:
    """[{setting, old, new}] for every setting that differs (dotted names inside tables); a record
    of an earlier version is read under today's names first (a renamed setting is no change)."""
    from ..engine.settings import RECORD_RENAMES

    old = {RECORD_RENAMES.get(k, k): v for k, v in old.items()}
    a, b = _flatten(old), _flatten(new)
    return [{"setting": k, "old": a.get(k), "new": b.get(k)} for k in sorted(set(a) | set(b)) if a.get(k) != b.get(k)]


def differences(previous: dict, draft: Draft) -> dict:
    """What changed from the previous version of the month: totals, inputs, settings, method."""
    pt = json.loads(previous["totals_json"])
    totals = {}
    for k in COMPARED_TOTALS:
        old, new = pt.get(k), draft.totals.get(k)
        if old == new:
            continue
        entry = {"old": old, "new": new}
        if isinstance(old, (int, float)) and isinstance(new, (int, float)):
            entry["change"] = new - old
            entry["change_pct"] = 100.0 * (new / old - 1.0) if old else None
        totals[k] = entry
    key = lambda e: (e.get("role"), e.get("file"))  # noqa: E731
    old_in = {key(e): e.get("sha256") for e in json.loads(previous["inputs_json"])}
    new_in = {key(e): e.get("sha256") for e in draft.inputs}
    inputs = {"added": [f"{r}: {f}" for (r, f) in new_in if (r, f) not in old_in],
              "removed": [f"{r}: {f}" for (r, f) in old_in if (r, f) not in new_in],
              "changed": [f"{r}: {f}" for (r, f) in new_in if (r, f) in old_in and old_in[(r, f)] != new_in[(r, f)]]}
    out = {"previous_version": int(previous["version"]), "totals": totals,
           "inputs": {k: v for k, v in inputs.items() if v},
           "settings": settings_changes(json.loads(previous["settings_json"]), draft.settings)}
    if previous["method"] != draft.row["method"] or previous["edition"] != draft.row["edition"]:
        out["method"] = {"old": f"{previous['method']} ({previous['edition']})",
                         "new": f"{draft.row['method']} ({draft.row['edition']})"}
    return out


_CLOSING_COLUMNS = ("id", "meter", "month", "version", "chain_index", "closed_at", "closed_by", "reason",
                    "tool_version", "method", "edition", "settings_json", "inputs_json", "totals_json",
                    "closing_hash")


def _latest(c, meter: str, month: str | None = None, before: str | None = None):
    """The newest closing of a meter (of a month, or of the latest month before one), as a dict."""
    cols = ", ".join(_CLOSING_COLUMNS)
    if month is not None:
        rows = c.rows(f"SELECT {cols} FROM mf_closings WHERE meter = :m AND month = :mo ORDER BY version DESC LIMIT 1",
                      {"m": meter, "mo": month})
    elif before is not None:
        rows = c.rows(f"SELECT {cols} FROM mf_closings WHERE meter = :m AND month < :mo "
                      "ORDER BY month DESC, version DESC LIMIT 1", {"m": meter, "mo": before})
    else:
        rows = c.rows(f"SELECT {cols} FROM mf_closings WHERE meter = :m ORDER BY chain_index DESC LIMIT 1",
                      {"m": meter})
    return dict(zip(_CLOSING_COLUMNS, rows[0])) if rows else None


def _plan_with(c, draft: Draft) -> Draft:
    reason = draft.row.get("reason")
    same = _latest(c, draft.meter, month=draft.month)
    if same is not None and not (reason or "").strip():
        raise StoreError(f"{draft.meter} {draft.month} is already closed (version {same['version']}, "
                         f"{same['closed_at']}): closing it again needs a reason", file=c.store.name,
                         hint="add --reason 'what changed and why' (and --by NAME); the earlier version is kept")
    draft.version = 1 if same is None else int(same["version"]) + 1
    draft.differences = {} if same is None else differences(same, draft)
    prev = _latest(c, draft.meter, before=draft.month)
    draft.config_log = [] if prev is None else [
        {**ch, "from_month": prev["month"]} for ch in settings_changes(json.loads(prev["settings_json"]), draft.settings)]
    return draft


def plan(store: Store, draft: Draft) -> Draft:
    """Version, differences and configuration log as the store stands now (nothing is written).

    Raises StoreError when the month is already closed and no reason is given.
    """
    if store.kind == "sqlite" and not store.path.exists():
        draft.version, draft.differences, draft.config_log = 1, {}, []
        return draft
    with store.read("planning the closing") as c:
        if c.check_schema(writing=True) == 0:
            draft.version, draft.differences, draft.config_log = 1, {}, []
            return draft
        return _plan_with(c, draft)


def commit(store: Store, draft: Draft) -> dict:
    """Write the closing in one transaction under the store's write lock; returns its row.

    The version, differences and chain are taken again under the lock, so two processes closing
    at once each get their own version and link.
    """
    with store.write("closing the month") as c:
        c.migrate()
        _plan_with(c, draft)
        last = _latest(c, draft.meter)
        cid = uuid.uuid4().hex
        row = dict(draft.row)
        row.update({"id": cid, "version": draft.version, "chain_index": 1 if last is None else int(last["chain_index"]) + 1,
                    "closed_at": utc_now(), "differences_json": R.canonical(R.plain(draft.differences)),
                    "previous_hash": "" if last is None else last["closing_hash"]})
        rec_rows = [{"closing_id": cid, "seq": i, "time_ns": int(t), "payload": p,
                     "record_hash": R.record_hash(cid, i, p)} for i, (t, p) in enumerate(zip(draft.times, draft.payloads))]
        edit_rows = [{**e, "closing_id": cid, "edit_hash": R.edit_hash(cid, e)} for e in draft.edits]
        row["records_digest"] = R.digest(r["record_hash"] for r in rec_rows)
        row["edits_digest"] = R.digest(e["edit_hash"] for e in edit_rows)
        row["closing_hash"] = R.closing_hash(row)
        names = list(row)
        c.execute(f"INSERT INTO mf_closings ({', '.join(names)}) VALUES ({', '.join(':' + n for n in names)})", row)
        c.insert_many("INSERT INTO mf_records (closing_id, seq, time_ns, payload, record_hash) "
                      "VALUES (:closing_id, :seq, :time_ns, :payload, :record_hash)", rec_rows)
        c.insert_many("INSERT INTO mf_edits (closing_id, seq, record_seq, time_utc, what, original_value, new_value, "
                      "rule, cause, edited_by, why, edit_hash) VALUES (:closing_id, :seq, :record_seq, :time_utc, "
                      ":what, :original_value, :new_value, :rule, :cause, :edited_by, :why, :edit_hash)", edit_rows)
        c.insert_many("INSERT INTO mf_config_log (closing_id, meter, month, version, setting, old_value, new_value, "
                      "from_month) VALUES (:closing_id, :meter, :month, :version, :setting, :old_value, :new_value, "
                      ":from_month)",
                      [{"closing_id": cid, "meter": draft.meter, "month": draft.month, "version": draft.version,
                        "setting": e["setting"], "old_value": R.canonical(e["old"]), "new_value": R.canonical(e["new"]),
                        "from_month": e["from_month"]} for e in draft.config_log])
        text = (f"version {draft.version} closed" if draft.version == 1 else
                f"version {draft.version} closed beside version {draft.version - 1}: {row['reason']}")
        c.execute("INSERT INTO mf_events (at, kind, meter, month, version, done_by, text) "
                  "VALUES (:at, :kind, :meter, :month, :version, :by, :text)",
                  {"at": row["closed_at"], "kind": "closing", "meter": draft.meter, "month": draft.month,
                   "version": draft.version, "by": row["closed_by"], "text": text})
    return row
