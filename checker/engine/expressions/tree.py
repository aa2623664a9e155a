"""The expression tree: one typed node and one traversal.

A :class:`Node` is ``(kind, value, args)``:

    NUM   a number         value = float,          args = ()
    NAME  a name           value = the name,       args = ()
    NEG   unary minus      value = None,           args = (operand,)
    CALL  a function call  value = function name,  args = (arguments...)
    + - * / **             value = None,           args = (left, right)

Nodes are immutable and hashable (a named tuple: equality and hashing run in C), because
trees are cache keys everywhere (compiled closures, dimensions, formula matches).

Every walker is a :func:`fold`: a function ``visit(node, results)`` called bottom-up with
the results of the node's arguments, left to right; :func:`transform` is the fold that
rebuilds the tree (renaming, substitution, rewriting).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from typing import Any, NamedTuple, TypeVar

NUM = "num"
NAME = "name"
NEG = "neg"
CALL = "call"
BINARY = ("+", "-", "*", "/", "**")


class Node(NamedTuple):
    kind: str
    value: Any = None  # float (NUM), str (NAME, CALL) or None
    args: tuple[Node, ...] = ()


Folded = TypeVar("Folded")


def num(value: float) -> Node:
    return Node(NUM, float(value))


def name(text: str) -> Node:
    return Node(NAME, text)


def neg(operand: Node) -> Node:
    return Node(NEG, None, (operand,))


def call(function: str, args: Iterable[Node]) -> Node:
    return Node(CALL, function, tuple(args))


def binary(op: str, left: Node, right: Node) -> Node:
    return Node(op, None, (left, right))


def fold(tree: Node, visit: Callable[[Node, list[Folded]], Folded]) -> Folded:
    """``visit(node, results)`` applied bottom-up; ``results`` are the folds of
    ``node.args`` in order.  The one traversal every walker uses."""
    return visit(tree, [fold(arg, visit) for arg in tree.args])


def transform(tree: Node, change: Callable[[Node], Node]) -> Node:
    """The tree rebuilt bottom-up: ``change(node)`` sees each node with its arguments
    already changed and returns the node to put in its place."""

    def visit(node: Node, args: list[Node]) -> Node:
        return change(node._replace(args=tuple(args)) if args else node)

    return fold(tree, visit)
