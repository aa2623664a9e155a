"""Design memos in Markdown: calculations in fenced blocks marked ``regimecheck``.

    Some prose about the LD-310 resistor ...

    ```regimecheck
    name: LD-310 n-well resistor, hot corner
    material: Si
    temperature: 150 degC
    ...
    ```

Every fenced block (backtick or tilde fence) whose info string starts with the word
``regimecheck`` is read as calculation YAML; several documents per block are allowed.
Blocks are found by a CommonMark parser (markdown-it-py), so a fence inside a list
item or a ``>`` blockquote counts, and the list indentation or quote markers are
removed from its lines.  Each block is parsed with every other line of the memo
blanked, so line numbers in findings and errors are the memo's own; columns count from
the block's own indentation.  Other fenced blocks and the prose are ignored.
"""

from __future__ import annotations

from .calculation_file import FileResult, parse_calculations
from .text_bytes import read_text_file

INFO_STRING = "regimecheck"
MEMO_SUFFIXES = (".md", ".markdown")
# characters YAML takes for line breaks but editors (and Markdown) do not: inside a
# block they would shift the YAML parser's line numbers away from the memo's
_YAML_ONLY_BREAKS = str.maketrans({"\x85": " ", "\u2028": " ", "\u2029": " "})


def block_texts(text: str) -> list[tuple[int, str]]:
    """(first content line, 1-based; content with container indentation removed) of
    each regimecheck block; an unclosed block runs to the end of its container."""
    from markdown_it import MarkdownIt  # imported only when a memo is read

    blocks, parser = [], MarkdownIt("commonmark").disable(["inline", "text_join"])
    for token in parser.parse(text):  # block structure only: no inline markup needed
        words = token.info.split() if token.type == "fence" else []
        if words and words[0].lower() == INFO_STRING and token.map:
            blocks.append((token.map[0] + 2, token.content.translate(_YAML_ONLY_BREAKS)))
    return blocks


def calculation_blocks(text: str) -> list[tuple[int, int]]:
    """(first line, last line) of the content of each regimecheck block, 1-based."""
    out = []
    for first, content in block_texts(text):
        lines = content.split("\n")  # only newlines end lines, as in the parser
        out.append((first, first + len(lines) - 1 - (lines[-1] == "")))
    return out


def read_memo(path, explicit: bool = True) -> FileResult:
    """The calculations of a memo; a memo named on the command line must have a block."""
    path = str(path)
    text, error = read_text_file(path)
    if error:
        return FileResult(path, [], [error])
    calculations, errors = [], []
    for first, content in block_texts(text):
        # blank everything before this block so that YAML line numbers are the memo's
        result = parse_calculations("\n" * (first - 1) + content, path)
        calculations += result.calculations
        errors += result.errors
    if not calculations and not errors and explicit:
        errors.append(
            f"{path}: the memo has no ```{INFO_STRING} block; put each calculation "
            f"in a fenced block whose info string is {INFO_STRING}"
        )
    return FileResult(path, calculations, errors)
