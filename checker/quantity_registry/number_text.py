"""Numbers as a reader sees them, in the display units of the rule files.

Rule messages are filled by the engine and the reports show the same numbers beside
them (indicators, corrections), so both use these two functions.
"""

from __future__ import annotations

import math

from .display_units import DISPLAY_UNITS


def _template(unit: str, digits: int) -> str:
    """The format of a value in ``unit`` with ``digits`` significant digits."""
    if unit == "%":
        return f"{{:.{max(digits - 1, 1)}g}} %"
    return f"{{:.{digits}g}}" if unit == "1" else f"{{:.{digits}g}} {unit}"


# unit -> (factor from SI, format) at the default four digits: a report writes some
# twenty numbers a calculation, so the format is not rebuilt for each
_FOUR_DIGITS = {unit: (factor, _template(unit, 4)) for unit, factor in DISPLAY_UNITS.items()}


def display(value: float | None, unit: str, digits: int = 4) -> str:
    """An SI value in a display unit, e.g. display(1e23, 'cm^-3') -> '1e+17 cm^-3'."""
    if value is None or not math.isfinite(value):
        return "n/a" if value is None or math.isnan(value) else ("inf" if value > 0 else "-inf")
    if digits == 4:
        factor, template = _FOUR_DIGITS[unit]
        return template.format(value * factor)
    return _template(unit, digits).format(value * DISPLAY_UNITS[unit])


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
