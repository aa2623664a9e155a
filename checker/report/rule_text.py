"""Plain-text explanation of a rule (``regimecheck explain ID``).

Formulas are pretty-printed by sympy from the parsed rule expressions (built
directly as sympy objects, never re-parsed from text).
"""

from __future__ import annotations

import textwrap

from ..engine.expressions import parser as expression
from ..engine.vocabulary import COMMON, PER_CARRIER

_WRAP = 88


def _block(title: str, text: str) -> str:
    body = textwrap.fill(" ".join(text.split()), _WRAP, initial_indent="  ", subsequent_indent="  ")
    return f"{title}\n{body}"


def _formula(label: str, tree) -> str:
    art = expression.pretty(tree)
    return f"  {label}:\n" + textwrap.indent(art, "      ")


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
        applies.append(f"{imp.stated} equals {imp.shortcut.text} within {imp.within:.0%}")
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
        _formula(f"{rule.indicator_label} {sign} {rule.threshold:g}", rule.indicator.tree),
        _block("  threshold source", rule.threshold_source),
    ]
    if rule.requires:
        lines.append(f"  needs: {', '.join(rule.requires)}")
    if rule.corrections:
        lines += ["", "Corrections (stated or shortcut value -> exact value)"]
        for c in rule.corrections:
            lines.append(_formula(f"{c.label} [{c.unit}], shortcut", c.shortcut.tree))
            lines.append(_formula(f"{c.label} [{c.unit}], exact", c.exact.tree))
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
