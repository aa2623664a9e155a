"""The safe expression language of rule files (and, later, of stated formulas).

Text is parsed with Python's ``ast`` module in ``eval`` mode and then walked
under a whitelist: numbers, names, + - * / ** ^ (``^`` is a power), unary
minus/plus, parentheses, and calls of the functions in ``FUNCTIONS``.  Nothing
else (attributes, subscripts, strings, lambdas, comprehensions, keywords,
comparisons) is accepted.  The result is a tree of typed nodes of our own
(:mod:`.tree`: numbers, names, + - * / **, unary minus, calls), walked by one fold.

Nothing is ever evaluated while parsing: no ``eval``, ``sympify``,
``parse_expr`` or ``lambdify`` touches the text.  From the tree,
:func:`to_numpy` builds a vectorized closure (no sympy import, so the
command line starts fast) and :func:`to_sympy` builds sympy objects directly
(``evaluate=False``) for printing and symbolic work.

Bounds: 4,000 characters, 400 tree nodes, depth 40, numeric constants of
magnitude at most 1e300, and exponents that fold to a constant at most 64 in
magnitude -- also when they are written as expressions (``x^(128/2)``) and when
powers are nested through parentheses (``(x^8)^16`` raises x to 128: refused).
A power of constants must itself stay within 1e300.  These bounds keep every
later step (numeric samples, the exact normal form, sympy) small.

A product written without ``*`` (``2N_D``, ``N_D mu_n``, ``2(a + b)``) is refused
with the explicit form to write instead.
"""

from __future__ import annotations

import ast
import math
import re
from collections.abc import Callable, Collection, Iterable, Mapping
from functools import lru_cache
from typing import Any

import numpy as np

from ...close_words import close_matches
from ...errors import InputError
from ...physics import _relations
from ...physics.arrays import ArrayIn, FloatArray
from .tree import CALL, NAME, NEG, NUM, Node, binary, call, fold, neg, num, transform
from .tree import name as name_node

MAX_LENGTH = 4000
MAX_NODES = 400
MAX_DEPTH = 40
MAX_CONSTANT = 1e300
MAX_EXPONENT = 64.0

# values by name (numpy arrays or numbers, SI) -> the expression's value there
Evaluator = Callable[[Mapping[str, Any]], Any]
# sympy ships no type information: its objects are Any to the type checker
SympyExpr = Any


def _stated_or(stated: ArrayIn, fallback: ArrayIn) -> FloatArray:
    given = np.asarray(stated, dtype=float)
    return np.where(np.isfinite(given), given, fallback)


def _present(x: ArrayIn) -> FloatArray:
    given: FloatArray = np.isfinite(np.asarray(x, dtype=float)).astype(float)
    return given


def _less(a: ArrayIn, b: ArrayIn) -> FloatArray:
    return (np.asarray(a, dtype=float) < np.asarray(b, dtype=float)).astype(float)


# name -> (number of arguments, numpy function, sympy builder name, meaning)
FUNCTIONS: dict[str, tuple[int, Callable[..., Any], str, str]] = {
    "exp": (1, np.exp, "exp", "e^x"),
    "log": (1, np.log, "log", "natural logarithm"),
    "ln": (1, np.log, "log", "natural logarithm (same as log)"),
    "log10": (1, np.log10, "log10", "base-10 logarithm"),
    "sqrt": (1, np.sqrt, "sqrt", "square root"),
    "abs": (1, np.abs, "Abs", "absolute value"),
    "min": (2, np.fmin, "Min", "smaller of two values"),
    "max": (2, np.fmax, "Max", "larger of two values"),
    "F": (
        2,
        _relations._fermi,
        "F",
        "Fermi–Dirac integral F_j(eta), normalized (F_j -> e^eta for eta << 0)",
    ),
    "stated_or": (
        2,
        _stated_or,
        "stated_or",
        "the stated value where one is given, else the second",
    ),
    "present": (1, _present, "present", "1 where a value is given, else 0"),
    "less": (2, _less, "less", "1 where the first value is below the second, else 0"),
}

# the relations of engine/formulas/relation_table.py, by name (generated numpy functions)
FUNCTIONS.update(
    {
        name: (len(parameters), getattr(_relations, name), name, meaning)
        for name, (parameters, meaning) in _relations.SIGNATURES.items()
    }
)

_BINARY = {ast.Add: "+", ast.Sub: "-", ast.Mult: "*", ast.Div: "/", ast.Pow: "**"}


def parse(
    text: str,
    names: Collection[str] | None = None,
    where: str = "",
    functions: Iterable[str] | None = None,
) -> Node:
    """Parse ``text`` into a tree of :class:`~.tree.Node`.

    ``names`` (optional) is the set of allowed names; ``functions`` (optional)
    narrows the callable functions to a subset of ``FUNCTIONS``.
    """
    place = f"{where}: " if where else ""
    if not isinstance(text, str):
        raise InputError(f"{place}expected an expression as text, got {text!r}")
    if len(text) > MAX_LENGTH:
        raise InputError(
            f"{place}expression is {len(text)} characters long; the limit is {MAX_LENGTH}"
        )
    if text.count("(") > MAX_DEPTH * 4:
        raise InputError(f"{place}expression has too many parentheses (limit {MAX_DEPTH * 4})")
    try:
        # "^" means power; Python would read it as xor with a lower precedence than "*"
        tree = ast.parse(text.strip().replace("^", "**"), mode="eval")
    except (SyntaxError, ValueError, RecursionError, MemoryError) as exc:
        detail = getattr(exc, "msg", None) or type(exc).__name__
        if isinstance(exc, (RecursionError, MemoryError)):
            detail = f"it is nested deeper than {MAX_DEPTH} levels"
        products = _implicit_products(text)
        if products:
            raise InputError(
                f"{place}a product needs an explicit '*' in {_shown(text)}: write "
                f"{', '.join(products)}"
            ) from None
        raise InputError(f"{place}cannot parse expression {_shown(text)}: {detail}") from None
    counter = [0]
    allowed = FUNCTIONS if functions is None else {f: FUNCTIONS[f] for f in functions}
    return _walk(tree.body, names, place, text, counter, 0, allowed)


def _walk(
    node: ast.expr,
    names: Collection[str] | None,
    place: str,
    text: str,
    counter: list[int],
    depth: int,
    allowed: Mapping[str, tuple[int, Callable[..., Any], str, str]],
) -> Node:
    counter[0] += 1
    if counter[0] > MAX_NODES:
        raise InputError(f"{place}expression has more than {MAX_NODES} parts; split it")
    if depth > MAX_DEPTH:
        raise InputError(f"{place}expression is nested deeper than {MAX_DEPTH} levels")

    def go(child: ast.expr) -> Node:
        return _walk(child, names, place, text, counter, depth + 1, allowed)

    # numbers only (a bool is an int to Python: True is not a number here)
    if (
        isinstance(node, ast.Constant)
        and isinstance(node.value, int | float)
        and not isinstance(node.value, bool)
    ):
        try:
            value = float(node.value)
        except OverflowError:  # an integer literal of 309 digits or more
            value = math.inf
        if not math.isfinite(value) or abs(value) > MAX_CONSTANT:
            raise InputError(
                f"{place}constant {_shown(str(node.value), 24)} is out of range "
                "(|x| <= 1e300); write it with an exponent, e.g. 1.5e20"
            )
        return num(value)
    if isinstance(node, ast.Name):
        if names is not None and node.id not in names:
            close = close_matches(node.id, sorted(names), n=3)
            hint = f"; did you mean {', '.join(close)}?" if close else ""
            raise InputError(f"{place}unknown name {node.id!r} in {text!r}{hint}")
        return name_node(node.id)
    if isinstance(node, ast.BinOp) and type(node.op) in _BINARY:
        op = _BINARY[type(node.op)]
        left, right = go(node.left), go(node.right)
        if op == "**":
            _check_power(left, right, place)
        return binary(op, left, right)
    if isinstance(node, ast.UnaryOp) and isinstance(node.op, (ast.USub, ast.UAdd)):
        operand = go(node.operand)
        if isinstance(node.op, ast.UAdd):
            return operand
        # a negative literal is a number (F(-0.5, eta) names an order, not an operation)
        return num(-operand.value) if operand.kind == NUM else neg(operand)
    if isinstance(node, ast.Call) and isinstance(node.func, ast.Name) and not node.keywords:
        name = node.func.id
        if name not in allowed:
            raise InputError(
                f"{place}function {name!r} is not available; use one of "
                f"{', '.join(allowed)} (for a product write {name}*(...))"
            )
        arity = allowed[name][0]
        if len(node.args) != arity or any(isinstance(a, ast.Starred) for a in node.args):
            raise InputError(f"{place}{name}() takes {arity} argument(s)")
        return call(name, [go(arg) for arg in node.args])
    kind = type(node).__name__
    if (
        isinstance(node, ast.Call)
        and isinstance(node.func, (ast.Constant, ast.BinOp, ast.UnaryOp))
        and not node.keywords
    ):  # 2(a + b), (a + b)(c + d)
        factor = ast.get_source_segment(text.replace("^", "**"), node.func) or "..."
        raise InputError(
            f"{place}a product needs an explicit '*': write {factor.replace('**', '^')[:30]}*(...)"
        )
    raise InputError(
        f"{place}{_describe(kind)} is not allowed in an expression ({text[:60]!r}); "
        "use numbers, names, + - * / ^ and the listed functions"
    )


def _check_power(base: Node, exponent: Node, place: str) -> None:
    """Refuse a power whose exponent (folded to a constant where it is one) or whose
    nesting inside other powers is out of range, and a constant power beyond 1e300."""
    power = binary("**", base, exponent)
    if exponent.kind != NUM and _has_power(exponent):
        raise InputError(
            f"{place}nested powers such as a^b^c are not accepted; "
            "use parentheses and a single power"
        )
    value = folded(exponent)
    if value is not None and not abs(value) <= MAX_EXPONENT:
        raise InputError(
            f"{place}the exponent {_shown(to_text(exponent), 30)} is "
            f"{value:g}; the limit is |x| <= {MAX_EXPONENT:g}"
        )
    growth = _growth(power)
    if growth > MAX_EXPONENT:
        raise InputError(
            f"{place}the powers nested in {_shown(to_text(power), 40)} raise a "
            f"factor to the power {growth:g}; the limit is {MAX_EXPONENT:g} "
            "(write the combined power once)"
        )
    if value is not None and not names_in(base):
        result = folded(power)  # a number: neither side has a name
        if result is not None and not abs(result) <= MAX_CONSTANT:  # also inf and nan
            raise InputError(
                f"{place}{_shown(to_text(power), 40)} is {result:g}; a "
                "constant must be a finite number with |x| <= 1e300"
            )


@lru_cache(maxsize=4096)
def folded(tree: Node) -> float | None:
    """The value of a tree without names (a float, possibly inf or nan), else None."""
    if names_in(tree):
        return None
    with np.errstate(all="ignore"):
        return float(to_numpy(tree)({}))


@lru_cache(maxsize=4096)
def _growth(tree: Node) -> float:
    """The largest constant power any leaf is raised to through nested powers."""

    def visit(node: Node, inner: list[float]) -> float:
        if not inner:
            return 1.0
        if node.kind == "**":
            exponent = folded(node.args[1])
            if exponent is not None and math.isfinite(exponent):
                return inner[0] * abs(exponent)
        return max(inner)

    return fold(tree, visit)


def _has_power(tree: Node) -> bool:
    """A power anywhere outside function arguments."""
    return fold(tree, lambda node, inner: node.kind == "**" or (node.kind != CALL and any(inner)))


# a product written without "*": a number directly before a name or "(" (2N_D, 2(a+b)),
# a name or number, spaces, then a name or number (N_D mu_n), ")" before a name, number or "("
_NUMBER = r"(?>\d+(?:\.\d*)?(?:[eE][+-]?\d+)?)"
_IMPLICIT = re.compile(
    rf"(?<![\w.])({_NUMBER})\s*(?=[^\W\d]|\()"
    rf"|(?<![\w.])({_NUMBER}|[^\W\d]\w*)\s+(?=\w)"
    rf"|(\))\s*(?=[\w(])"
)
_NEXT_TOKEN = re.compile(r"\w+|\(")


def _implicit_products(text: str) -> list[str]:
    """How to write ``text`` with explicit products: the whole text when short ("2*N_D"),
    else the first few products; [] when inserting '*' does not make it parse."""
    matches = list(_IMPLICIT.finditer(text))
    if not matches:
        return []
    explicit = _IMPLICIT.sub(lambda m: (m.group(1) or m.group(2) or m.group(3)) + "*", text)
    try:
        ast.parse(explicit.strip().replace("^", "**"), mode="eval")
    except (SyntaxError, ValueError, RecursionError, MemoryError):
        return []
    if len(explicit) <= 60:
        return [explicit.strip()]
    products = []
    for m in matches[:3]:
        token = _NEXT_TOKEN.match(text, m.end())  # the lookaheads of _IMPLICIT promise one
        following = token.group(0) if token else "..."
        before = m.group(1) or m.group(2) or "(...)"
        products.append(f"{before}*{following}{'...)' if following == '(' else ''}")
    return products


def _shown(text: str, width: int = 60) -> str:
    """Text quoted for a message, cut to ``width`` characters."""
    return repr(text if len(text) <= width else text[:width] + "...")


def _describe(kind: str) -> str:
    return {
        "Attribute": "attribute access",
        "Subscript": "indexing",
        "Lambda": "a lambda",
        "Constant": "a text or non-numeric constant",
        "Compare": "a comparison",
        "ListComp": "a comprehension",
        "GeneratorExp": "a comprehension",
        "Call": "this kind of call",
        "BoolOp": "and/or",
    }.get(kind, f"{kind} syntax")


def names_in(tree: Node) -> set[str]:
    """Every name the tree refers to."""
    return fold(
        tree, lambda node, inner: {node.value} if node.kind == NAME else set().union(*inner)
    )


def rename(tree: Node, mapping: Mapping[str, str]) -> Node:
    """The tree with names replaced by ``mapping`` (names not in it are kept)."""
    return transform(
        tree,
        lambda node: name_node(mapping.get(node.value, node.value)) if node.kind == NAME else node,
    )


_NUMPY_BINARY = {"+": np.add, "-": np.subtract, "*": np.multiply, "/": np.divide, "**": np.power}


def to_numpy(tree: Node, strict: bool = False) -> Evaluator:
    """A function ``f(values)`` evaluating the tree on a dict of numpy arrays.

    ``strict``: every intermediate result that is not finite becomes NaN and stays NaN
    (numpy would turn inf**0 into 1 and 1/inf into 0), so a point where any step
    overflowed or left its domain shows as NaN in the result.
    """

    def visit(node: Node, parts: list[Evaluator]) -> Evaluator:
        kind = node.kind
        op: Callable[..., Any]
        if kind == NUM:
            value = node.value
            return lambda values: value
        if kind == NAME:
            key = node.value
            return lambda values: values[key]
        if kind == NEG:
            op = np.negative
        elif kind == CALL:
            op = FUNCTIONS[node.value][1]
        else:
            op = _strict_power if strict and kind == "**" else _NUMPY_BINARY[kind]
        if strict:
            return lambda values: _finite_or_nan(op(*(part(values) for part in parts)))
        return lambda values: op(*(part(values) for part in parts))

    return fold(tree, visit)


def _strict_power(base: ArrayIn, exponent: ArrayIn) -> FloatArray:
    return np.where(np.isnan(base) | np.isnan(exponent), np.nan, np.power(base, exponent))


def _finite_or_nan(value: ArrayIn) -> FloatArray:
    array = np.asarray(value, dtype=float)
    return np.where(np.isfinite(array), array, np.nan)


def _sympy_number(value: float) -> SympyExpr:
    from fractions import Fraction

    import sympy

    value = float(value)
    if value.is_integer() and abs(value) < 1e15:
        return sympy.Integer(int(value))
    exact = Fraction(value).limit_denominator(64)
    # 0.5, 1.5, 0.75 and decimals such as 0.1 are the rationals they stand for
    return (
        sympy.Rational(exact.numerator, exact.denominator)
        if float(exact) == value
        else sympy.Float(value)
    )


def to_sympy(
    tree: Node, symbols: dict[str, SympyExpr] | None = None, evaluate: bool = False
) -> SympyExpr:
    """sympy objects built directly from the tree (nothing is re-parsed from text).

    ``symbols`` maps tree names to prepared sympy symbols (e.g. with
    assumptions); names not in it get a plain symbol.  With ``evaluate=False``
    (for printing) the structure is kept as written; with ``evaluate=True``
    (for symbolic work) sympy's automatic simplification applies.
    """
    import sympy

    symbols = {} if symbols is None else symbols
    minus_one = sympy.Integer(-1)

    def visit(node: Node, args: list[SympyExpr]) -> SympyExpr:
        kind = node.kind
        if kind == NUM:
            return _sympy_number(node.value)
        if kind == NAME:
            if node.value not in symbols:
                # sympy prints every "_" as a subscript: keep only the last one
                stem, _, suffix = node.value.rpartition("_")
                shown = f"{stem.replace('_', '')}_{suffix}" if stem else suffix
                symbols[node.value] = sympy.Symbol(shown)
            return symbols[node.value]
        if kind == NEG:
            return sympy.Mul(minus_one, args[0], evaluate=evaluate)
        if kind == CALL:
            return _sympy_call(node.value, args, evaluate)
        left, right = args
        if kind == "+":
            return sympy.Add(left, right, evaluate=evaluate)
        if kind == "-":
            return sympy.Add(
                left, sympy.Mul(minus_one, right, evaluate=evaluate), evaluate=evaluate
            )
        if kind == "*":
            return sympy.Mul(left, right, evaluate=evaluate)
        if kind == "/":
            return sympy.Mul(
                left, sympy.Pow(right, minus_one, evaluate=evaluate), evaluate=evaluate
            )
        return sympy.Pow(left, right, evaluate=evaluate)

    return fold(tree, visit)


def _sympy_call(function_name: str, args: list[SympyExpr], evaluate: bool) -> SympyExpr:
    import sympy

    builder = FUNCTIONS[function_name][2]
    if builder == "log10":
        return sympy.Mul(
            sympy.log(args[0], evaluate=evaluate),
            sympy.Pow(sympy.log(10), -1, evaluate=evaluate),
            evaluate=evaluate,
        )
    function = getattr(sympy, builder, None) or sympy.Function(builder)
    return (
        function(*args, evaluate=evaluate)
        if builder in ("exp", "log", "sqrt", "Abs", "Min", "Max")
        else function(*args)
    )


_PRECEDENCE = {"+": 1, "-": 1, "*": 2, "/": 2, "neg": 3, "**": 4}


def to_text(tree: Node) -> str:
    """The tree written back as compact formula text (``*``, ``/``, ``^``)."""
    return fold(tree, _text_of)


def _text_of(node: Node, texts: list[str]) -> str:
    kind = node.kind
    if kind == NUM:
        value = node.value
        return str(int(value)) if value.is_integer() and abs(value) < 1e15 else f"{value:g}"
    if kind == NAME:
        return str(node.value)
    if kind == CALL:
        return f"{node.value}({', '.join(texts)})"
    if kind == NEG:
        shown = texts[0]
        return f"-({shown})" if _PRECEDENCE.get(node.args[0].kind, 9) <= 2 else f"-{shown}"
    mine = _PRECEDENCE[kind]
    (left, right), (left_text, right_text) = node.args, texts
    if _PRECEDENCE.get(left.kind, 9) < mine or (kind == "**" and left.kind in _PRECEDENCE):
        left_text = f"({left_text})"
    # right operand of - and / binds tighter; a power's exponent is wrapped unless atomic
    if (
        _PRECEDENCE.get(right.kind, 9) < mine
        or (kind in ("-", "/") and _PRECEDENCE.get(right.kind, 9) == mine)
        or (kind == "**" and right.kind in _PRECEDENCE)
    ):
        right_text = f"({right_text})"
    sign = "^" if kind == "**" else kind
    spaced = f" {sign} " if kind in ("+", "-") else sign
    return f"{left_text}{spaced}{right_text}"


def pretty(tree: Node) -> str:
    """A readable one-line (or multi-line, via sympy) rendering for ``explain``."""
    import sympy

    return str(sympy.pretty(to_sympy(tree), use_unicode=True, wrap_line=False))
