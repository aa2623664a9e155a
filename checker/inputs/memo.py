"""Design memos in Markdown: calculations in fenced blocks marked ``regimecheck``.

    Some prose about the LD-310 resistor ...

    ```regimecheck
    name: LD-310 n-well resistor, hot corner
    material: Si
    temperature: 150 degC
    ...
    ```

Every block (backtick or tilde fence, info string starting with ``regimecheck``) is
read as calculation YAML; several documents per block are allowed.  The blocks are
parsed with every other line of the memo blanked, so line numbers in findings and
errors are the memo's own.  Other fenced blocks and the prose are ignored.
"""
from __future__ import annotations

import re

from .calculation_file import FileResult, parse_calculations, read_text_file

INFO_STRING = "regimecheck"
MEMO_SUFFIXES = (".md", ".markdown")
_OPEN = re.compile(r"^(?P<indent> {0,3})(?P<fence>`{3,}|~{3,})\s*(?P<info>[^`\s]*)")


def calculation_blocks(text: str) -> list[tuple[int, int]]:
    """(first line, last line) of the content of each regimecheck block, 1-based;
    an unclosed block runs to the end of the memo (CommonMark)."""
    lines = text.splitlines()
    blocks, i = [], 0
    while i < len(lines):
        match = _OPEN.match(lines[i])
        if not match:
            i += 1
            continue
        fence = match["fence"]
        closing = re.compile(rf"^ {{0,3}}{re.escape(fence[0])}{{{len(fence)},}}\s*$")
        end = i + 1
        while end < len(lines) and not closing.match(lines[end]):
            end += 1
        if match["info"].lower().startswith(INFO_STRING):
            blocks.append((i + 2, end))
        i = end + 1
    return blocks


def read_memo(path, explicit: bool = True) -> FileResult:
    """The calculations of a memo; a memo named on the command line must have a block."""
    path = str(path)
    text, error = read_text_file(path)
    if error:
        return FileResult(path, [], [error])
    lines = text.splitlines()
    calculations, errors = [], []
    for first, last in calculation_blocks(text):
        # blank everything outside this block so that YAML line numbers are the memo's
        padded = "\n" * (first - 1) + "\n".join(lines[first - 1:last])
        result = parse_calculations(padded, path)
        calculations += result.calculations
        errors += result.errors
    if not calculations and not errors and explicit:
        errors.append(f"{path}: the memo has no ```{INFO_STRING} block; put each calculation "
                      f"in a fenced block whose info string is {INFO_STRING}")
    return FileResult(path, calculations, errors)
