"""Single operating points: solved together, their stated formulas read, every rule
evaluated over them (one cell per calculation), and one report per calculation."""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING, TypedDict

from ...quantity_registry.summary_fields import FieldValue
from ...records import Record, field
from ...vocabulary_words import SEVERITY_RANK
from ..findings import Embodied, Finding
from . import state_values
from .corrected import CorrectedEntry, corrected_set, quantity_key
from .evaluate import evaluate
from .rulebook import Rule
from .trade_summary import PointSummaries

if TYPE_CHECKING:
    from ...inputs.calculation_file import Axis, Calculation
    from ..formulas.check import FormulaAnalysis, FormulaResult


class SweepGrid(TypedDict):
    """What a sweep's report says of its grid."""

    axes: list[tuple[str, Axis]]  # (label, swept input)
    points: int


class CalculationReport(Record):
    calc: Calculation
    state: dict[str, FieldValue] | None  # trade-unit summary of the solved state
    findings: list[Finding] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    error: str | None = None  # the calculation could not be solved
    formulas: list[FormulaResult] = field(default_factory=list)
    sweep: SweepGrid | None = None  # a sweep's grid
    embodied: list[Embodied] = field(default_factory=list)  # what its formulas assume
    corrected: list[CorrectedEntry] = field(default_factory=list)  # one per quantity
    unchecked: list[str] = field(default_factory=list)  # keys of stated numbers no rule compared


def check_points(
    calculations: Sequence[Calculation], rules: Sequence[Rule]
) -> tuple[list[CalculationReport], list[str]]:
    """(one CalculationReport per calculation, input errors of their formulas)."""
    values, solve_errors, solve_notes = state_values.solve_all(calculations)
    analyses: Sequence[FormulaAnalysis | None] = [None] * len(calculations)
    if any(calc.formulas for calc in calculations):
        from ..formulas import (
            check as formula_check,
        )  # imported only when there are formulas to read

        analyses = formula_check.analyse_all(calculations, values)
    embodied = [a.embodied if a else [] for a in analyses]
    findings, unchecked = evaluate(
        rules, calculations, values, skip=solve_errors.keys(), embodied=embodied
    )
    if any(analyses):
        # the rules may have replaced a rejected stated input: the formulas' exact values
        # follow the corrected calculation too
        formula_check.evaluate_all(analyses, calculations, values, skip=solve_errors.keys())
    by_id = {rule.id: rule for rule in rules}
    summaries = PointSummaries(values)
    reports: list[CalculationReport] = []
    for i, calc in enumerate(calculations):
        if i in solve_errors:
            reports.append(
                CalculationReport(calc, None, error=f"{calc.source}:{calc.line}: {solve_errors[i]}")
            )
            continue
        analysis = analyses[i]
        if analysis:
            findings[i] += formula_check.formula_findings(analysis, by_id, calc, findings[i])
        findings[i] = one_finding_per_stated_number(findings[i])
        corrected = corrected_set(findings[i])
        notes = [solve_notes[i]] if i in solve_notes else []
        reports.append(
            CalculationReport(
                calc,
                summaries[i],
                findings[i],
                notes,
                formulas=analysis.results if analysis else [],
                embodied=embodied[i],
                corrected=corrected,
                unchecked=[quantity_key(name) or name for name in unchecked[i]],
            )
        )
    errors = [message for a in analyses if a for message in a.errors]
    return reports, errors


# the assumption of the value checks: rules that compare a stated number with the solve
# when no shortcut explains it (VAL01-06, MEAS01-03, LAND01/02), whatever their id
VALUE_CHECK = "stated-measurement"


def one_finding_per_stated_number(findings: list[Finding]) -> list[Finding]:
    """Drop a value check on a stated number that a shortcut rule already corrects: the
    shortcut names the cause, the value check would only repeat the number.  The stated
    number is the quantity a correction is of (two numbers on one line, as in a flow
    mapping, stay apart); a correction without one falls back to its line."""

    def stated(f: Finding) -> set[tuple[str, str | int]]:
        return {(f.file, c.key if c.key else f.line) for c in f.corrections if c.from_author}

    if not any(f.assumption == VALUE_CHECK for f in findings):
        return _one_verdict_per_correction(findings)  # (the common case: nothing to drop)
    numbers = [stated(f) if f.corrections else set() for f in findings]
    explained: set[tuple[str, str | int]] = set().union(
        *(n for f, n in zip(findings, numbers) if f.assumption != VALUE_CHECK)
    )
    kept = [
        f
        for f, n in zip(findings, numbers)
        if not (f.assumption == VALUE_CHECK and n and n <= explained)
    ]
    return _one_verdict_per_correction(kept)


def _one_verdict_per_correction(findings: list[Finding]) -> list[Finding]:
    """Of two rules guarding the same assumption that correct the same stated number to
    the same value (a mobility above the lattice limit is also far from the doping model:
    MOB02, an error, and MOB01, a warning), keep the more severe one: the milder would
    repeat the correction under a weaker verdict.  Rules of different assumptions each
    name their own cause and stay."""

    def corrected(f: Finding) -> set[tuple[str, str, str | int, float]]:
        return {
            (f.assumption, f.file, c.key if c.key else f.line, float(f"{c.corrected:.9g}"))
            for c in f.corrections
            if c.from_author
        }

    # a verdict gives way only to another of its assumption that corrects too: where no
    # two correcting findings share an assumption (most calculations) none is dropped
    assumptions = [f.assumption for f in findings if f.corrections]
    if len(set(assumptions)) == len(assumptions):
        return list(findings)
    # each finding's corrections read once, where another correcting finding shares its
    # assumption (a finding alone in its assumption is the worst of its own items)
    shared = {a for a in assumptions if assumptions.count(a) > 1}
    items = [corrected(f) if f.corrections and f.assumption in shared else set() for f in findings]
    ranks = [SEVERITY_RANK[f.severity] for f in findings]
    worst: dict[tuple[str, str, str | int, float], int] = {}
    for own, rank in zip(items, ranks):
        for item in own:
            worst[item] = max(worst.get(item, -1), rank)
    return [
        f
        for f, own, rank in zip(findings, items, ranks)
        if not (own and all(worst[item] > rank for item in own))
    ]
