"""Which reader an input file goes to, by its suffix."""

from __future__ import annotations

import os

from .calculation_file import FileResult, read_calculation_file
from .memo import MEMO_SUFFIXES, read_memo
from .table import TABLE_SUFFIXES, read_table

CALCULATION_SUFFIXES = (".yaml", ".yml")
KNOWN = CALCULATION_SUFFIXES + MEMO_SUFFIXES + TABLE_SUFFIXES


def _suffix(path: str) -> str:
    """Path(path).suffix (its rule: the last '.' of the name, not first or last), without
    making a Path of each of a walk's files."""
    name = os.path.basename(path.rstrip("/" + os.sep))
    dot = name.rfind(".")
    return name[dot:] if 0 < dot < len(name) - 1 else ""


def read_input(path, explicit: bool = True, columns=None) -> FileResult:
    """The calculations of one input file.  ``explicit``: named on the command line (a
    memo without calculation blocks, or YAML without a ``material`` key, is then an
    error; found by a walk, or with --skip-unrelated, it is skipped).
    ``columns``: our table key -> the header a CSV uses for it."""
    suffix = _suffix(os.fspath(path)).lower()
    if suffix in CALCULATION_SUFFIXES:
        return read_calculation_file(path, explicit)
    if suffix in MEMO_SUFFIXES:
        return read_memo(path, explicit)
    if suffix in TABLE_SUFFIXES:
        return read_table(path, columns)
    return FileResult(
        str(path),
        [],
        [
            f"{path}: regimecheck reads calculation files "
            f"({', '.join(KNOWN)}); rename it or leave it out"
        ],
    )
