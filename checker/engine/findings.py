"""What a check reports: findings, their corrections, and the assumptions formulas make.

Carriers are coded "n"/"p" inside the engine (rule names ``*_n``, ``*_p``) and named
"electrons"/"holes" in findings; ``carrier_word`` and ``carrier_code`` convert, by the
one enum :class:`checker.vocabulary_words.Carrier`.
"""

from __future__ import annotations

import math

from ..quantity_registry.number_text import display, error_text
from ..records import FrozenRecord, Record
from ..vocabulary_words import Carrier


def carrier_word(code: str | None) -> str | None:
    """'n' -> 'electrons', 'p' -> 'holes', None (the conductor as a whole) -> None."""
    return Carrier(code).plural if code else None


def carrier_code(word: str | None) -> Carrier | None:
    """'electrons' -> Carrier.N (equal to 'n'), 'holes' -> Carrier.P, anything else -> None."""
    return Carrier.from_plural(word)


class Correction(Record):
    label: str
    unit: str
    stated: float  # SI: the author's number, or what the shortcut gives
    corrected: float  # SI: the Fermi–Dirac / full-model value
    error: float  # stated / corrected - 1
    from_author: bool  # True: the author wrote the number; False: shortcut value
    origin: str = ""  # "formula" where a stated formula gave the value
    key: str | None = None  # the stated quantity corrected (regime/corrected.py), if any

    @property
    def stated_by(self) -> str:
        return self.origin or ("author" if self.from_author else "shortcut")

    def error_text(self) -> str:
        return error_text(self.stated, self.corrected, self.unit)


class Finding(Record):
    rule: str
    title: str
    severity: str
    assumption: str
    carrier: str | None  # "electrons", "holes", or None
    indicator_label: str
    indicator_value: float
    indicator_unit: str
    relation: str
    threshold: float
    threshold_source: str
    message: str  # the rule's message at this point (a sweep: the worst)
    corrections: list[Correction]
    file: str
    line: int
    waived: str | None = None
    formula: str | None = None  # the stated formula that made the assumption
    column: str | None = None  # table column of the stated number (CSV inputs)
    sweep: object = None  # sweep.SweepSummary where the finding covers a grid
    also_at: tuple[int, ...] = ()  # other lines of the same file where the assumption is made

    def indicator_text(self) -> str | None:
        """'η = 1.16 > -3', or None for a check without a numeric indicator."""
        if not math.isfinite(self.indicator_value):
            return None
        sign = ">" if self.relation == "above" else "<"
        return (
            f"{self.indicator_label} = {display(self.indicator_value, self.indicator_unit)} "
            f"{sign} {display(self.threshold, self.indicator_unit)}"
        )


class Embodied(FrozenRecord):
    """An assumption a stated formula makes (from its limits), and where the formula is."""

    word: str
    carrier: str | None  # "n", "p", or None (the conductor as a whole)
    line: int
    formula: str
