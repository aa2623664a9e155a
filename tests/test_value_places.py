"""A refused value is named by its place: 'file:line:column: key.path: what is wrong',
the column that of the value's first character (as an editor counts it: line and column
from 1).  The expected messages are written out here from the text of each case."""

import pytest

from checker.inputs.calculation_file import parse_calculations

HEAD = "name: x\nmaterial: Si\n"

CASES = {
    "negative density": (
        HEAD + "temperature: 300 K\ndoping:\n  donors: {P: -1e16 cm-3}\n",
        "f.yaml:5:15: doping.donors.P: density '-1e16 cm-3' is negative; give a value >= 0",
    ),
    "implausible density": (
        HEAD + "temperature: 300 K\ndoping:\n  donors:\n    P: 1e30 cm-3\n",
        "f.yaml:6:8: doping.donors.P: '1e30 cm-3' is not a plausible density: ",
    ),
    "dopant of the other kind": (
        HEAD + "temperature: 300 K\ndoping:\n  donors: {B: 1e16 cm-3}\n",
        "f.yaml:5:15: doping.donors.B: B is a acceptor in Si; move it under acceptors",
    ),
    "unreadable density": (
        HEAD + "temperature: 300 K\ndoping:\n  acceptors: {B: lots}\n",
        "f.yaml:5:18: doping.acceptors.B: cannot read 'lots' as a quantity; write a number "
        "and a unit, e.g. ",
    ),
    "temperature without unit": (
        HEAD + "temperature: 300\n",
        "f.yaml:3:14: temperature: '300' has no unit; write e.g. '300 K' or '27 degC'",
    ),
    "temperature below zero": (
        HEAD + "temperature:   -5 K\n",
        "f.yaml:3:16: temperature: '-5 K' is at or below absolute zero; give a temperature "
        "above 0 K",
    ),
    "negative mobility": (
        HEAD + "temperature: 300 K\nstated:\n  electron_mobility: -5 cm^2/(V*s)\n",
        "f.yaml:5:22: stated.electron_mobility: '-5 cm^2/(V*s)' is negative; give a value >= 0",
    ),
    "dimensionality": (
        HEAD + "temperature: 300 K\nstructure: {dimensionality: 4}\n",
        "f.yaml:4:29: structure.dimensionality: dimensionality must be 3, 2 or 1, got '4'",
    ),
}


@pytest.mark.parametrize("name", CASES)
def test_a_refused_value_is_named_by_its_place(name):
    text, expected = CASES[name]
    errors = parse_calculations(text, "f.yaml").errors
    assert any(message.startswith(expected) for message in errors), errors
