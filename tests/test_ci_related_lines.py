"""A finding whose assumption is made on several lines of a file: SARIF carries the other
lines as relatedLocations (OASIS SARIF 2.1.0, section 3.27.22 "relatedLocations": an
array of location objects, each with a unique id within the result), JUnit names them
in the failure text."""

import json
import xml.etree.ElementTree as ET
from pathlib import Path

import jsonschema

from checker.engine.run import check_paths
from checker.report.ci_formats import render_junit, render_sarif

# degenerate GaAs:Si 5e18 cm-3 (eta_n > 0 at 300 K, so the Boltzmann density is a
# shortcut outside its regime) stated on two formula lines, 5 and 6
DEGENERATE = (
    "name: two lines\nmaterial: GaAs\ntemperature: 300 K\ndoping: {donors: {Si: 5e18 cm-3}}\n"
    "formulas:\n  - n = N_c*exp(eta_n)\n  - E_F - E_c = k*T*ln(n/N_c)\n"
)


def _result(tmp_path):
    path = tmp_path / "two_lines.yaml"
    path.write_text(DEGENERATE, encoding="utf-8")
    return check_paths([str(path)])


def test_sarif_related_locations_are_the_other_lines(tmp_path):
    result = _result(tmp_path)
    log = json.loads(render_sarif(result, 1))
    schema = json.loads(
        (Path(__file__).parent / "data" / "sarif-schema-2.1.0.json").read_text(encoding="utf-8")
    )
    jsonschema.Draft7Validator(schema).validate(log)
    findings = [f for r in result.reports for f in r.findings]
    many = [f for f in findings if f.also_at]
    assert many, "the two-line calculation makes its assumption on two lines"
    for entry, finding in zip(log["runs"][0]["results"], findings):
        related = entry.get("relatedLocations", [])
        lines = [loc["physicalLocation"]["region"]["startLine"] for loc in related]
        assert lines == list(finding.also_at)
        assert [loc["id"] for loc in related] == list(range(len(related)))
        uri = entry["locations"][0]["physicalLocation"]["artifactLocation"]["uri"]
        assert all(loc["physicalLocation"]["artifactLocation"]["uri"] == uri for loc in related)
    stat01 = next(f for f in many if f.rule == "STAT01")
    assert {stat01.line, *stat01.also_at} == {6, 7}


def test_junit_failure_names_the_other_lines(tmp_path):
    result = _result(tmp_path)
    root = ET.fromstring(render_junit(result, 1, "info"))
    stat01 = next(f for r in result.reports for f in r.findings if f.rule == "STAT01")
    (case,) = [c for c in root.iter("testcase") if c.get("name").endswith(":: STAT01")]
    text = case.find("failure").text
    (other,) = stat01.also_at
    assert f":{stat01.line} (the same assumption also on line {other}):" in text
