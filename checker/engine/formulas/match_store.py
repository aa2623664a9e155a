"""Formula matches kept between runs: the limit search of a formula text (a numeric search
over limit sets, then a symbolic proof, some 10-25 ms a text, sympy's import where our
normal form cannot prove it) is done once per text and code, not once per run.

One JSON file in the user's cache folder (that of the rule cache) per version of the code
(user_cache.code_stamp: every module of the package, the Python, numpy and sympy installs): its
name holds that stamp's hash, so a changed module starts a new file and the old ones are
removed when it is written.  An entry records only the
outcome -- status, world, the ids of the chosen limits, the proof -- and the Match is
rebuilt from the catalogue (relations.limits), so a file holds no code, only words; an
entry naming a limit the catalogue lacks is ignored and the search runs.  Anything
unreadable is ignored; where the folder cannot be written the search runs each time.
"""

from __future__ import annotations

import contextlib
import json
from pathlib import Path
from typing import Any

from ...user_cache import blake2b, code_stamp, usable_folder, write_whole

_MOST = 4096  # entries kept; beyond, the file starts afresh

# an outcome: [status, world or None, limit ids, proof or None]
Outcome = list[Any]


class MatchStore:
    """The outcomes of one code version, read on first use, written back by save()."""

    def __init__(self) -> None:
        self._file: Path | None = None
        self._outcomes: dict[str, Outcome] | None = None
        self._added = False

    def _load(self) -> dict[str, Outcome]:
        if self._outcomes is None:
            try:
                digest = blake2b(digest_size=12)
                digest.update(code_stamp().encode())
                folder = usable_folder()
                if folder is None:  # REGIMECHECK_CACHE=off: nothing read or kept
                    self._outcomes = {}
                    return self._outcomes
                self._file = folder / f"matches-{digest.hexdigest()}.json"
                found = json.loads(self._file.read_text(encoding="utf-8"))
                self._outcomes = found if isinstance(found, dict) else {}
            except (OSError, ValueError):
                self._outcomes = {}
        return self._outcomes

    def get(self, key: str) -> Outcome | None:
        outcome = self._load().get(key)
        return outcome if isinstance(outcome, list) and len(outcome) == 4 else None

    def put(self, key: str, outcome: Outcome) -> None:
        outcomes = self._load()
        if len(outcomes) >= _MOST:
            outcomes.clear()
        outcomes[key] = outcome
        self._added = True

    def save(self) -> None:
        """Write the outcomes found in this run (whole or not at all)."""
        if not self._added or self._file is None or self._outcomes is None:
            return
        if write_whole(self._file, json.dumps(self._outcomes).encode()):
            self._added = False
            # entries of other code versions can never match again: keep the folder small
            for old in self._file.parent.glob("matches-*.json"):
                if old != self._file:
                    with contextlib.suppress(OSError):
                        old.unlink()


def key(*parts: object) -> str:
    """The store's key of a formula's analysis (trees, dimensionality, majority, band)."""
    return blake2b(repr(parts).encode(), digest_size=16).hexdigest()


STORE = MatchStore()
