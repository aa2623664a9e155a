"""Rules a sweep need not rule: a gate that the sweep's stated numbers alone close.

A sweep states the same numbers at every grid point, so a stated number absent at its
first point is absent (NaN) at every point.  Where a factor of a rule's gate (a product,
multiplied out as evaluate._gate does) is then 0 or NaN whatever the solved quantities
are -- ``present(stated_ni)`` of an absent n_i, ``less(stated_dens_o, ...)`` of an absent
density, and sums and minima of such -- the gate is 0 or NaN at every cell and the rule
fires nowhere for that carrier; ruling it chunk by chunk only costs time (DOPE01's gate
computed its ``less`` over every cell).  evaluate.sweep_rules already drops a rule whose
gate has ``present()`` of an absent number as a direct factor; this reads the factors'
whole expressions.

Only exact knowledge is used: a value is known where numbers and absent stated numbers
fix it at every cell (``less`` with a NaN side is 0, ``present`` of NaN is 0; NaN
propagates through arithmetic and exp, log, sqrt, abs), and ``present``/``less`` of
anything is a finite 0 or 1, so 0 times it is 0.  Anything else is unknown, and a rule
with an unknown factor is ruled as before.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence

import numpy as np

from ... import records
from ..expressions.tree import CALL, NAME, NEG, NUM, Node, fold
from ..vocabulary import carrier_names
from .rulebook import Rule
from .state_values import Values, one_value

# a value known at every cell (a float), unknown but a finite 0 or 1 (a present() or
# less() of unknown values), or unknown (None)
_FINITE_01 = "finite 0 or 1"
Known = float | str | None

_NAN_PROPAGATES = frozenset({"exp", "log", "ln", "log10", "sqrt", "abs"})
# the arithmetic of known values, as the compiled expressions do it (parser.py)
_FUNCTIONS = {
    "min": np.fmin,
    "max": np.fmax,
    "+": np.add,
    "-": np.subtract,
    "*": np.multiply,
    "/": np.divide,
}


def _known(node: Node, args: list[Known], names: Mapping[str, str], probe: Values) -> Known:
    """What the sweep's stated numbers alone fix of ``node`` (``args``: its arguments')."""
    kind = node.kind
    if kind == NUM:
        return float(node.value)
    if kind == NAME:
        name = names.get(node.value, node.value)
        if not name.startswith("stated_"):
            return None
        # an absent stated number is NaN at every cell (a given one may vary: a stated
        # Fermi level is divided by each cell's kT)
        value = float(one_value(probe[name])[0])
        return value if math.isnan(value) else None
    floats = [a for a in args if isinstance(a, float)]
    nan = [math.isnan(a) for a in floats]
    every = len(floats) == len(args)  # every argument known
    if kind == CALL and node.value == "present":
        # present() tests for a finite value: inf is absent too
        return (1.0 if math.isfinite(floats[0]) else 0.0) if every else _FINITE_01
    if kind == CALL and node.value == "less":
        if any(nan):  # NaN compares False either way
            return 0.0
        return float(floats[0] < floats[1]) if every else _FINITE_01
    if kind == CALL and node.value in ("min", "max"):  # np.fmin/fmax: NaN gives way
        return _apply(node.value, floats) if every else None
    if kind == NEG or (kind == CALL and node.value in _NAN_PROPAGATES):
        return math.nan if any(nan) else None
    if kind in ("+", "-", "*", "/"):
        if any(nan):
            return math.nan
        if every:
            return _apply(kind, floats)
        finite = all(a == _FINITE_01 or (isinstance(a, float) and math.isfinite(a)) for a in args)
        if kind == "*" and 0.0 in floats and finite:
            return 0.0  # 0 times a finite number
    return None


def _apply(function: str, args: list[float]) -> float:
    left, right = args
    with np.errstate(all="ignore"):
        return float(_FUNCTIONS[function](np.float64(left), np.float64(right)))


def _closed_for(rule: Rule, x: str, probe: Values) -> bool:
    """Whether a factor of the rule's gate is 0 or NaN at every cell for carrier ``x``."""
    names: Mapping[str, str] = carrier_names(x) if x else {}

    def closes(node: Node) -> bool:
        if node.kind == "*":  # a product is 0 or NaN where a factor is
            return any(closes(arg) for arg in node.args)
        value = fold(node, lambda inner, args: _known(inner, args, names, probe))
        return isinstance(value, float) and (value == 0.0 or math.isnan(value))

    return rule.when is not None and closes(rule.when.tree)


def open_rules(rules: Sequence[Rule], probe: Values) -> list[Rule]:
    """``rules`` without the carriers whose gate the sweep's stated numbers close
    (``probe``: the quantities at one grid point); a rule closed for every carrier is
    left out."""
    kept = []
    for rule in rules:
        carriers = tuple(x for x in rule.carriers if not _closed_for(rule, x, probe))
        if carriers == rule.carriers:
            kept.append(rule)
        elif carriers:
            kept.append(records.replace(rule, carriers=carriers))
    return kept
