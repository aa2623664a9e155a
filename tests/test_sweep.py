"""Sweeps: boundaries agree with an independent solve; bad ranges are input errors
(grid cells against single points: tests/test_pipeline.py)."""

import subprocess
import sys

import numpy as np
import pytest
from reference import K_B, ionized_fraction, reference_solve

from checker import load_material
from checker.engine.regime import sweep
from checker.engine.run import check_calculations, check_paths
from checker.inputs.calculation_file import read_calculation_file
from checker.report.sweep_text import boundary_lines

ONE_AXIS = """name: doping sweep
material: Si
temperature: 300 K
doping:
  donors: {P: {from: 1e16 cm-3, to: 1e20 cm-3, steps: 41}}
assumes: [non-degenerate, full-ionization]
"""
TWO_AXES = """name: window
material: Si
temperature: {from: 200 K, to: 450 K, steps: 6}
doping:
  donors: {P: {from: 1e14 cm-3, to: 1e20 cm-3, steps: 13}}
  acceptors: {B: 1e15 cm-3}
assumes: [non-degenerate, full-ionization, einstein-relation, extrinsic, no-compensation]
formulas:
  - D_n = mu_n*k*T/q
"""


def _calc(tmp_path, text):
    path = tmp_path / "sweep.yaml"
    path.write_text(text)
    read = read_calculation_file(path)
    assert not read.errors, read.errors
    return read.calculations[0]


def test_boundary_matches_single_points_and_an_independent_solve(tmp_path):
    calc = _calc(tmp_path, ONE_AXIS)
    (finding,) = [f for f in check_calculations([calc]).reports[0].findings if f.rule == "STAT01"]
    values = calc.sweep[0].values
    text = boundary_lines(finding.sweep)[0]
    assert text.startswith("fails for N_D(P) ≥ ") and text.endswith(" cm⁻³")
    shown = float(text.split("≥ ")[1].split()[0]) * 1e6
    first = int(np.searchsorted(values, shown))  # the first failing grid point
    silicon = load_material("Si")
    # the 3kT rule (Sze & Ng 2007, ch. 1) at the 40-digit solve: eta crosses -3 between
    # the grid points, and the interpolated edge is where it does (bisection, 1 %)
    assert reference_solve(silicon, 300.0, {"P": values[first]}, {}) > -3
    assert reference_solve(silicon, 300.0, {"P": values[first - 1]}, {}) < -3
    low, high = np.log(values[first - 1]), np.log(values[first])
    for _ in range(30):
        middle = (low + high) / 2
        if reference_solve(silicon, 300.0, {"P": float(np.exp(middle))}, {}) > -3:
            high = middle
        else:
            low = middle
    assert shown == pytest.approx(float(np.exp(low)), rel=0.01)
    T, donors, acceptors, _ = sweep.grid(calc)
    for index, fires in ((first, True), (first - 1, False)):
        point = sweep.point(calc, T, donors, acceptors, index)
        rules = {f.rule for f in check_calculations([point]).reports[0].findings}
        assert ("STAT01" in rules) is fires


def test_the_mott_edge_is_exact_and_smooth_edges_are_interpolated(tmp_path):
    """DOPE02 switches at the Mott density (3.74e18 cm-3 for Si:P, Rosenbaum et al., Phys.
    Rev. B 27, 7509 (1983)): its edge is that density exactly.  ION01's ionized fraction
    passes smoothly through its 95 % threshold on both sides (Altermatt et al., J. Appl.
    Phys. 100, 113715 (2006): lowest near 2e18 cm-3, complete again towards 1e20), so both
    its edges are interpolated: the independent 40-digit solve puts 95 % ionization there."""
    calc = _calc(tmp_path, ONE_AXIS)
    report = check_calculations([calc]).reports[0]
    (dope,) = [f for f in report.findings if f.rule == "DOPE02"]
    assert boundary_lines(dope.sweep) == ["fails for N_D(P) ≥ 3.74e+18 cm⁻³"]
    (ion,) = [f for f in report.findings if f.rule == "ION01"]
    text = boundary_lines(ion.sweep)[0]
    low = float(text.split("for ")[1].split()[0])
    high = float(text.split("≤ ")[-1].split()[0])
    silicon = load_material("Si")
    kT = K_B * 300.0
    for edge in (low, high):
        eta = reference_solve(silicon, 300.0, {"P": edge * 1e6}, {})
        fraction = float(ionized_fraction(silicon.dopant("P"), eta, kT, edge * 1e6))
        assert fraction == pytest.approx(0.95, abs=0.005)  # 3 printed digits of the edge


def test_worst_point_is_a_full_single_point_finding(tmp_path):
    calc = _calc(tmp_path, TWO_AXES)
    report = check_calculations([calc]).reports[0]
    (stat02,) = [f for f in report.findings if f.rule == "STAT02"]
    assert stat02.formula == "D_n = mu_n*k*T/q" and stat02.corrections
    assert 0 < stat02.sweep.failing_fraction < 1
    assert report.sweep["points"] == 6 * 13


@pytest.mark.parametrize(
    "bad, expected",
    [
        (
            "steps: 41}}",
            "steps: 1}}",
        ),
        ("from: 1e16 cm-3", "from: 0 cm-3"),
        ("{from: 1e16 cm-3, to: 1e20 cm-3, steps: 41}", "{from: 1e16 cm-3, steps: 41}"),
    ],
)
def test_bad_ranges_are_input_errors(tmp_path, bad, expected):
    path = tmp_path / "bad.yaml"
    path.write_text(
        ONE_AXIS.replace(bad, expected) + "---\nname: fine\nmaterial: Si\ntemperature: 300 K\n"
    )
    done = subprocess.run(
        [sys.executable, "-m", "checker.cli", "check", str(path)], capture_output=True, text=True
    )
    assert done.returncode == 2 and "Traceback" not in done.stderr + done.stdout
    assert f"{path}:5:" in done.stdout and "fine" in done.stdout


def test_three_axes_are_refused(tmp_path):
    path = tmp_path / "three.yaml"
    path.write_text(
        TWO_AXES.replace("B: 1e15 cm-3", "B: {from: 1e14 cm-3, to: 1e15 cm-3, steps: 3}")
    )
    result = check_paths([str(path)])
    assert "at most two axes" in result.input_errors[0]
