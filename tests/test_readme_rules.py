"""The README's table of checks ("## The checks") against the rule files: the same ids,
and for each its severity, title and default threshold as the rule file gives them.

The rule files (rules/*.yaml) are the source; the README is what users read first.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest
import yaml

ROOT = Path(__file__).resolve().parents[1]


def _rule_files() -> dict:
    rules = {}
    for path in sorted((ROOT / "rules").glob("*.yaml")):
        data = yaml.safe_load(path.read_text(encoding="utf-8"))
        rules[data["id"]] = data
    return rules


def _readme_table() -> tuple[list, list]:
    """(header cells, rows of cells) of the first table after '## The checks'."""
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    section = text.split("\n## The checks", 1)[1].split("\n## ", 1)[0]
    lines = [line.strip() for line in section.splitlines()]
    start = next(i for i, line in enumerate(lines) if line.startswith("|"))
    table = []
    for line in lines[start:]:
        if not line.startswith("|"):
            break
        # a cell may hold an escaped pipe (\|N_D − N_A\|)
        cells = [c.strip().replace("\\|", "|") for c in re.split(r"(?<!\\)\|", line)[1:-1]]
        table.append(cells)
    header, rule_line, *rows = table
    assert all(set(c) <= set("-: ") for c in rule_line)
    return [h.lower() for h in header], rows


def _column(header, name):
    return next((i for i, h in enumerate(header) if h.split()[0] == name), None)


def test_readme_lists_exactly_the_rule_files():
    header, rows = _readme_table()
    ids = [row[_column(header, "id")] for row in rows]
    assert len(ids) == len(set(ids)), "an id listed twice"
    assert sorted(ids) == sorted(_rule_files())


def test_readme_gives_each_rule_its_severity_and_title():
    header, rows = _readme_table()
    missing = [name for name in ("severity", "title") if _column(header, name) is None]
    assert not missing, f"no {' and no '.join(missing)} column in the README's table"
    rules = _rule_files()
    for row in rows:
        rule = rules[row[_column(header, "id")]]
        assert row[_column(header, "severity")] == rule["severity"], rule["id"]
        assert row[_column(header, "title")] == rule["title"], rule["id"]


_COMPARISON = re.compile(r"[<>]\s*([−-]?\d+(?:\.\d+)?)\s*(%|×)?")


def _readme_threshold(cell):
    """The number after the first '>' or '<' of a 'fires when' cell (percent as a
    fraction), or None where the cell states no number."""
    found = _COMPARISON.search(cell)
    if not found:
        return None
    value = float(found.group(1).replace("−", "-"))
    return value / 100 if found.group(2) == "%" else value


def _disagreements():
    header, rows = _readme_table()
    rules = _rule_files()
    wrong = []
    for row in rows:
        rule = rules[row[_column(header, "id")]]
        indicator = rule.get("indicator") or {}
        documented = indicator.get("above", indicator.get("below"))
        shown = _readme_threshold(row[_column(header, "fires")])
        if documented is None or shown is None:
            continue
        # "off by > 5 %" for a ratio threshold of 1.05 says the same thing
        if not (abs(shown - documented) < 1e-12 or abs(1 + shown - documented) < 1e-12):
            wrong.append(f"{rule['id']}: README {shown:g}, rules/{rule['id']}.yaml {documented:g}")
    return wrong


def test_readme_threshold_parser_reads_the_written_forms():
    # the forms the table uses: a plain number, a percentage, a factor, a minus sign
    assert _readme_threshold("η > −3 (3kT rule)") == -3
    assert _readme_threshold("minority/majority > 1 %") == pytest.approx(0.01)
    assert _readme_threshold("off the model by > 1.3×") == 1.3
    assert _readme_threshold("majority dopants above the Mott density") is None


def test_readme_thresholds_are_the_rule_files_defaults():
    # where the 'fires when (default)' cell states a number, it is the rule file's threshold
    assert _disagreements() == []
