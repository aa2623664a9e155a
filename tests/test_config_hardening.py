"""Configuration under hostile and careless input: encoding, nesting depth, non-finite
and negative numbers, thresholds for rules without one, line numbers of keys in
sub-tables; the walk's suffix matching, exclusions for files named on the command
line, and which waivers are idle."""

import json
import subprocess
import sys

import pytest

from checker.engine.regime.rulebook import load_rules
from checker.errors import InputError
from checker.inputs.config import Config, PathWaiver, check_rule_ids, load_config, toml_key_lines

CALC = "name: x\nmaterial: Si\ntemperature: 300 K\n"


def settings(tmp_path, text, name="settings.toml"):
    path = tmp_path / name
    path.write_bytes(text.encode("utf-8") if isinstance(text, str) else text)
    return path


def refused(path):
    with pytest.raises(InputError) as caught:
        load_config(path)
    return str(caught.value)


def test_non_utf8_configuration_names_file_and_line(tmp_path):
    """TOML v1.0.0: "A TOML file must be a valid UTF-8 encoded Unicode document"."""
    path = settings(tmp_path, b'only = ["STAT"]\n# r\xe9sum\xe9\n')
    assert refused(path) == (
        f"{path}:2:4: not UTF-8 text: byte 0xE9 at byte offset 19 cannot be read as UTF-8; "
        "save the configuration as UTF-8"
    )


@pytest.mark.parametrize("value", ["[" * 2000 + "]" * 2000, "{a = " * 2000 + "1" + "}" * 2000])
def test_deeply_nested_configuration_is_an_input_error(tmp_path, value):
    """Nesting is unbounded in the TOML grammar; Python's reader recurses per level."""
    path = settings(tmp_path, f"only = {value}\n")
    assert refused(path).startswith(f"{path}: arrays or inline tables nested too deeply")


def test_deep_configuration_on_the_command_line_exits_2(tmp_path):
    (tmp_path / "c.yaml").write_text(CALC)
    path = settings(tmp_path, "x = " + "[" * 2000 + "]" * 2000 + "\n")
    done = subprocess.run(
        [sys.executable, "-m", "checker", "check", "c.yaml", "--config", str(path)],
        capture_output=True,
        text=True,
        cwd=tmp_path,
    )
    assert done.returncode == 2 and "Traceback" not in done.stderr
    assert "nested too deeply" in done.stderr and "RecursionError" not in done.stderr


@pytest.mark.parametrize(
    "table, entry, expected",
    [
        # TOML v1.0.0 "Float": nan and inf are valid floats, so the reader accepts them
        ("threshold", "STAT01 = nan", "STAT01 = nan: must be a finite number"),
        ("threshold", "STAT02 = inf", "STAT02 = inf: must be a finite number"),
        ("threshold", "STAT02 = -inf", "STAT02 = -inf: must be a finite number"),
        ("tolerance", "resistivity = nan", "resistivity = nan: must be a finite number"),
        ("tolerance", "mobility = -0.1", "mobility = -0.1: a relative tolerance is >= 0"),
        ("tolerance", "mobilty = 0.1", "unknown tolerance 'mobilty'"),
        ("severity", 'STAT01 = "loud"', "must be one of info, warning, error"),
    ],
)
def test_bad_numbers_name_the_line_inside_the_sub_table(tmp_path, table, entry, expected):
    first = {
        "threshold": "CARR01 = 0.02",
        "tolerance": "hall_density = 0.2",
        "severity": 'MODEL01 = "info"',
    }[table]
    text = (
        "[project]\nname = 'x'\nthreshold = 1\n\n[tool.regimecheck]\nonly = [\n"
        '  "STAT",\n  "MEAS",\n]\n\n'
        f"[tool.regimecheck.{table}]\n# a comment\n\n{first}\n{entry}\n"
    )
    path = settings(tmp_path, text, "pyproject.toml")
    message = refused(path)
    line = text.splitlines().index(entry) + 1
    assert message.startswith(f"{path}:{line}: [tool.regimecheck] {table}: ")
    assert expected in message


def test_threshold_for_a_rule_without_one_is_refused(tmp_path):
    """FORM02 (formula not recognised) has no indicator threshold in rules/FORM02.yaml."""
    path = settings(tmp_path, "[threshold]\nSTAT02 = 1.1\n\nFORM02 = 0.5\n")
    config = load_config(path)
    rules = load_rules()
    assert [r for r in rules if r.id == "FORM02"][0].threshold != 0.5  # NaN: none
    with pytest.raises(InputError) as caught:
        check_rule_ids(config, rules)
    assert str(caught.value).startswith(
        f"{path}:4: [tool.regimecheck] threshold: FORM02 has no threshold"
    )
    check_rule_ids(load_config(settings(tmp_path, "[threshold]\nSTAT02 = 1.1\n")), rules)
    check_rule_ids(config, [r.id for r in rules])  # ids alone cannot tell: accepted


def test_unknown_rule_in_a_waiver_names_that_waiver(tmp_path):
    path = settings(
        tmp_path,
        '[[waive]]\npath = "a"\nrule = "STAT01"\nreason = "ok ok"\n\n'
        '[[waive]]\npath = "b"\nrule = "STATO1"\nreason = "ok ok"\n',
    )
    with pytest.raises(InputError) as caught:
        check_rule_ids(load_config(path), load_rules())
    assert str(caught.value).startswith(
        f"{path}:6: [tool.regimecheck] waive: unknown rule 'STATO1'; did you mean STAT01?"
    )


def test_key_lines_follow_the_toml_structure():
    """TOML v1.0.0: tables, dotted keys, arrays of tables (each [[x]] a new element),
    multi-line arrays and strings (whose lines are no keys), comments."""
    text = (
        '# top\ntitle = "a = b"\n[tool.regimecheck]\nonly = [\n  "x = 1",\n]\n'
        'notes = """\nfake = 1\n"""\nseverity.STAT01 = "info"\n'
        '[[tool.regimecheck.waive]]\nrule = "A"\n[[tool.regimecheck.waive]]\n'
        'rule = "B"\n["tool".regimecheck.threshold]  # quoted key\nSTAT02 = 1.1\n'
    )
    lines = toml_key_lines(text)
    assert lines[("title",)] == 2
    assert lines[("tool", "regimecheck")] == 3
    assert lines[("tool", "regimecheck", "only")] == 4
    assert ("tool", "regimecheck", "fake") not in lines and ("x",) not in lines
    assert lines[("tool", "regimecheck", "severity", "STAT01")] == 10
    assert lines[("tool", "regimecheck", "waive")] == 11
    assert lines[("tool", "regimecheck", "waive", 0, "rule")] == 12
    assert lines[("tool", "regimecheck", "waive", 1)] == 13
    assert lines[("tool", "regimecheck", "waive", 1, "rule")] == 14
    assert lines[("tool", "regimecheck", "threshold", "STAT02")] == 16


def test_waiver_lines_are_their_own_headers(tmp_path):
    path = settings(
        tmp_path,
        "[tool.regimecheck]\n\n[[tool.regimecheck.waive]]\npath = 'a'\n"
        "rule = 'STAT01'\nreason = 'first'\n\n[[tool.regimecheck.waive]]\n"
        "path = 'b'\nrule = 'STAT02'\nreason = 'second'\n",
        "pyproject.toml",
    )
    assert [w.line for w in load_config(path).waive] == [3, 8]


@pytest.mark.parametrize(
    "name, read",
    [
        ("UPPER.YAML", True),
        ("x.Yml", True),
        ("memo.MD", True),
        ("lots.Csv", True),
        ("notes.txt", False),
        ("x.yaml.bak", False),
        ("YAML", False),
    ],
)
def test_walk_matches_suffixes_in_any_case(name, read):
    """The readers take a suffix in any case (sources.read_input lowers it); a walk
    must select the same files."""
    assert Config().reads(name) is read


def test_walk_reads_upper_case_suffixes_end_to_end(tmp_path):
    (tmp_path / "UPPER.YAML").write_text(CALC.replace("name: x", "name: upper"))
    (tmp_path / "mixed.Yml").write_text(CALC.replace("name: x", "name: mixed"))
    done = subprocess.run(
        [sys.executable, "-m", "checker", "check", str(tmp_path), "--format", "json"],
        capture_output=True,
        text=True,
    )
    names = sorted(c["name"] for c in json.loads(done.stdout)["calculations"])
    assert names == ["mixed", "upper"]


def test_exclude_patterns_apply_to_files_named_on_the_command_line(tmp_path, monkeypatch):
    """A pre-commit hook names changed files one by one; exclude-patterns must hold
    for them as for a walk: as named, or relative to the configuration's folder."""
    path = settings(
        tmp_path,
        '[tool.regimecheck]\nexclude-patterns = ["build/*", "*.tmp.yaml"]\n',
        "pyproject.toml",
    )
    config = load_config(path)
    (tmp_path / "sub").mkdir()
    monkeypatch.chdir(tmp_path / "sub")
    assert config.excludes_named("../build/x.yaml")  # relative to the config
    assert config.excludes_named(str(tmp_path / "build" / "x.yaml"))
    assert config.excludes_named("a.tmp.yaml")
    assert not config.excludes_named("../calcs/x.yaml")
    assert not Config().excludes_named("build/x.yaml")  # no patterns, none out


def test_idle_waivers_only_where_their_rule_ran_on_a_named_file(tmp_path):
    config = Config(source=str(tmp_path / "pyproject.toml"))
    used = PathWaiver("calcs/*.yaml", "STAT01", "degenerate on purpose", 3)
    idle = PathWaiver("calcs/*.yaml", "STAT02", "no finding to waive", 7)
    skipped_rule = PathWaiver("calcs/*.yaml", "MODEL01", "rule not selected", 11)
    unchecked = PathWaiver("other/*.yaml", "STAT01", "file not in this run", 15)
    config.waive = [used, idle, skipped_rule, unchecked]
    checked = [str(tmp_path / "calcs" / "cap.yaml")]
    assert config.idle_waivers({id(used)}, checked, ["STAT01", "STAT02"]) == [idle]
