"""The safe expression language of rule files (and, later, of stated formulas).

Text is parsed with Python's ``ast`` module in ``eval`` mode and then walked
under a whitelist: numbers, names, + - * / ** ^ (``^`` is a power), unary
minus/plus, parentheses, and calls of the functions in ``FUNCTIONS``.  Nothing
else (attributes, subscripts, strings, lambdas, comprehensions, keywords,
comparisons) is accepted.  The result is a small tree of tuples of our own:

    ("num", value) | ("name", text) | (op, left, right) for op in + - * / **
    | ("neg", operand) | ("call", function, (arguments...))

Nothing is ever evaluated while parsing: no ``eval``, ``sympify``,
``parse_expr`` or ``lambdify`` touches the text.  From the tree,
:func:`to_numpy` builds a vectorized closure (no sympy import, so the
command line starts fast) and :func:`to_sympy` builds sympy objects directly
(``evaluate=False``) for printing and symbolic work.

Bounds: 4,000 characters, 400 tree nodes, depth 40, numeric constants of
magnitude at most 1e300, and constant exponents at most 64 in magnitude.
"""
from __future__ import annotations

import ast
import math

import numpy as np

from ..errors import InputError
from ..physics.fermi import fermi_dirac

MAX_LENGTH = 4000
MAX_NODES = 400
MAX_DEPTH = 40
MAX_CONSTANT = 1e300
MAX_EXPONENT = 64.0


def _stated_or(stated, fallback):
    stated = np.asarray(stated, dtype=float)
    return np.where(np.isfinite(stated), stated, fallback)


def _fermi(order, eta):
    """F_j(eta) with an order that may differ per point (e.g. from the dimensionality)."""
    order = np.asarray(order, dtype=float)
    eta = np.asarray(eta, dtype=float)
    if order.ndim == 0:
        return fermi_dirac(float(order), eta)
    order, eta = np.broadcast_arrays(order, eta)
    out = np.full(eta.shape, np.nan)
    for j in np.unique(order[np.isfinite(order)]):
        pick = order == j
        out[pick] = fermi_dirac(float(j), eta[pick])
    return out


def _present(x):
    return np.isfinite(np.asarray(x, dtype=float)).astype(float)


def _less(a, b):
    return (np.asarray(a, dtype=float) < np.asarray(b, dtype=float)).astype(float)


# name -> (number of arguments, numpy function, sympy builder name, meaning)
FUNCTIONS = {
    "exp": (1, np.exp, "exp", "e^x"),
    "log": (1, np.log, "log", "natural logarithm"),
    "ln": (1, np.log, "log", "natural logarithm (same as log)"),
    "sqrt": (1, np.sqrt, "sqrt", "square root"),
    "abs": (1, np.abs, "Abs", "absolute value"),
    "min": (2, np.fmin, "Min", "smaller of two values"),
    "max": (2, np.fmax, "Max", "larger of two values"),
    "F": (2, _fermi, "F", "Fermi–Dirac integral F_j(eta), normalized (F_j -> e^eta for eta << 0)"),
    "stated_or": (2, _stated_or, "stated_or", "the stated value where one is given, else the second"),
    "present": (1, _present, "present", "1 where a value is given, else 0"),
    "less": (2, _less, "less", "1 where the first value is below the second, else 0"),
}

_BINARY = {ast.Add: "+", ast.Sub: "-", ast.Mult: "*", ast.Div: "/", ast.Pow: "**"}


def parse(text: str, names=None, where: str = "", functions=None) -> tuple:
    """Parse ``text`` into the tuple tree.

    ``names`` (optional) is the set of allowed names; ``functions`` (optional)
    narrows the callable functions to a subset of ``FUNCTIONS``.
    """
    place = f"{where}: " if where else ""
    if not isinstance(text, str):
        raise InputError(f"{place}expected an expression as text, got {text!r}")
    if len(text) > MAX_LENGTH:
        raise InputError(f"{place}expression is {len(text)} characters long; the limit is "
                         f"{MAX_LENGTH}")
    if text.count("(") > MAX_DEPTH * 4:
        raise InputError(f"{place}expression has too many parentheses (limit {MAX_DEPTH * 4})")
    try:
        # "^" means power; Python would read it as xor with a lower precedence than "*"
        tree = ast.parse(text.strip().replace("^", "**"), mode="eval")
    except (SyntaxError, ValueError, RecursionError, MemoryError) as exc:
        detail = getattr(exc, "msg", None) or type(exc).__name__
        raise InputError(f"{place}cannot parse expression {text!r}: {detail}") from None
    counter = [0]
    allowed = FUNCTIONS if functions is None else {f: FUNCTIONS[f] for f in functions}
    return _walk(tree.body, names, place, text, counter, 0, allowed)


def _walk(node, names, place, text, counter, depth, allowed):
    counter[0] += 1
    if counter[0] > MAX_NODES:
        raise InputError(f"{place}expression has more than {MAX_NODES} parts; split it")
    if depth > MAX_DEPTH:
        raise InputError(f"{place}expression is nested deeper than {MAX_DEPTH} levels")
    go = lambda child: _walk(child, names, place, text, counter, depth + 1, allowed)
    if isinstance(node, ast.Constant) and type(node.value) in (int, float):
        value = float(node.value) if abs(node.value) < 1e309 else math.inf
        if not math.isfinite(value) or abs(value) > MAX_CONSTANT:
            raise InputError(f"{place}constant {node.value!r} is out of range (|x| <= 1e300)")
        return ("num", value)
    if isinstance(node, ast.Name):
        if names is not None and node.id not in names:
            import difflib

            close = difflib.get_close_matches(node.id, sorted(names), n=3)
            hint = f"; did you mean {', '.join(close)}?" if close else ""
            raise InputError(f"{place}unknown name {node.id!r} in {text!r}{hint}")
        return ("name", node.id)
    if isinstance(node, ast.BinOp) and type(node.op) in _BINARY:
        op = _BINARY[type(node.op)]
        left, right = go(node.left), go(node.right)
        if op == "**" and right[0] == "num" and abs(right[1]) > MAX_EXPONENT:
            raise InputError(f"{place}exponent {right[1]:g} is out of range (|x| <= 64)")
        if op == "**" and right[0] != "num" and _has_power(right):
            raise InputError(f"{place}nested powers such as a**b**c are not accepted; "
                             "use parentheses and a single power")
        return (op, left, right)
    if isinstance(node, ast.UnaryOp) and isinstance(node.op, (ast.USub, ast.UAdd)):
        operand = go(node.operand)
        if isinstance(node.op, ast.UAdd):
            return operand
        # a negative literal is a number (F(-0.5, eta) names an order, not an operation)
        return ("num", -operand[1]) if operand[0] == "num" else ("neg", operand)
    if isinstance(node, ast.Call) and isinstance(node.func, ast.Name) and not node.keywords:
        name = node.func.id
        if name not in allowed:
            raise InputError(f"{place}function {name!r} is not available; use one of "
                             f"{', '.join(allowed)}")
        arity = allowed[name][0]
        if len(node.args) != arity or any(isinstance(a, ast.Starred) for a in node.args):
            raise InputError(f"{place}{name}() takes {arity} argument(s)")
        return ("call", name, tuple(go(arg) for arg in node.args))
    kind = type(node).__name__
    raise InputError(f"{place}{_describe(kind)} is not allowed in an expression ({text[:60]!r}); "
                     "use numbers, names, + - * / ^ and the listed functions")


def _has_power(tree) -> bool:
    if tree[0] == "**":
        return True
    if tree[0] == "call":
        return False
    return any(isinstance(part, tuple) and _has_power(part) for part in tree[1:])


def _describe(kind: str) -> str:
    return {"Attribute": "attribute access", "Subscript": "indexing", "Lambda": "a lambda",
            "Constant": "a text or non-numeric constant", "Compare": "a comparison",
            "ListComp": "a comprehension", "GeneratorExp": "a comprehension",
            "Call": "this kind of call", "BoolOp": "and/or"}.get(kind, f"{kind} syntax")


def names_in(tree) -> set:
    """Every name the tree refers to."""
    if tree[0] == "name":
        return {tree[1]}
    if tree[0] == "num":
        return set()
    parts = tree[2] if tree[0] == "call" else tree[1:]
    out = set()
    for part in parts:
        out |= names_in(part)
    return out


def rename(tree, mapping: dict) -> tuple:
    """The tree with names replaced by ``mapping`` (names not in it are kept)."""
    kind = tree[0]
    if kind == "name":
        return ("name", mapping.get(tree[1], tree[1]))
    if kind == "num":
        return tree
    if kind == "call":
        return ("call", tree[1], tuple(rename(a, mapping) for a in tree[2]))
    return (kind,) + tuple(rename(part, mapping) for part in tree[1:])


_NUMPY_BINARY = {"+": np.add, "-": np.subtract, "*": np.multiply, "/": np.divide,
                 "**": np.power}


def to_numpy(tree):
    """A function ``f(values)`` evaluating the tree on a dict of numpy arrays."""
    kind = tree[0]
    if kind == "num":
        value = float(tree[1])
        return lambda values: value
    if kind == "name":
        key = tree[1]
        return lambda values: values[key]
    if kind == "neg":
        inner = to_numpy(tree[1])
        return lambda values: np.negative(inner(values))
    if kind == "call":
        function = FUNCTIONS[tree[1]][1]
        args = [to_numpy(a) for a in tree[2]]
        return lambda values: function(*(a(values) for a in args))
    op = _NUMPY_BINARY[kind]
    left, right = to_numpy(tree[1]), to_numpy(tree[2])
    return lambda values: op(left(values), right(values))


def _sympy_number(value):
    import sympy
    from fractions import Fraction

    value = float(value)
    if value.is_integer() and abs(value) < 1e15:
        return sympy.Integer(int(value))
    exact = Fraction(value).limit_denominator(64)
    # 0.5, 1.5, 0.75 and decimals such as 0.1 are the rationals they stand for
    return sympy.Rational(exact.numerator, exact.denominator) if float(exact) == value \
        else sympy.Float(value)


def to_sympy(tree, symbols=None, evaluate=False):
    """sympy objects built directly from the tree (nothing is re-parsed from text).

    ``symbols`` maps tree names to prepared sympy symbols (e.g. with
    assumptions); names not in it get a plain symbol.  With ``evaluate=False``
    (for printing) the structure is kept as written; with ``evaluate=True``
    (for symbolic work) sympy's automatic simplification applies.
    """
    import sympy

    symbols = {} if symbols is None else symbols
    kind = tree[0]
    if kind == "num":
        return _sympy_number(tree[1])
    if kind == "name":
        if tree[1] not in symbols:
            # sympy prints every "_" as a subscript: keep only the last one
            stem, _, suffix = tree[1].rpartition("_")
            shown = f"{stem.replace('_', '')}_{suffix}" if stem else suffix
            symbols[tree[1]] = sympy.Symbol(shown)
        return symbols[tree[1]]
    go = lambda part: to_sympy(part, symbols, evaluate)
    if kind == "neg":
        return sympy.Mul(sympy.Integer(-1), go(tree[1]), evaluate=evaluate)
    if kind == "call":
        builder = FUNCTIONS[tree[1]][2]
        args = [go(a) for a in tree[2]]
        function = getattr(sympy, builder, None) or sympy.Function(builder)
        return function(*args, evaluate=evaluate) \
            if builder in ("exp", "log", "sqrt", "Abs", "Min", "Max") else function(*args)
    left, right = go(tree[1]), go(tree[2])
    minus_one = sympy.Integer(-1)
    if kind == "+":
        return sympy.Add(left, right, evaluate=evaluate)
    if kind == "-":
        return sympy.Add(left, sympy.Mul(minus_one, right, evaluate=evaluate), evaluate=evaluate)
    if kind == "*":
        return sympy.Mul(left, right, evaluate=evaluate)
    if kind == "/":
        return sympy.Mul(left, sympy.Pow(right, minus_one, evaluate=evaluate), evaluate=evaluate)
    return sympy.Pow(left, right, evaluate=evaluate)


_PRECEDENCE = {"+": 1, "-": 1, "*": 2, "/": 2, "neg": 3, "**": 4}


def to_text(tree) -> str:
    """The tree written back as compact formula text (``*``, ``/``, ``^``)."""
    kind = tree[0]
    if kind == "num":
        value = float(tree[1])
        return str(int(value)) if value.is_integer() and abs(value) < 1e15 else f"{value:g}"
    if kind == "name":
        return tree[1]
    if kind == "call":
        return f"{tree[1]}({', '.join(to_text(a) for a in tree[2])})"
    if kind == "neg":
        inner = tree[1]
        shown = to_text(inner)
        return f"-({shown})" if _PRECEDENCE.get(inner[0], 9) <= 2 else f"-{shown}"
    mine = _PRECEDENCE[kind]
    left, right = tree[1], tree[2]
    left_text, right_text = to_text(left), to_text(right)
    if _PRECEDENCE.get(left[0], 9) < mine or (kind == "**" and left[0] in _PRECEDENCE):
        left_text = f"({left_text})"
    # right operand of - and / binds tighter; a power's exponent is wrapped unless atomic
    if _PRECEDENCE.get(right[0], 9) < mine or \
            (kind in ("-", "/") and _PRECEDENCE.get(right[0], 9) == mine) or \
            (kind == "**" and right[0] in _PRECEDENCE):
        right_text = f"({right_text})"
    sign = "^" if kind == "**" else kind
    spaced = f" {sign} " if kind in ("+", "-") else sign
    return f"{left_text}{spaced}{right_text}"


def pretty(tree) -> str:
    """A readable one-line (or multi-line, via sympy) rendering for ``explain``."""
    import sympy

    return sympy.pretty(to_sympy(tree), use_unicode=True, wrap_line=False)
