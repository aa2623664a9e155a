"""Stated formulas: parse them, check their dimensions, find the limits they embody,
and evaluate them at the solved operating point.

For each formula ``lhs = rhs`` of a calculation:

* both sides are parsed by the safe expression parser and every spelling is
  mapped onto a trade symbol (:mod:`formula_symbols`); an unknown symbol is an
  input error naming the closest known ones;
* the two sides' dimensions are compared (rule FORM01); a mismatch comes with
  the likely fix, found by inverting a few factors of the right side;
* :func:`formula_match.analyse` finds the limits the formula embodies; their
  assumption words go to the rules (as if the author had declared them, at
  the formula's line);
* the right side is evaluated with the exact values of its symbols at the
  operating point and compared with the exact value of the left side.
  Unrecognised formulas are reported (FORM02, info), and a formula whose value
  is off by more than FORM03's threshold is a finding unless a rule already
  fired on an assumption it embodies.
"""

from __future__ import annotations

import math
from collections.abc import Collection, Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from functools import lru_cache
from itertools import combinations
from typing import TYPE_CHECKING, TypeAlias

import numpy as np

from ...errors import InputError
from ...physics.constants import ELECTRON_MASS, PLANCK
from ...quantity_registry.number_text import display, error_text
from ...quantity_registry.registry import Quantity, formula_symbols, registered
from ..expressions import dimension_check as expression_dimensions
from ..expressions import dimensions as dm
from ..expressions.parser import MAX_LENGTH, parse, rename, to_numpy, to_text
from ..expressions.tree import NAME, Node, binary, fold, num
from ..findings import Correction, Embodied, Finding, carrier_code
from ..regime.corrected import formula_key
from ..regime.rulebook import PLACEHOLDER, Rule
from ..regime.state_values import Values
from ..regime.taken import Made, Taken
from . import match_store
from .match import Match, analyse
from .relations import World, band_world, world
from .symbols import dimension_of, parse_side

if TYPE_CHECKING:
    from ...inputs.calculation_file import Calculation

# a factor of a product or quotient: (tree, +1 up / -1 down)
Factor: TypeAlias = tuple[Node, int]

# lhs dimension -> display unit of the report
_DISPLAY = {
    dm.density(3): "cm^-3",
    dm.density(2): "cm^-2",
    dm.density(1): "cm^-1",
    dm.MOBILITY: "cm^2/(V*s)",
    dm.DIFFUSIVITY: "cm^2/s",
    dm.VELOCITY: "cm/s",
    dm.FIELD: "kV/cm",
    dm.conductivity(3): "S/cm",
    dm.NONE / dm.conductivity(3): "ohm*cm",
    dm.RESISTANCE: "ohm",
    dm.NONE / dm.RESISTANCE: "S",
    dm.ENERGY: "eV",
    dm.VOLTAGE: "V",
    dm.TEMPERATURE: "K",
    dm.NONE: "1",
    dm.LENGTH: "nm",
    dm.AREA: "um^2",
    dm.MASS: "m0",
    dm.CURRENT / dm.AREA: "A/cm^2",
    dm.density(3) ** 2: "cm^-6",
    dm.density(2) ** 2: "cm^-4",
    dm.RESISTANCE * dm.AREA: "ohm*cm^2",
    dm.TIME: "ns",
}


def _quantity(name: str) -> Quantity:
    """The registered quantity of a formula symbol's name (the registry checks that every
    formula symbol names one)."""
    quantity = registered(name)
    if quantity is None:
        raise LookupError(f"formula symbols name {name}, which is not registered")
    return quantity


# formula symbol -> quantity of the solved state (SI), and those the reader alone keeps
# (a structure key no rule reads: the width)
_FROM_STATE = {
    symbol: name for symbol, name in formula_symbols().items() if _quantity(name).in_rules
}
_FROM_INPUTS = {
    symbol: name for symbol, name in formula_symbols().items() if not _quantity(name).in_rules
}
# symbols a calculation gives no value for (their formulas are dimension-checked only)
_NOT_STATED = ("tau_n", "tau_p")
# the solve is of a bulk (3D) crystal: its densities are not sheet or line densities
_BULK_ONLY = tuple(symbol for symbol, name in _FROM_STATE.items() if _quantity(name).bulk)


# a stated formula whose parts do not fit together (the shared walker's exception)
_Mismatch = expression_dimensions.DimensionProblem


@dataclass
class FormulaResult:
    text: str
    where: str  # file:line:column
    line: int
    lhs: Node
    rhs: Node
    left_dimension: str = ""
    right_dimension: str = ""
    problem: str | None = None  # dimension problem, in words
    fix: str | None = None  # likely corrected formula
    match: Match | None = None
    value: float = math.nan  # right side at the operating point (SI)
    exact: float = math.nan  # left side, exact, at the operating point (SI)
    unit: str = ""  # display unit (a key of DISPLAY_UNITS), "" for SI
    si_unit: str = ""  # SI unit text where no display unit is set
    error: float = math.nan  # relative error, or (value - exact)/kT for energies
    energy: bool = False  # an energy: its error is measured in kT
    key: str | None = None  # the stated quantity its left side computes (corrected.py)

    @property
    def status(self) -> str:
        return "dimension-error" if self.problem else self.matched.status

    @property
    def matched(self) -> Match:
        """The match of a formula whose sides' dimensions agree (every result without a
        problem has one)."""
        if self.match is None:
            raise ValueError(f"{self.where}: {self.text!r} was not matched ({self.problem})")
        return self.match

    def error_text(self) -> str:
        if not (math.isfinite(self.value) and math.isfinite(self.exact)) or self.exact == 0:
            return "n/a"
        if abs(self.error) < 1e-4:
            return "agrees"
        return error_text(self.value, self.exact, self.unit)

    def show(self, value: float) -> str:
        """A value in the report's unit (SI with its unit where no trade unit is set)."""
        if self.unit:
            return display(value, self.unit)
        return f"{value:.4g} {self.si_unit}"


@dataclass
class FormulaAnalysis:
    results: list[FormulaResult] = field(default_factory=list)  # in file order
    embodied: list[Embodied] = field(default_factory=list)
    errors: list[str] = field(default_factory=list)  # input errors (file:line: ...)


# ---- parsing --------------------------------------------------------------------------------
def parse_formula(text: str, majority: str, where: str) -> tuple[Node, Node, dict[str, str]]:
    """(lhs, rhs, spelled): trees in canonical symbols and the author's spelling of each
    symbol; InputError for anything else."""
    if len(text) > MAX_LENGTH:
        raise InputError(
            f"{where}: the formula is {len(text)} characters long; the limit is {MAX_LENGTH}"
        )
    sides = text.split("=")
    if len(sides) != 2 or any(c in text for c in "<>!"):
        raise InputError(
            f"{where}: write a formula as '<left side> = <right side>' with one "
            f"'=' (got {text[:60]!r})"
        )
    left, right = (side.strip() for side in sides)
    if not left or not right:
        raise InputError(f"{where}: one side of {text[:60]!r} is empty")
    (lhs, left_names), (rhs, right_names) = (
        parse_side(left, majority, where),
        parse_side(right, majority, where),
    )
    return lhs, rhs, {**right_names, **left_names}


# ---- dimensions -----------------------------------------------------------------------------
@lru_cache(maxsize=4096)
def dimension(tree: Node, dim: int) -> dm.Dimension:
    """The dimension of a canonical tree by the walker rule expressions use (one algebra
    for both); _Mismatch where it has none (cached: trees repeat across calculations)."""
    return expression_dimensions.dimension(
        tree, lambda name: dm.NONE if name == "pi" else dimension_of(name, dim)
    )


def _factors(tree: Node) -> list[Factor]:
    """The factors of a product or quotient as (tree, +1 up / -1 down)."""

    def visit(node: Node, inner: list[list[Factor]]) -> list[Factor]:
        if node.kind == "*":
            return inner[0] + inner[1]
        if node.kind == "/":
            return inner[0] + [(t, -e) for t, e in inner[1]]
        return [(node, 1)]

    return fold(tree, visit)


def _product(factors: Sequence[Factor]) -> Node:
    def chain(parts: list[Node]) -> Node:
        out = parts[0]
        for part in parts[1:]:
            out = binary("*", out, part)
        return out

    up = [t for t, e in factors if e > 0] or [num(1.0)]
    down = [t for t, e in factors if e < 0]
    return chain(up) if not down else binary("/", chain(up), chain(down))


_MISSING = ("q", "k*T", "k*T/q", "k", "T")


def likely_fix(
    lhs: Node, rhs: Node, dim: int, majority: str, band: str = "parabolic"
) -> Node | None:
    """A corrected right side: a few factors inverted (or one common factor added)."""
    try:
        target = dimension(lhs, dim)
    except _Mismatch:
        return None
    factors = _factors(rhs)
    candidates: list[Node] = []
    if len(factors) <= 8:
        for size in range(1, min(3, len(factors)) + 1):
            for flip in combinations(range(len(factors)), size):
                tree = _product([(t, -e if i in flip else e) for i, (t, e) in enumerate(factors)])
                if _has_dimension(tree, dim, target):
                    candidates.append(tree)
            if candidates:
                break
    if not candidates:
        for text in _MISSING:
            extra = parse(text)
            for tree in (binary("*", rhs, extra), binary("/", rhs, extra)):
                if _has_dimension(tree, dim, target):
                    candidates.append(tree)
    for tree in candidates[:6]:
        if analyse(lhs, tree, dim, majority, band).status != "unrecognised":
            return tree
    return candidates[0] if candidates else None


def _has_dimension(tree: Node, dim: int, target: dm.Dimension) -> bool:
    try:
        return dimension(tree, dim) == target
    except _Mismatch:
        return False


# ---- values at the operating point ----------------------------------------------------------
_CONSTANTS = {"h": PLANCK, "m0": ELECTRON_MASS, "pi": math.pi}


def _symbol_columns(values: Values, calculations: Sequence[Calculation], dims: np.ndarray) -> Made:
    """Each formula symbol's values over the calculations, made on its first read."""
    count = len(calculations)

    def given(name: str) -> np.ndarray:
        # no lifetime is stated in a calculation: what depends on one is not evaluated
        if name in _NOT_STATED:
            return np.full(count, np.nan)
        if name in _CONSTANTS:
            return np.full(count, _CONSTANTS[name])
        if name in _FROM_INPUTS:
            key = _FROM_INPUTS[name]
            return np.array(
                [c.structure.get(key, c.stated.get(key, np.nan)) for c in calculations],
                dtype=float,
            )
        if name in ("D_n", "D_p"):
            # D from the solve's own Einstein ratio n/(dn/deta): the relation table's F_j
            # ratio holds for parabolic bands only (a Kane bulk band, a sheet's subbands, a
            # linear band differ)
            x = name[-1]
            return np.asarray(
                values[f"used_mu_{x}"] * values["kT_q"] * values[f"einstein_{x}"], dtype=float
            )
        if name == "E_F":
            fermi_level: np.ndarray = given("E_c") + values["eta_n"] * values["kT"]
            return fermi_level
        if name == "E_c":
            return np.asarray(values["Eg"], dtype=float)
        if name == "E_v":
            return np.zeros(count)
        return np.asarray(values[_FROM_STATE[name]], dtype=float)  # (KeyError: no symbol)

    def make(name: str) -> np.ndarray:
        if name == "beta_kane_n":  # alpha kT of a Kane conduction band (0: parabolic)
            return _column(values, "beta_kane_n", count)
        column = given(name)
        if name in _BULK_ONLY:
            column = np.where(dims == 3, column, np.nan)
        return column

    return Made(make)


def _operating_groups(
    values: Values, calculations: Sequence[Calculation]
) -> list[tuple[list[int], Mapping[str, np.ndarray]]]:
    """(members, every formula symbol's values over them, made on first read) per group of
    calculations that share one world of definitions (dimension, majority carrier, band)."""
    dims = np.array([int(c.structure.get("dim", 3)) for c in calculations], dtype=int)
    known = _symbol_columns(values, calculations, dims)
    bands = point_bands(values, dims)
    groups: dict[tuple[int, str, str], list[int]] = {}
    for i, calc in enumerate(calculations):
        groups.setdefault((int(dims[i]), calc.majority, bands[i]), []).append(i)
    return [
        (members, _group_columns(known, members, world(dim, "donor", majority, band)))
        for (dim, majority, band), members in groups.items()
    ]


def _group_columns(known: Made, members: list[int], base: World) -> Made:
    """The symbols at a group's members: the known columns taken at them, the rest from
    the world's definitions."""
    rows = np.asarray(members, dtype=np.intp)

    def make(name: str) -> np.ndarray:
        try:
            column = known[name]
        except KeyError:
            definition = base.definitions.get(name)
            if definition is None:
                raise
            with np.errstate(all="ignore"):
                return np.broadcast_to(_compiled(definition)(point), (len(members),))
        taken: np.ndarray = column[rows]
        return taken

    point = Made(make)
    return point


def _column(values: Values, name: str, count: int) -> np.ndarray:
    """values[name] as floats over the calculations; zeros where the solve did not lay it out
    (a sheet has no Kane band, a bulk crystal no linear one)."""
    if name not in values:
        return np.zeros(count)
    column: np.ndarray = np.nan_to_num(
        np.broadcast_to(np.asarray(values[name], dtype=float), (count,))
    )
    return column


def point_bands(values: Values, dims: np.ndarray) -> list[str]:
    """The band world of each calculation (relations.band_world) from the solved values."""
    count = len(dims)
    kane, linear = _column(values, "beta_kane_n", count), _column(values, "linear", count)
    return [band_world(int(d), float(b), float(g)) for d, b, g in zip(dims, kane, linear)]


_compiled = lru_cache(maxsize=4096)(to_numpy)
# a formula's left side as the reports write it (every calculation stating it asks)
_text_of = lru_cache(maxsize=4096)(to_text)


def _evaluate(tree: Node, point: Mapping[str, np.ndarray], count: int) -> np.ndarray:
    """The tree's value at each of ``count`` points (NaN where a symbol has no value)."""
    try:
        with np.errstate(all="ignore"):
            found = np.asarray(_compiled(tree)(point), dtype=float)
    except KeyError:
        return np.full(count, np.nan)
    return np.broadcast_to(found, (count,))


# ---- one formula text -----------------------------------------------------------------------
# (text, majority, dim, band) -> what the text gives regardless of the operating point (its
# trees, dimensions, likely fix, match, units and stated key): a FormulaResult without place
# or values, copied for each calculation stating it.  A file of 1,000 calculations states a
# handful of distinct formulas.  Texts that fail to parse are not kept (the message names
# the line).
_TEXTS: dict[tuple[str, str, int, str], FormulaResult] = {}
_TEXTS_KEPT = 4096


def _text_analysis(text: str, majority: str, dim: int, band: str, where: str) -> FormulaResult:
    """The analysis of one formula text (InputError where it does not parse)."""
    key = (text, majority, dim, band)
    found = _TEXTS.get(key)
    if found is None:
        found = _analyse_text(text, majority, dim, band, where)
        if len(_TEXTS) >= _TEXTS_KEPT:
            _TEXTS.clear()
        _TEXTS[key] = found
    return found


def _analyse_text(text: str, majority: str, dim: int, band: str, where: str) -> FormulaResult:
    lhs, rhs, spelled = parse_formula(text, majority, where)
    try:
        left = dimension(lhs, dim)
        right = dimension(rhs, dim)
    except _Mismatch as exc:
        return FormulaResult(text, "", 0, lhs, rhs, problem=str(exc))
    left_text, right_text = dm.describe(left), dm.describe(right)
    if left != right:
        fix = likely_fix(lhs, rhs, dim, majority, band)
        return FormulaResult(
            text,
            "",
            0,
            lhs,
            rhs,
            left_text,
            right_text,
            problem=f"the left side is {left_text}, the right side {right_text}",
            fix=None
            if fix is None
            else f"{to_text(rename(lhs, spelled))} = {to_text(rename(fix, spelled))}",
        )
    return FormulaResult(
        text,
        "",
        0,
        lhs,
        rhs,
        left_text,
        right_text,
        match=analyse(lhs, rhs, dim, majority, band),
        unit=_DISPLAY.get(left, ""),
        si_unit=dm.text(left),
        energy=left == dm.ENERGY,
        key=formula_key(lhs.value) if lhs.kind == NAME else None,
    )


# ---- one calculation ------------------------------------------------------------------------
def analyse_calculation(calc: Calculation, band: str = "parabolic") -> FormulaAnalysis:
    """Parse, dimension-check and match every formula of ``calc`` (in the band world
    ``band`` of its material: relations.band_world); evaluate_all gives the values."""
    out = FormulaAnalysis()
    dim, majority = int(calc.structure.get("dim", 3)), calc.majority
    for text, where, line in calc.formulas:
        try:
            known = _text_analysis(text, majority, dim, band, where)
        except InputError as exc:
            out.errors.append(str(exc))
            continue
        # the text's shared analysis, placed at this line (a shallow copy, as copy.copy
        # makes of a dataclass, without its pickling protocol: 2,000 of them in a file)
        result = object.__new__(FormulaResult)
        result.__dict__.update(known.__dict__, where=where, line=line)
        out.results.append(result)
        if result.match is None:
            continue
        for word, carrier in result.match.assumptions:
            out.embodied.append(Embodied(word, carrier, line, text))
    return out


def analyse_all(calculations: Sequence[Calculation], values: Values) -> list[FormulaAnalysis]:
    """FormulaAnalysis per calculation (the values at the operating point: evaluate_all,
    once the rules have corrected the calculation)."""
    dims = np.array([int(c.structure.get("dim", 3)) for c in calculations], dtype=int)
    bands = point_bands(values, dims)
    analyses = [
        analyse_calculation(calc, bands[i]) if calc.formulas else FormulaAnalysis()
        for i, calc in enumerate(calculations)
    ]
    match_store.STORE.save()  # the matches this run searched for, for the next
    return analyses


def evaluate_all(
    analyses: Sequence[FormulaAnalysis | None],
    calculations: Sequence[Calculation],
    values: Values,
    skip: Collection[int] = (),
) -> None:
    """Each formula's value and the exact value at its operating point, from ``values``
    as the rules left them (the corrected calculation: a rejected stated
    mobility no longer sets the exact D a formula line is compared with).

    Each side of a formula is evaluated once, as a vector over the calculations of a
    group that share its world of definitions (a file of 1,000 calculations states a
    handful of distinct formulas)."""
    solved = [i for i, c in enumerate(calculations) if c.formulas and i not in skip]
    if not solved:
        return
    # (each quantity taken at the solved calculations on its first read: the formulas
    # read a few dozen of the solve's ~150)
    rows = np.array(solved, dtype=np.intp)
    subset = Taken(values, lambda array: np.asarray(array)[rows] if np.ndim(array) else array)
    for members, point in _operating_groups(subset, [calculations[i] for i in solved]):
        # each formula (its two sides, an energy or not): the members stating it, and there
        pairs: dict[tuple[Node, Node, bool], tuple[list[int], list[FormulaResult]]] = {}
        for k, i in enumerate(members):
            analysis = analyses[solved[i]]
            for result in analysis.results if analysis is not None else ():
                if result.match is not None:
                    at, placed = pairs.setdefault((result.lhs, result.rhs, result.energy), ([], []))
                    at.append(k)
                    placed.append(result)
        if not pairs:
            continue
        sides: dict[Node, np.ndarray] = {}  # each tree once (one formula's side, another's)
        kT = np.asarray(point["k"], dtype=float) * point["T"]
        for (lhs, rhs, energy), (at, placed) in pairs.items():
            stating = np.asarray(at, dtype=np.intp)
            value, exact = (_side(sides, tree, point, len(members))[stating] for tree in (rhs, lhs))
            error = _errors(value, exact, kT[stating], energy)
            for result, v, e, r in zip(placed, value.tolist(), exact.tolist(), error.tolist()):
                result.__dict__.update(value=v, exact=e, error=r)


def _side(
    sides: dict[Node, np.ndarray], tree: Node, point: Mapping[str, np.ndarray], count: int
) -> np.ndarray:
    column = sides.get(tree)
    if column is None:
        column = sides[tree] = _evaluate(tree, point, count)
    return column


def _errors(value: np.ndarray, exact: np.ndarray, kT: np.ndarray, energy: bool) -> np.ndarray:
    """Each point's error of a formula: (value - exact)/kT for an energy, else the relative
    error; NaN where either side is not finite (or the exact value is 0)."""
    with np.errstate(all="ignore"):
        both = np.isfinite(value) & np.isfinite(exact)
        if energy:
            error = (value - exact) / kT
        else:
            both &= exact != 0
            error = value / exact - 1.0
    errors: np.ndarray = np.where(both, error, np.nan)
    return errors


# ---- findings -------------------------------------------------------------------------------
def _fill(template: str, fields: Mapping[str, str]) -> str:
    return PLACEHOLDER.sub(lambda m: fields.get(m.group(1), ""), template)


def _covered(
    analysis: FormulaAnalysis, rules: Mapping[str, Rule], rule_findings: Iterable[Finding]
) -> set[str]:
    """Formulas with an embodied assumption on which a rule has fired already."""
    covered: set[str] = set()
    for finding in rule_findings:
        rule = rules.get(finding.rule)
        if rule is None:
            continue
        declared, carrier = rule.declared, carrier_code(finding.carrier)
        for item in analysis.embodied:
            if item.word in declared and (carrier is None or item.carrier in (None, carrier)):
                covered.add(item.formula)
    return covered


def formula_findings(
    analysis: FormulaAnalysis,
    rules: Mapping[str, Rule],
    calc: Calculation,
    rule_findings: Iterable[Finding],
) -> list[Finding]:
    """FORM01-03 findings of one calculation; ``rules`` maps rule id -> Rule."""
    out: list[Finding] = []
    covered: set[str] | None = None  # found where a formula is off (most are not)
    for result in analysis.results:
        if result.problem:
            rule = rules.get("FORM01")
            if rule:
                message = _fill(rule.message, _text_fields(result))
                out.append(_finding(rule, calc, result, message, []))
            continue
        match = result.matched
        form03 = rules.get("FORM03")
        # FORM03 where the value is off at this point (None: it is not)
        off_rule = None
        if form03 is not None and math.isfinite(result.error):
            if abs(result.error) > form03.threshold:
                if covered is None:
                    covered = _covered(analysis, rules, rule_findings)
                off_rule = None if result.text in covered else form03
        unmatched = match.status == "unrecognised" and "FORM02" in rules and off_rule is None
        if not unmatched and off_rule is None:
            continue  # no finding: its message and correction are not written
        fields = _text_fields(result)
        fields.update(
            {
                "value": result.show(result.value),
                "exact": result.show(result.exact),
                "error": result.error_text(),
                "embodies": ", ".join(match.labels)
                if match.labels
                else (
                    "no shortcut (it is exact)"
                    if match.status == "exact"
                    else "no named limit (it matches no exact relation)"
                ),
            }
        )
        corrections: list[Correction] = []
        if (
            math.isfinite(result.value)
            and math.isfinite(result.exact)
            and result.exact != 0
            and result.unit
        ):
            corrections.append(
                Correction(
                    _text_of(result.lhs),
                    result.unit,
                    result.value,
                    result.exact,
                    result.value / result.exact - 1.0,
                    False,
                    origin="formula",
                    key=result.key,
                )
            )
        # one finding per formula line: off at this point, a formula is FORM03's (a
        # warning) whether or not it matches a relation; FORM02 (info) is left for one
        # that matches none but agrees here
        if unmatched:
            rule = rules["FORM02"]
            out.append(_finding(rule, calc, result, _fill(rule.message, fields), corrections))
        if off_rule is not None:
            fields["threshold"] = display(off_rule.threshold, off_rule.indicator_unit)
            out.append(
                _finding(
                    off_rule,
                    calc,
                    result,
                    _fill(off_rule.message, fields),
                    corrections,
                    abs(result.error),
                )
            )
    return out


def _text_fields(result: FormulaResult) -> dict[str, str]:
    """The message fields of a formula's text and dimensions."""
    return {
        "formula": result.text,
        "left": result.left_dimension,
        "right": result.right_dimension,
        "detail": result.problem or "",
        "fix": result.fix or "check the unit of each factor",
    }


def _finding(
    rule: Rule,
    calc: Calculation,
    result: FormulaResult,
    message: str,
    corrections: list[Correction],
    indicator: float = math.nan,
) -> Finding:
    return Finding(
        rule=rule.id,
        title=rule.title,
        severity=rule.severity,
        assumption=rule.assumption,
        carrier=None,
        indicator_label=rule.indicator_label,
        indicator_value=indicator,
        indicator_unit=rule.indicator_unit,
        relation="above",
        threshold=rule.threshold,
        threshold_source=rule.threshold_source,
        message=message,
        corrections=corrections,
        file=calc.source,
        line=result.line,
        formula=result.text,
    )
