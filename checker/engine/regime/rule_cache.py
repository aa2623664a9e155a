"""The rule cache: validated rule sets kept between runs, so a check whose rule files
are unchanged neither re-reads nor re-validates them (reading and validating the shipped
rules was about a quarter of a one-file check's own start-up).

One file per installed rule folder in the user's cache folder (``$XDG_CACHE_HOME/regimecheck``,
else ``~/.cache/regimecheck``).  It is used only when its key matches: a hash of the
rule files' names and contents, of the source of the modules that read and build rules,
and of the Python version.  It is read by an unpickler that admits the rule classes and
the expression tree only, so a file planted in the cache folder can name no other code;
anything unreadable, foreign or stale is ignored and the rules are read afresh.  Where
the folder cannot be written the rules are simply read each run.
"""

from __future__ import annotations

import io
import pickle
import sys
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ..user_cache import blake2b, cache_folder, write_whole

if TYPE_CHECKING:
    from .rulebook import Rule

_ENGINE = Path(__file__).resolve().parent.parent
# the modules whose code decides what a rule file becomes (the field table, the parser,
# the dimension check, the vocabulary): a change to any of them invalidates the cache
_READER_SOURCES = tuple(
    _ENGINE.parent / name
    for name in (
        "vocabulary_words.py",
        "quantity_registry/registry.py",
        "quantity_registry/display_units.py",
        "engine/vocabulary.py",
        "engine/expressions/tree.py",
        "engine/expressions/parser.py",
        "engine/expressions/dimensions.py",
        "engine/expressions/dimension_check.py",
        "engine/expressions/_relation_texts.py",
        "engine/regime/rule_fields.py",
        "engine/regime/rule_reader.py",
        "engine/regime/rulebook.py",
        "engine/regime/rule_cache.py",
    )
)
# the only globals a cache file may name
_ALLOWED = {
    ("checker.engine.regime.rulebook", "Rule"),
    ("checker.engine.regime.rulebook", "Compiled"),
    ("checker.engine.regime.rulebook", "Correction"),
    ("checker.engine.regime.rulebook", "Implication"),
    ("checker.engine.regime.rulebook", "PerCarrier"),
    ("checker.engine.expressions.tree", "Node"),
}


def key(folder: Path, paths: Sequence[Path]) -> str:
    """The hash of everything a cached rule set of ``folder`` depends on."""
    digest = blake2b(digest_size=20)
    digest.update(f"{sys.version}\0{folder}\0".encode())
    for path in (*_READER_SOURCES, *paths):
        digest.update(f"{path.name}\0".encode())
        digest.update(path.read_bytes())
        digest.update(b"\0")
    return digest.hexdigest()


class _RuleUnpickler(pickle.Unpickler):
    def find_class(self, module: str, name: str) -> Any:
        if (module, name) not in _ALLOWED:
            raise pickle.UnpicklingError(f"{module}.{name} is not part of a rule set")
        return super().find_class(module, name)


def _file_of(folder: Path) -> Path:
    name = blake2b(str(folder).encode(), digest_size=8).hexdigest()
    return cache_folder() / f"rules-{name}.pickle"


def _stored(file: Path, wanted: str) -> tuple[Rule, ...] | None:
    from .rulebook import Rule

    try:
        found, rules = _RuleUnpickler(io.BytesIO(file.read_bytes())).load()
    except Exception:  # absent, truncated, foreign: read the rules afresh
        return None
    if found != wanted or not isinstance(rules, tuple):
        return None
    if not all(isinstance(rule, Rule) for rule in rules):
        return None
    return rules


def _store(file: Path, wanted: str, rules: tuple[Rule, ...]) -> None:
    write_whole(file, pickle.dumps((wanted, rules), protocol=pickle.HIGHEST_PROTOCOL))


def cached(
    folder: Path, paths: Sequence[Path], read: Callable[[], tuple[Rule, ...]]
) -> tuple[Rule, ...]:
    """The rules of ``folder`` (its rule files ``paths``): the cached set where its key
    matches, else ``read()``, which is then cached (only a set that read without error)."""
    try:
        wanted = key(folder, paths)
    except OSError:
        return read()  # a rule file that cannot be read: the reader names it
    file = _file_of(folder)
    rules = _stored(file, wanted)
    if rules is None:
        rules = read()
        _store(file, wanted, rules)
    return rules
