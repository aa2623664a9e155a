"""Small input frictions found by fuzzing: each one reproduced, then pinned.

Expected outcomes are the rules of the formats themselves: UTF-8 (RFC 3629: 0xE9
followed by an ASCII byte is not a UTF-8 sequence; b"\\n" never occurs inside a
multi-byte sequence), the byte-order mark (The Unicode Standard 15.0, section 23.8:
U+FEFF at the start of a text is a signature, not content), and what the
configuration's own docstring promises (suffixes match in any case)."""

import subprocess
import sys

import pytest

from checker.engine.run import check_paths
from checker.inputs.config import Config, find_config, load_config
from checker.inputs.sources import read_input

CALC = (
    "name: resistor\nmaterial: Si\ntemperature: 300 K\n"
    "doping: {donors: {P: 1e16 cm-3}}\n"
    "waivers:\n  - {rule: MOB01, reason: measured on the wafer}\n"
)


def _write(path, data):
    path.write_bytes(data if isinstance(data, bytes) else data.encode("utf-8"))
    return path


def test_waiver_of_an_existing_rule_the_configuration_does_not_run(tmp_path):
    calc = _write(tmp_path / "calc.yaml", CALC)
    config = Config(source="settings.toml", only=("STAT",))
    result = check_paths([str(calc)], config=config)
    assert result.input_errors == []  # not "unknown rule"
    (note,) = [n for r in result.reports for n in r.notes if "MOB01" in n]
    assert note.startswith(f"{calc}:6: the waiver of MOB01 waives nothing here")
    assert "exists but is not run under this configuration" in note
    assert "settings.toml" in note
    # skip works the same way; a rule that exists nowhere is still an unknown rule
    assert check_paths([str(calc)], config=Config(skip=("MOB",))).input_errors == []
    typo = _write(tmp_path / "typo.yaml", CALC.replace("MOB01", "MOB91"))
    (error,) = check_paths([str(typo)], config=Config(only=("STAT",))).input_errors
    assert "unknown rule 'MOB91'" in error


@pytest.mark.parametrize("pattern", ["*.YAML", "*.yaml", "*.Yaml"])
def test_file_pattern_suffix_matches_in_any_case_on_both_sides(pattern):
    config = Config(file_patterns=(pattern,))
    assert config.reads("a.yaml") and config.reads("B.YAML") and config.reads("c.Yaml")
    assert not config.reads("a.yml") and not config.reads("a.yaml.bak")
    assert Config(file_patterns=("NOTES.*",)).reads("NOTES.YAML")
    assert not Config(file_patterns=("NOTES.*",)).reads("notes.yaml")  # only the suffix


def test_configuration_with_a_byte_order_mark_is_read(tmp_path):
    bom = b"\xef\xbb\xbf"
    settings = _write(tmp_path / "settings.toml", bom + b'fail-level = "error"\nonly = ["STAT"]\n')
    config = load_config(settings)
    assert config.fail_level == "error" and config.only == ("STAT",)
    assert config.where("only") == f"{settings}:2"  # lines unchanged by the mark
    project = tmp_path / "project"
    project.mkdir()
    _write(project / "pyproject.toml", bom + b'[tool.regimecheck]\nskip = ["MODEL"]\n')
    assert find_config(project) == project / "pyproject.toml"
    assert load_config(None, project).skip == ("MODEL",)


def test_malformed_toml_names_line_and_column(tmp_path):
    settings = _write(tmp_path / "settings.toml", 'only = ["STAT"]\nfail-level = \n')
    done = subprocess.run(
        [sys.executable, "-m", "checker.cli", "check", "--config", str(settings), "x.yaml"],
        capture_output=True,
        text=True,
    )
    assert done.returncode == 2 and "Traceback" not in done.stderr
    assert f"{settings}:2:" in done.stderr and "malformed TOML" in done.stderr


@pytest.mark.parametrize(
    "name, data, place",
    [
        # a comment after the six lines of CALC: "# r" then the bad byte
        ("calc.yaml", CALC.encode() + b"# r\xe9sum\xe9\n", (7, 4, len(CALC) + 3)),
        # in a memo's block: the memo's own line
        (
            "memo.md",
            b"# Memo\n\nText.\n\n```regimecheck\nname: r\xe9s\nmaterial: Si\n```\n",
            (6, 8, 37),
        ),
        # a CRLF table: the second line, second character
        ("lots.csv", b"name,material,temperature [K]\r\nB\xe9ta,Si,300\r\n", (2, 2, 32)),
        # after a byte-order mark and a multi-byte character, columns count characters
        ("bom.yaml", b"\xef\xbb\xbfname: \xce\xbc \xe9\n", (1, 9, 12)),
    ],
)
def test_a_file_that_is_not_utf8_names_the_first_bad_byte(tmp_path, name, data, place):
    path = _write(tmp_path / name, data)
    line, column, offset = place
    assert data[offset] == 0xE9  # the offset is the bad byte's, counted from 0
    (error,) = read_input(str(path)).errors
    assert error.startswith(f"{path}:{line}:{column}: not UTF-8 text: byte 0xE9 ")
    assert f"at byte offset {offset} " in error and "save the" in error
    assert path.read_bytes() == data  # never modified


def test_an_absurd_sheet_density_is_refused_once(tmp_path):
    # a monolayer of atoms is ~1e15 cm^-2: 1e30 cm^-2 is a slipped exponent, refused with
    # its line, and the sheet is not also told to "state a sheet density"
    from checker.cli import main

    path = tmp_path / "sheet.yaml"
    path.write_text(
        "material: GaN-AlGaN\ntemperature: 300 K\nstated: {electron_sheet_density: 1e30 cm-2}\n",
        encoding="utf-8",
    )
    out = tmp_path / "report.json"
    assert main(["check", str(path), "--output", str(out)]) == 2
    import json

    errors = json.loads(out.read_text(encoding="utf-8"))["input_errors"]
    assert len(errors) == 1 and "not a plausible sheet density" in errors[0]
    assert errors[0].startswith(f"{path}:3:")


def test_a_near_miss_key_offers_the_two_nearest_keys(tmp_path):
    # found in a practitioner's trial: "assumptions" drew only "did you mean 'options'?",
    # while the key meant is "assumes" (README, "Writing a calculation")
    calc = _write(
        tmp_path / "calc.yaml", CALC.replace("waivers:", "assumptions: [single-carrier]\nwaivers:")
    )
    (error,) = check_paths([str(calc)]).input_errors
    assert "did you mean 'options' or 'assumes'?" in str(error)
