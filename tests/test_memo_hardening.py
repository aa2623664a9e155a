"""Memos under careless input: fences inside list items and block quotes, commented-out
and indented fences, and characters that some tools take for line breaks.  Blocks are
found as CommonMark finds them; line numbers stay the memo's own."""

import json
import subprocess
import sys
from pathlib import Path

import pytest
import scipy.constants as sc

from checker.engine.run import check_paths
from checker.inputs.memo import calculation_blocks, read_memo

ROOT = Path(__file__).resolve().parents[1]
CALC = [
    "name: {name}",
    "material: Si",
    "temperature: 300 K",
    "stated:",
    "  thermal_voltage: 0.0345 V",
]


def line_of(text, needle):
    """1-based line of ``needle``, counting only newlines (what editors number)."""
    return text[: text.index(needle)].count("\n") + 1


def fenced(prefix, name, first_prefix=None):
    lines = ["```regimecheck"] + [c.format(name=name) for c in CALC] + ["```"]
    return (
        "\n".join(
            (first_prefix if i == 0 and first_prefix else prefix) + line
            for i, line in enumerate(lines)
        )
        + "\n"
    )


# CommonMark 0.31.2, "List items" and "Block quotes": a fenced code block may be the
# content of a list item (indented to the item's content column) or of a block quote
# (each line after the > marker), and of both nested.
CONTAINERS = {
    "bullet list item": ("- intro\n\n", "  "),
    "ordered list item": ("1. intro\n\n", "   "),
    "item numbered 10": ("10. intro\n\n", "    "),
    "nested list item": ("- outer\n\n  - inner\n\n", "    "),
    "block quote": ("> quoted\n>\n", "> "),
    "quote in a list item": ("- item\n\n  > quoted\n  >\n", "  > "),
}


@pytest.mark.parametrize("container", list(CONTAINERS))
def test_fences_inside_containers_are_read_at_memo_lines(tmp_path, container):
    """The block is read, and its CONST01 finding names the memo line of the stated
    thermal voltage; the exact kT/q at 300 K is k*300/e (scipy.constants, CODATA)."""
    opening, prefix = CONTAINERS[container]
    text = "# Memo\n\nProse.\n\n" + opening + fenced(prefix, "inside") + "\nAfter.\n"
    memo = tmp_path / "memo.md"
    memo.write_text(text, encoding="utf-8")
    (report,) = check_paths([str(memo)]).reports
    assert report.calc.name == "inside"
    assert report.calc.line == line_of(text, "name: inside")
    (finding,) = [f for f in report.findings if f.rule == "CONST01"]
    assert finding.line == line_of(text, "thermal_voltage")
    assert finding.corrections[0].corrected == pytest.approx(sc.k * 300 / sc.e, rel=1e-9)


def test_error_inside_a_quoted_fence_exits_2_at_the_memo_line(tmp_path):
    text = "> ```regimecheck\n> name: q\n> material: Si\n> temperature: 300 parsecs\n> ```\n"
    memo = tmp_path / "quoted.md"
    memo.write_text(text)
    before = memo.read_bytes()
    done = subprocess.run(
        [sys.executable, "-m", "checker", "check", str(memo), "--format", "json"],
        capture_output=True,
        text=True,
        cwd=ROOT,
    )
    assert done.returncode == 2 and "Traceback" not in done.stderr
    (error,) = json.loads(done.stdout)["input_errors"]
    assert error.startswith(f"{memo}:4:") and "parsecs" in error
    assert memo.read_bytes() == before


@pytest.mark.parametrize(
    "separator, in_block",
    [
        ("\x0c", False),
        ("\x1c", False),  # control characters YAML refuses in a block
        ("\u2028", True),
        ("\u2029", True),
        ("\x85", True),
    ],
)
def test_break_like_characters_keep_line_numbers(tmp_path, separator, in_block):
    """Only LF (and CR) end a line in CommonMark ("Characters and lines"); a form feed,
    a file separator, U+2028/U+2029 or NEL in the prose, and the last three inside a
    block (YAML 1.1 counts them as breaks), must not move the reported lines."""
    name = f"sep{separator}name" if in_block else "sep"
    text = (
        f"Intro{separator}with a break-like character.\n\n```regimecheck\n"
        f"name: {name}\nmaterial: Si\ntemperature: 300 K\nstated:\n"
        "  thermal_voltage: 0.0345 V\n```\n"
    )
    memo = tmp_path / "sep.md"
    memo.write_text(text, encoding="utf-8")
    result = check_paths([str(memo)])
    assert not result.input_errors
    (finding,) = [f for f in result.reports[0].findings if f.rule == "CONST01"]
    assert finding.line == line_of(text, "thermal_voltage")


def test_blocks_that_commonmark_does_not_see_are_not_read(tmp_path):
    """An HTML comment is an HTML block and a four-space indent an indented code block
    (CommonMark 0.31.2, "HTML blocks", "Indented code blocks"): a fence inside either
    is text, not a block, so a commented-out calculation stays out."""
    text = (
        "<!--\n```regimecheck\nname: commented\nmaterial: Si\ntemperature: 300 K\n```\n"
        "-->\n\n    ```regimecheck\n    name: indented\n    ```\n\n"
        "``` regimecheck-notes\nnot: read\n```\n"
    )
    memo = tmp_path / "hidden.md"
    memo.write_text(text)
    assert calculation_blocks(text) == []
    read = read_memo(memo)
    assert not read.calculations and "no ```regimecheck block" in read.errors[0]


def test_block_line_ranges_with_containers():
    text = "- a\n\n  ```regimecheck\n  x: 1\n  y: 2\n  ```\n> ~~~regimecheck\n> z: 3\n"
    assert calculation_blocks(text) == [(4, 5), (8, 8)]
