"""Outputs are a complete set or nothing (issue 13, case 13), and readable as the umask allows.

Operating-system errors are made real where the machine allows it: a file in the way of --out or
--json; a read-only folder (a read-only tmpfs when the tests run as root, who may write into any
0555 folder; a 0555 folder otherwise); a full disk (a 64 KiB tmpfs when mounting is allowed).
A full disk in the middle of a set is also simulated by raising OSError(ENOSPC) from the
workbook writer, after the CSV files of the set were written. Two runs into one folder are two
real processes started together.
"""

from __future__ import annotations

import contextlib
import errno
import os
import stat
import subprocess
import sys
import time
from pathlib import Path

import pytest
from typer.testing import CliRunner

import meterfix.month
from meterfix.cli import app
from meterfix.errors import OutputError
from meterfix.writers import write_outputs
from meterfix.writers import workbook as W
from meterfix.writers.outset import OutputSet, check_output_folder
from workbook_month import plain_month

DEMO = Path(__file__).resolve().parents[1] / "fixtures" / "demo"
TESTS = Path(__file__).resolve().parent
ROOT = TESTS.parent


def _one_line_error(result):
    text = (result.stderr if hasattr(result, "stderr") and result.stderr is not None else result.output).strip()
    assert result.exit_code == 2, result.output
    assert "Traceback" not in text and len(text.splitlines()) == 1, text
    assert text.startswith("meterfix: error:"), text
    return text


def _no_compute(monkeypatch):
    def refuse(*a, **k):
        raise AssertionError("the month was computed before the outputs were checked")
    monkeypatch.setattr(meterfix.month, "run_files", refuse)


def _correct_args(out, *extra):
    return ["correct", str(DEMO / "fv-m1_log_2026-10.csv"), "--site", str(DEMO / "site.toml"),
            "--composition", str(DEMO / "fv-m1_analyses_2026-10.csv"), "--out", str(out), "--quiet", *extra]


def test_out_under_a_file_refused_before_computing(tmp_path, monkeypatch):
    _no_compute(monkeypatch)
    blocker = tmp_path / "a_file"
    blocker.write_text("x")
    r = CliRunner().invoke(app, _correct_args(blocker / "sub" / "out"))
    text = _one_line_error(r)
    assert "under a file" in text and "a_file" in text
    r = CliRunner().invoke(app, ["demo", str(blocker)])
    assert "is a file" in _one_line_error(r)
    assert blocker.read_text() == "x"


def test_json_target_checked_before_computing(tmp_path, monkeypatch):
    _no_compute(monkeypatch)
    blocker = tmp_path / "a_file"
    blocker.write_text("x")
    r = CliRunner().invoke(app, _correct_args(tmp_path / "out", "--json", str(blocker / "s.json")))
    assert "--json lies under a file" in _one_line_error(r)
    (tmp_path / "adir").mkdir()
    r = CliRunner().invoke(app, _correct_args(tmp_path / "out", "--json", str(tmp_path / "adir")))
    assert "names a folder" in _one_line_error(r)
    assert not (tmp_path / "out").exists()


@contextlib.contextmanager
def _tmpfs(path: Path, options: str):
    """Mount a tmpfs at ``path`` (root only); yields False where mounting is not allowed."""
    path.mkdir()
    if os.geteuid() != 0:
        yield False
        return
    r = subprocess.run(["mount", "-t", "tmpfs", "-o", options, "tmpfs", str(path)], capture_output=True)
    if r.returncode != 0:
        yield False
        return
    try:
        yield True
    finally:
        subprocess.run(["umount", "-l", str(path)], capture_output=True)


def test_read_only_folder_refused_before_computing(tmp_path, monkeypatch):
    _no_compute(monkeypatch)
    ro = tmp_path / "ro"
    with _tmpfs(ro, "ro,size=64k") as mounted:
        if not mounted:
            if os.geteuid() == 0:
                pytest.skip("running as root without permission to mount a read-only tmpfs")
            ro.chmod(0o555)
        r = CliRunner().invoke(app, _correct_args(ro / "out"))
        text = _one_line_error(r)
        assert ("read-only" in text or "permission denied" in text) and "choose a folder" in text
        assert not (ro / "out").exists()


def _assert_nothing_written(out: Path, around: Path):
    assert not out.exists() or not any(out.iterdir()), sorted(p.name for p in out.iterdir())
    leftovers = [p.name for p in around.rglob("*") if ".meterfix-set-" in p.name or p.name.endswith(".part")]
    assert not leftovers, leftovers


def test_full_disk_leaves_nothing(tmp_path):
    disk = tmp_path / "disk"
    with _tmpfs(disk, "size=64k") as mounted:
        if not mounted:
            pytest.skip("no permission to mount a small tmpfs (the simulated full disk below still runs)")
        r = CliRunner().invoke(app, ["demo", str(disk / "out")])
        text = _one_line_error(r)
        assert "the disk is full" in text and "free some space" in text
        _assert_nothing_written(disk / "out", disk)


def test_full_disk_in_the_middle_of_the_set_leaves_nothing(tmp_path, monkeypatch):
    """Simulated: the workbook writer fails with ENOSPC after the CSV files of the set were written."""
    written = []

    def full(result, path, **kw):
        written.extend(p.name for p in Path(path).parent.iterdir())
        raise OSError(errno.ENOSPC, "No space left on device", str(path))

    monkeypatch.setattr(W, "write_workbook", full)
    out = tmp_path / "out"
    (out).mkdir()
    (out / "keep.txt").write_text("an earlier file")
    r = CliRunner().invoke(app, ["demo", str(out)])
    assert "the disk is full" in _one_line_error(r)
    assert any(n.endswith("_intervals.csv") for n in written)  # the failure came in the middle of the set
    assert sorted(p.name for p in out.iterdir()) == ["keep.txt"]
    _assert_nothing_written(tmp_path / "nothing", tmp_path)


def test_failed_set_removes_the_folder_it_created(tmp_path):
    out = tmp_path / "new" / "out"
    with pytest.raises(OutputError, match="disk is full"):
        with OutputSet(out) as s:
            s.path("a.csv").write_text("x")
            raise OSError(errno.ENOSPC, "No space left on device")
    assert not (tmp_path / "new").exists()
    with pytest.raises(OutputError, match="is a file"):
        check_output_folder(Path(__file__))


def test_a_set_left_complete_by_a_killed_run_is_finished_by_the_next(tmp_path):
    out = tmp_path / "out"
    out.mkdir()
    stage = tmp_path / ".out.meterfix-set-killed"
    stage.mkdir()
    (stage / "M_2026-10_intervals.csv").write_text("rest of the set")
    (stage / ".complete").write_text("")
    half = tmp_path / ".out.meterfix-set-half"  # killed while building: removed
    half.mkdir()
    (half / "M_2026-10.xlsx").write_text("partial")
    with OutputSet(out) as s:
        s.path("other.csv").write_text("y")
        s.commit()
    assert sorted(p.name for p in out.iterdir()) == ["M_2026-10_intervals.csv", "other.csv"]
    assert not stage.exists() and not half.exists()


@pytest.mark.parametrize("mask", [0o022, 0o027])
def test_files_are_readable_as_the_umask_allows(tmp_path, mask):
    r, _ = plain_month()
    old = os.umask(mask)
    try:
        written = write_outputs(r, tmp_path / "o" / "out", json_file=tmp_path / "copy.json")
    finally:
        os.umask(old)
    for p in written.values():
        assert stat.S_IMODE(p.stat().st_mode) == 0o666 & ~mask, p
    for d in (tmp_path / "o", tmp_path / "o" / "out"):
        assert stat.S_IMODE(d.stat().st_mode) == 0o777 & ~mask
    wb = zip_modes = written["workbook"]
    assert wb.exists() and zip_modes


_WRITER = """
import sys, time
from pathlib import Path
sys.path.insert(0, {tests!r})
from workbook_month import plain_month
import os, random
from meterfix.writers import write_outputs
real_replace = os.replace
def slow_replace(a, b):  # a slow disk: widens the window in which two unlocked runs would interleave
    time.sleep(random.uniform(0.005, 0.03))
    real_replace(a, b)
os.replace = slow_replace
r, _ = plain_month(base={base!r})
Path({ready!r}).write_text("")
while not Path({go!r}).exists():
    time.sleep(0.002)
t0 = time.time()
write_outputs(r, {out!r}, overwrite=True)
print(t0, time.time())
"""


def _files(folder: Path) -> dict:
    return {p.name: p.read_bytes() for p in folder.iterdir()}


def test_two_concurrent_overwrite_runs_never_mix_their_files(tmp_path):
    bases = ("normal-0c", "iso-15c")
    refs = []
    for b in bases:
        r, _ = plain_month(base=b)
        refs.append(_files(write_outputs(r, tmp_path / f"ref-{b}")["summary"].parent))
    assert refs[0].keys() == refs[1].keys()
    differ = [n for n in refs[0] if refs[0][n] != refs[1][n]]
    assert len(differ) >= 5, differ  # mixing would show
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    overlapped = 0
    for trial in range(2):
        out, go = tmp_path / f"shared{trial}", tmp_path / f"go{trial}"
        procs, ready = [], []
        for i, b in enumerate(bases):
            rd = tmp_path / f"ready{trial}-{i}"
            ready.append(rd)
            code = _WRITER.format(tests=str(TESTS), base=b, ready=str(rd), go=str(go), out=str(out))
            procs.append(subprocess.Popen([sys.executable, "-c", code], env=env, stdout=subprocess.PIPE,
                                          stderr=subprocess.PIPE, text=True))
        deadline = time.monotonic() + 120
        while not all(p.exists() for p in ready) and time.monotonic() < deadline:
            time.sleep(0.01)
        go.write_text("")
        spans = []
        for p in procs:
            o, e = p.communicate(timeout=120)
            assert p.returncode == 0, e
            spans.append(tuple(map(float, o.split())))
        (a0, a1), (b0, b1) = spans
        overlapped += a0 < b1 and b0 < a1  # both were writing at the same time
        got = _files(out)
        assert got in refs, "the folder holds files of both runs: " + ", ".join(
            n for n in got if got[n] not in (refs[0].get(n), refs[1].get(n)))
        assert not [p for p in tmp_path.iterdir() if ".meterfix-set-" in p.name]
    assert overlapped >= 1
