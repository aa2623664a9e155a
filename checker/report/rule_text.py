"""Plain-text explanation of a rule (``regimecheck explain ID``).

Expressions are shown as the rule's author wrote them (whitespace folded), so a reader
finds them again in the rule file; the relations they call by name are listed with
their formulas (from the one relation table, engine/formulas/relation_table.py).
"""

from __future__ import annotations

import textwrap

from ..engine.expressions import parser as expression
from ..engine.expressions._relation_texts import FUNCTIONS as RELATIONS
from ..engine.expressions.tree import CALL, fold
from ..engine.vocabulary import COMMON, PER_CARRIER

_WRAP = 88


def _block(title: str, text: str) -> str:
    body = textwrap.fill(" ".join(text.split()), _WRAP, initial_indent="  ", subsequent_indent="  ")
    return f"{title}\n{body}"


def _formula(label: str, compiled) -> str:
    written = " ".join(compiled.text.split())
    return f"  {label}:\n" + textwrap.indent(
        textwrap.fill(written, _WRAP - 6, break_long_words=False), "      "
    )


def _calls_in(tree) -> set:
    """The functions an expression tree calls."""
    return fold(
        tree,
        lambda node, inner: set().union(*inner) | ({node.value} if node.kind == CALL else set()),
    )


def _relations(trees) -> list:
    """'Relations' lines for the relation functions the expressions call."""
    called = sorted(set().union(*(_calls_in(tree) for tree in trees)) & set(RELATIONS))
    if not called:
        return []
    lines = ["", "Relations (engine/formulas/relation_table.py)"]
    for name in called:
        parameters, formula = RELATIONS[name]
        lines.append(f"  {name}({', '.join(parameters)}) = {formula.replace('**', '^')}")
    return lines


def _engine_text(rule) -> list:
    """The 'how it is evaluated' part of a rule checked by engine code (formula analysis)."""
    lines = [
        _block(
            "When it applies",
            "to every formula in a calculation's 'formulas' list, "
            "after its symbols are mapped onto trade symbols (regimecheck symbols).",
        ),
        "",
        "Condition (fires when)",
    ]
    if rule.threshold == rule.threshold:
        lines.append(f"  {rule.indicator_label} > {rule.threshold:g}")
    else:
        lines.append(f"  {rule.indicator_label}")
    lines.append(_block("  threshold source", rule.threshold_source))
    return lines


def explain_text(rule) -> str:
    if rule.evaluated_by:
        lines = [
            f"{rule.id}  {rule.title}",
            f"  guards: {rule.assumption}   severity: {rule.severity}   evaluated by "
            f"{rule.evaluated_by}",
            "",
        ] + _engine_text(rule)
        return "\n".join(lines + _closing(rule))
    per = (
        "per carrier: names ending in _x are the carrier checked, _o the other one"
        if rule.per == "carrier"
        else "per calculation"
    )
    applies = []
    if rule.declared:
        applies.append("the author declares " + " or ".join(rule.declared))
    for imp in rule.implied_by:
        nearer = f" and lies nearer it than {imp.exact.text}" if imp.exact else ""
        applies.append(f"{imp.stated} equals {imp.shortcut.text} within {imp.within:.0%}{nearer}")
    if rule.when is not None:
        applies.append(f"and only where {rule.when.text} is non-zero")
    sign = ">" if rule.relation == "above" else "<"
    lines = [
        f"{rule.id}  {rule.title}",
        f"  guards: {rule.assumption}   severity: {rule.severity}   evaluated {per}",
        "",
        _block("When it applies", "; ".join(applies) + "."),
        "",
        "Condition (fires when)",
        _formula(f"{rule.indicator_label} {sign} {rule.threshold:g}", rule.indicator),
        _block("  threshold source", rule.threshold_source),
    ]
    if rule.requires:
        lines.append(f"  needs: {', '.join(rule.requires)}")
    if rule.corrections:
        lines += ["", "Corrections (stated or shortcut value -> exact value)"]
        for c in rule.corrections:
            lines.append(_formula(f"{c.label} [{c.unit}], shortcut", c.shortcut))
            lines.append(_formula(f"{c.label} [{c.unit}], exact", c.exact))
    names = sorted(
        expression.names_in(rule.indicator.tree).union(
            *(
                expression.names_in(c.exact.tree) | expression.names_in(c.shortcut.tree)
                for c in rule.corrections
            )
        )
    )
    glossary = {**COMMON, **PER_CARRIER}
    known = [n for n in names if n in glossary]
    if known:
        lines += ["", "Quantities"]
        lines += [f"  {n:14s} {glossary[n][1]} [{glossary[n][0]}]" for n in known]
    lines += _relations(
        [rule.indicator.tree]
        + [tree for c in rule.corrections for tree in (c.shortcut.tree, c.exact.tree)]
    )
    return "\n".join(lines + _closing(rule))


def _closing(rule) -> list:
    lines = [
        "",
        _block("Why it matters", rule.why),
        "",
        _block("Example", rule.example),
        "",
        _block("Fix", rule.fix),
        "",
        "References",
    ]
    return lines + [f"  - {ref}" for ref in rule.references]
