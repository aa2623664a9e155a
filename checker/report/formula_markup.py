"""Presentation MathML of a stated formula, in the order its author wrote it.

A computer-algebra printer reorders terms and factors (``D_n = T(kμ_n)/q``); a reviewer
compares the rendering with the memo, so this printer keeps the tree's order and only
typesets: Greek names, subscripts after the first underscore, fractions, powers, F_j(η)
as ℱ_j(η), and parentheses only where precedence needs them.
"""

from __future__ import annotations

from html import escape

from ..engine.expressions.tree import CALL, NAME, NEG, NUM, Node

_GREEK = {
    "alpha": "α",
    "beta": "β",
    "gamma": "γ",
    "delta": "δ",
    "Delta": "Δ",
    "epsilon": "ε",
    "eps": "ε",
    "eta": "η",
    "lambda": "λ",
    "mu": "μ",
    "nu": "ν",
    "pi": "π",
    "rho": "ρ",
    "sigma": "σ",
    "tau": "τ",
    "phi": "φ",
    "chi": "χ",
    "omega": "ω",
}
# binding strength: a child binding less tightly than its parent gets parentheses
_PRECEDENCE = {"+": 1, "-": 1, "*": 2, "/": 3, NEG: 2, "**": 4}


def _identifier(text: str) -> str:
    base, _, sub = text.partition("_")
    shown = f"<mi>{escape(_GREEK.get(base, base))}</mi>"
    if not sub:
        return shown
    sub_shown = "".join(_GREEK.get(part, part) for part in sub.split("_"))
    return f"<msub>{shown}<mi>{escape(sub_shown)}</mi></msub>"


def _number(value: float) -> str:
    text = f"{value:.12g}"
    if "e" in text:
        mantissa, exponent = text.split("e")
        return (
            f"<mrow><mn>{mantissa}</mn><mo>×</mo><msup><mn>10</mn>"
            f"<mn>{int(exponent)}</mn></msup></mrow>"
        )
    return f"<mn>{text}</mn>"


def _fenced(markup: str) -> str:
    return f"<mrow><mo>(</mo>{markup}<mo>)</mo></mrow>"


def _markup(node: Node, parent: int = 0) -> str:
    kind = node.kind
    if kind == NUM:
        return _number(node.value)
    if kind == NAME:
        return _identifier(node.value)
    if kind == NEG:
        inner = f"<mrow><mo>−</mo>{_markup(node.args[0], _PRECEDENCE[NEG])}</mrow>"
        return _fenced(inner) if parent > _PRECEDENCE[NEG] else inner
    if kind == CALL:
        return _call(node)
    left, right = node.args
    own = _PRECEDENCE[kind]
    if kind == "/":
        # a fraction bar groups both sides itself
        out = f"<mfrac>{_markup(left)}{_markup(right)}</mfrac>"
    elif kind == "**":
        out = f"<msup>{_markup(left, own + 1)}{_markup(right)}</msup>"
    else:
        sign = {"+": "+", "-": "−", "*": "⋅"}[kind]
        # a - (b + c): the right side of a minus binds tighter than the minus itself
        right_side = _markup(right, own + (kind == "-"))
        out = f"<mrow>{_markup(left, own)}<mo>{sign}</mo>{right_side}</mrow>"
    return _fenced(out) if parent > own else out


def _call(node: Node) -> str:
    args = node.args
    if node.value == "F" and len(args) == 2:
        order, argument = args
        head = f"<msub><mi>ℱ</mi>{_markup(order)}</msub>"
        return f"<mrow>{head}{_fenced(_markup(argument))}</mrow>"
    if node.value == "sqrt" and len(args) == 1:
        return f"<msqrt>{_markup(args[0])}</msqrt>"
    if node.value == "exp" and len(args) == 1:
        return f"<msup><mi>e</mi>{_markup(args[0])}</msup>"
    inner = "<mo>,</mo>".join(_markup(a) for a in args)
    return f"<mrow><mi>{escape(node.value)}</mi>{_fenced(inner)}</mrow>"


def formula_mathml(left: Node, right: Node) -> str:
    """``left = right`` as a block of presentation MathML (valid XML)."""
    return (
        '<math xmlns="http://www.w3.org/1998/Math/MathML" display="block"><mrow>'
        f"{_markup(left)}<mo>=</mo>{_markup(right)}</mrow></math>"
    )
