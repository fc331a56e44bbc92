"""Months and versions in the store: per meter, for the fleet, and the trend over months."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd

from .db import Store

#: columns of a history entry, in order (SI; units in the names)
ENTRY_COLUMNS = ("meter", "month", "version", "closed_at", "closed_by", "reason", "method", "intervals",
                 "uncorrected_volume_m3", "base_volume_m3", "ideal_gas_base_volume_m3", "energy_mj", "mass_kg",
                 "ideal_gas_error_pct", "invoice_difference_pct", "corrector_deviation_pct",
                 "expanded_uncertainty_pct", "totals_json", "differences_json")


def entries(store: Store, meter: str | None = None) -> pd.DataFrame:
    """Every closing (all versions), ordered by meter, month and version."""
    sql = f"SELECT {', '.join(ENTRY_COLUMNS)} FROM mf_closings"
    params = {}
    if meter is not None:
        sql += " WHERE meter = :m"
        params["m"] = meter
    sql += " ORDER BY meter, month, version"
    with store.read("reading the history") as c:
        c.check_schema(writing=False)
        rows = c.rows(sql, params)
        config = c.rows("SELECT meter, month, version, setting, old_value, new_value, from_month FROM mf_config_log"
                        + (" WHERE meter = :m" if meter is not None else "") + " ORDER BY meter, month, version, setting",
                        params)
    df = pd.DataFrame(rows, columns=list(ENTRY_COLUMNS))
    df.attrs["config_log"] = [dict(zip(("meter", "month", "version", "setting", "old", "new", "from_month"), r))
                              for r in config]
    return _with_changes(df)


def _with_changes(df: pd.DataFrame) -> pd.DataFrame:
    """Adds ``latest`` (the newest version of its month) and the base-volume change from the
    meter's previous month (latest versions) in percent."""
    if not len(df):
        df["latest"] = []
        df["base_volume_change_pct"] = []
        return df
    df = df.copy()
    newest = df.groupby(["meter", "month"])["version"].transform("max")
    df["latest"] = df["version"] == newest
    change = np.full(len(df), np.nan)
    for _, g in df.groupby("meter", sort=False):
        lat = g[g["latest"]].sort_values("month")
        prev_by_month = dict(zip(lat["month"].iloc[1:], lat["base_volume_m3"].iloc[:-1]))
        for i, (mo, vb) in zip(g.index, zip(g["month"], g["base_volume_m3"])):
            pv = prev_by_month.get(mo)
            if pv and vb is not None and np.isfinite(pv):
                change[df.index.get_loc(i)] = 100.0 * (vb / pv - 1.0)
    df["base_volume_change_pct"] = change
    return df


def _month_number(month: str) -> int:
    y, m = month.split("-")
    return int(y) * 12 + int(m) - 1


def trend(df: pd.DataFrame) -> dict:
    """Least-squares trend over the months of one meter (latest version of each month).

    Returns months, first and last month, base volume slope [% of the mean per month] and the
    ideal-gas error slope [percentage points per month]; slopes need three months or more.
    """
    lat = df[df["latest"]].sort_values("month") if "latest" in df else df
    out = {"months": int(len(lat)), "first_month": lat["month"].iloc[0] if len(lat) else None,
           "last_month": lat["month"].iloc[-1] if len(lat) else None,
           "base_volume_pct_per_month": None, "ideal_gas_error_points_per_month": None}
    if len(lat) < 3:
        out["note"] = f"a trend needs three or more months; {len(lat)} stored"
        return out
    x = np.array([_month_number(m) for m in lat["month"]], dtype=float)
    for col, key, relative in (("base_volume_m3", "base_volume_pct_per_month", True),
                               ("ideal_gas_error_pct", "ideal_gas_error_points_per_month", False)):
        y = pd.to_numeric(lat[col], errors="coerce").to_numpy(float)
        ok = np.isfinite(y)
        if ok.sum() < 3:
            out["note"] = f"a trend needs three or more months with a value; {int(ok.sum())} have one"
            continue
        slope = float(np.polyfit(x[ok], y[ok], 1)[0])
        if relative:
            mean = float(np.mean(y[ok]))
            slope = 100.0 * slope / mean if mean else None
        out[key] = slope if slope is not None and np.isfinite(slope) else None
    return out


def entry_json(row) -> dict:
    """One history entry for ``meterfix history --json``."""
    totals = json.loads(row["totals_json"])
    diffs = json.loads(row["differences_json"])

    def num(v):
        return None if v is None or (isinstance(v, float) and not np.isfinite(v)) else v

    return {"meter": row["meter"], "month": row["month"], "version": int(row["version"]),
            "closed_at": row["closed_at"], "closed_by": num(row["closed_by"]), "reason": num(row["reason"]),
            "latest_version": bool(row["latest"]), "method": row["method"], "totals": totals,
            "ideal_gas_error_pct": num(row["ideal_gas_error_pct"]),
            "invoice_difference_pct": num(row["invoice_difference_pct"]),
            "corrector_deviation_pct": num(row["corrector_deviation_pct"]),
            "expanded_uncertainty_pct": num(row["expanded_uncertainty_pct"]),
            "base_volume_change_from_previous_month_pct": num(row["base_volume_change_pct"]),
            **({} if num(row["base_volume_change_pct"]) is not None else
               {"base_volume_change_note": "no previous month of this meter in the store, or no base volume"}),
            "differences_from_previous_version": diffs or None}


#: columns of the workbook's History sheet (SI values, unit in the name)
SHEET_COLUMNS = {"month": "month", "version": "version", "closed_at": "closed_at_utc", "closed_by": "closed_by",
                 "reason": "reason", "intervals": "intervals", "uncorrected_volume_m3": "uncorrected_volume_m3",
                 "base_volume_m3": "base_volume_m3", "energy_mj": "energy_MJ", "ideal_gas_error_pct": "ideal_gas_error_pct",
                 "invoice_difference_pct": "invoice_difference_pct", "corrector_deviation_pct": "corrector_deviation_pct",
                 "expanded_uncertainty_pct": "expanded_uncertainty_pct",
                 "base_volume_change_pct": "base_volume_change_from_previous_month_pct"}


def sheet_frame(df: pd.DataFrame, months: int = 12) -> pd.DataFrame:
    """``MonthResult.history``: one row per version of the meter's last ``months`` months, newest last."""
    if not len(df):
        return pd.DataFrame(columns=list(SHEET_COLUMNS.values()))
    keep = sorted(df["month"].unique())[-months:]
    part = df[df["month"].isin(keep)].sort_values(["month", "version"])
    out = part[list(SHEET_COLUMNS)].rename(columns=SHEET_COLUMNS).reset_index(drop=True)
    out["closed_at_utc"] = pd.to_datetime(out["closed_at_utc"], utc=True)
    for c in out.columns:
        if c.endswith(("_m3", "_MJ", "_pct")):
            out[c] = pd.to_numeric(out[c], errors="coerce").astype(float)
    return out


def month_history(store: Store, draft, months: int = 12) -> pd.DataFrame:
    """The History sheet of a month about to be closed: the meter's stored closings with this
    closing (as planned: its version, closed now) added, the last ``months`` months."""
    from .db import utc_now

    stored = pd.DataFrame(columns=list(ENTRY_COLUMNS))
    exists = not (store.kind == "sqlite" and not store.path.exists())
    if exists:
        with store.read("reading the history") as c:
            if c.check_schema(writing=True) > 0:
                stored = entries(store, draft.meter)[list(ENTRY_COLUMNS)]
    row = {k: draft.row.get(k) for k in ENTRY_COLUMNS}
    row.update({"version": draft.version, "closed_at": utc_now(), "differences_json": "{}"})
    rows = [r for r in stored.to_dict(orient="records") if r["month"] <= draft.month] + [row]
    df = _with_changes(pd.DataFrame(rows, columns=list(ENTRY_COLUMNS)))
    return sheet_frame(df, months)
