"""Command line end to end: exit codes, JSON output, and bad input handling."""

import json
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
EXAMPLE = ROOT / "examples" / "larkspur_operating_points.yaml"


def run(*args, cwd=None):
    return subprocess.run(
        [sys.executable, "-m", "checker", *args], capture_output=True, text=True, cwd=cwd or ROOT
    )


def test_state_on_shipped_example():
    result = run("state", str(EXAMPLE), "--format", "json")
    assert result.returncode == 0, result.stderr
    data = json.loads(result.stdout)
    assert len(data["points"]) == 5 and data["errors"] == []
    first = data["points"][0]["state"]
    for key in (
        "eta_n",
        "eta_p",
        "n_cm3",
        "p_cm3",
        "EF_minus_EC_eV",
        "donors_ionized_fraction",
        "ni_cm3",
        "regime",
        "above_mott_density",
        "neutrality_residual",
    ):
        assert key in first
    assert "screening check" in data["notice"].lower()


def test_console_report_states_screening_notice_once():
    result = run("state", str(EXAMPLE))
    assert result.returncode == 0
    assert result.stdout.count("does not replace qualified device characterization") == 1
    assert "\x1b[" not in result.stdout  # no colour codes when not a terminal


def test_point_command_json():
    result = run(
        "point",
        "--material",
        "Si",
        "--temperature",
        "27degC",
        "--donor",
        "P=1e17cm-3",
        "--format",
        "json",
    )
    assert result.returncode == 0, result.stderr
    state = json.loads(result.stdout)["calculations"][0]["state"]
    assert state["temperature_K"] == pytest.approx(300.15)
    assert 0.95 < state["n_cm3"] / 1e17 < 1.0


@pytest.mark.parametrize(
    "args,text",
    [
        (["point", "--material", "Sii", "--temperature", "300K"], "did you mean"),
        (["point", "--material", "Si", "--temperature", "300"], "no unit"),
        (["point", "--material", "Si", "--temperature=-4K"], "absolute zero"),
        (["point", "--material", "Si", "--temperature", "300K", "--donor", "P=1e17"], "no unit"),
        (["point", "--material", "Si", "--temperature", "300K", "--donor", "P=-1e17cm-3"], ">= 0"),
        (
            ["point", "--material", "Si", "--temperature", "300K", "--donor", "Q=1e17cm-3"],
            "no dopant 'Q'",
        ),
        (["point", "--material", "Si"], "required"),
    ],
)
def test_point_bad_input(args, text):
    result = run(*args)
    assert result.returncode == 2
    assert text in result.stderr
    assert "Traceback" not in result.stderr


BAD_DOCS = {
    "malformed": ("name: x\nmaterial: [Si\n", "malformed YAML"),
    "unknown key": ("name: x\nmaterial: Si\ntemprature: 300 K\n", "did you mean 'temperature'"),
    "missing unit": (
        "name: x\nmaterial: Si\ntemperature: 300 K\ndoping:\n  donors: {P: 1e17}\n",
        "no unit",
    ),
    "wrong unit": (
        "name: x\nmaterial: Si\ntemperature: 300 K\ndoping:\n  donors: {P: 1e17 V/cm}\n",
        "unit of field where density",
    ),
    "negative": (
        "name: x\nmaterial: Si\ntemperature: 300 K\ndoping:\n  donors: {P: -1e17 cm-3}\n",
        "negative",
    ),
    "unknown material": ("name: x\nmaterial: Sillicon\ntemperature: 300 K\n", "unknown material"),
    "unknown species": (
        "name: x\nmaterial: Si\ntemperature: 300 K\ndoping:\n  donors: {Q: 1e17 cm-3}\n",
        "no dopant 'Q'",
    ),
    "alias": ("name: &a x\nmaterial: Si\ntemperature: 300 K\nlabel: *a\n", "aliases"),
    "duplicate": ("name: x\nmaterial: Si\nmaterial: Ge\ntemperature: 300 K\n", "duplicate key"),
    "missing field": ("name: x\nmaterial: Si\n", "missing 'temperature'"),
}


# Every bad-input class of BAD_DOCS is run through `check` (and `state`, which
# shares the reader) in test_check_cli.py.


def test_error_names_line_and_column(tmp_path):
    path = tmp_path / "calc.yaml"
    path.write_text(
        "name: x\nmaterial: Si\ntemperature: 300 K\ndoping:\n  donors:\n    P: 1e17 cm\n"
    )
    result = run("state", str(path), "--format", "json")
    assert f"{path}:6:8" in json.loads(result.stdout)["errors"][0]


def test_second_document_error_keeps_first(tmp_path):
    path = tmp_path / "two.yaml"
    path.write_text(
        "name: ok\nmaterial: Si\ntemperature: 300 K\n---\nname: bad\nmaterial: Si\n"
        "temperature: 300 Kelvin\n"
    )
    result = run("state", str(path), "--format", "json")
    data = json.loads(result.stdout)
    assert result.returncode == 2 and [p["name"] for p in data["points"]] == ["ok"]
    assert f"{path}:7:" in data["errors"][0]


def test_output_closed_early_is_not_an_internal_error():
    """`regimecheck check ... | head`: the reader goes away; no traceback, no error text."""
    import subprocess
    import sys

    child = subprocess.Popen(
        [sys.executable, "-m", "checker.cli", "check", "examples/"],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
    )
    child.stdout.close()  # the reader is gone before anything is written
    _, err = child.communicate(timeout=120)
    assert child.returncode == 141
    assert b"internal error" not in err and b"Traceback" not in err
