"""A read-through view of the solved values: each quantity taken from a base mapping
(one element of a sweep chunk's one-value array, the rows of some calculations, a column
of the summaries) on its first read, and kept.  The readers of the ~150 solved quantities
each ask for a few dozen: only those are taken."""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any


class Taken(dict[str, Any]):
    """``take(base[name])`` for each ``name`` read, made once; a name ``base`` lacks raises
    KeyError as ``base`` does, and ``in`` asks ``base``."""

    def __init__(self, base: Mapping[str, Any], take: Callable[[Any], Any]) -> None:
        super().__init__()
        self._base, self._take = base, take

    def __missing__(self, name: str) -> Any:
        value = self[name] = self._take(self._base[name])
        return value

    def __contains__(self, name: object) -> bool:
        return name in self._base
