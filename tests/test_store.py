"""Closed months in a store (meterfix.store): SQLite always, PostgreSQL on a real server.

Each test that takes ``store_url`` runs on a new SQLite file and on a new database of the
PostgreSQL server named by METERFIX_TEST_POSTGRES_URL (started by .ci/run). Without that
variable the PostgreSQL runs skip, except under CI=true, where they fail.

Data: the invented Ostwold fleet of tests/store_data.py. The 50 ppm recalculation tolerance is
that of electronic gas measurement practice (API MPMS Chapter 21.1, as the issue states it).
"""

from __future__ import annotations

import json
import multiprocessing
import os
import sqlite3
import sys
import uuid
from pathlib import Path

import numpy as np
import pytest
from typer.testing import CliRunner

from meterfix.cli import app
from meterfix.engine.settings import build_settings
from meterfix.month import run_files
from meterfix.store import close as C
from meterfix.store import SCHEMA_VERSION, open_store
from meterfix.store.history import entries, trend
from meterfix.store.verify import verify_closing

sys.path.insert(0, str(Path(__file__).resolve().parent))
import store_data as S  # noqa: E402

PG_URL = os.environ.get("METERFIX_TEST_POSTGRES_URL")


def _pg_database():
    """A new, empty database on the test server; dropped afterwards."""
    if not PG_URL:
        if os.environ.get("CI") == "true":
            pytest.fail("CI=true but METERFIX_TEST_POSTGRES_URL is not set: .ci/run must start PostgreSQL")
        pytest.skip("no PostgreSQL server (METERFIX_TEST_POSTGRES_URL unset); .ci/run starts one in CI")
    import sqlalchemy as sa

    name = "mf_t_" + uuid.uuid4().hex[:12]
    admin = sa.create_engine(PG_URL.replace("postgresql://", "postgresql+psycopg://", 1), isolation_level="AUTOCOMMIT")
    with admin.connect() as c:
        c.execute(sa.text(f'CREATE DATABASE "{name}"'))
    base = PG_URL.rsplit("/", 1)[0]
    try:
        yield f"{base}/{name}"
    finally:
        with admin.connect() as c:
            c.execute(sa.text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
        admin.dispose()


@pytest.fixture(params=["sqlite", "postgresql"])
def store_url(request, tmp_path):
    if request.param == "sqlite":
        yield str(tmp_path / "months.sqlite")
    else:
        yield from _pg_database()


@pytest.fixture(scope="module")
def months(tmp_path_factory):
    """(result, frame) of each (meter, month) of the invented fleet, computed once (no Monte Carlo)."""
    root = tmp_path_factory.mktemp("fleet")
    out = {}
    for month in S.MONTHS:
        for name, d in S.write_fleet_month(root / month, month).items():
            s = build_settings(d / "site.toml")
            out[(name, month)] = run_files([d / "log.csv"], s, composition=d / "gas.csv", uncertainty=False,
                                           with_frame=True)
    return out


def _close(url, months, meter, month, *, by="R. Okafor", reason=None):
    result, frame = months[(meter, month)]
    draft = C.prepare(result, frame, by=by, reason=reason)
    C.plan(open_store(url), draft)
    return C.commit(open_store(url), draft)


# ---------------------------------------------------------------------------------------------
def test_a_closing_recomputes_within_50_ppm_and_keeps_everything(store_url, months):
    row = _close(store_url, months, "OW-Mill", "2026-09")
    assert row["version"] == 1 and row["month"] == "2026-09"
    v = verify_closing(open_store(store_url), "OW-Mill", "2026-09")
    assert v.ok, v.problems
    assert v.recomputed and v.largest_ppm <= 50.0
    result, frame = months[("OW-Mill", "2026-09")]
    assert v.intervals == len(result.intervals) == len(frame)
    # the raw records as read: the substituted values' originals (NaN, gap rows) are kept, the
    # substitutions are the edit layer with who did it
    st = open_store(store_url)
    with st.read() as c:
        edits = c.rows("SELECT what, original_value, new_value, rule, edited_by FROM mf_edits ORDER BY seq")
        payloads = [json.loads(p) for (p,) in c.rows("SELECT payload FROM mf_records ORDER BY seq")]
        version = c.rows("SELECT MAX(version) FROM mf_schema")[0][0]
    assert version == SCHEMA_VERSION == 2  # every migration applied at the first closing
    assert len(edits) == len(result.edits) > 0
    assert all(e[3] == "interpolate" and e[4] == "R. Okafor" for e in edits)
    raw = np.array([np.nan if p["in"]["volume_line"] is None else p["in"]["volume_line"] for p in payloads])
    assert np.isnan(raw).sum() >= 2  # the two empty rows of the invented log stay empty in the records
    assert np.array_equal(np.nan_to_num(raw, nan=-1.0),
                          np.nan_to_num(frame["volume_line_raw"].to_numpy(float), nan=-1.0))


def test_verify_catches_a_small_change_to_a_stored_record(store_url, months):
    _close(store_url, months, "OW-North", "2026-10")
    st = open_store(store_url)
    with st.write() as c:
        cid, seq, payload = c.rows("SELECT closing_id, seq, payload FROM mf_records WHERE seq = 40")[0]
        d = json.loads(payload)
        d["in"]["temperature_line"] += 1e-9  # a change far below any tolerance
        c.execute("UPDATE mf_records SET payload = :p WHERE closing_id = :c AND seq = :s",
                  {"p": json.dumps(d, sort_keys=True, separators=(",", ":")), "c": cid, "s": seq})
    r = CliRunner().invoke(app, ["verify", "--store", store_url, "--meter", "OW-North", "--month", "2026-10"])
    assert r.exit_code == 1, r.output
    assert "record 40" in r.output and "no longer matches its hash" in r.output


def test_verify_names_intervals_and_totals_that_no_longer_recompute(tmp_path, months):
    url = str(tmp_path / "s.sqlite")
    _close(url, months, "OW-Quarry", "2026-08")
    with sqlite3.connect(url) as c:
        # a stored total changed: the closing's own hash no longer matches, and the total is named
        t = json.loads(c.execute("SELECT totals_json FROM mf_closings").fetchone()[0])
        t["base_volume_m3"] *= 1.001
        c.execute("UPDATE mf_closings SET totals_json = ?", (json.dumps(t),))
        # a stored raw volume 1 % off: its record hash and its recomputed interval are both named
        seq, payload = c.execute("SELECT seq, payload FROM mf_records WHERE seq = 5").fetchone()
        d = json.loads(payload)
        d["in"]["volume_line"] *= 1.01
        c.execute("UPDATE mf_records SET payload = ? WHERE seq = 5", (json.dumps(d),))
    v = verify_closing(open_store(url), "OW-Quarry", "2026-08")
    text = "\n".join(v.problems)
    assert not v.ok
    assert "record 5 " in text and "closing's own fields" in text
    assert "volume_base recomputed" in text and "total base_volume_m3" in text


def test_closing_again_needs_a_reason_and_adds_a_version(store_url, months):
    _close(store_url, months, "OW-Quarry", "2026-09")
    with pytest.raises(C.StoreError, match="needs a reason"):
        _close(store_url, months, "OW-Quarry", "2026-09")
    row = _close(store_url, months, "OW-Quarry", "2026-09", by="J. Marsh", reason="analysis corrected")
    assert row["version"] == 2
    df = entries(open_store(store_url), "OW-Quarry")
    assert list(df["version"]) == [1, 2] and list(df["latest"]) == [False, True]
    assert json.loads(df["differences_json"].iloc[1])["previous_version"] == 1
    for version in (1, 2):  # the earlier version stays as it was closed
        assert verify_closing(open_store(store_url), "OW-Quarry", "2026-09", version).ok


def test_configuration_log_names_settings_that_differ_from_the_previous_month(tmp_path, months):
    url = str(tmp_path / "s.sqlite")
    _close(url, months, "OW-North", "2026-08")
    result, frame = months[("OW-North", "2026-09")]
    result.settings.ideal_gas_threshold = 0.25  # as if the site file had changed
    try:
        _close(url, months, "OW-North", "2026-09")
    finally:
        result.settings.ideal_gas_threshold = 0.5
    log = entries(open_store(url)).attrs["config_log"]
    assert [(e["month"], e["setting"], e["old"], e["new"], e["from_month"]) for e in log] == [
        ("2026-09", "ideal_gas_threshold", "0.5", "0.25", "2026-08")]


def test_two_processes_closing_at_once_never_corrupt_the_store(store_url, months):
    """Two real processes close 6 months each into one store at the same time, including the
    same meter-month from both sides: every closing is whole, versions and chains are unique."""
    drafts = []
    for (meter, month), (result, frame) in months.items():
        drafts.append(C.prepare(result, frame, by="worker", reason="concurrent closing"))
    ctx = multiprocessing.get_context("spawn")
    halves = [drafts[0::2] + [drafts[0]], drafts[1::2] + [drafts[0]]]
    barrier = ctx.Barrier(2)  # both start closing at the same moment
    procs = [ctx.Process(target=_close_drafts, args=(store_url, h, barrier)) for h in halves]
    for p in procs:
        p.start()
    for p in procs:
        p.join(120)
        assert p.exitcode == 0
    df = entries(open_store(store_url))
    assert len(df) == len(drafts) + 2
    first = drafts[0]
    assert sorted(df[(df["meter"] == first.meter) & (df["month"] == first.month)]["version"]) == [1, 2, 3]
    st = open_store(store_url)
    with st.read() as c:
        chains = c.rows("SELECT meter, chain_index FROM mf_closings ORDER BY meter, chain_index")
    for meter in set(m for m, _ in chains):
        assert [k for m, k in chains if m == meter] == list(range(1, 1 + sum(m == meter for m, _ in chains)))
    for _, r in df.iterrows():
        assert verify_closing(st, r["meter"], r["month"], int(r["version"])).ok


def _close_drafts(url, drafts, barrier):
    barrier.wait(60)
    for d in drafts:
        C.commit(open_store(url), d)


def _no_nan(text):
    def refuse(c):
        raise AssertionError(f"{c} in JSON output")
    return json.loads(text, parse_constant=refuse)


def test_history_json_with_one_and_two_months_has_no_nan(store_url, months):
    # JSON has no NaN or Infinity (RFC 8259 §6): a trend of fewer than three months is null with its reason
    meter = "OW-North"
    for k, month in enumerate(S.MONTHS[:2], start=1):
        _close(store_url, months, meter, month)
        r = CliRunner().invoke(app, ["history", "--store", store_url, "--meter", meter, "--json"])
        assert r.exit_code == 0, r.output
        data = _no_nan(r.output)
        tr = data["meters"][0]["trend"]
        assert tr["months"] == k and tr["base_volume_pct_per_month"] is None
        assert tr["note"] == f"a trend needs three or more months; {k} stored"
        first = data["entries"][0]
        assert first["base_volume_change_from_previous_month_pct"] is None and "base_volume_change_note" in first
        if k == 2:
            second = data["entries"][1]
            vb = [months[(meter, m)][0].totals["base_volume_m3"] for m in S.MONTHS[:2]]
            assert second["base_volume_change_from_previous_month_pct"] == pytest.approx(100 * (vb[1] / vb[0] - 1))


def test_history_json_and_trend_for_three_months(store_url, months):
    for month in S.MONTHS:
        for meter in S.METERS:
            _close(store_url, months, meter, month)
    r = CliRunner().invoke(app, ["history", "--store", store_url, "--json"])
    assert r.exit_code == 0, r.output
    data = json.loads(r.output)
    assert len(data["entries"]) == 9
    e = data["entries"][0]
    assert {"meter", "month", "version", "closed_at", "totals"} <= set(e)
    assert e["totals"]["base_volume_m3"] == pytest.approx(months[(e["meter"], e["month"])][0].totals["base_volume_m3"])
    assert all(m["trend"]["months"] == 3 for m in data["meters"])
    r = CliRunner().invoke(app, ["history", "--store", store_url, "--meter", "OW-North"])
    assert r.exit_code == 0, r.output
    assert "2026-08" in r.output and "2026-10" in r.output and "trend over 3 months" in r.output
    # the trend is the least-squares slope of the three monthly base volumes, relative to their mean
    df = entries(open_store(store_url), "OW-North")
    y = df["base_volume_m3"].to_numpy(float)
    slope = np.polyfit([0, 1, 2], y, 1)[0] / y.mean() * 100
    assert trend(df)["base_volume_pct_per_month"] == pytest.approx(slope, rel=1e-9)


# ---------------------------------------------------------------------------------------------
def _correct(month_dir, out, *extra):
    return CliRunner().invoke(app, ["correct", str(month_dir / "log.csv"), "--site", str(month_dir / "site.toml"),
                                    "--composition", str(month_dir / "gas.csv"), "--out", str(out), "--quiet",
                                    *extra])


def _bytes(path):
    return Path(path).read_bytes() if Path(path).is_file() else None


@pytest.mark.parametrize("case", ["folder", "corrupt", "other-database", "newer-schema", "locked", "no-reason"])
def test_a_store_that_cannot_be_used_exits_2_with_outputs_and_store_unchanged(tmp_path, monkeypatch, case):
    d = S.write_fleet_month(tmp_path / "in", "2026-09", ["OW-Quarry"])["OW-Quarry"]
    store = tmp_path / "months.sqlite"
    holder = None
    if case == "folder":
        store.mkdir()
    elif case == "corrupt":
        store.write_bytes(b"\x00garbage, not a database" * 40)
    elif case == "other-database":
        with sqlite3.connect(store) as c:
            c.execute("CREATE TABLE readings (t TEXT, v REAL)")
    else:
        assert _correct(d, tmp_path / "first", "--store", str(store)).exit_code == 0
        if case == "newer-schema":
            with sqlite3.connect(store) as c:
                c.execute("INSERT INTO mf_schema (version, applied_at, note) VALUES (99, 'x', 'from the future')")
        elif case == "locked":
            monkeypatch.setenv("METERFIX_STORE_TIMEOUT", "0.5")
            holder = sqlite3.connect(store, isolation_level=None)
            holder.execute("BEGIN EXCLUSIVE")  # another program holds the file
    before = _bytes(store)
    out = tmp_path / "out"
    try:
        r = _correct(d, out, "--store", str(store))
    finally:
        if holder is not None:
            holder.execute("ROLLBACK")
            holder.close()
    assert r.exit_code == 2, r.output
    message = r.output.strip().splitlines()[-1]
    assert message.startswith("meterfix: error: ") and "Traceback" not in r.output
    assert {"folder": "is a folder", "corrupt": "not a SQLite database", "other-database": "not a meterfix store",
            "newer-schema": "newer than this meterfix", "locked": "locked by another program",
            "no-reason": "needs a reason"}[case] in message
    assert not out.exists()  # no output written
    assert _bytes(store) == before  # the store as it was


def test_failure_after_outputs_removes_them_again(tmp_path, monkeypatch):
    """Should the closing's transaction fail after the outputs were written, they are removed."""
    d = S.write_fleet_month(tmp_path / "in", "2026-09", ["OW-Quarry"])["OW-Quarry"]
    store = tmp_path / "months.sqlite"

    def fail(*a, **k):
        raise C.StoreError("the server went away")

    monkeypatch.setattr(C, "commit", fail)
    r = _correct(d, tmp_path / "out", "--store", str(store))
    assert r.exit_code == 2 and "went away" in r.output
    assert list((tmp_path / "out").glob("*")) == []
    assert not store.exists()


def test_the_workbook_history_and_the_store_key_of_a_site_file(tmp_path):
    """`store` in a site file is relative to it; result.history carries the meter's months."""
    from meterfix.store.job import Closer

    for month in S.MONTHS[:2]:
        d = S.write_fleet_month(tmp_path / month, month, ["OW-Mill"], extra='store = "../../months.sqlite"\n')["OW-Mill"]
        s = build_settings(d / "site.toml")
        seen = {}

        def write(result):
            seen["history"] = result.history
            return {}

        Closer().run(s, lambda: run_files([d / "log.csv"], s, composition=d / "gas.csv", uncertainty=False,
                                          with_frame=True), write, base_dir=d)
    assert (tmp_path / "months.sqlite").is_file()
    h = seen["history"]
    assert list(h["month"]) == ["2026-08", "2026-09"] and list(h["version"]) == [1, 1]
    assert {"base_volume_m3", "energy_MJ", "ideal_gas_error_pct", "expanded_uncertainty_pct"} <= set(h.columns)
    assert np.isfinite(h["base_volume_change_from_previous_month_pct"].iloc[1])


def test_fleet_workers_close_into_one_store(tmp_path):
    """`meterfix fleet --workers 2 --store`: two worker processes write at once."""
    S.write_fleet_month(tmp_path / "fleet", "2026-10")
    store = tmp_path / "months.sqlite"
    r = CliRunner().invoke(app, ["fleet", str(tmp_path / "fleet"), "--out", str(tmp_path / "out"), "--workers", "2",
                                 "--store", str(store), "--by", "R. Okafor"])
    assert r.exit_code == 0, r.output
    df = entries(open_store(store))
    assert sorted(df["meter"]) == sorted(S.METERS) and list(df["version"]) == [1, 1, 1]
    assert set(df["closed_by"]) == {"R. Okafor"}
    r = CliRunner().invoke(app, ["history", "--store", str(store)])
    assert r.exit_code == 0 and all(m in r.output for m in S.METERS)
    for m in S.METERS:
        r = CliRunner().invoke(app, ["verify", "--store", str(store), "--meter", m, "--month", "2026-10"])
        assert r.exit_code == 0, r.output
        assert "verified" in r.output


def test_postgres_wrong_password_and_missing_database_exit_2():
    for url in _pg_database():
        user_host, db = url.rsplit("/", 1)
        bad = user_host.replace(":meterfix_test@", ":not-the-password@") + "/" + db
        r = CliRunner().invoke(app, ["history", "--store", bad])
        assert r.exit_code == 2 and "password" in r.output and "not-the-password" not in r.output
        r = CliRunner().invoke(app, ["history", "--store", user_host + "/mf_no_such_database"])
        assert r.exit_code == 2 and "does not exist" in r.output


def test_the_demo_month_closes_and_verifies_with_its_invoice_and_corrector_checks(tmp_path):
    """The shipped demo month (two analyses, six substituted hours, an invoice, a site corrector)."""
    demo = Path(__file__).resolve().parents[1] / "fixtures" / "demo"
    store = tmp_path / "months.sqlite"
    r = CliRunner().invoke(app, ["correct", str(demo / "fv-m1_log_2026-10.csv"), "--site", str(demo / "site.toml"),
                                 "--composition", str(demo / "fv-m1_analyses_2026-10.csv"),
                                 "--invoice", str(demo / "harrowgate_invoice_2026-10.xlsx"),
                                 "--out", str(tmp_path / "out"), "--store", str(store), "--by", "R. Okafor"])
    assert r.exit_code == 0, r.output
    assert "version 1" in r.output
    r = CliRunner().invoke(app, ["verify", "--store", str(store), "--meter", "FV-M1", "--month", "2026-10"])
    assert r.exit_code == 0, r.output
    e = json.loads(CliRunner().invoke(app, ["history", "--store", str(store), "--meter", "FV-M1", "--json"]).output)
    entry = e["entries"][0]
    summary = json.loads(next((tmp_path / "out").glob("*_summary.json")).read_text())
    assert entry["totals"]["energy_MJ"] == summary["totals"]["energy_MJ"]
    assert entry["invoice_difference_pct"] is not None and entry["corrector_deviation_pct"] is not None
    assert entry["expanded_uncertainty_pct"] == pytest.approx(summary["totals"]["expanded_uncertainty_pct"])


def test_dask_workers_close_into_one_store(tmp_path):
    """`meterfix fleet --scheduler --store`: two real Dask worker processes close their meters
    into one SQLite store (given by a relative path: every worker gets the same file)."""
    from test_fleet_dask import Cluster

    S.write_fleet_month(tmp_path / "fleet", "2026-10")
    cluster = Cluster(tmp_path, 2)
    try:
        cwd = os.getcwd()
        os.chdir(tmp_path)
        try:
            r = CliRunner().invoke(app, ["fleet", "fleet", "--out", "out", "--scheduler", cluster.address,
                                         "--store", "months.sqlite", "--quiet"])
        finally:
            os.chdir(cwd)
    finally:
        cluster.stop()
    assert r.exit_code == 0, r.output
    df = entries(open_store(tmp_path / "months.sqlite"))
    assert sorted(df["meter"]) == sorted(S.METERS)
    for m in S.METERS:
        assert verify_closing(open_store(tmp_path / "months.sqlite"), m, "2026-10").ok
