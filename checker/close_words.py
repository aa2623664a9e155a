"""'Did you mean' suggestions for a misspelt key, word or name.

difflib is imported on the first suggestion only: a run whose input is sound never
needs it, and its import is a measurable share of a one-file check's start-up.
"""

from __future__ import annotations

from collections.abc import Iterable


def close_matches(
    word: str, possibilities: Iterable[str], n: int = 3, cutoff: float = 0.6
) -> list[str]:
    """The ``n`` possibilities most like ``word`` (best first), as difflib ranks them."""
    import difflib

    return difflib.get_close_matches(word, list(possibilities), n=n, cutoff=cutoff)
