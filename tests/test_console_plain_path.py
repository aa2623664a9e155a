"""The console's plain-text path (check_report._plain_calculation: whole lines, one
printability check per calculation) writes what the piece-by-piece path
(check_report._calculation, which escapes each piece where it needs it) writes, for the
shipped examples and for text a terminal would act on or a line cannot hold; where a
piece is not printable it hands the calculation to the piece-by-piece path."""

from __future__ import annotations

import io

import pytest

from checker.api import check_paths
from checker.records import replace
from checker.report.check_report import (
    PLAIN_WIDTH,
    _calculation,
    _plain_calculation,
    _PlainText,
    render_console,
)

EXAMPLES = ["examples/"]

# text from files we do not control: each is refused by the plain path's check (a tab,
# an escape, a line separator, a no-break space, a newline) or changes how a line wraps
# (a space at either end, a word longer than the line)
HOSTILE = [
    "tab\there",
    "esc\x1b[31mred",
    "line\u2028separator",
    "no-break\u00a0space",
    "new\nline",
    " leading space",
    "trailing space ",
    "x" * 130,
    "right-to-left \u202eoverride",
    "plain words only",
]


@pytest.fixture(scope="module")
def reports():
    return check_paths(EXAMPLES).reports


def _piecewise(report) -> str:
    out = _PlainText()
    _calculation(out, report, PLAIN_WIDTH)
    return out.plain


def _variants(report):
    """The report with hostile text in each place user text reaches the console."""
    calc = report.calc
    for text in HOSTILE:
        yield replace(report, calc=replace(calc, name=text))
        yield replace(report, calc=replace(calc, source=text))
        yield replace(report, notes=[*report.notes, text])
        yield replace(report, unchecked=[text])
        if report.findings:
            first = report.findings[0]
            changed = [
                replace(first, message=text),
                replace(first, waived=text),
                replace(first, title=text),
            ]
            for finding in changed:
                yield replace(report, findings=[finding, *report.findings[1:]])
        if report.formulas:
            formula = report.formulas[0]
            formula.text, kept = text, formula.text
            yield replace(report, formulas=[_copy(formula), *report.formulas[1:]])
            formula.text = kept


def _copy(formula):
    import copy

    return copy.copy(formula)


def test_examples_take_the_plain_path_and_match(reports):
    for report in reports:
        plain = _plain_calculation(report, PLAIN_WIDTH)
        assert plain is not None, report.calc.name  # the examples are printable
        assert plain == _piecewise(report), report.calc.name


def test_hostile_text_is_written_as_the_piecewise_path_writes_it(reports):
    handed_over = 0
    for report in reports:
        for variant in _variants(report):
            plain = _plain_calculation(variant, PLAIN_WIDTH)
            piecewise = _piecewise(variant)
            if plain is None:
                handed_over += 1
            else:
                assert plain == piecewise, variant.calc.name
            stream = io.StringIO()
            render_console(_Run([variant]), stream=stream)
            assert stream.getvalue().startswith(piecewise)
    assert handed_over > 0


class _Run:
    """The part of a run render_console reads."""

    def __init__(self, reports):
        self.reports = reports
        self.notes: list[str] = []
        self.input_errors: list[str] = []

    def counts(self):
        return {"error": 0, "warning": 0, "info": 0, "waived": 0}


SHARED_FORMULAS = """name: contact {n}
material: Si
temperature: {T} K
doping:
  donors: {{P: {doping}e17 cm-3}}
formulas:
  - n = N_D
  - D_n = mu_n*k*T/q
  - E_F - E_c = k*T*ln(N_D/N_c)
  - sigma = q*n*mu_n
"""


def test_formulas_stated_by_many_calculations_read_as_each_alone(tmp_path):
    # the lines under a formula of one match are wrapped once per report and reused
    docs = [SHARED_FORMULAS.format(n=n, T=250 + 40 * n, doping=n + 1) for n in range(4)]
    path = tmp_path / "shared.yaml"
    path.write_text("---\n".join(docs), encoding="utf-8")
    result = check_paths([str(path)])
    assert len({id(r.match) for report in result.reports for r in report.formulas}) < 16
    stream = io.StringIO()
    render_console(result, stream=stream)
    assert stream.getvalue().startswith("".join(_piecewise(r) for r in result.reports))
