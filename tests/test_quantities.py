"""Quantity strings: the fast table, pint behind the gate, and the refusals."""

import pytest
import scipy.constants as sc

from checker.errors import InputError
from checker.inputs.quantities import parse_quantity, parse_temperature


@pytest.mark.parametrize(
    "text, dimension, si",
    [
        ("1e17 cm-3", "density", 1e23),
        ("1.0e17 /cm^3", "density", 1e23),
        ("3e23 m^-3", "density", 3e23),
        ("2 um", "length", 2e-6),
        ("5 kV/cm", "field", 5e5),
        ("1350 cm^2/(V*s)", "mobility", 0.135),
        ("0.03 ohm*cm", "resistivity", 3e-4),
        ("45 meV", "energy", 0.045 * sc.e),  # eV from scipy.constants (CODATA)
        ("2 mm^2", "area", 2e-6),
        # outside the table: read by pint after the gate
        ("3 kohm*cm", "resistivity", 30.0),
        ("500 Ω/sq", "sheet resistance", 500.0),
        ("500 Ω/□", "sheet resistance", 500.0),  # the datasheet sign of a square
        ("1.2 kΩ/□", "sheet resistance", 1200.0),
        ("1 MV/m", "field", 1e6),
        ("4 uS/cm", "conductivity", 4e-4),
        ("250 nm", "length", 2.5e-7),
    ],
)
def test_units(text, dimension, si):
    assert parse_quantity(text, dimension) == pytest.approx(si, rel=1e-12)


def test_temperature():
    assert parse_temperature("27 degC") == pytest.approx(300.15)
    assert parse_temperature("300 K") == 300.0
    with pytest.raises(InputError, match="no unit"):
        parse_temperature("300")
    with pytest.raises(InputError, match="absolute zero"):
        parse_temperature("-300 degC")


@pytest.mark.parametrize(
    "text, dimension, message",
    [
        ("1e17", "density", "has no unit.*density unit, e.g. '1e17 cm-3'"),
        (1e17, "density", "has no unit"),
        ("2 um", "area", "unit of length where area is expected"),
        ("9**9**9 m", "length", "cannot read the unit"),
        ("1e999 m", "length", "not a finite number"),
        ("1 furlongs_per_x", "length", "unknown unit|cannot read"),
        ("__import__('os') m", "length", "cannot read"),
        ("2 m/s", "length", "velocity where length is expected"),
    ],
)
def test_refusals(text, dimension, message):
    with pytest.raises(InputError, match=message):
        parse_quantity(text, dimension, "f.yaml:3:5")


def test_a_table_spelling_is_its_own_normal_form():
    # _normal_unit keeps a unit spelled as in the table without normalizing it (start-up:
    # the normalizing patterns are then never compiled); sound only if normalizing would
    # leave every such spelling as it is
    from checker.inputs.quantities import UNITS, _normalized_unit

    assert [unit for unit in UNITS if _normalized_unit(unit) != unit] == []


def test_every_table_unit_agrees_with_pint():
    # pint (an outside unit library) reads each spelling of the fast table, or its plain
    # form where the spelling is trade-only ("/cm^3" for 1/cm^3, "Vs" for V*s): the
    # table's dimension and factor to SI must be pint's
    from checker.inputs.quantities import UNITS, _pint_unit

    for unit, (dimension, factor) in UNITS.items():
        if dimension == "temperature":  # offsets (degC) are read apart from pint
            continue
        plain = ("1" + unit if unit.startswith("/") else unit).replace("Vs", "(V*s)")
        found, si = _pint_unit(plain, dimension, f"1 {plain}", "")
        assert found == dimension, unit
        assert si == pytest.approx(factor, rel=1e-12), unit
