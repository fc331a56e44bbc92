"""Honest-but-messy exports through the CLI: the true month total (rel 1e-6), or exit 2 with a message.

Each case of tests/messy_corpus.py writes its files, runs ``meterfix correct ... --json`` in
process (the typer application, as the console script runs it) and compares the JSON summary's
totals with the total worked out by hand in the case. Every run must also: print no traceback and
no numpy warning, leave its inputs unchanged, show how each column was read (on the console), and
on refusal write no output.
"""

from __future__ import annotations

import hashlib
import json
import math
import warnings

import pytest
from typer.testing import CliRunner

from meterfix.cli import app

from messy_corpus import CASES


def _sha(paths):
    return {str(p): hashlib.sha256(p.read_bytes()).hexdigest() for p in paths if p.is_file()}


@pytest.mark.parametrize("make", CASES, ids=[c.__name__ for c in CASES])
def test_messy_export(make, tmp_path):
    case = make(tmp_path / "in")
    before = _sha(case.files)
    out = tmp_path / "out"
    js = tmp_path / "summary.json"
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        r = CliRunner().invoke(app, ["correct", *case.args, "--out", str(out), "--json", str(js)])
    text = r.output
    assert "Traceback" not in text, text
    assert r.exception is None or isinstance(r.exception, SystemExit), repr(r.exception)
    numpy_warnings = [w for w in caught if issubclass(w.category, RuntimeWarning)]
    assert not numpy_warnings, [str(w.message) for w in numpy_warnings]
    assert r.exit_code == case.exit_code, text
    assert _sha(case.files) == before, "an input file changed"
    if case.exit_code == 2:
        assert text.startswith("meterfix: error:"), text
        assert len(text.strip().splitlines()) == 1, text
        for frag in case.must_say:
            assert frag.lower() in text.lower(), f"message does not say {frag!r}: {text}"
        assert not out.exists() or not any(out.iterdir()), "a refused run wrote output"
        return
    s = json.loads(js.read_text())
    for key, want in case.expect.items():
        got = s["totals"][key]
        assert got is not None and math.isclose(got, want, rel_tol=1e-6), (key, got, want)
    for kind, least in case.flags.items():
        assert s["flags"].get(kind, 0) >= least, (kind, s["flags"])
    for k, v in s["totals"].items():
        assert not isinstance(v, float) or math.isfinite(v), (k, v)
    if case.check is not None:
        case.check(s, text)


def test_console_shows_how_each_column_was_read(tmp_path):
    """Every run prints one line per column read: header → quantity, unit, role."""
    from messy_corpus import RUN, UTC, us_corr_uncorr_mcf

    case = us_corr_uncorr_mcf(tmp_path / "in")
    args = [a for a in case.args if a != "--quiet"]
    r = CliRunner().invoke(app, ["correct", *args, "--out", str(tmp_path / "out")])
    assert r.exit_code == 0, r.output
    text = r.output
    for fragment in ("'Uncorr Vol (CF)' → uncorrected volume per interval [CF]",
                     "'Corr Vol (MCF)' → site corrector's volume at its base [MCF]",
                     "'Static Pressure (psig)' → line pressure, gauge [psig]"):
        assert fragment in text, text
    _ = (RUN, UTC)


def test_corpus_covers_the_issue():
    names = {c.__name__ for c in CASES}
    assert len(names) == len(CASES) >= 30


def test_invoice_coverage_counts_the_hours_of_the_clock():
    """A gas month with the autumn clock change has 745 hours on a Berlin clock (IANA tz rules),
    31 x 24 = 744 in UTC: a fully logged month covers 100 %, not 100.13 %."""
    import datetime as dt
    from types import SimpleNamespace

    from meterfix.checks.attribution import _period_hours

    s = SimpleNamespace(timezone="Europe/Berlin", gas_day_start=6)
    assert _period_hours(dt.date(2026, 10, 1), dt.date(2026, 10, 31), s) == 745.0
    assert _period_hours(dt.date(2026, 3, 1), dt.date(2026, 3, 31), s) == 743.0
    s = SimpleNamespace(timezone="UTC", gas_day_start=9)
    assert _period_hours(dt.date(2026, 10, 1), dt.date(2026, 10, 31), s) == 744.0
