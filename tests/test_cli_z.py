"""`meterfix z` through typer's CliRunner: exit codes, one-line errors, JSON keys."""

import json

import pytest
from typer.testing import CliRunner

from meterfix.cli import app

runner = CliRunner()
GAS = "methane=0.95,ethane=0.03,nitrogen=0.02"


def _run(*args):
    return runner.invoke(app, ["z", *args])


@pytest.mark.parametrize("args,needle", [
    (["--gas", "methane=0.9,unobtainium=0.1", "--pressure", "10 bar(a)", "--temperature", "15 degC"], "unknown gas component"),
    (["--gas", "methane=1.05,ethane=-0.05", "--pressure", "10 bar(a)", "--temperature", "15 degC"], "negative"),
    (["--gas", GAS, "--pressure", "50 psig", "--temperature", "60 degF"], "atmospheric"),
    (["--gas", GAS, "--pressure", "50 psia", "--temperature", "-500 degF"], "absolute zero"),
    (["--gas", GAS, "--pressure", "50 psia"], "exactly two"),
    (["--gas", GAS, "--pressure", "50 psia", "--temperature", "60 degF", "--volume", "0.1 m3/kg"], "exactly two"),
    (["--gas", GAS, "--pressure", "50 furlongs", "--temperature", "60 degF"], "unknown pressure unit"),
    (["--gas", GAS, "--pressure", "50 psia", "--temperature", "60 degF", "--method", "magic"], "unknown Z method"),
])
def test_bad_input_exits_2_with_one_line(args, needle):
    r = _run(*args)
    assert r.exit_code == 2, r.output
    err = r.stderr if hasattr(r, "stderr") else r.output
    assert needle in err
    assert "Traceback" not in r.output
    assert len(err.strip().splitlines()) == 1


def test_json_keys_and_ideal_value():
    # ideal gas: Z = 1 and v = R T / (p M) exactly (R from scipy.constants)
    import scipy.constants

    r = _run("--gas", "methane=1", "--method", "ideal", "--pressure", "1 MPa", "--temperature", "300 K", "--json")
    assert r.exit_code == 0, r.output
    d = json.loads(r.stdout)
    for k in ("z", "pressure_Pa", "temperature_K", "specific_volume_m3_per_kg", "density_kg_per_m3",
              "molar_mass_kg_per_mol", "reduced_pressure", "reduced_temperature", "pseudo_reduced_volume",
              "method", "in_range"):
        assert k in d
    assert d["z"] == pytest.approx(1.0)
    assert d["specific_volume_m3_per_kg"] == pytest.approx(scipy.constants.R * 300 / (1e6 * 0.01604246), rel=1e-9)
    # reduced properties against methane's critical point (chemicals: Tc 190.564 K, Pc 4.5992 MPa)
    assert d["reduced_temperature"] == pytest.approx(300 / 190.564, rel=1e-9)
    assert d["reduced_pressure"] == pytest.approx(1e6 / 4599200.0, rel=1e-9)


def test_temperature_from_pressure_and_volume_round_trip():
    r1 = _run("--gas", GAS, "--method", "lee-kesler", "--pressure", "40 bar(a)", "--temperature", "10 degC", "--json")
    assert r1.exit_code == 0, r1.output
    v = json.loads(r1.stdout)["specific_volume_m3_per_kg"]
    r2 = _run("--gas", GAS, "--method", "lee-kesler", "--pressure", "40 bar(a)", "--volume", f"{v!r} m3/kg", "--json")
    assert r2.exit_code == 0, r2.output
    assert json.loads(r2.stdout)["temperature_K"] == pytest.approx(283.15, rel=1e-9)


def test_table_output_is_readable():
    r = _run("--gas", GAS, "--method", "ideal", "--pressure", "600 psia", "--temperature", "60 degF")
    assert r.exit_code == 0
    assert "Z" in r.stdout and "psia" in r.stdout and "range" in r.stdout
