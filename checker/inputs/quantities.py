"""Strict parsing of quantity strings ("1e17 cm-3", "45 meV") into SI numbers.

A small, closed table of trade units is enough for the material data files;
anything else is refused with a message that lists what is accepted.
"""
from __future__ import annotations

import math
import re

from ..errors import InputError
from ..physics.constants import EV

_CM = 1e-2
# unit text (spaces removed) -> (dimension name, factor to SI)
UNITS = {
    "eV": ("energy", EV), "meV": ("energy", 1e-3 * EV),
    "K": ("temperature", 1.0),
    "eV/K": ("energy per kelvin", EV), "meV/K": ("energy per kelvin", 1e-3 * EV),
    "cm-3": ("density", _CM ** -3), "cm^-3": ("density", _CM ** -3), "/cm^3": ("density", _CM ** -3),
    "/cm3": ("density", _CM ** -3), "m-3": ("density", 1.0), "m^-3": ("density", 1.0),
    "cm^2/(V*s)": ("mobility", _CM ** 2), "cm2/Vs": ("mobility", _CM ** 2),
    "m^2/(V*s)": ("mobility", 1.0),
    "cm/s": ("velocity", _CM), "m/s": ("velocity", 1.0),
    "V/cm": ("field", 1 / _CM), "V/m": ("field", 1.0), "kV/cm": ("field", 1e3 / _CM),
    "eV*cm": ("energy times length", EV * _CM),
}
_NUMBER = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d{1,3})?"
_QUANTITY = re.compile(rf"^\s*({_NUMBER})\s*([A-Za-z/^*()0-9.\-+ ]{{0,24}})\s*$")


def parse_quantity(text, dimension: str, where: str = "") -> float:
    """Return the SI value of ``text`` (a number followed by a unit of ``dimension``).

    A bare number is accepted only for ``dimension == "dimensionless"``.
    """
    place = f"{where}: " if where else ""
    if isinstance(text, bool):
        raise InputError(f"{place}expected a {dimension} quantity, got {text!r}")
    if isinstance(text, (int, float)):
        if dimension == "dimensionless":
            return float(text)
        raise InputError(f"{place}{text!r} has no unit; write it with a {dimension} unit, "
                         f"e.g. {example(dimension)}")
    match = _QUANTITY.match(str(text))
    if not match:
        raise InputError(f"{place}cannot read {text!r} as a quantity; write a number and a unit, "
                         f"e.g. {example(dimension)}")
    value = float(match.group(1))
    unit = match.group(2).replace(" ", "")
    if not math.isfinite(value):
        raise InputError(f"{place}{text!r} is not a finite number")
    if unit in ("", "1"):
        if dimension == "dimensionless":
            return value
        raise InputError(f"{place}{text!r} has no unit; write it with a {dimension} unit, "
                         f"e.g. {example(dimension)}")
    try:
        unit_dimension, factor = UNITS[unit]
    except KeyError:
        raise InputError(f"{place}unknown unit {unit!r} in {text!r}; for a {dimension} use "
                         f"{', '.join(u for u, (d, _) in UNITS.items() if d == dimension) or 'a plain number'}"
                         ) from None
    if unit_dimension != dimension:
        raise InputError(f"{place}{text!r} has a unit of {unit_dimension} where {dimension} is "
                         f"expected (e.g. {example(dimension)})")
    return value * factor


_TEMPERATURE = re.compile(rf"^\s*({_NUMBER})\s*(K|degC|°C|C)\s*$")


def parse_temperature(text, where: str = "") -> float:
    """Kelvin from "300 K", "27 degC" or "27 °C" (absolute zero and below refused)."""
    place = f"{where}: " if where else ""
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        raise InputError(f"{place}{text!r} has no unit; write e.g. '300 K' or '27 degC'")
    match = _TEMPERATURE.match(str(text))
    if not match and re.fullmatch(rf"\s*{_NUMBER}\s*", str(text)):
        raise InputError(f"{place}{text!r} has no unit; write e.g. '300 K' or '27 degC'")
    if not match:
        raise InputError(f"{place}cannot read {text!r} as a temperature; write e.g. '300 K' "
                         "or '27 degC'")
    value = float(match.group(1))
    kelvin = value if match.group(2) == "K" else value + 273.15
    if not math.isfinite(kelvin) or kelvin <= 0:
        raise InputError(f"{place}{text!r} is at or below absolute zero; give a temperature above 0 K")
    return kelvin


def example(dimension: str) -> str:
    for unit, (dim, _) in UNITS.items():
        if dim == dimension:
            return f"'1 {unit}'"
    return "a plain number"
