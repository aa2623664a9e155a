"""The shipped JSON Schema and the rule-file loader."""

import json
import shutil
from pathlib import Path

import jsonschema
import pytest
import yaml

from checker.engine.regime.rulebook import RuleFileError, load_rule, load_rules
from checker.resources import rules_dir

ROOT = Path(__file__).resolve().parents[1]
SCHEMA = ROOT / "checker" / "data" / "calculation.schema.json"


def test_schema_matches_the_key_tables(schema_generator):
    assert SCHEMA.read_text(encoding="utf-8") == schema_generator.render(), (
        "run python tools/generate_schema.py"
    )


@pytest.mark.parametrize("path", sorted((ROOT / "examples").glob("*.yaml")), ids=lambda p: p.name)
def test_examples_validate_against_schema_and_carry_modeline(path):
    schema = json.loads(SCHEMA.read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    text = path.read_text(encoding="utf-8")
    for document in yaml.safe_load_all(text):
        # YAML reads some quantities as numbers; the checker reads them as text
        jsonschema.validate(_as_text(document), schema)
    if path.name != "larkspur_operating_points.yaml":
        assert text.startswith(
            "# yaml-language-server: $schema=../checker/data/calculation.schema.json"
        )


def _as_text(node):
    if isinstance(node, dict):
        return {k: (_as_text(v) if k != "dimensionality" else v) for k, v in node.items()}
    if isinstance(node, list):
        return [_as_text(v) for v in node]
    return node if isinstance(node, (str, bool)) or node is None else str(node)


def test_shipped_rules_load():
    rules = load_rules()
    # every file of rules/ is a rule, named by its id
    files = sorted(p.stem for p in (Path(__file__).resolve().parents[1] / "rules").glob("*.yaml"))
    assert sorted(r.id for r in rules) == files
    assert [r.id for r in rules if r.evaluated_by] == ["FORM01", "FORM02", "FORM03"]
    for rule in rules:
        assert rule.references and rule.why and rule.fix and rule.example
        assert rule.threshold_source


@pytest.mark.parametrize(
    "edit, field",
    [
        (lambda d: d.pop("why"), "why"),
        (lambda d: d.update(severity="loud"), "severity"),
        (
            lambda d: d["indicator"].update(expression="eta_x + __import__('os')"),
            "indicator.expression",
        ),
        (lambda d: d["indicator"].update(expression="eta_q"), "indicator.expression"),
        (lambda d: d.update(message="see {nothing}"), "message"),
        (lambda d: d.update(colour="red"), "colour"),
        (lambda d: d["corrections"][0].update(unit="furlong"), "corrections[0].unit"),
    ],
)
def test_broken_rule_file_names_file_and_field(tmp_path, edit, field):
    data = yaml.safe_load((rules_dir() / "STAT01.yaml").read_text(encoding="utf-8"))
    edit(data)
    path = tmp_path / "STAT01.yaml"
    path.write_text(yaml.safe_dump(data, allow_unicode=True), encoding="utf-8")
    with pytest.raises(RuleFileError) as info:
        load_rule(path)
    assert str(path) in str(info.value) and f"field {field!r}" in str(info.value)


def test_rule_id_must_match_file_name(tmp_path):
    shutil.copy(rules_dir() / "STAT01.yaml", tmp_path / "STAT09.yaml")
    with pytest.raises(RuleFileError, match="file name"):
        load_rule(tmp_path / "STAT09.yaml")


def test_shipped_yaml_passes_the_strict_loader():
    """Package files are read with libyaml for speed; this keeps them free of aliases and
    duplicate keys, which the strict loader refuses."""
    from checker.inputs.yaml_source import load_yaml_text
    from checker.resources import materials_dir

    files = sorted(rules_dir().glob("*.yaml")) + sorted(materials_dir().glob("*.yaml"))
    assert len(files) >= 25
    for path in files:
        load_yaml_text(path.read_text(encoding="utf-8"), str(path))
