"""The declarative rules of ``rules/``: the Rule objects the engine evaluates, loaded
once per process.

A rule file is YAML (format in DEVELOPERS.md, "Adding a rule").  :mod:`.rule_reader`
reads and validates it (the field table RULE_FILE, every expression parsed,
dimension-checked); each expression is compiled into numpy closures per carrier on first
use (:class:`PerCarrier`).  Validated rule sets are kept in the rule cache
(:mod:`.rule_cache`, keyed by the rule files' and the reader's contents), so a run
whose rules are unchanged neither re-reads nor re-validates them.  A broken rule file
raises :class:`RuleFileError` with one line per problem:
``rule file <path>:<line>: field '<field>': <what is wrong>``.
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Iterator, Mapping
from functools import lru_cache
from pathlib import Path
from typing import TYPE_CHECKING, Any, TypeAlias

from ...errors import RegimecheckError
from ...records import Record, field, replace
from ...resources import rules_dir
from ..expressions import parser as expression
from ..expressions.parser import Evaluator
from ..expressions.tree import Node
from ..vocabulary import carrier_names
from . import rule_cache

if TYPE_CHECKING:
    from ...inputs.config import Config

PLACEHOLDER = re.compile(r"\{([A-Za-z_][A-Za-z0-9_]*)(?::([^{}]*))?\}")
# the first line of every rule file: editors then check it against the schema
MODELINE = "# yaml-language-server: $schema=../checker/data/rule.schema.json"


class RuleFileError(RegimecheckError):
    """A rule file that cannot be used (one line per problem: file, line, field)."""


class Compiled(Record):
    """One expression: its source text, tree, and a numpy closure per carrier."""

    text: str
    tree: Node
    run: Mapping[str, Evaluator]  # carrier ("n", "p" or "") -> callable(values)


# a message value: (the expression, its display unit), or (a word-valued quantity, "text")
Shown: TypeAlias = tuple[Compiled | str, str]
# a likely cause of a rejected number: (where it holds, the text naming it)
Cause: TypeAlias = tuple[Compiled, str]


class Correction(Record):
    label: str
    unit: str
    stated: str | None
    shortcut: Compiled
    exact: Compiled


class Implication(Record):
    stated: str
    shortcut: Compiled
    within: float
    exact: Compiled | None = None  # the stated number's exact value, if no correction has it


class Rule(Record):
    id: str
    title: str
    assumption: str
    severity: str
    per: str  # "carrier" | "calculation"
    declared: tuple[str, ...]
    when: Compiled | None
    implied_by: list[Implication]
    indicator_label: str
    indicator: Compiled | None  # None: a rule evaluated by engine code (evaluated_by)
    indicator_unit: str
    relation: str  # "above" | "below"
    threshold: float
    threshold_source: str
    message: str
    corrections: list[Correction]
    requires: tuple[str, ...]
    show: dict[str, Shown]
    why: str
    example: str
    fix: str
    references: list[str]
    path: str
    carriers: tuple[str, ...] = ()
    evaluated_by: str | None = None  # engine check that produces this rule's findings
    tolerance: str | None = None  # configuration tolerance that sets the threshold
    # name -> name used where the rule fires
    replaces: dict[str, str] = field(default_factory=dict)
    causes: list[Cause] = field(default_factory=list)  # likely causes

    @property
    def expression(self) -> Compiled:
        """The indicator of a rule evaluated over cells (every rule without
        ``evaluated_by``)."""
        if self.indicator is None:
            raise ValueError(f"rule {self.id} is evaluated by engine code: no indicator")
        return self.indicator


class PerCarrier(Mapping[str, Evaluator]):
    """carrier -> the expression's numpy closure, renamed and compiled on first use: a run
    evaluates a few rules' expressions for one carrier, and building all of them was a
    fifth of loading the rules.  Both steps are total on a parsed, dimension-checked tree
    (they raise nothing), so deferring them moves no problem out of load_rule."""

    def __init__(self, tree: Node, carriers: tuple[str, ...]):
        self._tree, self._carriers = tree, carriers
        self._made: dict[str, Evaluator] = {}

    def __getitem__(self, carrier: str) -> Evaluator:
        made = self._made.get(carrier)
        if made is None:
            if carrier not in self._carriers:
                raise KeyError(carrier)
            tree = expression.rename(self._tree, carrier_names(carrier)) if carrier else self._tree
            made = self._made[carrier] = expression.to_numpy(tree)
        return made

    def __iter__(self) -> Iterator[str]:
        return iter(self._carriers)

    def __len__(self) -> int:
        return len(self._carriers)

    def __reduce__(self) -> tuple[type[PerCarrier], tuple[Node, tuple[str, ...]]]:
        # the rule cache keeps the tree; the closures are built again on first use
        return (PerCarrier, (self._tree, self._carriers))


def load_rule(path: Path) -> Rule:
    """The rule of one rule file, read and validated (never from the cache)."""
    from .rule_reader import read_rule

    return read_rule(path)


@lru_cache(maxsize=4)
def load_rules(folder: str | None = None) -> tuple[Rule, ...]:
    """Every rule of the folder (default: the shipped rules), sorted by id; the shipped
    rules from the rule cache where their files and the reader are unchanged."""
    where = Path(folder) if folder else rules_dir()
    paths = sorted(where.glob("*.yaml"))
    if folder:
        return _read_rules(paths)
    return rule_cache.cached(where, paths, lambda: _read_rules(paths))


def _read_rules(paths: list[Path]) -> tuple[Rule, ...]:
    rules = [load_rule(p) for p in paths]
    seen = set()
    for rule in rules:
        if rule.id in seen:
            raise RuleFileError(f"rule file {rule.path}: field 'id': {rule.id} is used twice")
        seen.add(rule.id)
    return tuple(rules)


def __getattr__(name: str) -> Any:
    # the field table lives with the reader; tools/generate_schema.py asks for it here
    if name == "RULE_FILE":
        from .rule_reader import RULE_FILE

        return RULE_FILE
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def configured(rules: Iterable[Rule], config: Config) -> tuple[Rule, ...]:
    """The rules a configuration selects, with its severities, thresholds and tolerances
    (a tolerance sets the threshold 1 + tolerance of the rule whose file names it)."""

    def named(rule_id: str, names: Iterable[str]) -> bool:
        return any(rule_id == n or rule_id.startswith(n) for n in names)

    out = []
    for rule in rules:
        if (config.only and not named(rule.id, config.only)) or named(rule.id, config.skip):
            continue
        changes: dict[str, Any] = {}
        if rule.id in config.severity:
            changes["severity"] = config.severity[rule.id]
        if rule.tolerance in config.tolerance:
            changes["threshold"] = 1.0 + config.tolerance[rule.tolerance]
        if rule.id in config.threshold:
            changes["threshold"] = config.threshold[rule.id]
        out.append(replace(rule, **changes) if changes else rule)
    return tuple(out)
