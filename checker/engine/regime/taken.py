"""A read-through view of the solved values: each quantity taken from a base mapping
(one element of a sweep chunk's one-value array, the rows of some calculations, a column
of the summaries) on its first read, and kept.  The readers of the ~150 solved quantities
each ask for a few dozen: only those are taken."""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any


class Made(dict[str, Any]):
    """``make(name)`` for each ``name`` read, made once and kept (a KeyError from ``make``
    keeps nothing)."""

    def __init__(self, make: Callable[[str], Any]) -> None:
        super().__init__()
        self._make = make

    def __missing__(self, name: str) -> Any:
        value = self[name] = self._make(name)
        return value


class Taken(Made):
    """``take(base[name])`` for each ``name`` read, made once; a name ``base`` lacks raises
    KeyError as ``base`` does, and ``in`` asks ``base``."""

    def __init__(self, base: Mapping[str, Any], take: Callable[[Any], Any]) -> None:
        super().__init__(lambda name: take(base[name]))
        self._base = base

    def __contains__(self, name: object) -> bool:
        return name in self._base
