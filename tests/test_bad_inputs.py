"""Bad inputs through the CLI: a clear message and exit 2, or a flagged row and the month kept.

For every case of tests/bad_input_corpus.py: no traceback; the message names the file and what
is wrong; a fatal case writes no output at all; no input file changes (sha256 before and after).
"""

from __future__ import annotations

import hashlib
import json

import pytest
from typer.testing import CliRunner

from meterfix.cli import app

from bad_input_corpus import CASES


def _sha(paths):
    return {str(p): hashlib.sha256(p.read_bytes()).hexdigest() for p in paths if p.is_file()}


@pytest.mark.parametrize("make", CASES, ids=[c.__name__ for c in CASES])
def test_bad_input(make, tmp_path):
    case = make(tmp_path)
    before = _sha(case.files)
    out = tmp_path / "out"
    if case.command == "correct-out-is-input":
        args = ["correct", *case.args, "--out", str(case.files[0])]
    else:
        args = [case.command, *case.args, "--out", str(out)]
    r = CliRunner().invoke(app, args)
    text = r.output
    assert "Traceback" not in text, text
    assert r.exception is None or isinstance(r.exception, SystemExit), repr(r.exception)
    assert r.exit_code == case.exit_code, text
    assert _sha(case.files) == before, "an input file changed"
    if case.exit_code == 2:
        assert text.startswith("meterfix: error:") or "Usage:" in text, text
        for frag in case.must_say:
            assert frag.lower() in text.lower(), f"message does not say {frag!r}: {text}"
        assert not out.exists() or not any(out.iterdir()), "a failed run wrote output"
    else:
        summary = next(out.glob("*_summary.json"))
        d = json.loads(summary.read_text())
        if case.flag is not None:
            kinds = (case.flag,) if isinstance(case.flag, str) else case.flag
            assert any(d["flags"].get(k, 0) >= 1 for k in kinds), d["flags"]
        assert d["totals"]["base_volume_m3"] > 0


def test_corpus_is_large_enough():
    # issue 9: at least 40 bad inputs
    assert len(CASES) >= 40
