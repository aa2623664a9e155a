"""Which named limits turn a stated formula into an identity of the exact relations.

For a formula ``lhs = rhs`` (canonical symbols, see :mod:`formula_symbols`):

1. the defined symbols it uses are followed through :mod:`relations` to the
   independent inputs, and the limits that act anywhere on that path are
   the candidates;
2. limit sets are tried smallest first: the definitions are rewritten under
   the set (symbolic substitution on our own expression trees) and both sides
   are evaluated at random points of the inputs; the first set under which
   lhs = rhs at every point (relative 1e-9) is the formula's limit set;
3. that identity is then confirmed symbolically: by our exact normal form
   (:mod:`normal_form`, no sympy import), else by sympy (expand, power and
   exponential collection, factoring).  If neither closes it, the match
   stands on the numeric test and is marked so.

Bounds: a sample point where any step of either side overflows or leaves its
domain (inf, nan; also inf**0, which numpy calls 1) does not count as
agreement, and fewer than MIN_POINTS clean points is "not an identity".
sympy is given a budget: an upper bound on the terms its expansion makes is
computed from the tree first, and a formula above SYMPY_BUDGET is not proved
(reported as unrecognised) rather than expanded.  Deterministic: no clock.

No set: the formula is unrecognised.  The result depends only on the formula,
the dimensionality, the majority carrier and the band world (parabolic, a bulk
Kane conduction band, a linear zero-gap sheet), so it is cached per process.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from collections.abc import Set as AbstractSet
from dataclasses import dataclass
from functools import lru_cache
from itertools import combinations
from typing import Any

import numpy as np

from ...physics.arrays import ArrayIn
from ..expressions.parser import Evaluator, folded, to_numpy, to_sympy
from ..expressions.tree import CALL, NAME, NEG, NUM, Node, binary, fold
from . import match_store, normal_form
from .relations import (
    RELATION_NAMES,
    WORDS_IN,
    Limit,
    World,
    acts_on,
    closure,
    expand,
    limited,
    limits,
    names_in,
    sample,
    world,
)

POINTS = 12  # random points per identity test
MIN_POINTS = 6  # points where both sides must be finite
TOLERANCE = 1e-9  # relative agreement that counts as identical
SEED = 20261202
# terms sympy may make of a difference (all sub-expressions together) times its symbols:
# the catalogue's forms need at most ~1,000; 5,000 takes sympy about a second
SYMPY_BUDGET = 5000
MAX_SYMPY_EXPONENT = 256  # the parser allows 64; definitions raise it by a small factor
# symbols that tie a formula to the donors or to the acceptors
DONOR_SYMBOLS = frozenset({"N_D", "N_D_plus", "f_D", "g_D", "E_D"})
ACCEPTOR_SYMBOLS = frozenset({"N_A", "N_A_minus", "f_A", "g_A", "E_A"})
# real (possibly negative) symbols; every other input is positive
_SIGNED = frozenset({"E_c", "E_v", "E_F"})

# an assumption passed to the rules: (word, carrier "n"/"p" or None)
Assumption = tuple[str, str | None]


@dataclass(frozen=True)
class Match:
    status: str  # "exact" | "limit" | "unrecognised"
    world: str | None
    limits: tuple[Limit, ...]  # in report order
    relations: tuple[str, ...]  # names of the exact relations involved
    assumptions: tuple[Assumption, ...]  # passed to the rules
    proof: str | None  # "symbolic" | "numeric" | None

    @property
    def labels(self) -> tuple[str, ...]:
        return tuple(limit.label for limit in self.limits)


# the caches below are keyed by trees; bounded so that a long-lived process (the Python
# API, a language server) checking many different formulas does not grow without end
@lru_cache(maxsize=4096)
def _compiled(tree: Node) -> Evaluator:
    return to_numpy(tree, strict=True)


def _evaluate(
    lhs: Node,
    rhs: Node,
    definitions: Mapping[str, Node],
    order: Iterable[str],
    inputs: Mapping[str, Any],
) -> tuple[Any, Any]:
    values = dict(inputs)
    for name in order:
        values[name] = _compiled(definitions[name])(values)
    with np.errstate(all="ignore"):
        return _compiled(lhs)(values), _compiled(rhs)(values)


def identical(a: ArrayIn, b: ArrayIn) -> bool:
    """True when two sampled sides agree to TOLERANCE wherever both are finite."""
    left, right = np.broadcast_arrays(np.asarray(a, dtype=float), np.asarray(b, dtype=float))
    finite = np.isfinite(left) & np.isfinite(right)
    if finite.sum() < min(MIN_POINTS, left.size):
        return False
    left, right = left[finite], right[finite]
    scale = np.maximum(np.abs(left), np.abs(right))
    return bool(np.all(np.abs(left - right) <= TOLERANCE * scale))


def _worlds(names: AbstractSet[str], majority: str) -> tuple[str, ...]:
    """Which way round to write neutrality: for the dopant the formula is about."""
    donor, acceptor = bool(names & DONOR_SYMBOLS), bool(names & ACCEPTOR_SYMBOLS)
    first = "donor" if majority == "n" else "acceptor"
    if donor and acceptor:
        return (first, "acceptor" if first == "donor" else "donor")
    if donor or acceptor:
        return ("donor",) if donor else ("acceptor",)
    return (first,)


@lru_cache(maxsize=4096)
def analyse(lhs: Node, rhs: Node, dim: int, majority: str, band: str = "parabolic") -> Match:
    """The smallest limit set under which ``lhs = rhs`` holds in the band world ``band``
    (relations.band_world; cached per process, and between runs by match_store)."""
    stored = match_store.key(lhs, rhs, dim, majority, band)
    outcome = match_store.STORE.get(stored)
    if outcome is not None:
        rebuilt = _rebuilt(lhs, rhs, dim, majority, band, outcome)
        if rebuilt is not None:
            return rebuilt
    found = _analyse(lhs, rhs, dim, majority, band)
    ids = [limit.id for limit in found.limits]
    match_store.STORE.put(stored, [found.status, found.world, ids, found.proof])
    return found


def _rebuilt(
    lhs: Node, rhs: Node, dim: int, majority: str, band: str, outcome: match_store.Outcome
) -> Match | None:
    """The Match a stored outcome stands for, rebuilt from the limit catalogue (None where
    the outcome does not fit it)."""
    status, which, ids, proof = outcome
    if status == "unrecognised":
        return Match("unrecognised", None, (), (), (), None)
    if status not in ("exact", "limit") or which not in ("donor", "acceptor"):
        return None
    if proof not in ("symbolic", "numeric"):
        return None
    if not isinstance(ids, list) or (status == "exact") != (not ids):
        return None
    base = world(dim, which, majority, band)
    chosen = tuple(limit for limit in limits(which) if limit.id in ids)
    if len(chosen) != len(ids):
        return None
    names = names_in(lhs) | names_in(rhs)
    return Match(
        status,
        base.world,
        chosen,
        _relations(lhs, rhs, base, chosen),
        _assumptions(names, base, chosen),
        proof,
    )


def _analyse(lhs: Node, rhs: Node, dim: int, majority: str, band: str) -> Match:
    names = names_in(lhs) | names_in(rhs)
    rng = np.random.default_rng(SEED)
    best: tuple[World, tuple[Limit, ...]] | None = None
    for which in _worlds(names, majority):
        base = world(dim, which, majority, band)
        used = closure(names, base.definitions)
        candidates = [
            limit
            for limit in limits(which)
            if any(acts_on(limit, base.definitions[n]) for n in used)
            or any(acts_on(limit, side) for side in (lhs, rhs))
        ]
        found = _smallest(
            lhs, rhs, base, candidates, names, rng, None if best is None else len(best[1])
        )
        if found is not None and (best is None or len(found) < len(best[1])):
            best = (base, found)
    if best is None:
        return Match("unrecognised", None, (), (), (), None)
    base, chosen = best
    proof = _proof(lhs, rhs, limited(base, chosen))
    if proof is None:
        return Match("unrecognised", None, (), (), (), None)
    return Match(
        "exact" if not chosen else "limit",
        base.world,
        chosen,
        _relations(lhs, rhs, base, chosen),
        _assumptions(names, base, chosen),
        proof,
    )


def _smallest(
    lhs: Node,
    rhs: Node,
    base: World,
    candidates: Sequence[Limit],
    names: AbstractSet[str],
    rng: np.random.Generator,
    at_most: int | None,
) -> tuple[Limit, ...] | None:
    """The first limit set (smallest, in catalogue order) making the formula an identity."""
    # (degenerate carriers, inputs) -> sampled input values
    primitives_cache: dict[tuple[tuple[str, ...], frozenset[str]], dict[str, Any]] = {}
    largest = len(candidates) if at_most is None else min(at_most - 1, len(candidates))
    for size in range(largest + 1):
        for chosen in combinations(candidates, size):
            ids = {limit.id for limit in chosen}
            if any(excluded in ids for limit in chosen for excluded in limit.excludes):
                continue
            definitions = limited(base, chosen)
            needed = closure(names, definitions)
            # inputs a limit pins (e.g. N_A -> 0) come first, then definitions in order
            order = tuple(n for n in needed if n not in base.definitions) + tuple(
                n for n in base.order if n in needed
            )
            inputs_needed = (names | {m for n in needed for m in names_in(definitions[n])}) - set(
                definitions
            )
            degenerate = tuple(x for x in ("n", "p") if f"deg_{x}" in ids)
            key = (degenerate, frozenset(inputs_needed))
            if key not in primitives_cache:
                primitives_cache[key] = sample(
                    inputs_needed, base.dim, degenerate, rng, POINTS, base.band
                )
            a, b = _evaluate(lhs, rhs, definitions, order, primitives_cache[key])
            if identical(a, b):
                return chosen
    return None


def _acted(limit: Limit, names: AbstractSet[str], base: World) -> list[str]:
    return [
        n for n in sorted(closure(names, base.definitions)) if acts_on(limit, base.definitions[n])
    ]


# a limit that acts on both carriers is still about one of them where only its relation is used
_CARRIER_OF = {"v_n": "n", "v_p": "p", "D_n": "n", "D_p": "p"}


def _assumptions(
    names: AbstractSet[str], base: World, chosen: Sequence[Limit]
) -> tuple[Assumption, ...]:
    out: list[Assumption] = []
    for limit in chosen:
        acted = _acted(limit, names, base)
        words = {WORDS_IN.get(n, {}).get(limit.id, limit.word) for n in acted} or {limit.word}
        carrier = limit.carrier
        if carrier is None:
            own = {_CARRIER_OF[n] for n in acted if n in _CARRIER_OF}
            carrier = own.pop() if len(own) == 1 else None
        for word in sorted(w for w in words if w):
            if (word, carrier) not in out:
                out.append((word, carrier))
    return tuple(out)


def _relations(lhs: Node, rhs: Node, base: World, chosen: Sequence[Limit]) -> tuple[str, ...]:
    direct = [
        n for n in _in_order(lhs) + _in_order(rhs) if n in base.definitions and n in RELATION_NAMES
    ]
    if chosen:
        direct = [
            n
            for n in direct
            if any(
                acts_on(limit, base.definitions[m])
                for limit in chosen
                for m in closure({n}, base.definitions)
            )
        ] or direct
    else:
        direct = direct[:1]
    names: list[str] = []
    for name in direct:
        if RELATION_NAMES[name] not in names:
            names.append(RELATION_NAMES[name])
    return tuple(names)


def _in_order(tree: Node) -> list[str]:
    """The names of the tree, left to right (with repeats)."""
    return fold(
        tree,
        lambda node, inner: (
            [node.value] if node.kind == NAME else [n for part in inner for n in part]
        ),
    )


def _proof(lhs: Node, rhs: Node, definitions: Mapping[str, Node]) -> str | None:
    """How lhs = rhs under the definitions is confirmed: "symbolic" by our exact normal
    form (no sympy import) or by sympy's expand / power collection / factoring, else
    "numeric"; None when the formula is too large for sympy's budget."""
    a, b = expand(lhs, definitions), expand(rhs, definitions)
    try:
        if normal_form.equal(a, b):
            return "symbolic"
    except (normal_form.Unsupported, ArithmeticError, RecursionError):
        pass
    if expansion_cost(binary("-", a, b)) > SYMPY_BUDGET:
        return None
    try:
        return "symbolic" if _proved_by_sympy(a, b) else "numeric"
    except Exception:  # noqa: BLE001 - a confirmation step: the numeric identity stands
        return "numeric"


def expansion_cost(tree: Node) -> int:
    """An upper bound on the terms sympy's expansion makes of ``tree`` (summed over the
    tree and the arguments of its functions and powers) times the number of symbols:
    sympy's factoring, the slowest step, grows with both.  Above SYMPY_BUDGET anywhere
    inside (even under a power of 0) it is SYMPY_BUDGET + 1."""
    try:
        terms, inner = fold(tree, _terms)
    except _OverBudget:
        return SYMPY_BUDGET + 1
    return min((terms + inner) * max(len(names_in(tree)), 1), SYMPY_BUDGET + 1)


class _OverBudget(Exception):
    pass


def _within(count: int) -> int:
    if count > SYMPY_BUDGET:  # numbers stay small however large the tree
        raise _OverBudget
    return count


def _terms(node: Node, parts: list[tuple[int, int]]) -> tuple[int, int]:
    """(terms of the node's expansion, terms inside its functions and non-constant
    powers, which sympy expands on their own)."""
    kind = node.kind
    if kind in (NUM, NAME):
        return 1, 0
    inner = sum(part[1] for part in parts)
    if kind == NEG:
        return parts[0][0], inner
    if kind == CALL:
        return 1, _within(inner + sum(part[0] for part in parts))
    (left, left_inner), (right, _) = parts
    if kind == "**":
        exponent = folded(node.args[1])
        if exponent is None or not math.isfinite(exponent):
            return 1, _within(inner + left + right)
        if abs(exponent) > MAX_SYMPY_EXPONENT:  # sympy would compute 10^(10^9) exactly
            raise _OverBudget
        whole = int(abs(exponent))  # (a + b)^(5/2) -> (a + b)^2 * sqrt(a + b)
        size = _within(math.comb(left + whole - 1, whole)) if left > 1 else 1
        if exponent < 0:  # the denominator is expanded on its own
            return 1, _within(left_inner + size)
        return size, left_inner
    # a quotient is brought over one denominator (cancel, factor): terms multiply
    return _within(left + right if kind in ("+", "-") else left * right), inner


def _proved_by_sympy(a: Node, b: Node) -> bool:
    import sympy

    symbols = {"pi": sympy.pi}
    for name in names_in(a) | names_in(b):
        if name != "pi":
            symbols[name] = (
                sympy.Symbol(name, real=True)
                if name in _SIGNED
                else sympy.Symbol(name, positive=True)
            )
    left = to_sympy(a, symbols, evaluate=True)
    right = to_sympy(b, symbols, evaluate=True)
    difference = left - right
    if sympy.expand(difference) == 0:
        return True
    collected = sympy.powsimp(sympy.expand_power_base(difference, force=True), force=True)
    if sympy.expand(collected) == 0:
        return True
    if right != 0:
        ratio = sympy.powsimp(sympy.expand_power_base(left / right, force=True), force=True)
        if sympy.expand(sympy.cancel(ratio)) == 1:
            return True
    return bool(sympy.expand(sympy.radsimp(sympy.factor(difference))) == 0)
