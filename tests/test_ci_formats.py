"""SARIF, JUnit and Markdown reports, and --output.

SARIF structure per the OASIS SARIF 2.1.0 standard (sarifLog: version, runs; run:
tool.driver with rules; result: ruleId, ruleIndex, level, message.text, locations with
physicalLocation.artifactLocation.uri and region.startLine; suppressions with
justification; invocations with toolExecutionNotifications). JUnit structure per the
common JUnit XML report layout (testsuites > testsuite > testcase with failure /
skipped / error).
"""

import json
import subprocess
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import jsonschema
import pytest

from checker.report import DISCLAIMER

FILES = ["examples/lk7_contact_cap.yaml", "examples/lg8_gan_pgate.yaml"]
BAD = "name: broken\nmaterial: Unobtainium\ntemperature: 300 K\n"


def run(*args, cwd=None):
    done = subprocess.run(
        [sys.executable, "-m", "checker.cli", *args],
        capture_output=True,
        text=True,
        timeout=180,
        cwd=cwd,
    )
    assert "Traceback" not in done.stdout + done.stderr
    return done


@pytest.fixture(scope="module")
def json_report():
    return json.loads(run("check", *FILES, "--format", "json").stdout)


def test_sarif_structure(tmp_path, json_report):
    bad = tmp_path / "bad.yaml"
    bad.write_text(BAD)
    done = run("check", *FILES, str(bad), "--format", "sarif")
    assert done.returncode == 2
    log = json.loads(done.stdout)
    # the OASIS SARIF 2.1.0 schema (tests/data/README.md says where the copy comes from)
    schema = json.loads(
        (Path(__file__).parent / "data" / "sarif-schema-2.1.0.json").read_text(encoding="utf-8")
    )
    jsonschema.Draft7Validator(schema).validate(log)
    assert log["version"] == "2.1.0" and "sarif" in log["$schema"]
    (run_,) = log["runs"]
    driver = run_["tool"]["driver"]
    assert driver["name"] == "regimecheck"
    ids = [rule["id"] for rule in driver["rules"]]
    files = sorted(p.stem for p in (Path(__file__).resolve().parents[1] / "rules").glob("*.yaml"))
    assert len(ids) == len(set(ids)) and sorted(ids) == files
    for rule in driver["rules"]:
        assert rule["shortDescription"]["text"] and rule["fullDescription"]["text"]
        assert rule["help"]["text"] and rule["help"]["markdown"]
        assert rule["defaultConfiguration"]["level"] in ("note", "warning", "error")
    findings = [f for c in json_report["calculations"] for f in c["findings"]]
    assert len(run_["results"]) == len(findings)
    for result, finding in zip(run_["results"], findings):
        assert result["ruleId"] == finding["rule"] == ids[result["ruleIndex"]]
        assert result["level"] == {"info": "note"}.get(finding["severity"], finding["severity"])
        assert result["message"]["text"].startswith(finding["message"])
        location = result["locations"][0]["physicalLocation"]
        assert location["artifactLocation"]["uri"] == finding["where"]["file"]
        assert location["region"]["startLine"] == finding["where"]["line"] >= 1
        if finding["waived"]:
            assert result["suppressions"][0]["justification"] == finding["waived"]
        else:
            assert "suppressions" not in result
    (invocation,) = run_["invocations"]
    assert invocation["executionSuccessful"] is False
    (note,) = invocation["toolExecutionNotifications"]
    assert note["level"] == "error" and "Unobtainium" in note["message"]["text"]
    assert note["locations"][0]["physicalLocation"]["artifactLocation"]["uri"] == str(bad)
    assert run_["properties"]["notice"] == DISCLAIMER
    assert done.stdout.count(DISCLAIMER) == 1


def test_junit_structure(json_report):
    done = run("check", *FILES, "--format", "junit", "--fail-on", "warning")
    root = ET.fromstring(done.stdout)
    assert root.tag == "testsuites"
    suites = root.findall("testsuite")
    assert [s.get("name") for s in suites] == FILES
    failing = {
        (c["name"], f["rule"])
        for c in json_report["calculations"]
        for f in c["findings"]
        if not f["waived"] and f["severity"] != "info"
    }
    waived = {
        (c["name"], f["rule"])
        for c in json_report["calculations"]
        for f in c["findings"]
        if f["waived"]
    }
    failures, skipped = set(), set()
    for suite in suites:
        names = [case.get("name") for case in suite.findall("testcase")]
        assert len(names) == len(set(names))  # unique within the suite
        assert int(suite.get("tests")) == len(names)
        for case in suite.findall("testcase"):
            calc, rule = case.get("name").rsplit(" (line", 1)[0], case.get("name").split(" :: ")[1]
            if case.find("failure") is not None:
                failures.add((calc, rule))
            if case.find("skipped") is not None:
                skipped.add((calc, rule))
    assert failures == failing and skipped == waived
    assert int(root.get("failures")) == len(failing)
    assert done.stdout.count(DISCLAIMER) == 1


def test_markdown_report(json_report):
    text = run("check", *FILES, "--format", "markdown").stdout
    findings = [f for c in json_report["calculations"] for f in c["findings"]]
    rows = [line for line in text.splitlines() if line.startswith("| ") and "`examples/" in line]
    assert len(rows) == len(findings)
    assert text.count(DISCLAIMER) == 1
    assert "| `D_n = mu_n*k*T/q` | 16 |" in text


def test_output_file_and_inputs_never_overwritten(tmp_path):
    target = tmp_path / "review.md"
    done = run("check", *FILES, "--format", "markdown", "--output", str(target))
    assert done.stdout == "" and "calculation(s)" in done.stderr and done.returncode == 1
    assert target.read_text(encoding="utf-8").startswith("## regimecheck review")
    victim = tmp_path / "calc.yaml"
    victim.write_text(open(FILES[0], encoding="utf-8").read(), encoding="utf-8")
    before = victim.read_text(encoding="utf-8")
    done = run("check", str(victim), "--output", str(victim))
    assert done.returncode == 2 and "input file" in done.stderr
    assert victim.read_text(encoding="utf-8") == before


def test_sarif_of_every_example_is_valid():
    """All input kinds (YAML, memo, CSV table, sweep) in one SARIF log, OASIS schema."""
    log = json.loads(run("check", "examples/", "--format", "sarif").stdout)
    schema = json.loads(
        (Path(__file__).parent / "data" / "sarif-schema-2.1.0.json").read_text(encoding="utf-8")
    )
    jsonschema.Draft7Validator(schema).validate(log)
    uris = {
        r["locations"][0]["physicalLocation"]["artifactLocation"]["uri"]
        for r in log["runs"][0]["results"]
    }
    assert {
        "examples/lt9_wafer_lots.csv",
        "examples/lm6_bias_memo.md",
        "examples/lw3_corner_sweep.yaml",
    } <= uris
