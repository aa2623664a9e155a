"""Render a check run: console (rich) and JSON.

JSON keys are stable and documented in the README ("JSON report").  Numbers in
the JSON are in the unit named beside them (trade units, not SI).
"""

from __future__ import annotations

import re

from ..quantity_registry.display_units import DISPLAY_UNITS
from ..quantity_registry.number_text import display
from ..quantity_registry.summary_fields import CHECK_ROWS, shown_rows
from ..vocabulary_words import Severity
from . import DISCLAIMER
from .safe_text import visible, visible_data
from .sweep_text import axis_value, boundary_lines, finding_message, sweep_ranges, worst_point

JSON_FORMAT = "regimecheck-report/1"
STYLE = {"error": "bold red", "warning": "yellow", "info": "cyan"}


def doping_text(donors: dict, acceptors: dict) -> str:
    parts = [f"{k} {v * 1e-6:.3g} cm^-3 (donor)" for k, v in donors.items()]
    parts += [f"{k} {v * 1e-6:.3g} cm^-3 (acceptor)" for k, v in acceptors.items()]
    return ", ".join(parts) or "undoped"


def point_text(calc) -> str:
    """The operating point of a calculation; for a sweep the swept ranges, then what
    the sweep holds fixed (never the first grid point as if it were the point)."""
    if not calc.sweep:
        return f"{calc.temperature:.2f} K · {doping_text(calc.donors, calc.acceptors)}"
    swept = {axis.key for axis in calc.sweep}
    parts = [sweep_ranges(calc.sweep)]
    if "T" not in swept:
        parts.append(f"{calc.temperature:.2f} K")
    donors, acceptors = (
        {k: v for k, v in species.items() if (group, k) not in swept}
        for group, species in (("donors", calc.donors), ("acceptors", calc.acceptors))
    )
    if donors or acceptors:
        parts.append(doping_text(donors, acceptors))
    return " · ".join(parts)


def summary_line(result, exit_code=None) -> str:
    counts = result.counts()
    files = len({r.calc.source for r in result.reports})
    parts = [
        f"{counts[level]} {level}{'s' if counts[level] != 1 and level != 'info' else ''}"
        for level in reversed(Severity)
    ]
    text = (
        f"{len(result.reports)} calculation(s) in {files} file(s) checked: "
        f"{', '.join(parts)}, {counts['waived']} waived; "
        f"{len(result.input_errors)} input error(s)."
    )
    return text


def _where(file, line, column=None) -> str:
    place = f"{file}:{line}" if line else file
    return f"{place} (column {column!r})" if column else place


def also_lines(f) -> str:
    """' (also line 22)' / ' (also lines 22, 25)' for the other lines of a finding."""
    if not f.also_at:
        return ""
    word = "line" if len(f.also_at) == 1 else "lines"
    return f" (also {word} {', '.join(map(str, f.also_at))})"


def finding_where(f) -> str:
    """Where a finding is, with the other lines that make the same assumption."""
    if f.line and f.column is None and not f.also_at:  # the usual finding: 'file:line'
        return f"{f.file}:{f.line}"
    return _where(f.file, f.line, f.column) + also_lines(f)


def unchecked_text(report) -> str | None:
    """The line naming stated numbers no rule could compare, or None."""
    if not report.unchecked:
        return None
    return (
        f"not checked: {', '.join(report.unchecked)} (nothing to compare them with at this "
        "point: a structure key or a material model is missing)"
    )


def corrected_lines(report) -> list:
    """The corrected calculation, one line per stated quantity the findings correct;
    none where there is only one (the finding's own correction says it)."""
    entries = [e for e in report.corrected if e.stated is not None]
    if len(entries) < 2:
        return []
    return [
        f"{e.key}: {display(e.stated, e.unit)} → {display(e.corrected, e.unit)} "
        f"({', '.join(e.rules)})"
        for e in entries
    ]


def _shown(text: str) -> str:
    """visible(text), without its pattern search where every character but a closing
    newline (which it keeps) is printable (no character it escapes is: each is a
    control, format, surrogate or non-character)."""
    body = text[:-1] if text[-1:] == "\n" else text
    return text if body.isprintable() else visible(text)


class _PlainText:
    """The part of rich's Text used here, for output without colour (no rich import)."""

    def __init__(self, text=""):
        self.parts = [_shown(text)]

    def append(self, text, style=""):
        self.parts.append(_shown(text))

    def append_safe(self, text, style=""):
        """Append text already made visible (or our own words): no second pass."""
        self.parts.append(text)

    def append_rows(self, rows):
        """The state table, '  label' and the value right-aligned a line each, as one part
        (one check that nothing in it needs escaping)."""
        block = "".join([f"  {label:<24}{text:>24}\n" for label, text in rows])
        if not block.replace("\n", "").isprintable():  # our labels: only values escape
            block = "".join([f"  {label:<24}{_shown(f'{text:>24}')}\n" for label, text in rows])
        self.parts.append(block)

    @property
    def plain(self):
        return "".join(self.parts)


PLAIN_WIDTH = 110


def wrapped(line: str, width: int, printable: bool | None = None) -> list[str]:
    """``textwrap.wrap(line, width, break_on_hyphens=False) or [""]``, without textwrap's
    chunk lists for the usual line: printable (no tab, newline or whitespace other than
    spaces, which textwrap rewrites), no leading or trailing space (which it keeps or drops
    by position) and no word longer than ``width`` (which it breaks, filling the line
    before).  There its greedy fill ends each line at the last space within ``width``, the
    spaces at a break dropped.  ``printable``: ``line.isprintable()`` where the caller
    has it already (None: not known)."""
    lines: list[str] = []
    rest = line
    if printable is None:
        printable = line.isprintable()
    if printable and line[:1] != " " and line[-1:] != " ":
        while len(rest) > width:
            cut = rest.rfind(" ", 0, width + 1)
            if cut < 0:  # a word longer than the line: textwrap's own breaking
                break
            lines.append(rest[:cut].rstrip(" "))
            rest = rest[cut:].lstrip(" ")
        else:
            lines.append(rest)
            return lines
    import textwrap

    return textwrap.wrap(line, width, break_on_hyphens=False) or [""]


def render_console(result, console=None, stream=None) -> None:
    """The report for a reader: with a rich ``console`` (a terminal: colour), or as
    plain text to ``stream`` (a pipe or a file: no colour, rich not even imported).
    One text per calculation, emitted once; long lines wrapped here, indent kept."""
    Text: type
    if console is None:
        Text, width = _PlainText, PLAIN_WIDTH
        emit = lambda text: stream.write(text.plain)
    else:
        from rich.text import Text as RichText

        class _EscapedText(RichText):  # user text reaches the terminal escaped
            def append(self, text, style=None):
                return super().append(visible(text) if isinstance(text, str) else text, style)

            def append_safe(self, text, style=None):
                return super().append(text, style)

            def append_rows(self, rows):
                for label, text in rows:
                    super().append(f"  {label:<24}", "dim")
                    self.append(f"{text:>24}\n")

        Text, width = _EscapedText, max(console.width, 60)
        emit = lambda text: console.print(text, end="", highlight=False)

    kinds: dict = {}
    for report in result.reports:
        plain = _plain_calculation(report, width, kinds) if console is None else None
        if plain is not None:
            stream.write(plain)
            continue
        out = Text()
        _calculation(out, report, width, kinds)
        emit(out)
    tail = Text()
    for note in result.notes:
        tail.append(f"note: {note}\n", style="yellow")
    for message in result.input_errors:
        tail.append(f"input error: {message}\n", style="bold red")
    tail.append(f"\n{summary_line(result)}\n{DISCLAIMER}\n")
    emit(tail)


_MARGINS = {indent: " " * indent for indent in (0, 2, 4, 8, 26)}


class _Tags(dict):
    """A finding's first word ('WARNING ', 'WAIVED  '), padded to 8, made once per tag."""

    def __missing__(self, tag: str) -> str:
        self[tag] = text = f"{tag.upper():8s}"
        return text


_TAGS = _Tags()


def _title(calc, width: int) -> str:
    """The rule of a calculation's section, its name in it (one line, escaped)."""
    title = f"── {' '.join(visible(calc.name).split())} "
    return title + "─" * max(width - len(title), 3)


# the indent of a piece of a calculation's section that is not a line to wrap, and the
# style that marks the state table among those (see _pieces)
_WHOLE, _TABLE = None, ("table",)
_BOLD, _GREEN = (None, "bold"), (None, "green")


def _pieces(report, width: int, kinds: dict) -> list[tuple]:
    """The one producer of a calculation's section of the console report, for both of
    its writers (:func:`_calculation`, styled; :func:`_plain_calculation`, plain): its
    pieces in order, each ``(indent, text, style)``.  A line to wrap at ``width -
    indent``, each part indented by ``indent``, in ``style``; for indent _WHOLE, a line
    written whole whose ``style`` gives its styled stretches, ``(length, style, ...,
    None, style)`` (the last to the line's end; one flat tuple: cheap to make), or with
    style _TABLE the state table of the summary ``text``.  User text comes as it is:
    each writer escapes what needs it.  ``kinds``: the piece of the first line under a
    formula of each match already made in this report (the reports' matches stay alive while it
    is written, so their ids hold)."""
    pieces: list[tuple] = []
    put = pieces.append
    calc = report.calc
    put((_WHOLE, _title(calc, width), _BOLD))
    put((0, f"{_where(calc.source, calc.line)} · {calc.material.name} · {point_text(calc)}", ""))
    if report.error:
        put((2, f"not checked: {report.error}", "bold red"))
        return pieces
    if report.sweep:
        put((2, f"sweep of {report.sweep['points']} grid points", ""))
    else:
        put((_WHOLE, report.state, _TABLE))
    for r in report.formulas:
        head = f"  formula (line {r.line})".ljust(26)
        put((_WHOLE, head + r.text, (len(head), "dim", None, "bold")))
        # the first line is the same for every formula of one match (the many
        # calculations of a file state the same few formulas): made once
        key = (id(r.match), r.problem)
        what = kinds.get(key)
        if what is None:
            what = kinds[key] = (26, formula_what(r), "")
        put(what)
        here = formula_here(r)
        if here is not None:
            put((26, here, ""))
    if not report.findings:
        put((_WHOLE, "  no assumption leaves its regime", _GREEN))
    for f in report.findings:
        waived = f.waived
        tag = _TAGS["waived" if waived else f.severity]
        head = f"{f.rule}  {f.title}"
        spans = (len(tag), "dim" if waived else STYLE[f.severity], len(head), "bold", None, "dim")
        put((_WHOLE, f"{tag}{head}  at {finding_where(f)}", spans))
        put((8, finding_message(f), ""))
        indicator = f.indicator_text()
        if indicator:
            put((8, f"regime indicator: {indicator}", "dim"))
        for c in f.corrections:
            put((8, correction_text(c), ""))
        if waived:
            put((8, f"waived: {waived}", "dim"))
    corrected = corrected_lines(report)
    if corrected:
        put((2, "corrected calculation (each stated number once):", "bold"))
        for line in corrected:
            put((4, line, ""))
    unchecked = unchecked_text(report)
    if unchecked:
        put((2, unchecked, "yellow"))
    for note in report.notes:
        put((2, f"note: {note}", "yellow"))
    return pieces


def _fits(line: str, room: int) -> bool:
    """A line wrapped() keeps whole where it is printable: no longer than ``room``, no
    space at either end (which textwrap keeps or drops by position)."""
    return len(line) <= room and line[:1] != " " and line[-1:] != " "


def _calculation(out, report, width: int, kinds: dict | None = None) -> None:
    """One calculation's section of the console report, styled, into ``out`` (a Text):
    every piece of user text escaped where it needs it, each piece checked on its own."""
    for indent, text, style in _pieces(report, width, {} if kinds is None else kinds):
        if style is _TABLE:
            out.append_rows(shown_rows(CHECK_ROWS, text))
        elif indent is _WHOLE:
            start = 0
            for length, part_style in zip(style[::2], style[1::2]):
                if length is None:
                    out.append(text[start:] + "\n", style=part_style)
                else:
                    out.append(text[start : start + length], style=part_style)
                    start += length
        elif _fits(text, width - indent) and text.isprintable():  # wrapped() keeps it whole
            out.append_safe(_MARGINS[indent] + text + "\n", style=style)
        else:
            margin = _MARGINS[indent]
            for part in wrapped(_shown(text), width - indent):
                out.append_safe(margin + part + "\n", style=style)


def _plain_calculation(report, width: int, kinds: dict | None = None) -> str | None:
    """:func:`_calculation` as plain text, the usual way round: each line written whole,
    one printability check for the section instead of one per piece.  None where some
    piece is not printable (a tab, a control or format character, a line separator in
    user text): there :func:`_calculation` escapes piece by piece.  Where every piece
    is printable the two write the same lines (tests/test_console_many.py).  ``kinds``:
    as :func:`_pieces`; here also each long line under a formula, by its text, as the
    lines it wraps into (printable: only those are kept)."""
    kinds = {} if kinds is None else kinds
    lines: list[str] = []
    keep, margins = lines.append, _MARGINS
    table, after = "", 0
    for indent, text, style in _pieces(report, width, kinds):
        if indent is None:  # _WHOLE
            if style is _TABLE:
                table, after = _state_table(text), len(lines)
            else:
                keep(text)  # printable: checked below, with the rest
        elif len(text) <= width - indent and text[:1] != " " and text[-1:] != " ":
            keep(margins[indent] + text)  # as _fits(), inline: most lines come here
        else:
            # a formula's line is the same in many calculations: wrapped once (printable)
            parts = kinds.get(text) if indent == 26 else None
            if parts is None:
                if not text.isprintable():  # wrapped() rewrites whitespace but spaces
                    return None
                parts = [margins[indent] + part for part in wrapped(text, width - indent, True)]
                if indent == 26:
                    kinds[text] = parts
            lines += parts
    return _checked(lines, table, after)


def _checked(lines: list[str], table: str, after: int) -> str | None:
    """The section of ``lines`` with ``table`` (the state table, "" for none) after the
    first ``after`` of them, or None where a character in them is not printable.  Every
    piece of text is in the lines, so one check covers them (a newline inside one fails it too);
    the table is checked as append_rows checks it."""
    if not "".join(lines).isprintable():
        return None
    if table:
        if not table.replace("\n", "").isprintable():
            return None
        lines.insert(after, table)
    lines.append("")  # the section's last newline
    return "\n".join(lines)


def _state_table(summary) -> str:
    """The state table as :meth:`_PlainText.append_rows` writes it (without its last
    newline), in one format call (a template per set of rows shown); "" where no row has
    a value."""
    values = [summary[key] for key in _ROW_KEYS]
    shown = tuple([value is not None and value == value for value in values])
    if shown not in _TABLES:
        _TABLES[shown] = _table_template(shown)
    template = _TABLES[shown]
    if template is None:  # a row format _row_template does not take: row by row
        rows = shown_rows(CHECK_ROWS, summary)
        return "\n".join([f"  {label:<24}{text:>24}" for label, text in rows])
    return template.format(*values)


def _table_template(shown: tuple[bool, ...]) -> str | None:
    """The format of the state table with the rows of CHECK_ROWS marked in ``shown``,
    given every row's value (format ignores those of rows not shown)."""
    rows = [
        _row_template(index, label, text)
        for index, ((_, label, text), wanted) in enumerate(zip(CHECK_ROWS, shown))
        if wanted
    ]
    return None if None in rows else "\n".join(rows)  # type: ignore[arg-type]


_ROW_KEYS = [key for key, _, _ in CHECK_ROWS]
# which rows of CHECK_ROWS have a value -> the table's format
_TABLES: dict[tuple[bool, ...], str | None] = {}
_SPEC = re.compile(r"\{(?::([+\- ]?)(\.\d+[efg%]))?\}([^{}]*)")


def _row_template(index: int, label: str, shown: str) -> str | None:
    """'  label' padded to 24, then value ``index`` as ``shown`` writes it right-aligned
    in 24, as one format: the alignment goes into the value's own field ('{:.4g} cm^-3'
    -> '{5:>18.4g} cm^-3' gives '{:.4g} cm^-3' right-aligned in 24, also where the number
    is wider); '{}' as '{5!s:>24}' (format(value, '') is str(value) for the str, float,
    int and bool a summary holds).  None for any other form of ``shown``."""
    match = _SPEC.fullmatch(shown)
    if match is None or (match.group(2) is None and match.group(3)):
        return None
    sign, precision, suffix = match.groups()
    head = f"  {label:<24}".replace("{", "{{").replace("}", "}}")
    if precision is None:
        return f"{head}{{{index}!s:>24}}"
    return f"{head}{{{index}:>{sign}{max(24 - len(suffix), 1)}{precision}}}{suffix}"


def correction_text(c) -> str:
    """'label: stated (who) → corrected  [error]' of one correction."""
    origin = "stated" if c.from_author else (c.origin or "shortcut")
    return (
        f"{c.label}: {display(c.stated, c.unit)} ({origin}) → "
        f"{display(c.corrected, c.unit)}  [{c.error_text()}]"
    )


def worst_active(report) -> Severity | None:
    """The highest severity among a calculation's findings that are not waived."""
    return Severity.worst(f.severity for f in report.findings if not f.waived)


def _one_line(text) -> str:
    return " ".join(visible(text).split())


def render_compact(result, exit_code: int | None = None) -> str:
    """A short plain-text form for CI logs: per calculation with findings one header
    line and one line per finding, one line per clean calculation, then the summary
    and the notice.  Every line stands alone (file:line on each), so a log search
    for a file, a rule id or a severity finds whole findings."""
    lines = []
    for report in result.reports:
        calc = report.calc
        head = f"{_where(calc.source, calc.line)}  {_one_line(calc.name)}"
        if report.error:
            lines.append(f"not checked  {head}: {_one_line(report.error)}")
            continue
        if not report.findings:
            notes = "".join(f"  (note: {_one_line(note)})" for note in report.notes)
            unchecked = f"  ({unchecked_text(report)})" if report.unchecked else ""
            lines.append(f"ok  {head}{unchecked}{notes}")
            continue
        count = len(report.findings)
        lines.append(f"{head}  ({count} finding{'s' if count != 1 else ''})")
        for f in report.findings:
            tag = f"waived-{f.severity}" if f.waived else f.severity
            parts = [_one_line(f.title)]
            if f.sweep is not None:
                parts.append(f"on {f.sweep.failing_fraction:.1%} of the sweep")
            parts += [_one_line(correction_text(c)) for c in f.corrections]
            lines.append(f"  {tag:<15} {f.rule:<7} {finding_where(f)}  " + " · ".join(parts))
        if unchecked_text(report):
            lines.append(f"  {unchecked_text(report)}")
        for note in report.notes:
            lines.append(f"  note: {_one_line(note)}")
    lines += [f"note: {_one_line(note)}" for note in result.notes]
    lines += [f"input error: {_one_line(message)}" for message in result.input_errors]
    lines += [summary_line(result), DISCLAIMER]
    return "\n".join(lines) + "\n"


def formula_lines(r) -> list:
    """What the console says under a stated formula."""
    here = formula_here(r)
    return [formula_what(r)] if here is None else [formula_what(r), here]


def formula_what(r) -> str:
    """The first line under a stated formula: its dimensions' problem, or what it is
    (read from ``r.problem`` and ``r.match`` alone)."""
    if r.problem:
        return f"dimensions differ: {r.problem}"
    match = r.match
    if match.status == "unrecognised":
        what = "matches no exact relation in any named limit"
    elif match.status == "exact":
        what = f"exact: {', '.join(match.relations) or 'an identity'}"
    else:
        what = f"embodies {'; '.join(match.labels)} [{', '.join(match.relations)}]"
    if match.proof == "numeric":
        what += " (identity shown at random points; sympy did not close it)"
    return what


def formula_here(r) -> str | None:
    """The formula's value here beside the exact one, or None (a dimensions' problem,
    or no error to give)."""
    if r.problem:
        return None
    error = r.error_text()
    if error == "n/a":
        return None
    return f"here {r.show(r.value)}, exact {r.show(r.exact)} ({error})"


def sweep_json(report) -> dict | None:
    if not report.sweep:
        return None
    return {
        "points": report.sweep["points"],
        "axes": [
            {
                "axis": label,
                "from": axis_value(axis, axis.values[0]),
                "to": axis_value(axis, axis.values[-1]),
                "steps": len(axis.values),
                "spacing": axis.spacing,
            }
            for label, axis in report.sweep["axes"]
        ],
    }


def _number(value):
    return float(value) if value == value and abs(value) != float("inf") else None


def finding_json(f) -> dict:
    factor = DISPLAY_UNITS[f.indicator_unit]
    return {
        "rule": f.rule,
        "title": f.title,
        "severity": f.severity,
        "assumption": f.assumption,
        "carrier": f.carrier,
        "indicator": {
            "label": f.indicator_label,
            "value": _number(f.indicator_value * factor),
            "threshold": _number(f.threshold * factor),
            "relation": f.relation,
            "unit": f.indicator_unit,
            "source": f.threshold_source,
        },
        "message": finding_message(f),
        "where": {
            "file": f.file,
            "line": f.line,
            "column": f.column,
            "also_at_lines": list(f.also_at),
        },
        "corrections": [
            {
                "quantity": c.label,
                "unit": c.unit,
                "stated": _number(c.stated * DISPLAY_UNITS[c.unit]),
                "corrected": _number(c.corrected * DISPLAY_UNITS[c.unit]),
                "relative_error": _number(c.error),
                "stated_by": c.stated_by,
                "corrects": c.key,
            }
            for c in f.corrections
        ],
        "waived": f.waived,
        "formula": f.formula,
        "sweep": None
        if f.sweep is None
        else {
            "failing_fraction": f.sweep.failing_fraction,
            "boundary": boundary_lines(f.sweep),
            "worst_point": worst_point(f.sweep),
        },
    }


def formula_json(r) -> dict:
    factor = DISPLAY_UNITS.get(r.unit, 1.0)
    match = r.match
    return {
        "formula": r.text,
        "line": r.line,
        "status": r.status,
        "dimensions": {
            "left": r.left_dimension or None,
            "right": r.right_dimension or None,
            "problem": r.problem,
            "likely_fix": r.fix,
        },
        "embodies": list(match.labels) if match else [],
        "assumptions": [
            {"assumption": word, "carrier": carrier}
            for word, carrier in (match.assumptions if match else ())
        ],
        "relations": list(match.relations) if match else [],
        "proof": match.proof if match else None,
        "at_operating_point": {
            "unit": r.unit or r.si_unit or None,
            "formula": _number(r.value * factor),
            "exact": _number(r.exact * factor),
            "error": _number(r.error),
            "error_measure": "kT" if r.unit == "eV" else "relative",
            "corrects": getattr(r, "key", None),
        },
    }


def corrected_json(report) -> list:
    return [
        {
            "quantity": e.key,
            "label": e.label,
            "unit": e.unit,
            "stated": None if e.stated is None else _number(e.stated * DISPLAY_UNITS[e.unit]),
            "corrected": _number(e.corrected * DISPLAY_UNITS[e.unit]),
            "relative_error": None if e.error is None else _number(e.error),
            "rules": list(e.rules),
            "lines": list(e.lines),
        }
        for e in report.corrected
    ]


def render_json(result, exit_code: int) -> str:
    import json  # only the JSON report needs it

    calculations = []
    for report in result.reports:
        calc = report.calc
        calculations.append(
            {
                "source": {"file": calc.source, "line": calc.line},
                "name": calc.name,
                "material": calc.material.name,
                "temperature_K": calc.temperature,
                "doping_cm3": {
                    "donors": {k: v * 1e-6 for k, v in calc.donors.items()},
                    "acceptors": {k: v * 1e-6 for k, v in calc.acceptors.items()},
                },
                "state": report.state,
                "sweep": sweep_json(report),
                "formulas": [formula_json(r) for r in report.formulas],
                "findings": [finding_json(f) for f in report.findings],
                "corrected": corrected_json(report),
                "unchecked": list(report.unchecked),
                "notes": report.notes,
                "error": report.error,
            }
        )
    counts = result.counts()
    return json.dumps(
        visible_data(
            {
                "format": JSON_FORMAT,
                "notice": DISCLAIMER,
                "calculations": calculations,
                "input_errors": result.input_errors,
                "notes": result.notes,
                "summary": {
                    "calculations": len(result.reports),
                    "findings": counts,
                    "input_errors": len(result.input_errors),
                    "worst": result.worst(),
                    "exit_code": exit_code,
                },
            }
        ),
        indent=2,
        ensure_ascii=False,
    )
