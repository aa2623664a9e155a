"""Formulas are shown as their authors wrote them: the HTML's MathML keeps the order of
terms and factors (a reviewer compares it with the memo), and `explain` prints rule
expressions as written in the rule file, with the relations they call."""

import re
import xml.etree.ElementTree as ET

from checker.engine.expressions.parser import parse
from checker.engine.formulas.check import parse_formula
from checker.report.formula_markup import formula_mathml

MATHML = "{http://www.w3.org/1998/Math/MathML}"


def _mathml(text):
    lhs, rhs, _ = parse_formula(text, "n", "memo.yaml:1:1")
    markup = formula_mathml(lhs, rhs)
    return markup, ET.fromstring(markup)  # well-formed XML (the HTML report embeds it)


def _tokens(root):
    return [e.text for e in root.iter() if e.tag in (MATHML + "mi", MATHML + "mo", MATHML + "mn")]


def test_the_order_of_factors_is_kept():
    _, root = _mathml("D_n = mu_n*k*T/q")
    tokens = [t for t in _tokens(root) if t not in ("⋅",)]
    # D_n = μ_n k T / q in the written order, not a computer-algebra reordering
    assert tokens == ["D", "n", "=", "μ", "n", "k", "T", "q"]


def test_parentheses_only_where_precedence_needs_them():
    _, root = _mathml("sigma = q*(n*mu_n + p*mu_p)")
    assert _tokens(root).count("(") == 1
    _, root = _mathml("R = rho*L/A")
    assert "(" not in _tokens(root)
    _, root = _mathml("E_F - E_c = -(E_g - k*T)")
    assert _tokens(root).count("(") == 1


def test_fermi_dirac_integral_and_exponential_are_typeset():
    markup, _ = _mathml("n = N_c*F(1/2, eta_n)")
    assert "ℱ" in markup and "η" in markup
    markup, _ = _mathml("n = N_c*exp(eta_n)")
    assert re.search(r"<msup><mi>e</mi>", markup)


def test_a_tree_from_the_rule_language_prints_too():
    markup = formula_mathml(parse("x"), parse("(a - b)^2/(1 + c)", {"a", "b", "c", "x"}))
    ET.fromstring(markup)
    assert "<mfrac>" in markup and "<msup>" in markup


def test_explain_prints_rule_expressions_as_written():
    from checker.engine.regime.rulebook import load_rules
    from checker.report.rule_text import explain_text

    rules = {r.id: r for r in load_rules()}
    text = explain_text(rules["STAT02"])
    assert "used_mu_x*stated_or(stated_kT_q, kT_q)" in text
    # no pretty-printer mangling of names (subscript letters)
    assert not re.search("[ₐₑₒₓᵢᵣ]", text)
    # a relation called by name is listed with its formula from the relation table
    text = explain_text(rules["TRAN01"])
    assert "conductor_resistance(used_rho, L, lambda_x, A)" in text
    assert "conductor_resistance(rho, L, mean_free_path, A) = rho*(L + mean_free_path)/A" in text
