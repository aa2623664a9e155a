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


def did_you_mean(word: str, possibilities: Iterable[str], n: int = 2) -> str:
    """ "did you mean 'a' or 'b'?" with the ``n`` nearest possibilities, or "" where none
    is near (a near miss like "assumptions" is as close to "options" as to "assumes")."""
    close = close_matches(word, possibilities, n=n)
    return f"did you mean {' or '.join(repr(c) for c in close)}?" if close else ""
