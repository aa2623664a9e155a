"""The dimension of an expression tree, by the algebra of engine/dimensions.py, and the
dimensions of the names rule expressions use.

A rule expression is refused where the terms of a sum differ in dimension, where the
values min/max/stated_or/less choose between or compare differ, where exp, log or F
get an argument with a dimension, or where a quantity with a dimension is raised to a
power that is not a constant.  A name's dimension follows from its display unit in
engine/vocabulary.py (kT is shown in eV: an energy, J inside).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from functools import cache

from ..vocabulary import COMMON, CONSTANTS, PER_CARRIER
from . import _relation_texts
from . import dimensions as dm
from .parser import folded, parse, to_text
from .tree import CALL, NAME, NEG, NUM, Node, fold

# display unit (vocabulary.DISPLAY_UNITS) -> dimension
UNIT_DIMENSIONS = {
    "1": dm.NONE,
    "%": dm.NONE,
    "K": dm.TEMPERATURE,
    "eV": dm.ENERGY,
    "V": dm.VOLTAGE,
    "cm^-3": dm.density(3),
    "cm^-2": dm.density(2),
    "cm^-1": dm.density(1),
    "cm^-6": dm.density(3) ** 2,
    "cm^-4": dm.density(2) ** 2,
    "cm^2/(V*s)": dm.MOBILITY,
    "cm^2/s": dm.DIFFUSIVITY,
    "cm/s": dm.VELOCITY,
    "kV/cm": dm.FIELD,
    "ohm*cm": dm.RESISTANCE * dm.LENGTH,
    "S/cm": dm.conductivity(3),
    "ohm": dm.RESISTANCE,
    "ohm/sq": dm.RESISTANCE,
    "S": dm.NONE / dm.RESISTANCE,
    "nm": dm.LENGTH,
    "um": dm.LENGTH,
    "um^2": dm.AREA,
    "A/cm^2": dm.CURRENT / dm.AREA,
    "m0": dm.MASS,
    "ohm*cm^2": dm.RESISTANCE * dm.AREA,
    "ns": dm.TIME,
}
CONSTANT_DIMENSIONS = {"q": dm.CHARGE, "k": dm.ENERGY / dm.TEMPERATURE}

_DIMENSIONLESS_ARGUMENTS = ("exp", "log", "ln", "log10", "F")
_ALIKE_ARGUMENTS = ("abs", "min", "max", "stated_or")


class DimensionProblem(Exception):
    """An expression whose parts do not fit together dimensionally (message for authors)."""


def name_dimension(name: str) -> dm.Dimension:
    """The dimension of a rule name (``_x``/``_o`` and concrete ``_n``/``_p`` forms)."""
    if name in CONSTANTS:
        return CONSTANT_DIMENSIONS[name]
    if name in COMMON:
        return UNIT_DIMENSIONS[COMMON[name][0]]
    return UNIT_DIMENSIONS[PER_CARRIER[name[:-2] + "_x"][0]]


def _same(trees: Sequence[Node], dimensions: Sequence[dm.Dimension], what: str) -> dm.Dimension:
    for tree, dimension in zip(trees[1:], dimensions[1:]):
        if dimension != dimensions[0]:
            raise DimensionProblem(
                f"{to_text(trees[0])} is {dm.describe(dimensions[0])} but "
                f"{to_text(tree)} is {dm.describe(dimension)}; {what}"
            )
    return dimensions[0]


def dimension(tree: Node, of_name: Callable[[str], dm.Dimension] = name_dimension) -> dm.Dimension:
    """The dimension of an expression tree (expressions/tree.py); DimensionProblem
    where it has none."""

    def visit(node: Node, inner: list[dm.Dimension]) -> dm.Dimension:
        kind = node.kind
        if kind == NUM:
            return dm.NONE
        if kind == NAME:
            return of_name(node.value)
        if kind == NEG:
            return inner[0]
        if kind == CALL:
            return _call_dimension(node.value, node.args, inner)
        return _operation_dimension(kind, node.args, inner)

    return fold(tree, visit)


def _call_dimension(name: str, args: Sequence[Node], inner: Sequence[dm.Dimension]) -> dm.Dimension:
    if name in _DIMENSIONLESS_ARGUMENTS:
        for argument, found in zip(args, inner):
            if not found.dimensionless:
                raise DimensionProblem(
                    f"the argument of {name}(), {to_text(argument)}, "
                    f"is {dm.describe(found)}; it must be "
                    "dimensionless"
                )
        return dm.NONE
    if name == "sqrt":
        return inner[0] ** 0.5
    if name == "present":
        return dm.NONE
    if name == "less":
        _same(args, inner, "less() compares values of one dimension")
        return dm.NONE
    if name in _ALIKE_ARGUMENTS:
        return _same(args, inner, f"the values {name}() chooses between must have one dimension")
    if name in _relation_texts.FUNCTIONS:
        return _relation_dimension(name, inner)
    raise DimensionProblem(f"{name}() has no dimension rule")


@cache  # one tree per relation function: a handful
def _relation_formula(name: str) -> Node:
    return parse(_relation_texts.FUNCTIONS[name][1])


def _relation_dimension(name: str, inner: Sequence[dm.Dimension]) -> dm.Dimension:
    """A relation function's dimension: its generated formula walked with the
    arguments' dimensions (so its sums, exponents and F arguments are checked too)."""
    parameters = _relation_texts.FUNCTIONS[name][0]
    given = dict(zip(parameters, inner))
    try:
        return dimension(
            _relation_formula(name),
            lambda symbol: given[symbol] if symbol in given else CONSTANT_DIMENSIONS[symbol],
        )
    except DimensionProblem as exc:
        shown = ", ".join(f"{p}: {dm.describe(d)}" for p, d in given.items())
        raise DimensionProblem(f"in {name}({shown}): {exc}") from None


def _operation_dimension(
    kind: str, args: Sequence[Node], inner: Sequence[dm.Dimension]
) -> dm.Dimension:
    left, right = inner
    if kind in ("+", "-"):
        return _same(args, (left, right), "terms of a sum must have one dimension")
    if kind == "*":
        return left * right
    if kind == "/":
        return left / right
    if not right.dimensionless:
        raise DimensionProblem(f"the exponent {to_text(args[1])} is {dm.describe(right)}")
    if left.dimensionless:
        return dm.NONE
    power = folded(args[1])
    if power is None or not math.isfinite(power):
        raise DimensionProblem(
            f"{to_text(args[0])} ({dm.describe(left)}) is raised to the "
            f"non-constant power {to_text(args[1])}"
        )
    return left**power
