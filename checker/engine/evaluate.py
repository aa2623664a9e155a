"""Evaluate every rule over the solved quantities of all calculations in one pass.

A rule fires for a calculation (and carrier) where
  * its assumption is made: declared by the author (``assumes``), embodied in
    a stated formula (see :mod:`checker.engine.formula_check`), or implied by
    a stated number equal to the shortcut's value within the rule's tolerance,
    and its ``when`` gate holds;
  * the quantities it ``requires`` are known; and
  * its regime indicator lies on the wrong side of the threshold.
Each firing becomes a :class:`Finding` with the indicator, the message, and
every correction as stated (or shortcut) value -> exact value with the error.
"""
from __future__ import annotations

import difflib
from dataclasses import dataclass, field

import numpy as np

from .rulebook import PLACEHOLDER
from .vocabulary import CARRIER_WORDS, DISPLAY_UNITS, carrier_names

SEVERITY_RANK = {"info": 0, "warning": 1, "error": 2}


def display(value, unit: str, digits: int = 4) -> str:
    """An SI value in a display unit, e.g. display(1e23, 'cm^-3') -> '1e+17 cm^-3'."""
    if value is None or not np.isfinite(value):
        return "n/a" if value is None or np.isnan(value) else ("inf" if value > 0 else "-inf")
    shown = value * DISPLAY_UNITS[unit]
    if unit == "%":
        return f"{shown:.{max(digits - 1, 1)}g} %"
    text = f"{shown:.{digits}g}"
    return text if unit == "1" else f"{text} {unit}"


def error_text(stated: float, corrected: float, unit: str) -> str:
    """How far a stated value is from the corrected one, in words a reviewer reads fast.

    Energies (a Fermi level near a band edge can be near zero) as a difference;
    large ratios as a factor; everything else as a signed percentage.
    """
    if unit == "eV":
        difference = (stated - corrected) * DISPLAY_UNITS["eV"] * 1e3
        return f"{abs(difference):.1f} meV {'high' if difference > 0 else 'low'}"
    ratio = stated / corrected
    if ratio >= 10:
        return f"{ratio:.3g}× too high"
    if 0 < ratio <= 0.1:
        return f"{1 / ratio:.3g}× too low"
    off = abs(ratio - 1)
    shown = f"{off * 100:.2g}%" if off < 0.01 else f"{off:.1%}"
    return f"{shown} {'high' if ratio > 1 else 'low'}"


@dataclass
class Correction:
    label: str
    unit: str
    stated: float          # SI: the author's number, or what the shortcut gives
    corrected: float       # SI: the Fermi–Dirac / full-model value
    error: float           # stated / corrected - 1
    from_author: bool      # True: the author wrote the number; False: shortcut value
    origin: str = ""       # "formula" where a stated formula gave the value

    @property
    def stated_by(self) -> str:
        return self.origin or ("author" if self.from_author else "shortcut")

    def error_text(self) -> str:
        return error_text(self.stated, self.corrected, self.unit)


@dataclass
class Finding:
    rule: str
    title: str
    severity: str
    assumption: str
    carrier: str | None
    indicator_label: str
    indicator_value: float
    indicator_unit: str
    relation: str
    threshold: float
    threshold_source: str
    message: str
    corrections: list
    file: str
    line: int
    waived: str | None = None
    formula: str | None = None     # the stated formula that made the assumption
    column: str | None = None      # table column of the stated number (CSV inputs)
    sweep: object = None           # sweep.SweepSummary where the finding covers a grid

    def indicator_text(self) -> str | None:
        """'η = 1.16 > -3', or None for a check without a numeric indicator."""
        if not np.isfinite(self.indicator_value):
            return None
        sign = ">" if self.relation == "above" else "<"
        return (f"{self.indicator_label} = {display(self.indicator_value, self.indicator_unit)} "
                f"{sign} {display(self.threshold, self.indicator_unit)}")


@dataclass(frozen=True)
class Embodied:
    """An assumption a stated formula makes (from its limits), and where the formula is."""

    word: str
    carrier: str | None      # "n", "p", or None (the conductor as a whole)
    line: int
    formula: str


@dataclass
class WaiverResult:
    notes: list = field(default_factory=list)   # per calculation index: list[str]
    errors: list = field(default_factory=list)  # input errors (unknown rule ids)
    run_notes: list = field(default_factory=list)   # configuration waivers that waived nothing


# quantities derived from another stated key: where to point the reader
_SOURCE_KEYS = {
    "stated_sigma": ("stated_sigma", "stated_rho"), "stated_rho": ("stated_rho", "stated_sigma"),
    **{f"stated_{stem}_{x}": ("stated_ef_minus_ec", "stated_ef_minus_ev")
       for stem in ("ef", "eta") for x in ("n", "p")},
}


def _line_of(calc, name):
    for key in _SOURCE_KEYS.get(name, (name,)):
        if key in calc.lines:
            return calc.lines[key]
    return None


def _declared_mask(calculations, words) -> np.ndarray:
    return np.array([any(w in c.assumes for w in words) for c in calculations], dtype=bool) \
        if calculations else np.zeros(0, dtype=bool)


def _nonzero(array) -> np.ndarray:
    array = np.asarray(array, dtype=float)
    return np.isfinite(array) & (array != 0)


def evaluate(rules, calculations, values, skip=(), embodied=None) -> list:
    """Run ``rules`` over ``values`` (from :func:`state_values.solve_all`).

    ``embodied`` (optional) lists per calculation the :class:`Embodied`
    assumptions of its stated formulas.  Returns the findings per calculation.
    Rules evaluated elsewhere (``evaluated_by``) are skipped here.
    """
    count = len(calculations)
    findings = [[] for _ in range(count)]
    valid = np.ones(count, dtype=bool)
    valid[list(skip)] = False
    embodied = embodied or [[] for _ in range(count)]
    with np.errstate(all="ignore"):
        for rule in rules:
            if rule.evaluated_by:
                continue
            declared = _declared_mask(calculations, rule.declared)
            for x in rule.carriers:
                names = carrier_names(x) if x else {}
                made_by = _formula_made(rule, x, names, embodied, values)
                _run_rule(rule, x, names, declared, made_by, calculations, values, valid,
                          findings)
    return findings


def _formula_made(rule, x, names, embodied, values) -> dict:
    """Calculation index -> the Embodied entry that makes this rule's assumption."""
    out = {}
    if not rule.declared:
        return out
    for i, items in enumerate(embodied):
        for item in items:
            if item.word not in rule.declared:
                continue
            if not x or item.carrier == x or \
                    (item.carrier is None and values[names["in_use_x"]][i] > 0):
                out.setdefault(i, item)
    return out


def _run_rule(rule, x, names, declared, made_by, calculations, values, valid, findings):
    count = len(calculations)
    made = np.zeros(count, dtype=bool)
    if rule.declared:
        made |= declared & (_nonzero(values[names["in_use_x"]]) if x else True)
        made[list(made_by)] = True
    fired, indicator, implied = rule_mask(rule, x, names, made, values, count)
    fired = np.flatnonzero(fired & valid)
    if fired.size == 0:
        return
    _findings(rule, x, names, fired, indicator, implied, made_by, calculations, values,
              findings)


def rule_mask(rule, x, names, made, values, count):
    """(fired, indicator, implications) of one rule over ``count`` points, given where
    its assumption is declared or embodied (``made``, a boolean array)."""
    made = made.copy()
    implied = []          # (stated name, mask) of each implication, for the source line
    for imp in rule.implied_by:
        name = names.get(imp.stated, imp.stated)
        stated = values[name]
        shortcut = np.asarray(imp.shortcut.run[x](values), dtype=float)
        mask = np.isfinite(stated) & np.isfinite(shortcut) & \
            (np.abs(stated / shortcut - 1.0) <= imp.within)
        implied.append((name, mask))
        made |= mask
    if not rule.declared and not rule.implied_by:
        made[:] = True
    if rule.when is not None:
        made &= _nonzero(np.broadcast_to(rule.when.run[x](values), (count,)))
    for name in rule.requires:
        made &= np.isfinite(values[names.get(name, name)])
    indicator = np.broadcast_to(np.asarray(rule.indicator.run[x](values), dtype=float), (count,))
    wrong_side = indicator > rule.threshold if rule.relation == "above" \
        else indicator < rule.threshold
    # an infinite indicator (e.g. n_i over zero net doping) is on the wrong side too
    return made & ~np.isnan(indicator) & wrong_side, indicator, implied


def _findings(rule, x, names, fired, indicator, implied, made_by, calculations, values,
              findings):
    count = len(calculations)
    columns = []
    for corr in rule.corrections:
        shortcut = np.broadcast_to(np.asarray(corr.shortcut.run[x](values), dtype=float), (count,))
        exact = np.broadcast_to(np.asarray(corr.exact.run[x](values), dtype=float), (count,))
        stated = values[names.get(corr.stated, corr.stated)] if corr.stated \
            else np.full(count, np.nan)
        columns.append((corr, shortcut, exact, stated))
    shown = {key: (values[c], unit) if unit == "text" else
             (np.broadcast_to(np.asarray(c.run[x](values), dtype=float), (count,)), unit)
             for key, (c, unit) in rule.show.items()}
    words = CARRIER_WORDS.get(x, ("carriers", "dopants", "carrier"))
    for i in fired:
        calc = calculations[i]
        corrections = []
        line = column = None
        for corr, shortcut, exact, stated in columns:
            author = bool(np.isfinite(stated[i]))
            value = stated[i] if author else shortcut[i]
            if not (np.isfinite(value) and np.isfinite(exact[i])) or exact[i] == 0:
                continue
            corrections.append(Correction(corr.label, corr.unit, float(value), float(exact[i]),
                                          float(value / exact[i] - 1.0), author))
            if author and line is None:
                line = _line_of(calc, names.get(corr.stated, corr.stated))
                column = calc.columns.get(names.get(corr.stated, corr.stated))
        if line is None:
            line = next((_line_of(calc, name) for name, mask in implied if mask[i]), None)
        if line is None and i in made_by:
            line = made_by[i].line
        if line is None:
            line = next((calc.assumes[w] for w in rule.declared if w in calc.assumes), calc.line)
        fields = {
            "value": display(indicator[i], rule.indicator_unit),
            "threshold": display(rule.threshold, rule.indicator_unit),
            "carrier": words[0], "dopants": words[1], "kind": words[2],
            "error": corrections[0].error_text() if corrections else "n/a",
        }
        fields.update({key: str(array[i]) if unit == "text" else display(array[i], unit)
                       for key, (array, unit) in shown.items()})
        message = PLACEHOLDER.sub(lambda m: fields[m.group(1)], rule.message)
        findings[i].append(Finding(
            rule=rule.id, title=rule.title, severity=rule.severity, assumption=rule.assumption,
            carrier=words[0] if x else None, indicator_label=rule.indicator_label,
            indicator_value=float(indicator[i]), indicator_unit=rule.indicator_unit,
            relation=rule.relation, threshold=rule.threshold,
            threshold_source=rule.threshold_source, message=message, corrections=corrections,
            file=calc.source, line=int(line),
            formula=made_by[i].formula if i in made_by else None, column=column))


def apply_waivers(rules, calculations, findings, config=None) -> WaiverResult:
    """Mark waived findings (the calculation's own waivers, then the configuration's
    waivers per path); note waivers that waive nothing; unknown rule ids are errors."""
    result = WaiverResult([[] for _ in calculations], [])
    known = [rule.id for rule in rules]
    if config is not None:
        used = set()
        for i, calc in enumerate(calculations):
            for waiver in config.waivers_for(calc.source):
                for finding in findings[i]:
                    if finding.rule == waiver.rule and not finding.waived:
                        finding.waived = f"{waiver.reason} (configuration, {waiver.pattern})"
                        used.add(id(waiver))
        for waiver in config.idle_waivers(used, [c.source for c in calculations], known):
            result.run_notes.append(
                f"{config.source}:{waiver.line}: the waiver of {waiver.rule} for "
                f"{waiver.pattern!r} waives nothing in this run")
    for i, calc in enumerate(calculations):
        for rule_id, (reason, line) in calc.waivers.items():
            if rule_id not in known:
                close = difflib.get_close_matches(rule_id, known, n=1)
                hint = f"did you mean {close[0]}?" if close else "run 'regimecheck rules' for the ids"
                result.errors.append(f"{calc.source}:{line}: the waiver names an unknown "
                                     f"rule {rule_id!r}; {hint}")
                continue
            hits = [f for f in findings[i] if f.rule == rule_id]
            for finding in hits:
                finding.waived = reason
            if not hits:
                result.notes[i].append(
                    f"{calc.source}:{line}: the waiver of {rule_id} waives nothing here; "
                    "remove it or check the rule id")
    return result
