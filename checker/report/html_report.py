"""A self-contained HTML review report (``--format html``).

One file: inline CSS, inline SVG maps (map_svg.py, written without matplotlib),
formulas as MathML, no scripts, no network.
It opens with a summary table (one row per calculation: where, worst severity, the
rules that fired, a link to its section).  Per calculation: where it comes from, the
findings (stated → corrected) first, then the operating point (or the sweep), the
stated formulas as math with what each embodies, and the regime map of its material
and dopant with the point (or sweep) on it.  The
markup is XHTML-compatible (every element closed), so it parses as XML as well as
HTML, and it prints one calculation per page where it fits.
"""

from __future__ import annotations

import html

from ..quantity_registry.number_text import display
from ..quantity_registry.summary_fields import CHECK_ROWS, shown_rows
from . import DISCLAIMER
from .check_report import formula_lines, point_text, summary_line, worst_active
from .formula_markup import formula_mathml
from .safe_text import visible
from .sweep_text import finding_message

MAP_RESOLUTION = 90
MAPS_PER_CALCULATION = 40  # above this many calculations: one map per material and dopant
STYLE = """
body { font-family: "DejaVu Sans", Arial, sans-serif; margin: 2em auto; max-width: 62em;
       color: #222; line-height: 1.4; }
h1 { font-size: 1.5em; margin-bottom: 0.2em; }
h2 { font-size: 1.15em; border-bottom: 1px solid #bbb; padding-bottom: 0.2em; margin-top: 2em; }
table { border-collapse: collapse; margin: 0.6em 0; width: 100%; font-size: 0.9em; }
th, td { border: 1px solid #ccc; padding: 0.25em 0.5em; text-align: left; vertical-align: top; }
th { background: #f3f3f3; }
td.num { text-align: right; font-variant-numeric: tabular-nums; }
table.state { width: auto; min-width: 26em; }
.severity { font-weight: bold; text-transform: uppercase; font-size: 0.8em; }
.error { color: #c62828; } .warning { color: #ef6c00; } .info { color: #0277bd; }
.waived { color: #777; } .clean { color: #2e7d32; }
table.overview td.rules { font-family: "DejaVu Sans Mono", monospace; font-size: 0.9em; }
a.back { font-size: 0.8em; font-weight: normal; margin-left: 0.8em; }
.meta { color: #555; font-size: 0.9em; }
.map svg { max-width: 100%; height: auto; }
math { font-size: 1.05em; }
.notice { margin-top: 2em; padding: 0.6em; border: 1px solid #999; background: #fafafa; }
@media print { body { margin: 0; max-width: none; } section { break-inside: avoid-page; }
               h2 { break-after: avoid; } }
"""


def _text(value) -> str:
    return html.escape(str(value), quote=True)


def _findings_table(report) -> str:
    if not report.findings:
        return '<p class="clean">No assumption leaves its regime.</p>'
    rows = []
    for f in report.findings:
        tag = (
            f'<span class="severity {"waived" if f.waived else f.severity}">'
            f"{'waived' if f.waived else f.severity}</span>"
        )
        where = f"{f.file}:{f.line}" + (f" ({f.column})" if f.column else "")
        details = [f"<strong>{_text(f.title)}.</strong> {_text(finding_message(f))}"]
        if f.indicator_text():
            details.append(
                f'<br/><span class="meta">regime indicator: {_text(f.indicator_text())}</span>'
            )
        if f.waived:
            details.append(f'<br/><span class="meta">waived: {_text(f.waived)}</span>')
        corrections = (
            "<br/>".join(
                f"{_text(c.label)}: {_text(display(c.stated, c.unit))} ({_text(c.stated_by)}) → "
                f"<strong>{_text(display(c.corrected, c.unit))}</strong> "
                f"[{_text(c.error_text())}]"
                for c in f.corrections
            )
            or "–"
        )
        rows.append(
            f"<tr><td>{tag}</td><td>{_text(f.rule)}</td><td>{_text(where)}</td>"
            f"<td>{''.join(details)}</td><td>{corrections}</td></tr>"
        )
    return (
        "<table><thead><tr><th>severity</th><th>rule</th><th>where</th><th>finding</th>"
        "<th>stated → corrected</th></tr></thead><tbody>" + "".join(rows) + "</tbody></table>"
    )


def _state_table(report) -> str:
    if report.sweep:
        return f"<p>Sweep of {report.sweep['points']} grid points.</p>"
    rows = "".join(
        f'<tr><th>{_text(label)}</th><td class="num">{_text(text)}</td></tr>'
        for label, text in shown_rows(CHECK_ROWS, report.state)
    )
    return f'<h3>Solved state</h3><table class="state"><tbody>{rows}</tbody></table>'


def _fired(report) -> str:
    """The rule ids of a calculation's findings, each once, waived ones marked (a rule
    counts as waived only where every finding of it is)."""
    waived: dict[str, bool] = {}
    for f in report.findings:
        waived[f.rule] = waived.get(f.rule, True) and bool(f.waived)
    return ", ".join(
        f'<span class="waived">{_text(rule)} (waived)</span>' if all_waived else _text(rule)
        for rule, all_waived in waived.items()
    )


def _overview(result) -> str:
    """One row per calculation: where to find it and how bad it is."""
    rows = []
    for index, report in enumerate(result.reports):
        calc = report.calc
        if report.error:
            verdict = '<span class="severity error">not checked</span>'
        else:
            worst = worst_active(report)
            verdict = (
                f'<span class="severity {worst}">{worst}</span>'
                if worst
                else '<span class="clean">clean</span>'
            )
        rows.append(
            f'<tr><td><a href="#calc-{index}">{_text(calc.name)}</a></td>'
            f"<td>{_text(calc.source)}:{calc.line}</td><td>{verdict}</td>"
            f'<td class="rules">{_fired(report)}</td></tr>'
        )
    return (
        '<table class="overview" id="summary"><thead><tr><th>calculation</th><th>where</th>'
        "<th>worst</th><th>rules fired</th></tr></thead><tbody>"
        + "".join(rows)
        + "</tbody></table>"
    )


def _formulas(report) -> str:
    if not report.formulas:
        return ""
    items = []
    for r in report.formulas:
        math = formula_mathml(r.lhs, r.rhs)
        notes = "<br/>".join(_text(line) for line in formula_lines(r))
        items.append(
            f"<tr><td><code>{_text(r.text)}</code> (line {r.line}){math}</td><td>{notes}</td></tr>"
        )
    return (
        "<h3>Stated formulas</h3><table><thead><tr><th>formula</th><th>what it is, and "
        "its value here</th></tr></thead><tbody>" + "".join(items) + "</tbody></table>"
    )


def _map(report, index, grids, shared=None) -> str:
    """The map of the calculation's material and dopant with its point; with ``shared``
    (large runs) the group's map is drawn once, with all its points, and later
    calculations of the group link to it."""
    from ..engine.regime.regime_map import map_groups, regime_grid
    from .map_svg import map_svg

    groups = map_groups(_Single(report))
    if not groups:
        return ""
    (name, species), (material, points) = next(iter(groups.items()))
    key = (name, species)
    if shared is not None:
        if key in grids:
            return (
                f'<p class="meta">Regime map: see <a href="#map-{grids[key]}">{_text(name)}, '
                f"{_text(species)}</a>.</p>"
            )
        grids[key] = index
        points = shared[key][1]
        title = f"{name}: regimes of {species} doping, with every calculation of this run"
        grid = regime_grid(material, species, size=(MAP_RESOLUTION, MAP_RESOLUTION))
    else:
        if key not in grids:
            grids[key] = regime_grid(material, species, size=(MAP_RESOLUTION, MAP_RESOLUTION))
        grid = grids[key]
        title = f"{name}: regimes of {species} doping, with this calculation"
    svg = map_svg(grid, points, title=title, ident=f"map-{index}")
    return f'<div class="map" id="map-{index}">{svg}</div>'


class _Single:
    """A run with one report (what map_groups reads)."""

    def __init__(self, report):
        self.reports = [report]


def render_html(result, exit_code: int, maps: bool = True) -> str:
    parts = [
        "<!DOCTYPE html>",
        '<html xmlns="http://www.w3.org/1999/xhtml" lang="en">',
        '<head><meta charset="utf-8"/><title>regimecheck review</title>',
        f"<style>{STYLE}</style></head><body>",
        "<h1>regimecheck review</h1>",
        f'<p class="meta">{_text(summary_line(result))}</p>',
        _overview(result),
    ]
    grids: dict = {}
    shared = None
    if len(result.reports) > MAPS_PER_CALCULATION:
        from ..engine.regime.regime_map import map_groups

        shared = map_groups(result)
        parts.append(
            f'<p class="meta">{len(result.reports)} calculations: one regime map per '
            "material and dopant, with all their points.</p>"
        )
    for index, report in enumerate(result.reports):
        calc = report.calc
        parts.append(
            f'<section id="calc-{index}"><h2>{_text(calc.name)}'
            '<a class="back" href="#summary">↑ summary</a></h2>'
        )
        parts.append(
            f'<p class="meta">{_text(calc.source)}:{calc.line} · '
            f"{_text(calc.material.name)} · {_text(point_text(calc))}</p>"
        )
        if report.error:
            parts.append(f'<p class="error">Not checked: {_text(report.error)}</p></section>')
            continue
        # what a reviewer acts on first: the findings, then the state they rest on
        parts.append("<h3>Findings</h3>" + _findings_table(report))
        parts.append(_state_table(report))
        parts.append(_formulas(report))
        for note in report.notes:
            parts.append(f'<p class="meta">note: {_text(note)}</p>')
        if maps:
            parts.append(_map(report, index, grids, shared))
        parts.append("</section>")
    if result.input_errors:
        parts.append(
            "<h2>Input errors</h2><ul>"
            + "".join(f"<li>{_text(m)}</li>" for m in result.input_errors)
            + "</ul>"
        )
    for note in result.notes:
        parts.append(f'<p class="meta">note: {_text(note)}</p>')
    parts.append(f'<p class="notice">{_text(DISCLAIMER)}</p></body></html>')
    # after escaping: no character XML forbids or a terminal acts on survives
    return visible("\n".join(p for p in parts if p))
