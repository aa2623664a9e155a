"""How numbers are written in display units (quantity_registry/number_text.display): the
expected texts are written out by hand from the unit factors (1 cm^-3 = 1e6 m^-3,
1 cm^2/(V*s) = 1e-4 m^2/(V*s), 1 eV = 1.602176634e-19 J, the SI value of the
elementary charge, CODATA 2018) and Python's 'g' format (four significant digits)."""

from __future__ import annotations

import pytest

from checker.quantity_registry.number_text import display


@pytest.mark.parametrize(
    ("value", "unit", "digits", "text"),
    [
        (1e23, "cm^-3", 4, "1e+17 cm^-3"),
        (1.23456e21, "cm^-3", 4, "1.235e+15 cm^-3"),
        (0.13, "cm^2/(V*s)", 4, "1300 cm^2/(V*s)"),
        (0.5, "%", 4, "50 %"),  # three digits for a percentage
        (0.123456, "%", 4, "12.3 %"),
        (2.5, "1", 4, "2.5"),
        (1.602176634e-20, "eV", 4, "0.1 eV"),
        (1.23456e21, "cm^-3", 2, "1.2e+15 cm^-3"),
        (0.123456, "%", 1, "1e+01 %"),  # never fewer than one digit
        (-0.0, "K", 4, "-0 K"),
        (None, "K", 4, "n/a"),
        (float("nan"), "cm^-3", 4, "n/a"),
        (float("inf"), "cm^-3", 4, "inf"),
        (float("-inf"), "cm^-3", 4, "-inf"),
    ],
)
def test_display(value, unit, digits, text):
    assert display(value, unit, digits) == text
