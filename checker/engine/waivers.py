"""Waivers: a calculation's own (``waivers:``) and the configuration's, per path."""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING

from ..close_words import close_matches
from ..records import Record, field

if TYPE_CHECKING:
    from ..inputs.calculation_file import Calculation
    from ..inputs.config import Config, PathWaiver
    from .findings import Finding
    from .regime.rulebook import Rule


class WaiverResult(Record):
    notes: list[list[str]] = field(default_factory=list)  # per calculation index
    errors: list[str] = field(default_factory=list)  # input errors (unknown rule ids)
    run_notes: list[str] = field(default_factory=list)  # configuration waivers idle


def apply_waivers(
    rules: Sequence[Rule],
    calculations: Sequence[Calculation],
    findings: Sequence[list[Finding]],
    config: Config | None = None,
) -> WaiverResult:
    """Mark waived findings (the calculation's own waivers, then the configuration's
    waivers per path); note waivers that waive nothing; unknown rule ids are errors.
    A rule that exists but is not run (``only``/``skip``, or left out of ``rules``)
    is not unknown: its waiver gets a note saying so."""
    result = WaiverResult([[] for _ in calculations], [])
    known = [rule.id for rule in rules]
    if config is not None:
        used: set[int] = set()
        # the waivers of a file, found once per file (each look-up resolves its path:
        # a file of 1,000 calculations asked 1,000 times)
        by_file: dict[str, list[PathWaiver]] = {}
        for i, calc in enumerate(calculations):
            waivers = by_file.get(calc.source)
            if waivers is None:
                waivers = by_file[calc.source] = config.waivers_for(calc.source)
            for waiver in waivers:
                for finding in findings[i]:
                    if finding.rule == waiver.rule and not finding.waived:
                        finding.waived = f"{waiver.reason} (configuration, {waiver.pattern})"
                        used.add(id(waiver))
        for waiver in config.idle_waivers(used, [c.source for c in calculations], known):
            result.run_notes.append(
                f"{config.source}:{waiver.line}: the waiver of {waiver.rule} for "
                f"{waiver.pattern!r} waives nothing in this run"
            )
    for i, calc in enumerate(calculations):
        for rule_id, (reason, line) in calc.waivers.items():
            if rule_id not in known:
                not_run = _not_run(rule_id, config)
                if not_run:
                    result.notes[i].append(
                        f"{calc.source}:{line}: the waiver of {rule_id} waives nothing here: "
                        f"the rule exists but is not run {not_run}"
                    )
                    continue
                close = close_matches(rule_id, known, n=1)
                hint = (
                    f"did you mean {close[0]}?" if close else "run 'regimecheck rules' for the ids"
                )
                result.errors.append(
                    f"{calc.source}:{line}: the waiver names an unknown rule {rule_id!r}; {hint}"
                )
                continue
            hits = [f for f in findings[i] if f.rule == rule_id]
            for finding in hits:
                finding.waived = reason
            if not hits:
                result.notes[i].append(
                    f"{calc.source}:{line}: the waiver of {rule_id} waives nothing here; "
                    "remove it or check the rule id"
                )
    return result


def _not_run(rule_id: str, config: Config | None) -> str:
    """Why a rule of the shipped rulebook is not among the rules run ("" where no
    shipped rule has this id)."""
    from .regime.rulebook import load_rules

    if rule_id not in {rule.id for rule in load_rules()}:
        return ""
    if config is not None and not config.selects(rule_id):
        where = config.source or "the defaults"
        return f"under this configuration (only/skip in {where}); select it or remove the waiver"
    return "in this run (the rules checked leave it out); remove the waiver or run the rule"
