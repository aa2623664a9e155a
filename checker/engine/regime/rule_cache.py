"""The rule cache: validated rule sets kept between runs, so a check whose rule files
are unchanged neither re-reads nor re-validates them (reading and validating the shipped
rules was about a quarter of a one-file check's own start-up).

One file per installed rule folder in the user's cache folder (``$XDG_CACHE_HOME/regimecheck``,
else ``~/.cache/regimecheck``).  It is used only when its key matches: a hash of the
rule files' names and contents and of the package's code (user_cache.code_stamp: every
module, the Python, numpy and sympy installs); the set must hold one rule per file, named as
its file.  It is read by an unpickler that admits the rule classes and
the expression tree only, so a file planted in the cache folder can name no other code;
anything unreadable, foreign or stale is ignored and the rules are read afresh.  Where
the folder cannot be written the rules are simply read each run.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from pathlib import Path
from typing import TYPE_CHECKING

from ...user_cache import entry_name, kept

if TYPE_CHECKING:
    from .rulebook import Rule

# the only globals a cache file may name
_ALLOWED = {
    ("checker.engine.regime.rulebook", "Rule"),
    ("checker.engine.regime.rulebook", "Compiled"),
    ("checker.engine.regime.rulebook", "Correction"),
    ("checker.engine.regime.rulebook", "Implication"),
    ("checker.engine.regime.rulebook", "PerCarrier"),
    ("checker.engine.expressions.tree", "Node"),
}


def _is_rule_set(found: object, paths: Sequence[Path]) -> bool:
    """A tuple of rules, one per rule file, each named as its file."""
    from .rulebook import Rule

    return (
        isinstance(found, tuple)
        and all(isinstance(rule, Rule) for rule in found)
        and sorted(rule.id for rule in found) == sorted(path.stem for path in paths)
    )


def cached(
    folder: Path, paths: Sequence[Path], read: Callable[[], tuple[Rule, ...]]
) -> tuple[Rule, ...]:
    """The rules of ``folder`` (its rule files ``paths``): the cached set where its key
    matches, else ``read()``, which is then cached (only a set that read without error)."""

    def fits(found: object) -> bool:
        return _is_rule_set(found, paths)

    rules = kept(entry_name("rules", folder), paths, _ALLOWED, read, fits)
    return rules  # type: ignore[return-value]  # _is_rule_set checked it
