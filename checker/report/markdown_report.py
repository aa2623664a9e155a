"""A Markdown report a reviewer can paste under a design memo.

A summary line, a table of the findings (severity, rule, where, what, stated ->
corrected), then per calculation its operating point and its stated formulas
with what each embodies.  The screening-check sentence closes it, once.
"""
from __future__ import annotations

from ..engine.evaluate import display
from . import DISCLAIMER
from .check_report import doping_text, formula_lines, summary_line, sweep_axis_text


def _cell(text: str) -> str:
    return " ".join(str(text).split()).replace("|", "\\|")


def _corrections(f) -> str:
    return "<br>".join(f"{c.label}: {display(c.stated, c.unit)} → {display(c.corrected, c.unit)} "
                       f"({c.error_text()})" for c in f.corrections) or "–"


def render_markdown(result, exit_code: int) -> str:
    lines = ["## regimecheck review", "", summary_line(result), ""]
    findings = [(r, f) for r in result.reports for f in r.findings]
    if findings:
        lines += ["| severity | rule | where | finding | stated → corrected |",
                  "|---|---|---|---|---|"]
        for report, f in findings:
            severity = f"waived ({_cell(f.waived)})" if f.waived else f.severity
            column = f" ({_cell(f.column)})" if f.column else ""
            lines.append(f"| {severity} | {f.rule} | `{f.file}:{f.line}`{column} | "
                         f"**{_cell(f.title)}.** {_cell(f.message)} | {_cell(_corrections(f))} |")
        lines.append("")
    else:
        lines += ["No assumption leaves its regime.", ""]
    for report in result.reports:
        calc = report.calc
        lines.append(f"### {_cell(calc.name)}")
        lines.append("")
        lines.append(f"`{calc.source}:{calc.line}` · {calc.material.name} · "
                     f"{calc.temperature:.2f} K · {doping_text(calc.donors, calc.acceptors)}")
        lines.append("")
        if report.error:
            lines += [f"Not checked: {_cell(report.error)}", ""]
            continue
        state = report.state
        if report.sweep:
            lines.append(f"Sweep of {report.sweep['points']} points: " + " × ".join(
                sweep_axis_text(label, axis) for label, axis in report.sweep["axes"]) + ".")
        else:
            lines.append(f"Regime **{state['regime']}**; E_F − E_C = "
                         f"{state['EF_minus_EC_eV']:+.4f} eV (η_n = {state['eta_n']:+.3f}); "
                         f"n = {state['n_cm3']:.4g} cm⁻³, p = {state['p_cm3']:.4g} cm⁻³; "
                         f"n_i = {state['ni_cm3']:.4g} cm⁻³.")
        lines.append("")
        if report.formulas:
            lines += ["| formula | line | what it is | here |", "|---|---|---|---|"]
            for r in report.formulas:
                what = formula_lines(r)
                here = what[1] if len(what) > 1 else "–"
                lines.append(f"| `{_cell(r.text)}` | {r.line} | {_cell(what[0])} | "
                             f"{_cell(here)} |")
            lines.append("")
        for note in report.notes:
            lines += [f"> note: {_cell(note)}", ""]
    if result.input_errors:
        lines += ["### Input errors", ""]
        lines += [f"- `{_cell(message)}`" for message in result.input_errors]
        lines.append("")
    for note in result.notes:
        lines += [f"> note: {_cell(note)}", ""]
    lines.append(f"*{DISCLAIMER}*")
    return "\n".join(lines)
