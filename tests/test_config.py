"""Configuration in [tool.regimecheck]: found upward, every key applied, unknown keys refused,
command-line options first."""

import json
import subprocess
import sys

import pytest

from checker.errors import InputError
from checker.inputs.config import load_config

DEGENERATE = """name: degenerate GaAs
material: GaAs
temperature: 300 K
doping:
  donors: {Si: 5e18 cm-3}
formulas:
  - D_n = mu_n*k*T/q
  - E_F - E_c = k*T*ln(N_D/N_c)
"""


def run(cwd, *args):
    done = subprocess.run(
        [sys.executable, "-m", "checker.cli", *args],
        cwd=cwd,
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert "Traceback" not in done.stdout + done.stderr
    return done


def project(tmp_path, settings):
    (tmp_path / "pyproject.toml").write_text(
        "[project]\nname = 'memos'\n\n[tool.regimecheck]\n" + settings, encoding="utf-8"
    )
    (tmp_path / "calcs").mkdir()
    (tmp_path / "calcs" / "cap.yaml").write_text(DEGENERATE, encoding="utf-8")
    return tmp_path


def rules_of(done):
    data = json.loads(done.stdout)
    return sorted(
        (f["rule"], f["severity"], bool(f["waived"]))
        for c in data["calculations"]
        for f in c["findings"]
    )


def test_settings_found_upward_and_applied(tmp_path):
    root = project(
        tmp_path,
        'fail-level = "error"\nskip = ["DOPE", "MODEL"]\n'
        '[tool.regimecheck.severity]\nSTAT02 = "info"\n'
        '[[tool.regimecheck.waive]]\npath = "calcs/cap.yaml"\n'
        'rule = "STAT01"\nreason = "contact layer, degenerate on purpose"\n',
    )
    done = run(root / "calcs", "check", "cap.yaml", "--format", "json")
    assert rules_of(done) == [("STAT01", "warning", True), ("STAT02", "info", False)]
    assert done.returncode == 0  # nothing at error level (fail-level)
    assert run(root / "calcs", "check", "cap.yaml", "--fail-on", "info").returncode == 1


def test_only_and_threshold(tmp_path):
    root = project(tmp_path, 'only = ["STAT"]\n[tool.regimecheck.threshold]\nSTAT02 = 10.0\n')
    done = run(root, "check", "calcs", "--format", "json")
    assert rules_of(done) == [("STAT01", "warning", False)]


def test_waiver_that_waives_nothing_is_reported(tmp_path):
    # a waiver is idle only where its rule ran on a file it names without firing there
    # (CARR01 runs on the checked file and does not fire); one for files this run did not
    # check is not reported
    root = project(
        tmp_path,
        '[[tool.regimecheck.waive]]\npath = "calcs/*.yaml"\n'
        'rule = "CARR01"\nreason = "not this file"\n'
        '[[tool.regimecheck.waive]]\npath = "other/*.yaml"\n'
        'rule = "STAT01"\nreason = "elsewhere"\n',
    )
    data = json.loads(run(root, "check", "calcs", "--format", "json").stdout)
    idle = [note for note in data["notes"] if "waives nothing" in note]
    assert len(idle) == 1 and "CARR01" in idle[0] and "pyproject.toml:" in idle[0]


@pytest.mark.parametrize(
    "settings, expected",
    [
        (
            'fail-levl = "error"\n',
            "pyproject.toml:5: [tool.regimecheck] fail-levl: unknown key; "
            "did you mean 'fail-level'?",
        ),
        ('only = ["STAT9"]\n', "unknown rule 'STAT9'"),
        ('[tool.regimecheck.severity]\nSTAT01 = "loud"\n', "must be one of info, warning, error"),
        ('[tool.regimecheck.threshold]\nSTAT01 = "high"\n', "must be a number"),
        ('[[tool.regimecheck.waive]]\npath = "*.yaml"\nrule = "STAT01"\n', "reason"),
        ('only = "STAT"\n', "must be a list of texts"),
        ("fail-level = \n", "malformed TOML"),
    ],
)
def test_bad_settings_are_input_errors(tmp_path, settings, expected):
    root = project(tmp_path, settings)
    done = run(root, "check", "calcs")
    assert done.returncode == 2
    assert expected in done.stderr


def test_config_file_option_and_exclude_patterns(tmp_path):
    (tmp_path / "keep").mkdir()
    (tmp_path / "skip").mkdir()
    (tmp_path / "keep" / "a.yaml").write_text(DEGENERATE)
    (tmp_path / "skip" / "b.yaml").write_text(DEGENERATE.replace("degenerate GaAs", "other"))
    settings = tmp_path / "settings.toml"
    settings.write_text('exclude-patterns = ["skip/*"]\n')
    data = json.loads(
        run(tmp_path, "check", ".", "--config", str(settings), "--format", "json").stdout
    )
    assert [c["name"] for c in data["calculations"]] == ["degenerate GaAs"]


def test_defaults_without_a_file(tmp_path):
    config = load_config(search_from=tmp_path)
    assert config.source is None and config.fail_level is None and not config.waive
    with pytest.raises(InputError):
        load_config(tmp_path / "missing.toml")
