"""Which reader an input file goes to, by its suffix."""
from __future__ import annotations

from pathlib import Path

from .calculation_file import FileResult, read_calculation_file
from .memo import MEMO_SUFFIXES, read_memo

CALCULATION_SUFFIXES = (".yaml", ".yml")
KNOWN = CALCULATION_SUFFIXES + MEMO_SUFFIXES


def read_input(path, explicit: bool = True) -> FileResult:
    """The calculations of one input file.  ``explicit``: named on the command line (a
    memo without calculation blocks is then an error; found by a walk it is skipped)."""
    suffix = Path(path).suffix.lower()
    if suffix in CALCULATION_SUFFIXES:
        return read_calculation_file(path)
    if suffix in MEMO_SUFFIXES:
        return read_memo(path, explicit)
    return FileResult(str(path), [], [f"{path}: regimecheck reads calculation files "
                                      f"({', '.join(KNOWN)}); rename it or leave it out"])
