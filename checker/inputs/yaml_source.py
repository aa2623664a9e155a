"""Safe YAML loading for user files: positions kept for messages, and refused with
file:line:column:

- aliases (``*name``) and merge-by-alias: every value is written out;
- duplicate keys, and keys that are not plain text (``? [a, b]``);
- explicit tags (``!!float abc``, ``!!timestamp``): every value is read as text and
  parsed by regimecheck itself;
- control characters (NUL, BEL, form feed, ...) anywhere in the file, and characters
  that are not Unicode text (a lone surrogate written as an escape, ``"\\ud800"``);
- nesting deeper than MAX_NESTING levels (the deepest calculation, a user material's
  mobility model range, needs 7).
"""

from __future__ import annotations

import re
from collections.abc import Callable
from typing import Any

import yaml

from ..errors import InputError

MAX_NESTING = 32
TOO_DEEP = "the YAML is nested more than"
# C0 controls other than tab/line feed/carriage return, DEL, C1 controls other than
# NEL, surrogates and the two non-characters PyYAML also refuses
_FORBIDDEN = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x84\x86-\x9f\ud800-\udfff\ufffe\uffff]")
_CONTROL_NAMES = {
    0x00: "NUL",
    0x07: "BEL",
    0x08: "backspace",
    0x0B: "vertical tab",
    0x0C: "form feed",
    0x1B: "escape",
    0x7F: "DEL",
}


def describe_character(char: str) -> str:
    code = ord(char)
    if code >= 0xD800:  # a surrogate or a non-character: not text at all
        return f"an invalid character U+{code:04X}"
    name = _CONTROL_NAMES.get(code)
    return f"the control character U+{code:04X}" + (f" ({name})" if name else "")


def _character_errors(text: str, name: str) -> list:
    """(line, message) of every control or invalid character in ``text`` (1-based lines)."""
    found = []
    for match in _FORBIDDEN.finditer(text):
        line = text.count("\n", 0, match.start()) + 1
        column = match.start() - (text.rfind("\n", 0, match.start()) + 1) + 1
        found.append(
            (
                line,
                f"{name}:{line}:{column}: the file holds "
                f"{describe_character(match.group())}; delete it (an editor that "
                "shows invisible characters helps)",
            )
        )
    return found


_DOCUMENT_MARK = re.compile(r"^(---|\.\.\.)(\s|$)")
_BRACKETS = re.compile(r"[\[\]{}]")
# what changes the depth on a line: a bracket, a comment (' #' or '#' opening the line) and
# a quote that starts a scalar (at the line's start or after '- ', or after '[', '{', ','
# or ':' and blanks); a quote inside a plain scalar (it's, 5'') is text
_FLOW_TOKEN = re.compile(r"""[\[\]{}]|(?:^|(?<=\s))#|(?:(?<=[\[{,:])|^\s*(?:-\s+)?)\s*(["'])""")


_DOCUMENT_MARKS = re.compile(r"^(?:---|\.\.\.)(?:\s|$)", re.MULTILINE)


def _has_deep_document(text: str) -> bool:
    """Whether some document (the text between two '---' or '...' lines) holds more
    than MAX_NESTING '[' and '{', the fewest that can nest deeper (the usual file of
    many calculations has a few in each, and is then not read line by line)."""
    if text.count("[") + text.count("{") <= MAX_NESTING:
        return False
    starts = [0, *(mark.start() for mark in _DOCUMENT_MARKS.finditer(text)), len(text)]
    return any(
        text.count("[", start, end) + text.count("{", start, end) > MAX_NESTING
        for start, end in zip(starts, starts[1:])
    )


def _without_deep_flow(text: str, name: str) -> tuple[str, list]:
    """(text with every document whose '[' / '{' brackets nest deeper than MAX_NESTING
    blanked, one message per such document).

    PyYAML's scanner slows quadratically with flow nesting (20,000 '[' take minutes), so
    this is decided on the text before parsing.  Blank lines keep the line numbers of the
    other documents, which are still read.  Quoted text is skipped roughly: a quoted
    scalar is taken to end on its line, at the next quote of its kind."""
    if not _has_deep_document(text):
        return text, []  # too few brackets in any document to nest that deep
    lines = text.split("\n")
    errors: list[str] = []
    start, depth, deep = 0, 0, None

    def close(end):
        if deep is not None:
            errors.append(deep)
            lines[start:end] = [""] * (end - start)

    for number, line in enumerate(lines):
        if _DOCUMENT_MARK.match(line):
            close(number)
            start, depth, deep = number + 1, 0, None
            continue
        if not _BRACKETS.search(line):
            continue  # quotes are balanced per line: nothing here changes the depth
        at = 0
        while (match := _FLOW_TOKEN.search(line, at)) is not None:
            char, quote = match.group(), match.group(1)
            at = match.end()
            if quote:  # skip the quoted text (to the line's end if it does not close)
                closing = line.find(quote, at)
                at = len(line) if closing < 0 else closing + 1
            elif char == "#":
                break  # a comment: the rest of the line
            elif char in "[{":
                depth += 1
                if depth > MAX_NESTING and deep is None:
                    deep = (
                        f"{name}:{number + 1}:{match.start() + 1}: {TOO_DEEP} "
                        f"{MAX_NESTING} levels deep; a calculation needs fewer than 10: "
                        "flatten it"
                    )
            elif char in "]}":
                depth = max(depth - 1, 0)
    close(len(lines))
    return "\n".join(lines), errors


def check_characters(text: str, name: str):
    """Refuse a text holding control characters, naming the line and column of the first."""
    found = _character_errors(text, name)
    if found:
        raise InputError(found[0][1])


def _at(mark, name: str) -> str:
    """file:line:column of a mark (``name``: libyaml's marks carry no file name)."""
    return f"{name}:{mark.line + 1}:{mark.column + 1}"


def _blank_node(mark):
    return yaml.ScalarNode("tag:yaml.org,2002:null", "", mark, mark)


class _StrictRules(yaml.composer.Composer):
    """Composer rules that refuse aliases, tags, duplicate or composite keys and deep
    nesting, over any YAML event source (libyaml's parser or PyYAML's pure-Python one).

    A refusal is recorded in ``problems`` and composing goes on, so that the other
    documents of the file are still read."""

    problems: list
    _depth: int
    name: str
    # supplied by the event source
    peek_event: Callable[[], yaml.Event]
    get_event: Callable[[], yaml.Event]

    def _refuse(self, mark, message: str):
        self.problems.append(f"{_at(mark, self.name)}: {message}")

    def compose_node(self, parent, index):
        event = self.peek_event()
        if isinstance(event, yaml.AliasEvent):
            self.get_event()
            self._refuse(
                event.start_mark, "YAML aliases (*name) are not accepted; write the value out"
            )
            return _blank_node(event.start_mark)
        tag = getattr(event, "tag", None)
        if tag is not None:
            shown = tag.replace("tag:yaml.org,2002:", "!!")
            self._refuse(
                event.start_mark,
                f"YAML tags ({shown}) are not accepted; write the "
                "value as plain text (regimecheck reads every value itself)",
            )
        if self._depth >= MAX_NESTING:
            if not any(TOO_DEEP in problem for problem in self.problems):
                self._refuse(
                    event.start_mark,
                    f"{TOO_DEEP} {MAX_NESTING} levels deep; a "
                    "calculation needs fewer than 10: flatten it",
                )
            self._skip_node()
            return _blank_node(event.start_mark)
        self._depth += 1
        try:
            node = super().compose_node(parent, index)
        finally:
            self._depth -= 1
        if isinstance(node, yaml.ScalarNode):
            self._check_scalar(node)
        return node

    def _check_scalar(self, node):
        if bad := _FORBIDDEN.search(node.value):
            self._refuse(
                node.start_mark,
                f"the value holds {describe_character(bad.group())}; "
                "remove the escape that writes it",
            )

    def _skip_node(self):
        """Consume the events of one node without recursion."""
        depth = 0
        while True:
            event = self.get_event()
            if isinstance(event, (yaml.MappingStartEvent, yaml.SequenceStartEvent)):
                depth += 1
            elif isinstance(event, (yaml.MappingEndEvent, yaml.SequenceEndEvent)):
                depth -= 1
            if depth == 0:
                return

    def compose_mapping_node(self, anchor):
        node = super().compose_mapping_node(anchor)
        self._check_keys(node)
        return node

    def _check_keys(self, node):
        seen: dict[str, int] = {}  # key -> its line (0-based)
        for key_node, _ in node.value:
            if not isinstance(key_node, yaml.ScalarNode):
                self._refuse(
                    key_node.start_mark,
                    "a key must be a plain word, not a list or "
                    "mapping ('? [a, b]'); write key: value",
                )
            elif key_node.value in seen:
                self._refuse(
                    key_node.start_mark,
                    f"duplicate key {key_node.value!r} (first at "
                    f"line {seen[key_node.value] + 1}); keep one",
                )
            else:
                seen[key_node.value] = key_node.start_mark.line


class _StrictLoader(_StrictRules, yaml.SafeLoader):
    """The strict rules on PyYAML's pure-Python scanner and parser (where libyaml is
    absent, and for load_yaml_text, which constructs values)."""

    def __init__(self, stream):
        super().__init__(stream)
        self.problems, self._depth = [], 0


# the tags PyYAML's resolver gives a node without an explicit tag, minus the
# scalar forms (bool, int, float, null...) that regimecheck reads itself
_STR_TAG, _SEQ_TAG, _MAP_TAG = (f"tag:yaml.org,2002:{kind}" for kind in ("str", "seq", "map"))
_PLAIN_TAGS = {yaml.ScalarNode: _STR_TAG, yaml.SequenceNode: _SEQ_TAG, yaml.MappingNode: _MAP_TAG}
_CParser: Any = getattr(getattr(yaml, "_yaml", None), "CParser", None)


# Where libyaml's and PyYAML's parsers disagree, PyYAML's reading is kept: libyaml accepts
# tabs and explicit '?' keys in places PyYAML refuses, ends a tag in flow style before a
# comma PyYAML takes into it ('[!a, b]'), and counts a byte-order mark inside the text
# (not at its start) as no column.  A text holding one of these is read by PyYAML's
# parser alone.
def _pure_only(text: str) -> bool:
    return "\t" in text or "?" in text or "!" in text or "\ufeff" in text[1:]


# A block collection nested in another stands further right (its indent or a '- '), so a
# text whose lines all start with fewer than this many blanks and dashes nests fewer than
# about twice as many block levels: far below the depth at which libyaml's composer, which
# recurses once a level with no limit of its own, overflows the C stack (between 2e4 and
# 5e4 levels measured); a text with such a line is composed event by event, which stops at
# MAX_NESTING.
_DEEP_BLOCK = re.compile(r"^[ -]{1000}", re.MULTILINE)


class _PlainTags:
    """Scalars are not resolved (every value is read as text by regimecheck): each node
    gets the plain tag of its kind."""

    def resolve(self, kind, value, implicit):
        return _PLAIN_TAGS[kind]

    def descend_resolver(self, parent, index):  # no path-dependent tags
        pass

    def ascend_resolver(self):
        pass


if _CParser is not None:

    class _StrictEventLoader(_StrictRules, _PlainTags, _CParser):
        """The strict rules composed in Python over libyaml's events (which carry the
        same line and column marks): the scanner and parser, most of the cost, run in C.
        libyaml's own composer is not used: it resolves aliases and keeps no trace of
        an explicit tag or a repeated key.  libyaml's marks name no file, so messages
        take the name from the loader."""

        def __init__(self, stream):
            _CParser.__init__(self, stream)
            yaml.composer.Composer.__init__(self)
            self.problems, self._depth = [], 0

        def compose_node(self, parent, index):
            """The common case composed directly: a scalar, mapping or sequence without
            anchor or tag, above the nesting limit.  Everything else (aliases, anchors,
            tags, the limit) takes the general path of the strict rules."""
            # libyaml's events carry the attributes of their kind (the stubs type them all
            # as the base Event), and its marks are its own Mark type
            event: Any = self.peek_event()
            kind = type(event)
            if (
                kind is yaml.AliasEvent
                or event.anchor is not None
                or event.tag is not None
                or self._depth >= MAX_NESTING
            ):
                return super().compose_node(parent, index)
            self.get_event()
            if kind is yaml.ScalarEvent:
                return self._scalar(event)
            mapping = kind is yaml.MappingStartEvent
            node: Any = (yaml.MappingNode if mapping else yaml.SequenceNode)(
                _MAP_TAG if mapping else _SEQ_TAG,
                [],
                event.start_mark,
                None,
                flow_style=event.flow_style,
            )
            end = yaml.MappingEndEvent if mapping else yaml.SequenceEndEvent
            items = node.value
            self._depth += 1
            while True:
                # a plain scalar (most keys and values) is taken here, without a call
                # through compose_node; anything else goes through it (the same checks)
                item: Any = self.peek_event()
                if type(item) is end:
                    break
                if (
                    type(item) is yaml.ScalarEvent
                    and item.anchor is None
                    and item.tag is None
                    and self._depth < MAX_NESTING  # else compose_node refuses the depth
                ):
                    self.get_event()
                    child = self._scalar(item)
                else:
                    child = self.compose_node(node, None if mapping else len(items))
                items.append(child)
            self._depth -= 1
            if mapping:  # keys and values alternate
                node.value = list(zip(items[::2], items[1::2]))
            node.end_mark = self.get_event().end_mark
            if mapping:
                self._check_keys(node)
            return node

        def _scalar(self, event: Any) -> yaml.ScalarNode:
            node = yaml.ScalarNode(
                _STR_TAG, event.value, event.start_mark, event.end_mark, style=event.style
            )
            # the text was cleared of forbidden characters before parsing, so only a
            # double-quoted scalar's escapes ("\x07") can write one
            if event.style == '"':
                self._check_scalar(node)
            return node

    class _PlainTreeLoader(_PlainTags, _CParser):
        """libyaml's own composer (the whole node tree built in C), for a text that can
        hold no anchor, alias or tag (no '&', '*' at a node's start is then an undefined
        alias, which libyaml refuses).  The strict rules' other checks (duplicate and
        composite keys, nesting, escapes in double quotes) are run over the finished
        tree by :func:`_tree_is_plain`; a tree that fails one, or a YAML error, sends the
        text back to the event composer, which words every message."""

        def __init__(self, stream):
            _CParser.__init__(self, stream)
            self.problems = []

        def get_node(self):
            node = _CParser.get_node(self)
            if node is not None and not _tree_is_plain(node):
                raise _NotPlain
            return node

    _COMPOSER: type = _StrictEventLoader
else:  # PyYAML built without libyaml
    _COMPOSER = _StrictLoader


class _NotPlain(yaml.YAMLError):
    """A tree the strict rules would refuse or word: composed again event by event."""


def _tree_is_plain(root) -> bool:
    """No duplicate or composite key, no node MAX_NESTING or more levels deep and no
    double-quoted scalar writing a forbidden character (the strict rules' checks that a
    text without '&' and '!' can still fail)."""
    scalar = yaml.ScalarNode
    if type(root) is scalar:
        return _plain_scalar(root)
    stack = [(root, 0)]  # collections and their depth; a scalar is checked in place
    while stack:
        node, depth = stack.pop()
        if not node.value:
            continue
        if depth + 1 >= MAX_NESTING:  # where its children stand
            return False
        if type(node) is yaml.MappingNode:
            keys = set()
            for key, value in node.value:
                if type(key) is not scalar or key.value in keys or not _plain_scalar(key):
                    return False
                keys.add(key.value)
                if type(value) is not scalar:
                    stack.append((value, depth + 1))
                elif not _plain_scalar(value):
                    return False
        else:
            for child in node.value:
                if type(child) is not scalar:
                    stack.append((child, depth + 1))
                elif not _plain_scalar(child):
                    return False
    return True


def _plain_scalar(node) -> bool:
    return node.style != '"' or not _FORBIDDEN.search(node.value)


def _compose(loader_class, text: str, name: str, bad_characters: list, fallback=False):
    """(nodes, errors) of every document; ``fallback``: a YAML error is raised instead
    of reported."""
    loader = loader_class(text)
    loader.name = name
    nodes, errors = [], []
    try:
        while loader.check_node():
            loader.problems = []
            node = loader.get_node()
            lines = (node.start_mark.line + 1, node.end_mark.line + 1) if node else (0, -1)
            inside = [message for line, message in bad_characters if lines[0] <= line <= lines[1]]
            if loader.problems or inside:
                errors += loader.problems + inside
            elif node is not None:
                nodes.append(node)
    except yaml.MarkedYAMLError as exc:
        if fallback:
            raise
        mark = exc.problem_mark
        errors.append(f"{_at(mark, name) if mark else name}: malformed YAML: {exc.problem}")
    except yaml.YAMLError as exc:  # reader errors carry no mark
        if fallback:
            raise
        errors.append(f"{name}: malformed YAML: {exc}")
    finally:
        loader.dispose()
    return nodes, errors


def compose_documents(text: str, name: str) -> tuple[list, list]:
    """(node tree of every sound document, error messages) of a user's YAML text.

    Nothing is constructed: the caller reads the scalars as text.  A document with a
    refused construct is left out and its errors reported; the others are kept.  A
    control character is deleted for parsing and refuses the document holding it."""
    text, deep = _without_deep_flow(text, name)
    bad_characters = _character_errors(text, name)
    if bad_characters:
        text = _FORBIDDEN.sub("", text)  # deleted: a blank could change indentation
    if _COMPOSER is _StrictLoader or _pure_only(text):
        nodes, errors = _compose(_StrictLoader, text, name, bad_characters)
        return nodes, deep + _with_unreported(errors, bad_characters)
    if not bad_characters and "&" not in text and not _DEEP_BLOCK.search(text):
        try:  # the usual file: nothing to refuse, the tree built by libyaml
            return _compose(_PlainTreeLoader, text, name, [], fallback=True)[0], deep
        except yaml.YAMLError:
            pass  # something to refuse or to word: the strict composer below says it
    try:
        nodes, errors = _compose(_COMPOSER, text, name, bad_characters, fallback=True)
    except yaml.YAMLError:
        # malformed YAML: PyYAML's own parser reads it again, so that what it reports
        # (and which documents it still reads) is the same with or without libyaml
        nodes, errors = _compose(_StrictLoader, text, name, bad_characters)
    return nodes, deep + _with_unreported(errors, bad_characters)


def _with_unreported(errors: list, bad_characters: list) -> list:
    """``errors`` and each control-character message not already among them."""
    reported = set(errors)
    return errors + [message for _, message in bad_characters if message not in reported]


def load_yaml_text(text: str, name: str):
    """Parse one YAML document strictly into Python values (the package's own files in
    tests); errors become InputError with file:line:column."""
    check_characters(text, name)
    loader = _StrictLoader(text)
    loader.name = name
    try:
        data = loader.get_single_data()
        if loader.problems:
            raise InputError(loader.problems[0])
        return data
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark
        where = _at(mark, name) if mark else name
        raise InputError(f"{where}: malformed YAML: {exc.problem}") from None
    except (yaml.YAMLError, ValueError, TypeError) as exc:
        raise InputError(f"{name}: malformed YAML: {exc}") from None
    finally:
        loader.dispose()


_FAST_LOADER = getattr(yaml, "CSafeLoader", yaml.SafeLoader)


def load_package_yaml(text: str, name: str):
    """Parse one of the package's own data files (materials, rules) with libyaml
    where available: ten times faster than the pure-Python strict loader, which
    a test runs over every shipped file so that no alias or duplicate key slips in."""
    try:
        return yaml.load(text, Loader=_FAST_LOADER)  # noqa: S506 - a safe loader
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark
        where = f"{name}:{mark.line + 1}:{mark.column + 1}" if mark else name
        raise InputError(f"{where}: malformed YAML: {exc.problem}") from None
