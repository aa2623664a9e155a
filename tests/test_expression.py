"""The safe expression parser: what it accepts, what it refuses, and that nothing
in the text is ever executed."""

import math

import mpmath
import numpy as np
import pytest
import sympy

from checker.engine.expressions import parser as expression
from checker.errors import InputError


def evaluate(text, **values):
    return expression.to_numpy(expression.parse(text))(values)


@pytest.mark.parametrize(
    "text, values, expected",
    [
        ("1 + 2*3", {}, 7.0),
        ("2^3^1", {}, None),  # nested powers refused (see below)
        ("a^2*b/c", {"a": 3.0, "b": 4.0, "c": 6.0}, 6.0),  # ^ is a power and binds tighter than *
        ("-a**2", {"a": 3.0}, -9.0),  # Python precedence: -(a**2)
        ("exp(log(x))", {"x": 2.5}, 2.5),
        ("max(a, b) - min(a, b)", {"a": 1.0, "b": 4.0}, 3.0),
        ("sqrt(abs(-16))", {}, 4.0),
    ],
)
def test_arithmetic(text, values, expected):
    if expected is None:
        with pytest.raises(InputError, match="nested powers"):
            expression.parse(text)
        return
    assert evaluate(text, **values) == pytest.approx(expected, rel=1e-15)


def test_fermi_dirac_call_matches_closed_form():
    # F_0(eta) = ln(1 + e^eta) (DLMF 25.12.16 with s = 1)
    eta = np.linspace(-5, 5, 11)
    got = evaluate("F(0, eta)", eta=eta)
    assert np.allclose(got, np.log1p(np.exp(eta)), rtol=1e-14)
    # the order may differ per point (dimensionality): F_{dim/2-1}
    got = evaluate("F(dim/2 - 1, eta)", eta=np.array([0.0, 0.0]), dim=np.array([2.0, 3.0]))
    assert got[0] == pytest.approx(math.log(2), rel=1e-15)
    # F_1/2(0) = (1 - 2^(-1/2)) zeta(3/2) (DLMF 25.12.16 with 25.2.3), from mpmath
    assert got[1] == pytest.approx(float((1 - mpmath.mpf(2) ** -0.5) * mpmath.zeta(1.5)), rel=1e-13)


def test_sympy_objects_are_built_directly():
    tree = expression.parse("mu_n*k*T/q")
    built = expression.to_sympy(tree)
    mu, k, T, q = sympy.symbols("mu_n k T q")
    assert sympy.simplify(built - mu * k * T / q) == 0


def test_names_are_checked_with_suggestions():
    with pytest.raises(InputError, match="did you mean eta_x"):
        expression.parse("eta_y + 1", {"eta_x", "T"})


@pytest.mark.parametrize(
    "text, message",
    [
        ("__import__('os').system('x')", "not allowed|not available"),
        ("().__class__.__bases__", "attribute access|not allowed"),
        ("(lambda: 1)()", "not allowed"),
        ("[x for x in (1, 2)]", "comprehension"),
        ("'text'", "text or non-numeric"),
        ("a < b", "comparison"),
        ("x[0]", "indexing"),
        ("9**9**9", "nested powers"),
        ("2**1000", "exponent"),
        ("1e999999", "out of range"),
        ("exp(x, y)", "takes 1 argument"),
        ("open('f')", "not available"),
        ("f(x=1)", "not allowed|not available"),
    ],
)
def test_refused_forms(text, message):
    with pytest.raises(InputError, match=message):
        expression.parse(text)


def test_deep_nesting_and_huge_text_are_refused():
    # refused by the bounds before Python's parser sees them (bench/bench_check.py times it)
    with pytest.raises(InputError, match="characters long"):
        expression.parse("(" * 10000 + "1" + ")" * 10000)
    with pytest.raises(InputError, match="parentheses"):
        expression.parse("(" * 1000 + "1" + ")" * 1000)
    with pytest.raises(InputError, match="characters long"):
        expression.parse("1+" * 500_000 + "1")
    with pytest.raises(InputError, match="parts|nested"):
        expression.parse("+".join(["x"] * 1000))


def test_nothing_is_executed(tmp_path, monkeypatch):
    marker = tmp_path / "touched"
    text = f"__import__('pathlib').Path({str(marker)!r}).touch()"
    with pytest.raises(InputError):
        expression.parse(text)
    assert not marker.exists()
