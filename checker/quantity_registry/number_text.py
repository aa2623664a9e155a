"""Numbers as a reader sees them, in the display units of the rule files.

Rule messages are filled by the engine and the reports show the same numbers beside
them (indicators, corrections), so both use these two functions.
"""

from __future__ import annotations

import math

from .display_units import DISPLAY_UNITS


def display(value: float | None, unit: str, digits: int = 4) -> str:
    """An SI value in a display unit, e.g. display(1e23, 'cm^-3') -> '1e+17 cm^-3'."""
    if value is None or not math.isfinite(value):
        return "n/a" if value is None or math.isnan(value) else ("inf" if value > 0 else "-inf")
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
