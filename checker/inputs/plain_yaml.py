"""The usual calculation file read line by line: block mappings of plain keys, one-line
plain scalars, flat flow mappings and sequences of them, block sequences of scalars or
of mappings (waivers).

Composing such a text with libyaml builds a node and two marks for every scalar and then
walks the tree again for the plain values (some 45 ms for 1,000 calculations); one regular
expression a line gives the same values and positions in 18 ms.  Anything outside this
narrow form -- quotes, anchors, tags, multi-line or block scalars, nested flow
collections, a key seen twice, odd indentation, a '...' or a '---' with text after it, an
empty document, a tab -- makes :func:`plain_documents` return None, and
the text is composed by yaml_source, which also words every refusal.  The two are held
to the same values and positions over every example and test file and generated
variations (tests/test_plain_yaml.py).
"""

from __future__ import annotations

import re
from typing import Any

# a plain key: letters, digits, '_' and '-', not starting with '-' or a digit, at most
# 1,024 characters (YAML's limit on an implicit key: PyYAML refuses a longer one)
_KEY = r"[A-Za-z_][A-Za-z0-9_-]{0,1023}"
# what a one-line plain scalar may not hold here: ':' or '#' (which can end a plain
# scalar), a bracket or brace (flow collections); in a flow collection no ',' or '?'
# either (PyYAML's own scanner, which reads texts holding a '?', ends a flow scalar
# there).  Controls, YAML's other line breaks and byte-order marks never reach the
# patterns (_NOT_PLAIN): the character classes stay within Latin-1, quick to compile
_NEVER = ":#\\[\\]{}"
_BLOCK_CHAR, _BLOCK_LAST = f"[^{_NEVER}]", f"[^{_NEVER} ]"
_FLOW_CHAR, _FLOW_LAST = f"[^{_NEVER},?]", f"[^{_NEVER},? ]"
# a plain scalar starts with no blank and no indicator; '-' only before a digit, a
# letter or '.'; it ends with no blank (the blanks after it are not its own)
_FIRST = f"(?:[^{_NEVER} \\-?,&*!|>'\"%@`]|-(?=[0-9A-Za-z.]))"
_BLOCK_SCALAR = f"{_FIRST}(?:{_BLOCK_CHAR}*{_BLOCK_LAST})?"
_FLOW_SCALAR = f"{_FIRST}(?:{_FLOW_CHAR}*{_FLOW_LAST})?"
_FLOW_MAPPING = r"\{[^\n{}\[\]#]*\}"
_FLOW_SEQUENCE = r"\[[^\n{}\[\]#]*\]"

# one content line: 'key:', 'key: value', '- value' or '- key: ...', then an optional
# comment (a bare scalar, a continuation line, also matches: it is refused by the reader)
_LINE = re.compile(
    rf"( *)(- +)?(?:({_KEY}):(?: +({_BLOCK_SCALAR}|{_FLOW_MAPPING}|{_FLOW_SEQUENCE}))?"
    rf"|({_BLOCK_SCALAR}))(?: +#[^\n]*)? *"
)
_SKIPPED = re.compile(r" *(?:#[^\n]*)?")  # a blank or comment line
# an item of a one-line flow collection and the ',' after it (one only where another
# item follows) or the closing bracket ahead; the blanks after the last item, then the
# bracket, end the collection
_MAPPING_ITEM = re.compile(rf" *({_KEY}): +({_FLOW_SCALAR}) *(?:,(?= *[^ }}])|(?=\}}))")
_SEQUENCE_ITEM = re.compile(rf" *({_FLOW_SCALAR}) *(?:,(?= *[^ \]])|(?=\]))")

_MOST_LEVELS = 8  # deeper texts are composed by yaml_source (which limits nesting)
# characters that send a text to yaml_source wherever they stand (a comment included):
# tabs, carriage returns, the line breaks YAML knows besides '\n', byte-order marks and
# what yaml_source refuses (controls, surrogates, non-characters).  An anchor, alias, tag
# or quote starting a scalar is refused by the patterns; inside one YAML reads it as text
_NOT_PLAIN = re.compile(
    "[\t\r\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f\u2028\u2029\ufeff\ud800-\udfff\ufffe\uffff]"
)

Positions = dict[tuple[object, ...], tuple[int, int]]


class _NotPlain(Exception):
    """The text leaves the form read here."""


def plain_documents(text: str) -> list[tuple[object, Positions]] | None:
    """(plain value, positions) of every document of ``text`` -- what composing it and
    taking each node's plain value and start (1-based line, column) gives -- or None
    where the text is not of the narrow form read here."""
    if _NOT_PLAIN.search(text):
        return None
    try:
        return _documents(text)
    except _NotPlain:
        return None


def _documents(text: str) -> list[tuple[object, Positions]]:
    # one loop with its state in locals: a line costs about a microsecond
    documents: list[tuple[object, Positions]] = []
    root: dict | None = None
    positions: Positions = {}
    started = False  # after a '---' line: a document even if nothing follows
    # open collections, innermost last: (indent, collection, path)
    opened: list[tuple[int, Any, tuple[object, ...]]] = []
    # a 'key:' with nothing after it: (mapping, key, path, indent, where its empty value
    # would stand), until the next content line says what it holds
    pending: tuple[dict, str, tuple[object, ...], int, tuple[int, int]] | None = None
    line_match, skipped = _LINE.fullmatch, _SKIPPED.fullmatch
    number = 0
    for line in text.split("\n"):
        number += 1
        found = line_match(line)
        if found is None:
            if line == "---":
                if started or root is not None:  # a document ends here
                    documents.append(_finished(root, positions, pending))
                root, positions, opened, pending, started = None, {}, [], None, True
            elif skipped(line) is None:
                raise _NotPlain
            continue
        spaces, dash, key, value, item = found.groups()
        if dash is None and key is None:  # a scalar on its own line: a continuation
            raise _NotPlain
        indent = len(spaces)
        if pending is not None:
            mapping, name, path, outer, empty = pending
            pending = None
            if indent > outer:  # a block collection under the key
                if len(opened) >= _MOST_LEVELS:
                    raise _NotPlain
                child: Any = {} if dash is None else []
                mapping[name] = child
                positions[path] = (number, indent + 1)
                opened.append((indent, child, path))
            else:
                mapping[name] = ""
                positions[path] = empty
        elif root is None:
            if dash is not None or indent:
                raise _NotPlain
            root = {}
            positions[()] = (number, 1)
            opened.append((0, root, ()))
        depth, collection, path = opened[-1]
        while depth > indent:
            opened.pop()
            if not opened:
                raise _NotPlain
            depth, collection, path = opened[-1]
        if depth != indent:
            raise _NotPlain
        if dash is not None:  # an entry of a block sequence
            if type(collection) is not list:
                raise _NotPlain
            here = (*path, len(collection))
            if key is None:
                collection.append(item)
                positions[here] = (number, found.start(5) + 1)
                continue
            if len(opened) >= _MOST_LEVELS:
                raise _NotPlain
            indent = found.start(3)  # a mapping in the entry, its keys in this column
            collection.append({})
            collection = collection[-1]
            positions[here] = (number, indent + 1)
            opened.append((indent, collection, here))
            path = here
        if type(collection) is not dict or key in collection:
            raise _NotPlain
        here = (*path, key)
        if value is None:
            collection[key] = None  # a placeholder keeping the key's order
            pending = (collection, key, here, indent, (number, found.end(3) + 2))
            continue
        start = found.start(4)
        positions[here] = (number, start + 1)
        first = value[0]
        if first == "{":
            collection[key] = _flow_mapping(value, start, number, here, positions)
        elif first == "[":
            collection[key] = _flow_sequence(value, start, number, here, positions)
        else:
            collection[key] = value
    documents.append(_finished(root, positions, pending))  # the last document
    return documents


def _flow_mapping(text: str, start: int, number: int, path: tuple, positions: Positions):
    """A one-line flow mapping of plain scalars, its items placed."""
    mapping: dict[str, str] = {}
    at, item = 1, _MAPPING_ITEM.match
    while (found := item(text, at)) is not None:
        key = found[1]
        if key in mapping:
            raise _NotPlain
        mapping[key] = found[2]
        positions[(*path, key)] = (number, start + found.start(2) + 1)
        at = found.end()
    if text[at:].lstrip(" ") != "}":
        raise _NotPlain
    return mapping


def _flow_sequence(text: str, start: int, number: int, path: tuple, positions: Positions):
    """A one-line flow sequence of plain scalars, its items placed."""
    sequence: list[str] = []
    at, item = 1, _SEQUENCE_ITEM.match
    while (found := item(text, at)) is not None:
        positions[(*path, len(sequence))] = (number, start + found.start(1) + 1)
        sequence.append(found[1])
        at = found.end()
    if text[at:].lstrip(" ") != "]":
        raise _NotPlain
    return sequence


def _finished(root: dict | None, positions: Positions, pending) -> tuple[object, Positions]:
    if root is None:  # an empty document: yaml_source says what it holds
        raise _NotPlain
    if pending is not None:
        mapping, name, path, _, empty = pending
        mapping[name] = ""
        positions[path] = empty
    return root, positions
