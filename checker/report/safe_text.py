"""User text made safe for every report: names, waiver reasons, file names and messages
come from files we do not control.

:func:`visible` writes each character a terminal or an XML parser would act on or
refuse as a visible escape (``\\x1b``, ``\\ud800``, ``\\u202e``): control characters
(an ESC could restyle or rewrite the reader's terminal), lone surrogates (cannot be
encoded, e.g. from a file name that is not UTF-8), U+FFFE/U+FFFF (forbidden in XML
1.0) and the bidirectional overrides (they reorder what a reviewer reads).  Tab and
newline stay.  Each format adds its own quoting (HTML entities, Markdown escapes).
"""

from __future__ import annotations

import re

_UNSAFE = re.compile(
    "[\x00-\x08\x0b-\x1f\x7f-\x9f\u061c\u200e\u200f\u202a-\u202e"
    "\u2066-\u2069\ud800-\udfff\ufffe\uffff]"
)


def _escape(match) -> str:
    return ascii(match.group(0))[1:-1]  # '\x1b' -> \x1b, '\ud800' -> \ud800


def visible(text) -> str:
    """``text`` (any object, as str) with every unsafe character written as an escape."""
    return _UNSAFE.sub(_escape, str(text))


def visible_data(data):
    """A JSON-ready tree (dicts, lists, strings, numbers) with :func:`visible` applied to
    every string, keys included."""
    if isinstance(data, str):
        return visible(data)
    if isinstance(data, dict):
        return {visible_data(key): visible_data(value) for key, value in data.items()}
    if isinstance(data, (list, tuple)):
        return [visible_data(item) for item in data]
    return data
