"""Closed balances of systems (zones, stations, pipeline sections) kept beside the meter months.

Generic: a balance closing takes plain records (its name, month, figures, the meter closings it
used and its summary as JSON text) and never imports the balance package. As a meter month, a
balance is closed in versions: closing it again needs a reason; earlier versions are kept; each
version's hash covers its content and chains to the previous version of the same balance.
"""

from __future__ import annotations

import json
import uuid

import pandas as pd

from .. import __version__
from . import records as R
from .db import Store, StoreError, utc_now

BALANCE_COLUMNS = ("id", "name", "month", "version", "closed_at", "closed_by", "reason", "tool_version",
                   "figures_json", "parts_json", "summary_json", "previous_hash", "closing_hash")


def _hash(row: dict) -> str:
    keys = [k for k in BALANCE_COLUMNS if k not in ("id", "closing_hash")]
    return R.sha256_text(R.canonical({k: row[k] for k in keys}))


def _latest(c, name: str, month: str | None = None):
    cols = ", ".join(BALANCE_COLUMNS)
    if month is None:
        rows = c.rows(f"SELECT {cols} FROM mf_balances WHERE name = :n ORDER BY month DESC, version DESC LIMIT 1",
                      {"n": name})
    else:
        rows = c.rows(f"SELECT {cols} FROM mf_balances WHERE name = :n AND month = :m ORDER BY version DESC LIMIT 1",
                      {"n": name, "m": month})
    return dict(zip(BALANCE_COLUMNS, rows[0])) if rows else None


def plan_balance(store: Store, name: str, month: str, reason: str | None) -> int:
    """The version a closing would get now; refuses a second closing without a reason."""
    if store.kind == "sqlite" and not store.path.exists():
        return 1
    with store.read("planning the balance closing") as c:
        if c.check_schema(writing=True) < 2:
            return 1
        same = _latest(c, name, month)
    return _next(store, same, name, month, reason)


def _next(store, same, name, month, reason) -> int:
    if same is not None and not (reason or "").strip():
        raise StoreError(f"balance '{name}' {month} is already closed (version {same['version']}, {same['closed_at']}): "
                         "closing it again needs a reason", file=store.name,
                         hint="add --reason 'what changed and why' (and --by NAME); the earlier version is kept")
    return 1 if same is None else int(same["version"]) + 1


def close_balance(store: Store, *, name: str, month: str, figures: dict, parts: list, summary_text: str,
                  by: str | None = None, reason: str | None = None) -> dict:
    """Keep one balance closing in one transaction; returns its row (version, closed_at, hash).

    Parameters
    ----------
    figures : dict       headline figures in SI (receipts_m3, ufg_m3, ufg_expanded_uncertainty_m3, consistent ...)
    parts : list of dict the meter closings it used (meter, month, version, closing_hash) or how each
                         month was had
    summary_text : str   the balance JSON as written
    """
    with store.write("closing the balance") as c:
        c.migrate()
        same = _latest(c, name, month)
        version = _next(store, same, name, month, reason)
        last = _latest(c, name)
        row = {"id": uuid.uuid4().hex, "name": name, "month": month, "version": version, "closed_at": utc_now(),
               "closed_by": by, "reason": reason, "tool_version": __version__,
               "figures_json": R.canonical(R.plain(figures)), "parts_json": R.canonical(R.plain(parts)),
               "summary_json": summary_text, "previous_hash": "" if last is None else last["closing_hash"]}
        row["closing_hash"] = _hash(row)
        c.execute(f"INSERT INTO mf_balances ({', '.join(BALANCE_COLUMNS)}) VALUES "
                  f"({', '.join(':' + k for k in BALANCE_COLUMNS)})", row)
        text = (f"balance version {version} closed" if version == 1 else
                f"balance version {version} closed beside version {version - 1}: {reason}")
        c.execute("INSERT INTO mf_events (at, kind, meter, month, version, done_by, text) "
                  "VALUES (:at, :kind, :meter, :month, :version, :by, :text)",
                  {"at": row["closed_at"], "kind": "balance", "meter": name, "month": month, "version": version,
                   "by": by, "text": text})
    return row


def balance_entries(store: Store, name: str | None = None) -> pd.DataFrame:
    """Every balance closing (all versions) with its headline figures, by name, month and version."""
    cols = ["name", "month", "version", "closed_at", "closed_by", "reason", "figures_json", "parts_json",
            "closing_hash"]
    with store.read("reading the balances") as c:
        if c.check_schema(writing=False) < 2 or "mf_balances" not in c.tables():
            return pd.DataFrame(columns=cols)
        sql = f"SELECT {', '.join(cols)} FROM mf_balances"
        params = {}
        if name is not None:
            sql += " WHERE name = :n"
            params["n"] = name
        rows = c.rows(sql + " ORDER BY name, month, version", params)
    df = pd.DataFrame(rows, columns=cols).astype(object)
    df = df.where(pd.notna(df), None)   # who and why stay None when not given (never NaN)
    if len(df):
        df["latest"] = df.groupby(["name", "month"])["version"].transform("max") == df["version"]
    return df


def latest_meter_summary(store: Store, meter: str, month: str | None = None):
    """(summary dict, version, month, closing_hash) of a meter's latest closed version (of a month),
    or None when it has none."""
    with store.read("reading a closed month") as c:
        c.check_schema(writing=False)
        if month is None:
            rows = c.rows("SELECT summary_json, version, month, closing_hash FROM mf_closings WHERE meter = :m "
                          "ORDER BY month DESC, version DESC LIMIT 1", {"m": meter})
        else:
            rows = c.rows("SELECT summary_json, version, month, closing_hash FROM mf_closings WHERE meter = :m AND "
                          "month = :mo ORDER BY version DESC LIMIT 1", {"m": meter, "mo": month})
    if not rows:
        return None
    s, v, mo, h = rows[0]
    return json.loads(s), int(v), mo, h
