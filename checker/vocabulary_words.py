"""Words the input readers, the rule engine and the reports share, kept below all of them
so that none imports another (the engine would otherwise load the calculation reader,
the materials and their models just to know a word list):

- ASSUMPTIONS: the trade words an author may declare in a calculation (``assumes:``)
  and a rule may be triggered by (``applies: declared:``);
- TOLERANCE_NAMES: the measured-number tolerances of the configuration
  (``[tool.regimecheck.tolerance]``); a rule file names the one that sets its
  threshold (``indicator: tolerance:``), so the configuration never names a rule;
- Severity: the severities of a finding, lowest first (a rule file's ``severity``,
  the configuration's fail level, the reports' ranking and colours);
- Carrier: the two carrier types and every word that names them.

The enums are str-valued: a member equals its word, so rule files, configuration, JSON
and SARIF keep their exact words and a plain word read from a file compares equal.
"""

from __future__ import annotations

from collections.abc import Iterable
from enum import StrEnum

ASSUMPTIONS = (
    "non-degenerate",
    "full-ionization",
    "no-compensation",
    "single-carrier",
    "extrinsic",
    "einstein-relation",
    "diffusive",
    "low-field",
    "parabolic-band",
    "zero-temperature",
)

TOLERANCE_NAMES = (
    "resistivity",
    "hall_density",
    "diffusivity",
    "mobility",
    "carrier_density",
    "drift_velocity",
    "mean_free_path",
    "resistance",
    "conductance",
)


class Severity(StrEnum):
    """How serious a finding is; the members are listed lowest first."""

    INFO = "info"
    WARNING = "warning"
    ERROR = "error"

    @property
    def rank(self) -> int:
        # by the order above, never by the words (alphabetically "error" < "info")
        return _SEVERITY_ORDER.index(self)

    @classmethod
    def worst(cls, words: Iterable[str]) -> Severity | None:
        """The highest of ``words`` (severity words or members); None for none."""
        return max((cls(word) for word in words), key=lambda s: s.rank, default=None)


_SEVERITY_ORDER = tuple(Severity)
# the words themselves, plain (argparse and error messages show a choice by its repr)
SEVERITIES = tuple(severity.value for severity in Severity)
SEVERITY_RANK = {severity.value: severity.rank for severity in Severity}


class Carrier(StrEnum):
    """A carrier type by its code, as the engine's names carry it (``dens_n``, ``mu_p``)."""

    N = "n"
    P = "p"

    @property
    def other(self) -> Carrier:
        return Carrier.P if self is Carrier.N else Carrier.N

    @property
    def plural(self) -> str:
        """'electrons' / 'holes': how findings and reports name the carrier."""
        return _CARRIER_WORDS[self][0]

    @property
    def dopants(self) -> str:
        """'donors' / 'acceptors': the dopants that give this carrier."""
        return _CARRIER_WORDS[self][1]

    @property
    def singular(self) -> str:
        """'electron' / 'hole': the carrier in compounds (electron_density, hall factors)."""
        return _CARRIER_WORDS[self][2]

    @classmethod
    def from_plural(cls, word: str | None) -> Carrier | None:
        """'electrons' -> Carrier.N, 'holes' -> Carrier.P, anything else -> None."""
        return _BY_PLURAL.get(word) if isinstance(word, str) else None


# (plural, dopants, singular); the last row: a check of the conductor as a whole
_CARRIER_WORDS = {
    Carrier.N: ("electrons", "donors", "electron"),
    Carrier.P: ("holes", "acceptors", "hole"),
    None: ("carriers", "dopants", "carrier"),
}
# 'electrons' -> Carrier.N, 'holes' -> Carrier.P (looked up for every finding)
_BY_PLURAL = {_CARRIER_WORDS[carrier][0]: carrier for carrier in Carrier}


def carrier_message_words(code: str | None) -> tuple[str, str, str]:
    """The words a rule message fills in ({carrier}, {dopants}, {kind}) for carrier
    ``code`` ("n", "p"), or for the conductor as a whole (None)."""
    return _CARRIER_WORDS[Carrier(code) if code else None]
