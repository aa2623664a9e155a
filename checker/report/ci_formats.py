"""Reports for CI systems: SARIF 2.1.0 and JUnit XML.

SARIF: one run; the driver lists every rule of the run (short description = title,
full description = why, help = fix and example, default level = severity); each
finding is a result with rule id, level (info -> note), message and the region
(file and line); the other lines of the file where the finding's assumption is made
(Finding.also_at) are its ``relatedLocations``; a waived finding carries an
``external`` or ``inSource`` suppression with its reason; input errors are tool
execution notifications.

JUnit: one test suite per input file, one test case per calculation and rule
(``<calculation> :: <rule>``, unique within the suite); a finding at or above the
fail level is a failure (its text names the other lines the assumption is made on),
a waived one is skipped with its reason, everything below the fail level passes;
input errors are errors of their file's suite.
Both say once that the results are screening checks (SARIF run properties,
JUnit testsuites properties).
"""

from __future__ import annotations

import json
import re
from typing import Any
from urllib.parse import quote
from xml.etree import ElementTree as ET

from .. import __version__
from ..quantity_registry.number_text import display
from ..vocabulary_words import Severity
from . import DISCLAIMER
from .safe_text import visible, visible_data
from .sweep_text import finding_message

SARIF_SCHEMA = "https://json.schemastore.org/sarif-2.1.0.json"
SARIF_LEVEL = {"info": "note", "warning": "warning", "error": "error"}
_LOCATION = re.compile(r"^(?P<file>.+?):(?P<line>\d+)(?::(?P<column>\d+))?: (?P<text>.*)$", re.S)


def _finding_text(f) -> str:
    parts = [finding_message(f)]
    if f.indicator_text():
        parts.append(f"Regime indicator: {f.indicator_text()}.")
    for c in f.corrections:
        parts.append(
            f"{c.label}: {display(c.stated, c.unit)} ({c.stated_by}) -> "
            f"{display(c.corrected, c.unit)} [{c.error_text()}]."
        )
    if f.formula:
        parts.append(f"From the stated formula {f.formula}.")
    if f.column:
        parts.append(f"Table column: {f.column}.")
    return " ".join(parts)


def _uri(path: str) -> str:
    """A relative URI reference (RFC 3986) of a file path: spaces, '%', '#' and bytes
    outside ASCII percent-encoded (a name that is not UTF-8 by its own bytes)."""
    text = path.replace("\\", "/")
    try:
        raw = text.encode("utf-8", "surrogateescape")
    except UnicodeEncodeError:  # a lone surrogate no file system gave us
        raw = text.encode("utf-8", "backslashreplace")
    return quote(raw, safe="/:")


def _also_text(f) -> str:
    """The other lines the finding's assumption is made on, in words ("" for none)."""
    if not f.also_at:
        return ""
    word = "line" if len(f.also_at) == 1 else "lines"
    return f" (the same assumption also on {word} {', '.join(map(str, f.also_at))})"


def _related(f) -> list[dict[str, Any]]:
    """SARIF relatedLocations: each other line of the same file making the assumption."""
    return [
        {
            "id": number,
            "physicalLocation": {
                "artifactLocation": {"uri": _uri(f.file)},
                "region": {"startLine": line},
            },
            "message": {"text": f"the assumption of {f.rule} is also made here"},
        }
        for number, line in enumerate(f.also_at)
    ]


def render_sarif(result, exit_code: int) -> str:
    rules = list(result.rules)
    index = {rule.id: i for i, rule in enumerate(rules)}
    descriptors = [
        {
            "id": rule.id,
            "name": re.sub(r"[^A-Za-z0-9]+", " ", rule.title).title().replace(" ", ""),
            "shortDescription": {"text": rule.title},
            "fullDescription": {"text": " ".join(rule.why.split())},
            "help": {
                "text": f"Fix: {' '.join(rule.fix.split())} Example: "
                f"{' '.join(rule.example.split())}",
                "markdown": f"**Fix.** {' '.join(rule.fix.split())}\n\n**Example.** "
                f"{' '.join(rule.example.split())}\n\n**References.** "
                + "; ".join(rule.references),
            },
            "defaultConfiguration": {"level": SARIF_LEVEL[rule.severity]},
            "properties": {
                "assumption": rule.assumption,
                "threshold_source": rule.threshold_source,
            },
        }
        for rule in rules
    ]
    results = []
    for report in result.reports:
        for f in report.findings:
            entry = {
                "ruleId": f.rule,
                "level": SARIF_LEVEL[f.severity],
                "message": {"text": _finding_text(f)},
                "locations": [
                    {
                        "physicalLocation": {
                            "artifactLocation": {"uri": _uri(f.file)},
                            "region": {"startLine": max(int(f.line), 1)},
                        }
                    }
                ],
                "properties": {
                    "calculation": report.calc.name,
                    "assumption": f.assumption,
                    "carrier": f.carrier,
                    "column": f.column,
                },
            }
            if f.also_at:
                entry["relatedLocations"] = _related(f)
            if f.rule in index:
                entry["ruleIndex"] = index[f.rule]
            if f.waived:
                entry["suppressions"] = [
                    {
                        "kind": "external" if "(configuration," in f.waived else "inSource",
                        "justification": f.waived,
                    }
                ]
            results.append(entry)
    notifications = []
    for message in result.input_errors:
        note: dict[str, object] = {"level": "error", "message": {"text": message}}
        match = _LOCATION.match(message)
        if match:
            note["locations"] = [
                {
                    "physicalLocation": {
                        "artifactLocation": {"uri": _uri(match["file"])},
                        "region": {"startLine": int(match["line"])},
                    }
                }
            ]
        notifications.append(note)
    log = {
        "$schema": SARIF_SCHEMA,
        "version": "2.1.0",
        "runs": [
            {
                "tool": {
                    "driver": {
                        "name": "regimecheck",
                        "version": __version__,
                        "semanticVersion": __version__,
                        "rules": descriptors,
                    }
                },
                "invocations": [
                    {
                        "executionSuccessful": not result.input_errors,
                        "exitCode": exit_code,
                        "toolExecutionNotifications": notifications,
                    }
                ],
                "results": results,
                "properties": {"notice": DISCLAIMER, "notes": result.notes},
            }
        ],
    }
    return json.dumps(visible_data(log), indent=2, ensure_ascii=False)


def render_junit(result, exit_code: int, fail_on: str) -> str:
    suites: dict[str, list[Any]] = {}  # file -> its calculations' reports
    for report in result.reports:
        suites.setdefault(report.calc.source, []).append(report)
    errors_by_file: dict[str, list[str]] = {}
    for message in result.input_errors:
        match = _LOCATION.match(message)
        errors_by_file.setdefault(match["file"] if match else "(input)", []).append(message)
    root = ET.Element("testsuites", name="regimecheck")
    properties = ET.SubElement(root, "properties")
    ET.SubElement(properties, "property", name="notice", value=DISCLAIMER)
    totals = {"tests": 0, "failures": 0, "errors": 0, "skipped": 0}
    threshold = Severity(fail_on).rank
    for source in list(suites) + [f for f in errors_by_file if f not in suites]:
        suite = ET.SubElement(root, "testsuite", name=source)
        counts = {"tests": 0, "failures": 0, "errors": 0, "skipped": 0}
        used = set()
        for report in suites.get(source, []):
            calc = report.calc
            base = f"{calc.name} (line {calc.line})"
            for rule in result.rules:
                name = f"{base} :: {rule.id}"
                if name in used:
                    continue
                used.add(name)
                case = ET.SubElement(
                    suite, "testcase", name=name, classname=source, file=source, line=str(calc.line)
                )
                counts["tests"] += 1
                hits = [f for f in report.findings if f.rule == rule.id]
                if report.error:
                    ET.SubElement(case, "error", message=report.error)
                    counts["errors"] += 1
                    continue
                active = [f for f in hits if not f.waived]
                failing = [f for f in active if Severity(f.severity).rank >= threshold]
                if failing:
                    text = "\n".join(
                        f"{f.file}:{f.line}{_also_text(f)}: {_finding_text(f)}" for f in failing
                    )
                    ET.SubElement(
                        case, "failure", message=failing[0].title, type=failing[0].severity
                    ).text = text
                    counts["failures"] += 1
                elif hits and not active:
                    ET.SubElement(case, "skipped", message=f"waived: {hits[0].waived}")
                    counts["skipped"] += 1
                elif active:
                    ET.SubElement(case, "system-out").text = "\n".join(
                        f"{f.severity}: {_finding_text(f)}" for f in active
                    )
        for message in errors_by_file.get(source, []):
            case = ET.SubElement(
                suite, "testcase", name=f"input :: {message[:80]}", classname=source
            )
            ET.SubElement(case, "error", message="input error").text = message
            counts["tests"] += 1
            counts["errors"] += 1
        for key, value in counts.items():
            suite.set(key, str(value))
            totals[key] += value
    for key, value in totals.items():
        root.set(key, str(value))
    ET.indent(root)
    # ElementTree writes control characters as they are, which XML 1.0 forbids
    xml = visible(ET.tostring(root, encoding="unicode"))
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + xml
