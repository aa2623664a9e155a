"""The corrected calculation of one operating point: each stated number once.

Rules and formula lines each report corrections (stated or shortcut value -> exact value).
They are all read off one corrected calculation (evaluate.rule_cells: a rejected stated
input is replaced before anything downstream is ruled), so every correction of the same
quantity carries the same exact value.  This module names the quantity a correction is of
(the calculation file's key, e.g. ``electron_diffusivity``) and folds a calculation's
corrections into one entry per quantity: the set a reviewer applies to the memo.
"""

from __future__ import annotations

from collections.abc import Iterable

from ...quantity_registry.registry import formula_symbols, registered
from ...records import Record, field
from ..findings import Finding

# stated Fermi levels are read per carrier from ef_minus_ec / ef_minus_ev; their
# corrections are given relative to the carrier's own band edge
_FERMI_LEVEL = {
    "stated_ef_n": "ef_minus_ec",
    "stated_eta_n": "ef_minus_ec",
    "stated_ef_p": "ev_minus_ef",
    "stated_eta_p": "ev_minus_ef",
}
# a formula's left side names a solved quantity; the stated number it would be compared
# with is the registered "stated_" form of it
_STATED = "stated_"


def quantity_key(stated_name: str | None) -> str | None:
    """The calculation-file key of a stated quantity's concrete name (``stated_D_n`` ->
    ``electron_diffusivity``), or None where the name is no stated number."""
    if not stated_name:
        return None
    if stated_name in _FERMI_LEVEL:
        return _FERMI_LEVEL[stated_name]
    quantity = registered(stated_name)
    if quantity is None or not quantity.keys:
        return None
    if quantity.per_carrier:
        return quantity.keys[0 if stated_name.endswith("_n") else 1]
    return quantity.keys[0]


def formula_key(symbol: str | None) -> str | None:
    """The key of the stated number a formula's left-hand symbol computes (``n`` ->
    ``electron_density``), or None."""
    name = formula_symbols().get(symbol or "")
    return quantity_key(_STATED + name) if name else None


class CorrectedEntry(Record):
    """One stated quantity of the corrected calculation."""

    key: str  # calculation-file key (electron_diffusivity, resistance, ...)
    label: str  # as the first rule names it
    unit: str  # display unit
    stated: float | None  # SI: the author's number (None: only a shortcut gave one)
    corrected: float  # SI
    rules: list[str] = field(default_factory=list)  # ids of the findings that correct it
    lines: list[int] = field(default_factory=list)  # where it is stated or computed

    @property
    def error(self) -> float | None:
        return None if self.stated is None else self.stated / self.corrected - 1.0


def corrected_set(findings: Iterable[Finding]) -> list[CorrectedEntry]:
    """One entry per corrected quantity of one calculation, in the order findings name
    them (waived findings included: a waiver accepts the risk, not a second value)."""
    entries: dict[str, CorrectedEntry] = {}
    for finding in findings:
        for correction in finding.corrections:
            if correction.key is None:
                continue
            entry = entries.get(correction.key)
            if entry is None:
                entry = entries[correction.key] = CorrectedEntry(
                    correction.key,
                    correction.label,
                    correction.unit,
                    None,
                    correction.corrected,
                )
            if correction.from_author and entry.stated is None:
                entry.stated = correction.stated
            if finding.rule not in entry.rules:
                entry.rules.append(finding.rule)
            if finding.line not in entry.lines:
                entry.lines.append(finding.line)
    return list(entries.values())
