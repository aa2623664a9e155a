"""The check report's per-point summaries (PointSummaries) give each calculation the fields
trade_summary gives that point alone; the Caughey–Thomas velocity, computed there as one
column over all points, equals the field's own point-by-point reader to the bit and the
published form v = μE / (1 + (μE/v_sat)^β)^(1/β) (Caughey & Thomas, Proc. IEEE 55, 2192
(1967)) evaluated here in plain Python floats.
"""

import math

import pytest

from checker.engine.regime import state_values
from checker.engine.regime.trade_summary import PointSummaries, trade_summary
from checker.inputs.calculation_file import parse_calculations

# invented operating points: fields from none to beyond saturation, three
# materials, majority electrons and holes
POINTS = [
    ("Si", 300, "donors: {P: 1e15 cm-3}", "field: 20 kV/cm"),
    ("Si", 300, "donors: {P: 1e17 cm-3}", ""),
    ("Si", 250, "acceptors: {B: 1e16 cm-3}", "field: 3 kV/cm"),
    ("Si", 400, "donors: {As: 1e18 cm-3}", "field: 150 kV/cm"),
    ("GaAs", 300, "donors: {Si: 1e16 cm-3}", "field: 0.5 kV/cm"),
    ("GaAs", 300, "donors: {Si: 1e17 cm-3}, acceptors: {C: 1e15 cm-3}", "field: 0 kV/cm"),
    ("Ge", 300, "acceptors: {Ga: 1e15 cm-3}", "field: 1 kV/cm"),
]
TEXT = "---\n".join(
    f"name: point {i}\nmaterial: {material}\ntemperature: {T} K\ndoping: {{{doping}}}\n"
    + (f"structure: {{{structure}}}\n" if structure else "")
    for i, (material, T, doping, structure) in enumerate(POINTS)
)


@pytest.fixture(scope="module")
def values():
    read = parse_calculations(TEXT, "points.yaml")
    assert not read.errors, read.errors
    solved, errors, _ = state_values.solve_all(read.calculations)
    assert not errors
    return solved


def test_each_point_as_summarized_alone(values):
    summaries = PointSummaries(values)
    for index in range(len(POINTS)):
        assert summaries[index] == trade_summary(values, index), index


def test_velocity_at_the_field_against_the_published_form(values):
    summaries = PointSummaries(values)
    checked = 0
    for index in range(len(POINTS)):
        for x in ("n", "p"):
            shown = summaries[index][f"v_{x}_at_field_cm_per_s"]
            mu, E = float(values[f"used_mu_{x}"][index]), float(values["field"][index])
            v_sat, beta = float(values[f"vsat_{x}"][index]), float(values[f"beta_{x}"][index])
            if not all(math.isfinite(v) for v in (mu, E, v_sat, beta)):
                assert shown is None, (index, x)
                continue
            low = mu * abs(E)
            expected = low / (1 + (low / v_sat) ** beta) ** (1 / beta) * 100  # m/s -> cm/s
            assert shown == pytest.approx(expected, rel=1e-13), (index, x)
            checked += 1
    assert checked >= 8
