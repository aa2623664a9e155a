"""A Markdown report a reviewer can paste under a design memo.

A summary line, a table of the findings (severity, rule, where, what, stated ->
corrected), then per calculation its operating point and its stated formulas
with what each embodies.  The screening-check sentence closes it, once.
"""

from __future__ import annotations

import re

from ..quantity_registry.number_text import display
from ..quantity_registry.summary_fields import CHECK_ROWS, shown_rows
from . import DISCLAIMER
from .check_report import also_lines, formula_lines, point_text, summary_line
from .safe_text import visible
from .sweep_text import finding_message

# Markdown would act on these (HTML tags, entities, links, emphasis, code, table cells)
_MARKUP = re.compile(r"([\\`*_\[\]<>&|!~#])")


def _one_line(text) -> str:
    return " ".join(visible(text).split())


def _cell(text) -> str:
    """User text as inert Markdown: one line, every markup character escaped."""
    return _MARKUP.sub(r"\\\1", _one_line(text))


def _code(text) -> str:
    """User text as a code span (shown verbatim; a fence longer than any backtick run
    inside, and | escaped, which a table cell needs even in code)."""
    text = _one_line(text).replace("|", "\\|")
    fence = "`" * (max((len(run) for run in re.findall("`+", text)), default=0) + 1)
    pad = " " if text.startswith("`") or text.endswith("`") else ""
    return f"{fence}{pad}{text}{pad}{fence}"


def _corrections(f) -> str:
    return (
        "<br>".join(
            _cell(
                f"{c.label}: {display(c.stated, c.unit)} → "
                f"{display(c.corrected, c.unit)} ({c.error_text()})"
            )
            for c in f.corrections
        )
        or "–"
    )


def render_markdown(result, exit_code: int) -> str:
    lines = ["## regimecheck review", "", _cell(summary_line(result)), ""]
    findings = [(r, f) for r in result.reports for f in r.findings]
    if findings:
        lines += [
            "| severity | rule | where | finding | stated → corrected |",
            "|---|---|---|---|---|",
        ]
        for _report, f in findings:
            severity = f"waived ({_cell(f.waived)})" if f.waived else f.severity
            column = f" ({_cell(f.column)})" if f.column else ""
            also = also_lines(f)
            lines.append(
                f"| {severity} | {_cell(f.rule)} | {_code(f'{f.file}:{f.line}')}{column}{also} | "
                f"**{_cell(f.title)}.** {_cell(finding_message(f))} | {_corrections(f)} |"
            )
        lines.append("")
    else:
        lines += ["No assumption leaves its regime.", ""]
    for report in result.reports:
        calc = report.calc
        lines.append(f"### {_cell(calc.name)}")
        lines.append("")
        lines.append(
            f"{_code(f'{calc.source}:{calc.line}')} · "
            + _cell(f"{calc.material.name} · {point_text(calc)}")
        )
        lines.append("")
        if report.error:
            lines += [f"Not checked: {_cell(report.error)}", ""]
            continue
        state = report.state
        if report.sweep:
            lines.append(_cell(f"Sweep of {report.sweep['points']} grid points."))
        else:
            # the rows of the check report's state table that have a value here (a sheet or
            # a zero-gap sheet has no bulk densities or band edges)
            shown = [
                f"{label} = {text.strip()}"
                for label, text in shown_rows(CHECK_ROWS, state)
                if label != "regime"
            ]
            lines.append(f"Regime **{_cell(state['regime'])}**; " + _cell("; ".join(shown) + "."))
        lines.append("")
        if report.formulas:
            lines += ["| formula | line | what it is | here |", "|---|---|---|---|"]
            for r in report.formulas:
                what = formula_lines(r)
                here = what[1] if len(what) > 1 else "–"
                lines.append(f"| {_code(r.text)} | {r.line} | {_cell(what[0])} | {_cell(here)} |")
            lines.append("")
        for note in report.notes:
            lines += [f"> note: {_cell(note)}", ""]
    if result.input_errors:
        lines += ["### Input errors", ""]
        lines += [f"- {_code(message)}" for message in result.input_errors]
        lines.append("")
    for note in result.notes:
        lines += [f"> note: {_cell(note)}", ""]
    lines.append(f"*{DISCLAIMER}*")
    return "\n".join(lines)
