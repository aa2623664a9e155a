"""Input files as UTF-8 text; where one is not, the place of the first byte that is not.

An editor shows lines and columns, a hex viewer byte offsets: the message gives both
(``line:column: ... byte 0xE9 at byte offset 41``), so the author can find and fix the
character (a Latin-1 or Windows-1252 save is the usual cause).
"""

from __future__ import annotations

import io
from collections.abc import Iterable

_BOM = b"\xef\xbb\xbf"


def undecodable(lines: Iterable[bytes]) -> str:
    """``"line:column: ..."`` of the first byte of ``lines`` (a file's lines, each with
    its b"\\n") that is not UTF-8, or "" where all are.  Lines are decoded one by one:
    b"\\n" is never part of a multi-byte UTF-8 sequence, so this is exact."""
    offset = 0
    for number, raw in enumerate(lines, 1):
        try:
            raw.decode("utf-8")
        except UnicodeDecodeError as exc:
            before = raw[: exc.start]
            if number == 1:
                before = before.removeprefix(_BOM)  # a byte-order mark is no column
            column = len(before.decode("utf-8")) + 1
            return (
                f"{number}:{column}: not UTF-8 text: byte 0x{raw[exc.start]:02X} at byte "
                f"offset {offset + exc.start} cannot be read as UTF-8"
            )
        offset += len(raw)
    return ""


def decode_utf8(raw: bytes) -> tuple[str, str]:
    """(text, "") of UTF-8 bytes, else ("", where and what the first bad byte is)."""
    try:
        return raw.decode("utf-8"), ""
    except UnicodeDecodeError:
        return "", undecodable(io.BytesIO(raw))


def read_text_file(path: str) -> tuple[str, str | None]:
    """(text, None) of a UTF-8 input file, or ("", the error message)."""
    try:
        with open(path, "rb") as file:  # as Path.read_bytes, without a Path per file
            raw = file.read()
    except OSError as exc:
        return "", f"{path}: cannot read the file ({exc.strerror})"
    text, problem = decode_utf8(raw)
    if problem:
        return "", f"{path}:{problem}; save the file as UTF-8"
    # universal newlines, as text-mode reading gives them (lines end in "\n" only)
    return text.replace("\r\n", "\n").replace("\r", "\n"), None
