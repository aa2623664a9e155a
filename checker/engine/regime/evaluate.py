"""Rules over cells: the one place that decides where a rule's assumption is made and
where the rule fires, for single operating points and sweeps alike.

A cell is one operating point.  A batch of single calculations is ruled as one cell
per calculation; a sweep as chunks of grid cells that all belong to one calculation.
Either way :class:`Cells` holds one array per quantity name over the cells and, per
cell, the calculation it belongs to; :func:`rule_cells` yields each rule's outcome
over them (:class:`Ruled`), and a reduction per calculation turns that into findings
(:func:`add_findings`, for single points) or a sweep's failing masks and worst points
(:mod:`checker.engine.regime.sweep`).

A rule fires for a cell (and carrier) where
  * its assumption is made: declared by the author (``assumes``), embodied in
    a stated formula (see :mod:`checker.engine.formulas.check`), or implied by
    a stated number equal to the shortcut's value within the rule's tolerance,
    and its ``when`` gate holds;
  * the quantities it ``requires`` are known; and
  * its regime indicator lies on the wrong side of the threshold.
Each firing becomes a :class:`Finding` with the indicator, the message, and
every correction as stated (or shortcut) value -> exact value with the error.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass
from functools import cached_property
from typing import TYPE_CHECKING, Any

import numpy as np

from ...physics.arrays import ArrayIn, BoolArray, FloatArray, IndexArray
from ...quantity_registry.number_text import display
from ...records import Record
from ...vocabulary_words import carrier_message_words
from ..expressions.parser import names_in
from ..expressions.tree import CALL, NAME
from ..findings import Correction, Embodied, Finding, carrier_word
from ..vocabulary import carrier_names
from .corrected import quantity_key
from .rulebook import PLACEHOLDER, Compiled, PerCarrier, Rule
from .sheet_values import solve_inputs
from .state_values import Replaced, Values, derive_corrected, one_value
from .taken import Taken

if TYPE_CHECKING:
    from ...inputs.calculation_file import Calculation


@dataclass
class Cells:
    """Operating points ruled together."""

    values: Values  # quantity name -> array over the cells (state_values)
    calculations: list[Calculation]  # the calculations the cells belong to
    owner: IndexArray  # cell -> index into ``calculations``
    embodied: list[list[Embodied]]  # per calculation: the assumptions of its formulas
    valid: BoolArray  # cells that were solved
    # every rule's indicator even where the rule cannot fire (single points: which stated
    # numbers a rule compared); a sweep reads it only where a rule fires
    all_indicators: bool = True
    # the quantities the rules read (a sweep's chunk: state_values.solve_sweep); None: all
    reads: frozenset[str] | None = None

    @classmethod
    def points(
        cls,
        calculations: Sequence[Calculation],
        values: Values,
        embodied: list[list[Embodied]] | None = None,
        skip: Iterable[int] = (),
    ) -> Cells:
        """One cell per calculation; ``skip``: indices whose solve failed."""
        count = len(calculations)
        valid = np.ones(count, dtype=bool)
        valid[list(skip)] = False
        return cls(
            values,
            list(calculations),
            np.arange(count),
            embodied or [[] for _ in range(count)],
            valid,
        )

    @classmethod
    def grid(
        cls,
        calc: Calculation,
        values: Values,
        count: int,
        embodied: Iterable[Embodied] = (),
        reads: frozenset[str] | None = None,
    ) -> Cells:
        """``count`` grid cells of the sweep ``calc`` (``reads``: see the field)."""
        return cls(
            values,
            [calc],
            np.zeros(count, dtype=int),
            [list(embodied)],
            np.ones(count, dtype=bool),
            all_indicators=False,
            reads=reads,
        )

    @property
    def count(self) -> int:
        return self.owner.size

    @cached_property
    def every_valid(self) -> bool:
        """Every cell solved (a sweep's chunk: always)."""
        return bool(self.valid.all())

    def read_values(self) -> Values:
        """The values rules are evaluated on: a sweep chunk's one-value quantities (the
        read-only views of state_values._constant) as one element each, so that parts of
        an expression in them alone are computed once, not per cell (every cell's value
        is the one the full arrays give: the same elementwise arithmetic, broadcast)."""
        if self.all_indicators:
            return self.values
        return Taken(self.values, one_value)

    def in_use(self, names: Mapping[str, str]) -> BoolArray:
        """Per cell: whether the carrier of the names (carrier_names) is in use."""
        name = names["in_use_x"]
        if name not in self._in_use:
            self._in_use[name] = _nonzero(self.values[name])
        return self._in_use[name]

    @cached_property
    def _in_use(self) -> dict[str, BoolArray]:
        # in_use_x is set by the solve and no rule replaces it: one mask per carrier
        return {}

    def declaring(self, words: tuple[str, ...]) -> BoolArray:
        """Per calculation: whether its author declares one of ``words``."""
        index = self._index[0]
        declared = np.zeros(len(self.calculations), dtype=bool)
        for word in words:
            if word in index:
                declared |= index[word]
        return declared

    def embodying(self, words: tuple[str, ...]) -> list[tuple[int, int, str | None]]:
        """(calculation, index into its embodied list, carrier) of every stated formula
        that embodies one of ``words``, in calculation and list order."""
        index = self._index[1]
        return sorted(item for word in set(words) for item in index.get(word, ()))

    @cached_property
    def formula_items(self) -> list[list[tuple[str, str | None, int]]]:
        """Per calculation: (word, carrier, line) of each assumption its formulas embody
        (read by every finding of a calculation with formulas)."""
        return [[(item.word, item.carrier, item.line) for item in items] for items in self.embodied]

    @cached_property
    def _index(
        self,
    ) -> tuple[dict[str, BoolArray], dict[str, list[tuple[int, int, str | None]]]]:
        # every rule asks which calculations declare or embody its words: one pass over
        # the calculations for all rules, not one per rule
        declaring: dict[str, list[int]] = {}  # word -> the calculations declaring it
        for c, calc in enumerate(self.calculations):
            for word in calc.assumes:
                declaring.setdefault(word, []).append(c)
        declared: dict[str, BoolArray] = {}
        for word, rows in declaring.items():
            declared[word] = np.zeros(len(self.calculations), dtype=bool)
            declared[word][rows] = True
        embodied: dict[str, list[tuple[int, int, str | None]]] = {}
        for c, items in enumerate(self.embodied):
            for k, item in enumerate(items):
                embodied.setdefault(item.word, []).append((c, k, item.carrier))
        return declared, embodied


class Ruled(Record):
    """One rule for one carrier (``x``: "n", "p", or "" for a rule of the calculation as a
    whole) over cells."""

    rule: Rule
    x: str
    names: Mapping[str, str]  # the rule's _x/_o names -> concrete names
    fired: BoolArray  # per cell
    indicator: FloatArray  # per cell
    implied: list[tuple[str, BoolArray]]  # (stated name, mask) of each implication
    by_formula: IndexArray  # per cell: index into its calculation's embodied list (-1: none)


def beyond(rule: Rule, indicator: FloatArray) -> FloatArray:
    """How far an indicator lies beyond the rule's threshold (> 0: the wrong side)."""
    return indicator - rule.threshold if rule.relation == "above" else rule.threshold - indicator


def _nonzero(array: ArrayIn) -> BoolArray:
    numbers = np.asarray(array, dtype=float)
    nonzero: BoolArray = np.isfinite(numbers) & (numbers != 0)
    return nonzero


def _cells_array(expression: Compiled, x: str, values: Values, count: int) -> FloatArray:
    return np.broadcast_to(np.asarray(expression.run[x](values), dtype=float), (count,))


def rule_cells(rules: Iterable[Rule], cells: Cells) -> Iterator[Ruled]:
    """:class:`Ruled` of every rule and carrier over ``cells`` (rules evaluated by engine
    code, ``evaluated_by``, are left to it).

    Rules that reject a stated input (``replaces:``, e.g. a stated mobility off the model)
    are ruled first; where they fire, the corrected calculation takes the replacement and
    everything downstream is derived again (state_values.derive_corrected), so that every
    later rule -- and the formulas' exact values -- see one consistent calculation."""
    ordered = sorted(
        (rule for rule in rules if not rule.evaluated_by), key=lambda r: not r.replaces
    )
    replaced: Replaced = {}
    read = cells.read_values()
    with np.errstate(all="ignore"):
        for k, rule in enumerate(ordered):
            if replaced and not rule.replaces and ordered[k - 1].replaces:
                derive_corrected(cells.values, replaced, cells.reads)
                read = cells.read_values()
            for x in rule.carriers:
                names: Mapping[str, str] = carrier_names(x) if x else {}
                made, by_formula = assumption_made(rule, x, names, cells)
                fired, indicator, implied = rule_mask(
                    rule, x, names, made, read, cells.count, cells.all_indicators
                )
                if not cells.every_valid:
                    fired = fired & cells.valid
                ruled = Ruled(rule, x, names, fired, indicator, implied, by_formula)
                if _replace(ruled, cells.values, replaced):
                    read = cells.read_values()
                yield ruled
        if replaced and all(rule.replaces for rule in ordered):
            derive_corrected(cells.values, replaced, cells.reads)


def _replace(ruled: Ruled, values: Values, replaced: Replaced) -> bool:
    """Where ``ruled`` fired, put its replacements into the corrected calculation and
    remember the cells (``replaced``: concrete name -> mask); whether it did."""
    if not ruled.rule.replaces or not ruled.fired.any():
        return False
    for target, source in ruled.rule.replaces.items():
        name = ruled.names.get(target, target)
        fill = np.broadcast_to(values[ruled.names.get(source, source)], ruled.fired.shape)
        values[name] = np.where(ruled.fired, fill, values[name])
        replaced[name] = replaced.get(name, np.zeros(ruled.fired.shape, bool)) | ruled.fired
    return True


_NO_FORMULA = np.iinfo(np.int64).max


def _nowhere(count: int) -> tuple[BoolArray, IndexArray]:
    """(made, by_formula) of an assumption made at no cell: read-only views of one value
    (rule_mask works on a copy of ``made``)."""
    return np.broadcast_to(False, (count,)), np.broadcast_to(np.int64(-1), (count,))


def assumption_made(
    rule: Rule, x: str, names: Mapping[str, str], cells: Cells
) -> tuple[BoolArray, IndexArray]:
    """(made, by_formula): where the author declares the rule's assumption or a stated
    formula embodies it, for the carrier in use; ``by_formula`` names, per cell, the
    first formula that makes it (an index into the calculation's embodied list, -1
    where none does).  A formula about carrier ``x`` (or a rule for the conductor as a
    whole) makes it everywhere; one about the conductor as a whole (no carrier) makes it
    for the carriers the calculation uses."""
    count = cells.count
    if not rule.declared:
        return _nowhere(count)
    declared = cells.declaring(rule.declared)
    everywhere = np.full(len(cells.calculations), _NO_FORMULA)
    where_used = np.full(len(cells.calculations), _NO_FORMULA)
    for c, k, carrier in reversed(cells.embodying(rule.declared)):  # the first one wins
        if not x or carrier == x:
            everywhere[c] = k
        elif carrier is None:
            where_used[c] = k
    one = len(cells.calculations) == 1  # a sweep's chunk: one calculation, no gathering
    if one and not declared[0] and everywhere[0] == where_used[0] == _NO_FORMULA:
        return _nowhere(count)  # made at no cell
    if one and (not x or everywhere[0] <= where_used[0]):
        # the carrier in use decides nothing but the declaration
        # (read-only views of one value: rule_mask works on a copy of made; by_formula is
        # only read)
        k = int(everywhere[0])
        if k != _NO_FORMULA:
            return np.broadcast_to(True, (count,)), np.broadcast_to(np.int64(k), (count,))
        made = cells.in_use(names) if x else np.broadcast_to(True, (count,))
        return made, np.broadcast_to(np.int64(-1), (count,))
    in_use = cells.in_use(names) if x else np.ones(count, dtype=bool)
    if one:
        declared_here: bool | BoolArray = bool(declared[0])
        first = np.where(in_use, min(everywhere[0], where_used[0]), everywhere[0])
    else:
        declared_here = declared[cells.owner]
        first = np.minimum(
            everywhere[cells.owner], np.where(in_use, where_used[cells.owner], _NO_FORMULA)
        )
    by_formula = np.where(first == _NO_FORMULA, -1, first)
    return (declared_here & in_use) | (by_formula >= 0), by_formula


def sweep_rules(rules: Iterable[Rule], cells: Cells) -> tuple[list[Rule], frozenset[str]]:
    """(the rules that may fire at some cell of a sweep, the quantities they read as
    concrete names), from ``cells``, one probe cell of the sweep.  A rule whose assumption
    no cell can make (not declared, no stated formula embodies it, no stated number
    implies it; or a stated number it requires, or whose present() is a factor of its
    gate, is not given) fires nowhere, and :func:`rule_mask` would stop before its gate
    and indicator: ruling the chunks without it, and without what only it reads, changes
    no cell.  The sweep's stated numbers are the same at every cell, so the probe decides
    for the whole grid; a rule that may fire anywhere counts whole."""
    (calc,), (embodied,) = cells.calculations, cells.embodied
    values = cells.values
    kept: list[Rule] = []
    reads: set[str] = set()
    for rule in rules:
        if rule.evaluated_by:
            continue
        for x in rule.carriers:
            names: Mapping[str, str] = carrier_names(x) if x else {}

            def given(name: str, names: Mapping[str, str] = names) -> bool:
                return bool(np.isfinite(values[names.get(name, name)]).any())

            made = (
                any(word in calc.assumes for word in rule.declared)
                or any(item.word in rule.declared for item in embodied)
                or any(given(imp.stated) for imp in rule.implied_by)
                or not (rule.declared or rule.implied_by)
            )
            if not made or not all(given(n) for n in _needed(rule)):
                continue
            if not kept or kept[-1] is not rule:
                kept.append(rule)
            trees = [rule.expression.tree, *([rule.when.tree] if rule.when else [])]
            for imp in rule.implied_by:
                trees += [imp.shortcut.tree, *([imp.exact.tree] if imp.exact else [])]
            trees += [c.exact.tree for c in rule.corrections if c.stated]
            found = (
                set(rule.requires)
                | set(rule.replaces.values())
                | {imp.stated for imp in rule.implied_by}
            )
            for tree in trees:
                found |= names_in(tree)
            reads |= {names.get(name, name) for name in found}
    return kept, frozenset(reads)


def _needed(rule: Rule) -> list[str]:
    """The stated numbers a rule requires, or whose presence its gate multiplies by."""
    return [n for n in (*rule.requires, *_gate_presences(rule)) if _is_stated(n)]


def probed_names(rules: Iterable[Rule]) -> frozenset[str]:
    """The concrete names :func:`sweep_rules` reads of its probe cell: a probe solved for
    these alone (state_values.solve_sweep's ``reads``) decides as one solved for all."""
    found: set[str] = set()
    for rule in rules:
        if rule.evaluated_by:
            continue
        asked = [imp.stated for imp in rule.implied_by] + _needed(rule)
        for x in rule.carriers:
            names: Mapping[str, str] = carrier_names(x) if x else {}
            found.update(names.get(name, name) for name in asked)
    return frozenset(found)


def _gate_presences(rule: Rule) -> list[str]:
    """The names whose present(...) is a factor of the rule's gate (a product): where one
    is not given, the gate is 0 (or NaN) at every cell."""
    factors, product = [], [rule.when.tree] if rule.when else []
    while product:
        node = product.pop()
        if node.kind == "*":
            product += node.args
        else:
            factors.append(node)
    return [
        f.args[0].value
        for f in factors
        if f.kind == CALL and f.value == "present" and f.args[0].kind == NAME
    ]


def _is_stated(name: str) -> bool:
    """A stated number (the same at every cell of a sweep)."""
    return name.startswith("stated_")


def rule_mask(
    rule: Rule,
    x: str,
    names: Mapping[str, str],
    made: BoolArray,
    values: Values,
    count: int,
    all_indicators: bool = True,
) -> tuple[BoolArray, FloatArray, list[tuple[str, BoolArray]]]:
    """(fired, indicator, implications) of one rule over ``count`` cells, given where
    its assumption is declared or embodied (``made``, a boolean array).

    Work is skipped where its outcome is already known: an implication whose stated
    number is nowhere given matches nowhere, and where the assumption is made at no cell
    the gate, the requirements and (unless ``all_indicators``; then NaN) the indicator
    cannot change that nothing fires."""
    made = made.copy()
    implied: list[tuple[str, BoolArray]] = []
    for imp in rule.implied_by:
        name = names.get(imp.stated, imp.stated)
        stated = values[name]
        given = np.isfinite(stated)  # (a sweep's chunk: one element)
        if not given.any():  # not stated at any cell (a sweep: the whole chunk)
            implied.append((name, np.broadcast_to(given, (count,))))
            continue
        mask = np.broadcast_to(given, (count,)).copy()
        shortcut = np.asarray(imp.shortcut.run[x](values), dtype=float)
        mask &= np.isfinite(shortcut) & (np.abs(stated / shortcut - 1.0) <= imp.within)
        # near a rule's threshold the shortcut and the exact value lie closer together than
        # the match window: a stated number nearer the exact value was not made with the
        # shortcut (the implication's own exact value, else the rule's correction of that
        # number gives it)
        exact = imp.exact or next(
            (c.exact for c in rule.corrections if c.stated == imp.stated), None
        )
        if exact is not None:
            right = np.asarray(exact.run[x](values), dtype=float)
            mask &= ~(np.abs(np.log(stated / right)) < np.abs(np.log(stated / shortcut)))
        implied.append((name, mask))
        made |= mask
    if not rule.declared and not rule.implied_by:
        made[:] = True
    # the requirements before the gate: a value check whose stated number is nowhere
    # given (a sweep's chunk states the same numbers everywhere) ends here
    for name in rule.requires:
        if made.any():
            made &= np.isfinite(values[names.get(name, name)])
    if made.any() and rule.when is not None:
        made &= _gate(rule.when, x, values, count)
    if not made.any():
        indicator = (
            _cells_array(rule.expression, x, values, count)
            if all_indicators
            else np.broadcast_to(np.nan, (count,))  # read only where a rule fires
        )
        return made, indicator, implied
    indicator = _cells_array(rule.expression, x, values, count)
    wrong_side = (
        indicator > rule.threshold if rule.relation == "above" else indicator < rule.threshold
    )
    # an infinite indicator (e.g. n_i over zero net doping) is on the wrong side too; a NaN
    # one compares False either way
    return made & wrong_side, indicator, implied


def _gate(when: Compiled, x: str, values: Values, count: int) -> BoolArray:
    """Where a rule's gate is a nonzero number.  A gate that is a product is multiplied
    out factor by factor in its own (left to right) order, the same arithmetic as the
    whole expression, and left as soon as no cell is nonzero: a zero, infinite or NaN
    partial product stays one (a gate of a stated number a sweep does not give ends at
    that factor)."""
    product: Any = None
    factors = _factors(when)
    last = len(factors) - 1
    for k, factor in enumerate(factors):
        value = factor[x](values)
        product = value if product is None else np.multiply(product, value)
        if k < last and not _nonzero(product).any():  # (after the last: the mask says it)
            return np.zeros(count, dtype=bool)
    # a product of one-value quantities (a sweep's chunk) tested on its one element
    return np.broadcast_to(_nonzero(product), (count,))


# (a gate's text, its carriers) -> the numpy closures of its product's factors, in order
_FACTORS: dict[tuple[str, tuple[str, ...]], list[PerCarrier]] = {}


def _factors(when: Compiled) -> list[PerCarrier]:
    key = (when.text, tuple(when.run))
    factors = _FACTORS.get(key)
    if factors is None:
        trees, node = [], when.tree
        while node.kind == "*":  # a product a*b*c parses as (a*b)*c
            node, right = node.args
            trees.append(right)
        trees.append(node)
        factors = [PerCarrier(tree, key[1]) for tree in reversed(trees)]
        _FACTORS[key] = factors
    return factors


def rule_indicator(rule: Rule, x: str, values: Values, count: int) -> FloatArray:
    """The rule's indicator for carrier ``x`` over ``count`` cells."""
    with np.errstate(all="ignore"):
        return _cells_array(rule.expression, x, values, count)


def evaluate(
    rules: Iterable[Rule],
    calculations: Sequence[Calculation],
    values: Values,
    skip: Iterable[int] = (),
    embodied: list[list[Embodied]] | None = None,
) -> tuple[list[list[Finding]], list[list[str]]]:
    """(findings, unchecked) per calculation of single operating points (``values`` from
    :func:`state_values.solve_all`; ``embodied``: per calculation the Embodied
    assumptions of its stated formulas; ``skip``: calculations not solved).  ``unchecked``
    lists, per calculation, the stated numbers no rule could compare there."""
    cells = Cells.points(calculations, values, embodied, skip)
    findings: list[list[Finding]] = [[] for _ in calculations]
    # every rule first, so that each correction is read off the one corrected calculation
    # (after every replacement), whichever rule reports it
    ruled_all = list(rule_cells(rules, cells))
    for ruled in ruled_all:
        add_findings(ruled, cells, findings)
    # (the masks as lists: read one element at a time below)
    compared = {name: mask.tolist() for name, mask in compared_numbers(ruled_all, cells).items()}
    unchecked: list[list[str]] = []
    for c, (calc, valid) in enumerate(zip(calculations, cells.valid.tolist())):
        left = [
            name
            for name in calc.stated
            if valid and not any(compared[f][c] for f in _FORMS.get(name, (name,)) if f in compared)
        ]
        if left:  # a sheet's own inputs are no claims
            inputs = solve_inputs(calc)
            left = [name for name in left if name not in inputs]
        unchecked.append(left)
    return findings, unchecked


# the stated keys whose numbers rules read under another name
_FORMS = {
    "stated_ef_minus_ec": ("stated_ef_n", "stated_eta_n", "stated_ef_p", "stated_eta_p"),
    "stated_ef_minus_ev": ("stated_ef_n", "stated_eta_n", "stated_ef_p", "stated_eta_p"),
    "stated_sigma": ("stated_sigma", "stated_rho"),
    "stated_rho": ("stated_rho", "stated_sigma"),
}


def compared_numbers(ruled_all: Iterable[Ruled], cells: Cells) -> dict[str, BoolArray]:
    """Stated name -> cells where some rule compared it: the rule's indicator reads it (or
    a correction of the rule is of it) and is a number there, with every quantity the
    rule requires known -- whether or not the rule's gate let it fire."""
    out: dict[str, BoolArray] = {}
    for ruled in ruled_all:
        rule = ruled.rule
        reads = names_in(rule.expression.tree) | {c.stated for c in rule.corrections if c.stated}
        stated = {ruled.names.get(n, n) for n in reads if n.startswith("stated_")}
        if not stated:
            continue
        known = np.isfinite(np.asarray(ruled.indicator, dtype=float))
        for name in rule.requires:
            known = known & np.isfinite(cells.values[ruled.names.get(name, name)])
        for name in stated:
            out[name] = out.get(name, np.zeros(cells.count, dtype=bool)) | known
    return out


# quantities derived from another stated key: where to point the reader
_SOURCE_KEYS = {
    "stated_sigma": ("stated_sigma", "stated_rho"),
    "stated_rho": ("stated_rho", "stated_sigma"),
    **{
        f"stated_{stem}_{x}": ("stated_ef_minus_ec", "stated_ef_minus_ev")
        for stem in ("ef", "eta")
        for x in ("n", "p")
    },
}


def _line_of(calc: Calculation, name: str) -> int | None:
    for key in _SOURCE_KEYS.get(name, (name,)):
        if key in calc.lines:
            line: int = calc.lines[key]
            return line
    return None


def add_findings(ruled: Ruled, cells: Cells, findings: list[list[Finding]]) -> None:
    """The reduction of single points: a Finding for each fired cell, appended to
    ``findings[calculation index]``."""
    fired = np.flatnonzero(ruled.fired)
    if fired.size == 0:
        return
    with np.errstate(all="ignore"):
        _add_findings(ruled, cells, fired, findings)


# a rule message split at its placeholders: (the texts around them, their names), kept
# per message (the same split as PLACEHOLDER.sub's, read once instead of per finding)
_TEMPLATES: dict[str, tuple[list[str], list[str]]] = {}


def _template(message: str) -> tuple[list[str], list[str]]:
    kept = _TEMPLATES.get(message)
    if kept is None:
        texts, names, at = [], [], 0
        for match in PLACEHOLDER.finditer(message):
            texts.append(message[at : match.start()])
            names.append(match.group(1))
            at = match.end()
        texts.append(message[at:])
        kept = _TEMPLATES[message] = (texts, names)
    return kept


def _add_findings(
    ruled: Ruled, cells: Cells, fired: IndexArray, findings: list[list[Finding]]
) -> None:
    rule, x, names, values, count = ruled.rule, ruled.x, ruled.names, cells.values, cells.count

    def at_fired(array: ArrayIn) -> list[Any]:
        # the fired cells' values as Python numbers: the loop below reads each a few times
        return list(np.asarray(array)[fired].tolist())

    # (correction, shortcut, exact, the stated number's concrete name, its calculation-file
    # key, its value) at each fired cell
    columns = [
        (
            corr,
            at_fired(_cells_array(corr.shortcut, x, values, count)),
            at_fired(_cells_array(corr.exact, x, values, count)),
            name,
            quantity_key(name),
            at_fired(values[name]) if name else [math.nan] * fired.size,
        )
        for corr in rule.corrections
        for name in [names.get(corr.stated, corr.stated) if corr.stated else None]
    ]
    indicators = at_fired(ruled.indicator)
    # the message: what is the same at every fired cell written into its text once; a
    # word-valued quantity (unit "text") shown as it is; the first correction's error
    # (None below) known only in the loop
    words = carrier_message_words(x)
    fixed = {
        "threshold": display(rule.threshold, rule.indicator_unit),
        "carrier": words[0],
        "dopants": words[1],
        "kind": words[2],
    }
    texts, slots = _template(rule.message)
    parts: list[str] = [texts[0]]
    varying: list[list[str] | None] = []
    for name, text in zip(slots, texts[1:]):
        column: list[str] | None
        if name in rule.show:
            shown, unit = rule.show[name]
            if isinstance(shown, str):
                column = [str(v) for v in at_fired(values[shown])]
            else:
                column = [display(v, unit) for v in at_fired(_cells_array(shown, x, values, count))]
        elif name == "value":
            column = [display(v, rule.indicator_unit) for v in indicators]
        elif name == "error":
            column = None
        else:
            parts[-1] += fixed[name] + text
            continue
        varying.append(column)
        parts.append(text)
    causes = [
        (text, at_fired(_nonzero(_cells_array(gate, x, values, count))))
        for gate, text in rule.causes
    ]
    implied = [(name, at_fired(mask)) for name, mask in ruled.implied]
    owners, by_formula = at_fired(cells.owner), at_fired(ruled.by_formula)
    carrier = carrier_word(x)
    calculations, embodied, formula_items = cells.calculations, cells.embodied, cells.formula_items
    declared = rule.declared
    requires = [names.get(n, n) for n in rule.requires]
    for j in range(fired.size):
        owner = owners[j]
        calc = calculations[owner]
        made = embodied[owner]
        formula = made[by_formula[j]] if by_formula[j] >= 0 else None
        corrections = []
        line: int | None = None
        column_name: str | None = None
        for corr, shortcut, exact, stated_name, key, stated in columns:
            author = math.isfinite(stated[j])
            value = float(stated[j] if author else shortcut[j])
            truth = float(exact[j])
            if not (math.isfinite(value) and math.isfinite(truth)) or truth == 0:
                continue
            corrections.append(
                Correction(
                    corr.label, corr.unit, value, truth, value / truth - 1.0, author, key=key
                )
            )
            if author and line is None and stated_name:
                line = _line_of(calc, stated_name)
                column_name = calc.columns.get(stated_name)
        if line is None:
            for name, mask in implied:  # the first implication made here
                if mask[j]:
                    line = _line_of(calc, name)
                    break
        if line is None:
            # a rule without a correction of a stated number: the stated number it reads
            for name in requires:
                line = _line_of(calc, name)
                if line is not None:
                    break
        if line is None and formula is not None:
            line = formula.line
        if line is None:
            line = calc.line
            for word in declared:
                if word in calc.assumes:
                    line = calc.assumes[word]
                    break
        message = parts[0]
        for column, text in zip(varying, parts[1:]):  # (a message has a few placeholders)
            if column is not None:
                message += column[j] + text
            elif corrections:
                message += corrections[0].error_text() + text
            else:
                message += "n/a" + text
        for text, held in causes:  # the first likely cause that holds here
            if held[j]:
                if text:
                    message += f" Likely cause: {text}."
                break
        # every formula line that makes the same assumption for this carrier
        also_at: tuple[int, ...] = ()
        if made:
            uses = {
                at
                for word, code, at in formula_items[owner]
                if word in declared and (not x or code in (x, None))
            }
            uses.discard(int(line))
            also_at = tuple(sorted(uses))
        findings[owner].append(
            Finding(
                rule=rule.id,
                title=rule.title,
                severity=rule.severity,
                assumption=rule.assumption,
                carrier=carrier,
                indicator_label=rule.indicator_label,
                indicator_value=float(indicators[j]),
                indicator_unit=rule.indicator_unit,
                relation=rule.relation,
                threshold=rule.threshold,
                threshold_source=rule.threshold_source,
                message=message,
                corrections=corrections,
                file=calc.source,
                line=int(line),
                formula=formula.formula if formula is not None else None,
                column=column_name,
                also_at=also_at,
            )
        )
