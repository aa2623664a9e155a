"""Names a rule expression may use, what they mean, and how they are shown: the rule's
view of the quantity registry (:mod:`checker.quantity_registry.registry`).

Values are SI inside.  Names ending in ``_x`` exist per carrier: a rule that
runs per carrier is compiled twice, once with ``_x`` read as ``_n`` (``_o`` as
``_p``, the other carrier) and once the other way round.  A stated number the
author did not give is NaN; ``present(name)`` and ``stated_or(name, fallback)``
test for it.
"""

from __future__ import annotations

from collections.abc import Mapping
from functools import cache
from types import MappingProxyType

from ..quantity_registry.display_units import DISPLAY_UNITS
from ..quantity_registry.registry import QUANTITIES, Source
from ..vocabulary_words import Carrier

__all__ = ["COMMON", "CONSTANTS", "DISPLAY_UNITS", "PER_CARRIER", "TEXT", "carrier_names"]

_NUMBERS = [q for q in QUANTITIES if q.in_rules and q.source not in (Source.CONSTANT, Source.TEXT)]

CONSTANTS = {q.name: q.value for q in QUANTITIES if q.source is Source.CONSTANT}

# name -> (display unit, meaning)
COMMON = {q.name: (q.unit, q.meaning) for q in _NUMBERS if not q.per_carrier}
PER_CARRIER = {q.name: (q.unit, q.meaning) for q in _NUMBERS if q.per_carrier}
for _name, (_unit, _meaning) in list(PER_CARRIER.items()):
    PER_CARRIER[_name[:-2] + "_o"] = (
        _unit,
        _meaning.replace("the carrier", "the other carrier").replace(
            "this carrier", "the other carrier"
        ),
    )

# quantities that are words, not numbers (object arrays; a rule shows them with {text: name})
TEXT = {q.name: q.meaning for q in QUANTITIES if q.source is Source.TEXT}


@cache
def carrier_names(x: str) -> Mapping[str, str]:
    """Map ``name_x``/``name_o`` to the concrete names for carrier ``x`` ("n" or "p");
    built once per carrier (every rule and carrier of a run asks for it) and read-only."""
    carrier = Carrier(x)
    mapping: dict[str, str] = {}
    for name in PER_CARRIER:
        stem, suffix = name[:-2], name[-1]
        mapping[name] = f"{stem}_{carrier if suffix == 'x' else carrier.other}"
    return MappingProxyType(mapping)


@cache
def rule_names() -> frozenset[str]:
    """Every name a rule expression may use: the ``_x``/``_o`` forms (expanded per
    carrier) and the concrete ``_n``/``_p`` ones (e.g. dens_n in a per-calculation rule)."""
    return (
        frozenset(COMMON)
        | frozenset(PER_CARRIER)
        | frozenset(CONSTANTS)
        | frozenset(concrete_names())
    )


def concrete_names() -> set[str]:
    names = set(COMMON) | set(CONSTANTS)
    for x in Carrier:
        names |= set(carrier_names(x).values())
    return names
