"""Strict parsing of quantity strings ("1e17 cm-3", "5 kV/cm") into SI numbers.

Two steps, both strict:

1. A regular-expression gate: a plain decimal number, then a unit made only of
   unit names, ``*``, ``/``, parentheses and small integer exponents (``^-3``,
   ``**2``, or a trailing ``-3``).  Anything else (``9**9**9 m``, ``1e999``,
   Python syntax) is refused before any library sees it.
2. The unit: the common trade spellings are looked up in a closed table (fast,
   no import); any other unit that passed the gate is handed to pint, imported
   only then.  pint reads ``cm-3`` as "cm minus 3", so the gate rewrites
   trailing exponents to ``**`` first.  Temperatures are parsed separately
   (pint refuses "25 degC" from a string).
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable
from functools import lru_cache
from typing import Any

from ..errors import InputError
from ..physics.constants import EV

_CM = 1e-2
# The SI unit of each dimension, as pint text, and a typical trade example.
DIMENSIONS = {
    "density": ("m**-3", "1e17 cm-3"),
    "energy": ("J", "0.045 eV"),
    "energy per kelvin": ("J/K", "4.73e-4 eV/K"),
    "energy times length": ("J*m", "1e-9 eV*cm"),
    "temperature": ("K", "300 K"),
    "mobility": ("m**2/(V*s)", "1350 cm^2/(V*s)"),
    "diffusivity": ("m**2/s", "35 cm^2/s"),
    "velocity": ("m/s", "1e7 cm/s"),
    "field": ("V/m", "5 kV/cm"),
    "voltage": ("V", "0.0259 V"),
    "length": ("m", "2 um"),
    "area": ("m**2", "4 um^2"),
    "resistivity": ("ohm*m", "0.03 ohm*cm"),
    "conductivity": ("S/m", "33 S/cm"),
    "resistance": ("ohm", "1.5 kohm"),
    "sheet resistance": ("ohm", "250 ohm/sq"),
    "sheet density": ("m**-2", "1e12 cm-2"),
    "line density": ("m**-1", "2e6 cm-1"),
    "conductance": ("S", "2.5e-4 S"),
}

# unit text (normalised: spaces removed, see _normal_unit) -> (dimension name, factor to SI)
UNITS = {
    "eV": ("energy", EV),
    "meV": ("energy", 1e-3 * EV),
    "K": ("temperature", 1.0),
    "eV/K": ("energy per kelvin", EV),
    "meV/K": ("energy per kelvin", 1e-3 * EV),
    "cm-3": ("density", _CM**-3),
    "cm^-3": ("density", _CM**-3),
    "/cm^3": ("density", _CM**-3),
    "/cm3": ("density", _CM**-3),
    "m-3": ("density", 1.0),
    "m^-3": ("density", 1.0),
    "cm**-3": ("density", _CM**-3),
    "1/cm^3": ("density", _CM**-3),
    "cm-2": ("sheet density", _CM**-2),
    "cm^-2": ("sheet density", _CM**-2),
    "/cm^2": ("sheet density", _CM**-2),
    "/cm2": ("sheet density", _CM**-2),
    "m-2": ("sheet density", 1.0),
    "m^-2": ("sheet density", 1.0),
    "cm-1": ("line density", 1 / _CM),
    "cm^-1": ("line density", 1 / _CM),
    "/cm": ("line density", 1 / _CM),
    "1/cm": ("line density", 1 / _CM),
    "m-1": ("line density", 1.0),
    "m^-1": ("line density", 1.0),
    "cm^2/(V*s)": ("mobility", _CM**2),
    "cm2/Vs": ("mobility", _CM**2),
    "cm^2/Vs": ("mobility", _CM**2),
    "m^2/(V*s)": ("mobility", 1.0),
    "cm2/(V*s)": ("mobility", _CM**2),
    "cm^2/s": ("diffusivity", _CM**2),
    "cm2/s": ("diffusivity", _CM**2),
    "m^2/s": ("diffusivity", 1.0),
    "cm/s": ("velocity", _CM),
    "m/s": ("velocity", 1.0),
    "V/cm": ("field", 1 / _CM),
    "V/m": ("field", 1.0),
    "kV/cm": ("field", 1e3 / _CM),
    "V": ("voltage", 1.0),
    "mV": ("voltage", 1e-3),
    "m": ("length", 1.0),
    "cm": ("length", _CM),
    "mm": ("length", 1e-3),
    "um": ("length", 1e-6),
    "nm": ("length", 1e-9),
    "um^2": ("area", 1e-12),
    "cm^2": ("area", 1e-4),
    "nm^2": ("area", 1e-18),
    "m^2": ("area", 1.0),
    "ohm*cm": ("resistivity", _CM),
    "ohm*m": ("resistivity", 1.0),
    "S/cm": ("conductivity", 1 / _CM),
    "S/m": ("conductivity", 1.0),
    "ohm": ("resistance", 1.0),
    "kohm": ("resistance", 1e3),
    "ohm/sq": ("sheet resistance", 1.0),
    "kohm/sq": ("sheet resistance", 1e3),
    "S": ("conductance", 1.0),
    "mS": ("conductance", 1e-3),
    "uS": ("conductance", 1e-6),
    "eV*cm": ("energy times length", EV * _CM),
    # further trade spellings, read here so that they do not load pint (~0.1 s)
    "mm^2": ("area", 1e-6),
    "mm2": ("area", 1e-6),
    "um2": ("area", 1e-12),
    "nm2": ("area", 1e-18),
    "cm2": ("area", 1e-4),
    "cm^2/V/s": ("mobility", _CM**2),
    "cm2/V/s": ("mobility", _CM**2),
    "MV/cm": ("field", 1e6 / _CM),
    "mS/cm": ("conductivity", 1e-3 / _CM),
    "Mohm": ("resistance", 1e6),
    "mohm": ("resistance", 1e-3),
    "mohm*cm": ("resistivity", 1e-3 * _CM),
}
# A decimal number in ASCII digits, optionally times a power of ten written the trade
# way (1.5e16, 1.5x10^16, 1.5×10^16; superscripts are rewritten to ^ first).
_MANTISSA = r"[-+]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)"
_TIMES_TEN = r"\s*[x×*·]\s*10\s*"
NUMBER = rf"{_MANTISSA}(?:[eE][-+]?[0-9]{{1,3}}|{_TIMES_TEN}\^\s*[-+]?[0-9]{{1,3}})?"
# The same as written before that rewriting (minus sign, superscripts): the JSON Schema's
# pattern of a number, so ECMA-262 syntax only.
_SUPER = "⁰¹²³⁴⁵⁶⁷⁸⁹"
WRITTEN_NUMBER = (
    rf"[-+−]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][-+−]?[0-9]{{1,3}}"
    rf"|{_TIMES_TEN}(?:\^\s*[-+−]?[0-9]{{1,3}}|[⁻⁺]?[{_SUPER}]{{1,3}}))?"
)


def quantity_pattern(with_unit: bool) -> str:
    """ECMA-262 pattern of what parse_quantity reads: a number, then a unit or nothing
    (the unit itself is checked by the reader only)."""
    whole = r"(?![0-9.]|[eE][-+−]?[0-9]|\s*[x×*·]\s*10)"
    return rf"^\s*{WRITTEN_NUMBER}{whole}" + (r"\s*\S.{0,40}$" if with_unit else r"\s*$")


_NUMBER_PARTS = re.compile(
    r"^(?P<mantissa>[-+]?(?:[0-9]+\.?[0-9]*|\.[0-9]+))"
    r"(?:[eE](?P<e>[-+]?[0-9]{1,3})"
    r"|\s*[x×*·]\s*10\s*\^\s*(?P<power>[-+]?[0-9]{1,3}))?$"
)
_NAME = r"[A-Za-z]{1,8}"
_POWER = r"(?:(?:\^|\*\*)?-?\d{1,2})?"
_FACTOR = rf"(?:{_NAME}{_POWER}|1)"
_PRODUCT = rf"{_FACTOR}(?:[*/]{_FACTOR})*"
_UNIT = rf"/?(?:{_PRODUCT}|\({_PRODUCT}\))(?:[*/](?:{_FACTOR}|\({_PRODUCT}\)))*"
_QUANTITY = re.compile(rf"^\s*({NUMBER})\s*(.{{0,40}}?)\s*$")
# The patterns below are compiled on first use (re keeps them): a check whose units are
# all spelled as in the table, in ASCII, needs none of them.
_UNIT_GATE = rf"^{_UNIT}$"
_TRAILING_POWER = r"([A-Za-z])(-?\d{1,2})(?![\d.])"

_SUPERSCRIPTS = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺", "0123456789-+")
_SUPERSCRIPT_RUN = f"[⁻⁺]?[{_SUPER}]+"
# a hyphen between unit names is a product (ohm-cm, V-s); before a digit it is an exponent
_HYPHEN_PRODUCT = r"(?<=[A-Za-z0-9Ωµμ])-(?=[A-Za-zΩµμ])"
# after '/', names joined by the trade product marks form the denominator: cm²/V·s
_DOT_DENOMINATOR = r"/([A-Za-zΩµμ]+(?:\^-?\d{1,2})?(?:[·⋅×][A-Za-zΩµμ]+(?:\^-?\d{1,2})?)+)"


def _normal_text(text: str) -> str:
    """Superscript exponents as ^n and the minus sign as '-' (number and unit alike)."""
    if text.isascii():  # both are outside ASCII: the usual text is already normal
        return text
    text = re.sub(_SUPERSCRIPT_RUN, lambda m: "^" + m.group(0).translate(_SUPERSCRIPTS), text)
    return text.replace("\u2212", "-")


@lru_cache(maxsize=512)
def _normal_unit(unit: str) -> str:
    """The trade spellings of a unit in the form of the table: Ω·cm -> ohm*cm, µm -> um,
    Ω/□ -> ohm/sq
    (kept per spelling: a file of many calculations writes the same few units).  A
    spelling of the table is its own normal form (test): it is kept as it is."""
    return unit if unit in UNITS else _normalized_unit(unit)


def _normalized_unit(unit: str) -> str:
    unit = re.sub(_HYPHEN_PRODUCT, "·", unit.replace(" ", ""))
    unit = re.sub(_DOT_DENOMINATOR, r"/(\1)", unit)
    for mark in "·⋅×":
        unit = unit.replace(mark, "*")
    unit = unit.replace("Ω", "ohm").replace("µ", "u").replace("μ", "u").replace("□", "sq")
    return re.sub(r"(?<![A-Za-z])([kMGm]?)Ohm", r"\1ohm", unit)


def read_number(text: str):
    """The float of a NUMBER text, or None when it is not one."""
    match = _NUMBER_PARTS.match(text.strip())
    if not match:
        return None
    exponent = match["e"] or match["power"] or "0"
    return float(f"{match['mantissa']}e{exponent}")


# (text, dimension) -> the SI value of a text read before: a file of many calculations
# repeats its units and often its numbers (a reading costs ~1.4 us, a look-up a tenth of
# that).  Only readings that succeeded are kept (a refusal names its place each time),
# at most _MOST_KEPT of them
_READ: dict[tuple[str, str], float] = {}
_MOST_KEPT = 4096
_LONGEST_KEPT = 64  # characters: a longer text (padding, a run of digits) is read, not kept


def parse_quantity(text, dimension: str, where: str = "") -> float:
    """Return the SI value of ``text`` (a number followed by a unit of ``dimension``).

    A bare number is accepted only for ``dimension == "dimensionless"``.
    """
    return _kept(_read_quantity, text, dimension, where)


def _kept(read: Callable[[Any, str, str], float], text: Any, dimension: str, where: str) -> float:
    """``read(text, dimension, where)``, looked up where the text was read before."""
    if type(text) is not str or len(text) > _LONGEST_KEPT:
        return read(text, dimension, where)
    value = _READ.get((text, dimension))
    if value is None:
        value = read(text, dimension, where)
        if len(_READ) >= _MOST_KEPT:
            _READ.clear()
        _READ[(text, dimension)] = value
    return value


def _read_quantity(text, dimension: str, where: str) -> float:
    place = f"{where}: " if where else ""
    if isinstance(text, bool) or text is None or isinstance(text, (dict, list)):
        raise InputError(
            f"{place}expected a {dimension} quantity such as {example(dimension)}, got {text!r}"
        )
    if isinstance(text, (int, float)):
        text = repr(text)
    match = _QUANTITY.match(_normal_text(str(text)))
    if not match:
        raise InputError(
            f"{place}cannot read {text!r} as a quantity; write a number and a unit, "
            f"e.g. {example(dimension)}"
        )
    value = read_number(match.group(1))
    unit = _normal_unit(match.group(2))
    if not math.isfinite(value):
        raise InputError(f"{place}{text!r} is not a finite number")
    if unit in ("", "1"):
        if dimension == "dimensionless":
            return value
        raise InputError(
            f"{place}{text!r} has no unit; write it with a {dimension} unit, "
            f"e.g. {example(dimension)}"
        )
    if dimension == "dimensionless":
        raise InputError(f"{place}{text!r} should be a plain number without a unit")
    if unit in UNITS:
        unit_dimension, factor = UNITS[unit]
    else:
        unit_dimension, factor = _pint_unit(unit, dimension, text, place)
    if unit_dimension == "sheet density" and dimension == "density":
        raise InputError(
            f"{place}{text!r} is a sheet density (per area); sheet densities (cm^-2) go "
            "under stated: electron_sheet_density, hole_sheet_density or net_sheet_density "
            "of a 2D calculation (structure: {dimensionality: 2}, or a 2D material); for "
            f"this key give the volume density, e.g. {example(dimension)}"
        )
    if unit_dimension == "line density" and dimension != "line density":
        raise InputError(
            f"{place}{text!r} is a line density (per length); line densities (cm^-1) go "
            "under stated: electron_line_density or hole_line_density of a 1D calculation "
            "(structure: {dimensionality: 1}); for this key give a "
            f"{dimension}, e.g. {example(dimension)}"
        )
    if unit_dimension != dimension:
        raise InputError(
            f"{place}{text!r} has a unit of {unit_dimension} where {dimension} is "
            f"expected; write e.g. {example(dimension)}"
        )
    return value * factor


def _pint_unit(unit: str, dimension: str, text, place: str):
    """(dimension, factor to SI) of a unit outside the table, read by pint."""
    if not re.match(_UNIT_GATE, unit) or unit.count("(") > 2:
        raise InputError(
            f"{place}cannot read the unit {unit!r} in {text!r}; write a unit such "
            f"as {example(dimension)}"
        )
    sheet = unit.endswith("/sq")
    core = unit[:-3] if sheet else unit
    if "sq" in re.findall(_NAME, core):
        raise InputError(
            f"{place}'sq' in {text!r}: ohms per square end a sheet resistance "
            "only, e.g. '250 ohm/sq'"
        )
    registry = _registry()
    try:
        for name in set(re.findall(_NAME, core)):
            if registry.parse_units(name).dimensionless:
                # turn, degree, pi, percent ... would silently scale the number
                raise InputError(
                    f"{place}{text!r}: the unit {name!r} is a pure number; write "
                    f"the value as a plain number times a {dimension} unit, e.g. "
                    f"{example(dimension)}"
                )
        quantity = registry.Quantity(
            1.0, registry.parse_units(re.sub(_TRAILING_POWER, r"\1**\2", core.replace("^", "**")))
        )
    except InputError:
        raise
    except Exception:  # pint raises several types for an unknown name
        raise InputError(
            f"{place}unknown unit {unit!r} in {text!r}; for a {dimension} write e.g. "
            f"{example(dimension)}"
        ) from None
    for name, (si_text, _) in DIMENSIONS.items():
        if name in ("sheet resistance", "temperature"):
            continue
        si = registry.parse_units(si_text)
        if quantity.dimensionality == si.dimensionality:
            if sheet and name != "resistance":
                raise InputError(
                    f"{place}{text!r}: '/sq' (per square) belongs to a sheet "
                    f"resistance such as '250 ohm/sq'; for a {dimension} write "
                    f"e.g. {example(dimension)}"
                )
            found = "sheet resistance" if sheet else name
            return found, float(quantity.to(si).magnitude)
    raise InputError(
        f"{place}the unit {unit!r} in {text!r} is not a {dimension} unit; write e.g. "
        f"{example(dimension)}"
    )


_REGISTRY: list[Any] = []  # the pint registry, made on first use


def _registry():
    if not _REGISTRY:
        import pint  # slow to import: only for units outside the table

        _REGISTRY.append(pint.UnitRegistry())
    return _REGISTRY[0]


# Bounds of a physically sensible calculation input (SI), with the reason shown when a
# value falls outside: a typo in an exponent or a unit should not be solved silently.
PLAUSIBLE = {
    "temperature": (1.0, 3000.0, "regimecheck solves 1 K to 3000 K (silicon melts at 1687 K)"),
    "density": (0.0, 1e29, "no semiconductor has more than ~1e23 atoms per cm^3"),
    # signed: a zero-gap sheet's net density n - p may be negative
    "sheet density": (
        -1e20,
        1e20,
        "a sheet holds far less than 1e16 cm^-2 (a monolayer of atoms is ~1e15 cm^-2)",
    ),
    # a wire: a chain of atoms is ~1e8 cm^-1, so 1e9 cm^-1 is an exponent or unit slip
    "line density": (0.0, 1e11, "a wire holds far less than 1e9 cm^-1 (one atom per 0.1 nm)"),
    "conductance": (0.0, 1e9, "conductances above 1e9 S are not those of a device"),
    "length": (1e-10, 1.0, "lengths between 0.1 nm and 1 m are accepted"),
    "area": (1e-20, 1.0, "cross-sections between 0.01 nm^2 and 1 m^2 are accepted"),
    "field": (0.0, 1e10, "fields above 1e8 V/cm exceed any breakdown field"),
    "voltage": (-1e6, 1e6, "voltages up to 1 MV are accepted"),
    "mobility": (0.0, 1e3, "no measured mobility exceeds 1e7 cm^2/(V*s)"),
    "diffusivity": (0.0, 1e2, "no diffusion coefficient exceeds 1e6 cm^2/s"),
    "velocity": (0.0, 1e7, "carrier velocities stay far below 1e9 cm/s"),
    "energy": (-10 * EV, 10 * EV, "a Fermi level more than 10 eV from a band edge is not physical"),
}


def check_plausible(value: float, dimension: str, text, where: str = "") -> float:
    """Refuse an input far outside anything physical (names the bound and why)."""
    bounds = PLAUSIBLE.get(dimension)
    if bounds and not bounds[0] <= value <= bounds[1]:
        place = f"{where}: " if where else ""
        raise InputError(
            f"{place}{text!r} is not a plausible {dimension}: {bounds[2]}; "
            "check the exponent and the unit"
        )
    return value


_TEMPERATURE = re.compile(rf"^\s*({NUMBER})\s*(K|degC|°C|℃|C)\s*$")


def parse_temperature(text, where: str = "") -> float:
    """Kelvin from "300 K", "27 degC" or "27 °C" (absolute zero and below refused)."""
    # (kept apart from parse_quantity's readings in the temperature dimension)
    return _kept(_read_temperature, text, "temperature text", where)


def _read_temperature(text, _: str, where: str) -> float:
    place = f"{where}: " if where else ""
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        raise InputError(f"{place}{text!r} has no unit; write e.g. '300 K' or '27 degC'")
    normal = _normal_text(str(text))
    match = _TEMPERATURE.match(normal)
    if not match and read_number(normal) is not None:
        raise InputError(f"{place}{text!r} has no unit; write e.g. '300 K' or '27 degC'")
    if not match:
        raise InputError(
            f"{place}cannot read {text!r} as a temperature; write e.g. '300 K' or '27 degC'"
        )
    value = read_number(match.group(1))
    kelvin = value if match.group(2) == "K" else value + 273.15
    if not math.isfinite(kelvin) or kelvin <= 0:
        raise InputError(
            f"{place}{text!r} is at or below absolute zero; give a temperature above 0 K"
        )
    return kelvin


def example(dimension: str) -> str:
    if dimension in DIMENSIONS:
        return f"'{DIMENSIONS[dimension][1]}'"
    for unit, (dim, _) in UNITS.items():
        if dim == dimension:
            return f"'1 {unit}'"
    return "a plain number"
