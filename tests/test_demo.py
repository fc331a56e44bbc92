"""The demo through the CLI: outputs written, JSON contract keys present, ideal-gas error visible."""

import json

from typer.testing import CliRunner

from meterfix.cli import app


def test_demo_writes_outputs(tmp_path):
    r = CliRunner().invoke(app, ["demo", str(tmp_path / "out")])
    assert r.exit_code == 0, r.output
    js = list((tmp_path / "out").glob("*_summary.json"))
    assert len(js) == 1
    d = json.loads(js[0].read_text())
    for k in ("base_volume_m3", "ideal_gas_base_volume_m3", "uncorrected_volume_m3", "energy_MJ"):
        assert d["totals"][k] is not None
    for k in ("method", "base_conditions", "flags", "inputs"):
        assert k in d
    # near 40 bar a lean gas has Z about 0.92: the ideal-gas base volume is several percent low
    # (common practice: the real-gas correction at 40 bar is of that order)
    assert d["totals"]["ideal_gas_error_pct"] < -4
    assert d["flags"]["gap"] == 6
    again = CliRunner().invoke(app, ["demo", str(tmp_path / "out")])
    assert again.exit_code == 2 and "already exists" in again.output
