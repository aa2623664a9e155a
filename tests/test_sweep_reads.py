"""A sweep's chunks rule only the rules that may fire on its grid and compute only what
those read (evaluate.sweep_rules): a rule whose assumption no cell can make fires nowhere
and reads nothing.  Pruning must change no cell of any rule: the masks and worst cells of
a pruned run are those of a run of every rule over every quantity."""

from pathlib import Path

import numpy as np
import pytest

from checker.engine.regime import rulebook, state_values, sweep
from checker.engine.run import check_calculations
from checker.inputs.calculation_file import parse_calculations

ROOT = Path(__file__).resolve().parents[1]

# a grid stating numbers many rules compare (a Hall density, a mobility, a resistivity)
STATED = """name: stated numbers over a grid
material: Si
temperature: {from: 220 K, to: 420 K, steps: 7}
doping:
  donors: {P: {from: 1e15 cm-3, to: 1e20 cm-3, steps: 9}}
  acceptors: {B: 3e15 cm-3}
structure: {length: 2 um, cross_section: 1 um^2}
stated:
  hall_density: 1e17 cm-3
  electron_mobility: 1200 cm^2/(V*s)
  resistivity: 0.05 ohm*cm
assumes: [non-degenerate, full-ionization, einstein-relation]
"""
PLAIN = STATED.split("stated:")[0] + "assumes: [non-degenerate]\n"
# a short bar whose conductance and mean free path are stated (the Landauer and the
# mean-free-path rules read the carriers' velocities)
CONDUCTOR = STATED.split("stated:")[0] + (
    "stated: {conductance: 2 mS, mean_free_path: 40 nm}\nassumes: [diffusive]\n"
)


def _sweep(text, name="grid.yaml"):
    read = parse_calculations(text, name)
    assert not read.errors, read.errors
    (calc,) = read.calculations
    return calc


def _example_sweep():
    path = ROOT / "examples" / "lw3_corner_sweep.yaml"
    return _sweep(path.read_text(encoding="utf-8"), str(path))


@pytest.mark.parametrize(
    "make",
    [lambda: _sweep(STATED), lambda: _sweep(PLAIN), lambda: _sweep(CONDUCTOR), _example_sweep],
)
def test_pruned_chunks_rule_every_cell_as_full_ones(make, monkeypatch):
    monkeypatch.setattr(sweep, "CHUNK", 16)  # several chunks, and a short last one
    calc = make()
    rules = rulebook.load_rules()
    report = check_calculations([calc]).reports[0]
    grid_points = sweep.grid(calc)
    ruled, reads = sweep.grid_rules(calc, rules, report.embodied, grid_points)
    assert len(ruled) < len(rules)
    full, _ = sweep.rule_grid(calc, rules, report.embodied, grid_points)
    pruned, _ = sweep.rule_grid(calc, ruled, report.embodied, grid_points, reads=reads)
    assert full, "no rule fires on the grid: nothing compared"
    assert full.keys() == pruned.keys()
    for key, (mask, worst) in full.items():
        np.testing.assert_array_equal(pruned[key][0], mask, err_msg=str(key))
        assert pruned[key][1] == worst, key


def _reads_and_first_cells(text, count):
    """(what the grid's rules read, the values of its first ``count`` cells so pruned)."""
    calc = _sweep(text)
    report = check_calculations([calc]).reports[0]
    grid_points = sweep.grid(calc)
    _, reads = sweep.grid_rules(calc, rulebook.load_rules(), report.embodied, grid_points)
    T, donors, acceptors, _ = grid_points
    at = np.arange(count)
    values, _ = state_values.solve_sweep(
        calc,
        T[at],
        {s: a[at] for s, a in donors.items()},
        {s: a[at] for s, a in acceptors.items()},
        reads,
    )
    return reads, values


def test_the_hall_factors_are_computed_only_where_a_rule_reads_them():
    for text, hall_read in ((STATED, True), (PLAIN, False)):
        reads, values = _reads_and_first_cells(text, 5)
        assert ("n_hall" in reads) is hall_read
        assert bool(np.isfinite(values["rH_n"]).all()) is hall_read
        if hall_read:  # lattice scattering, non-degenerate (1e15 cm^-3, 220 K): 3 pi/8
            # (Sze & Ng, Physics of Semiconductor Devices, 3rd ed. (2007), ch. 1)
            assert values["rH_n"][0] == pytest.approx(3 * np.pi / 8, rel=1e-4)
        else:
            assert np.isnan(values["rH_n"]).all() and np.isnan(values["n_hall"]).all()


def test_the_velocities_are_computed_only_where_a_rule_reads_them():
    for text, read in ((CONDUCTOR, True), (PLAIN, False)):
        reads, values = _reads_and_first_cells(text, 3)
        assert ("lambda_n" in reads or "G_landauer" in reads) is read
        assert bool(np.isfinite(values["vth_n"]).all()) is read


# a p-type grid stating the Fermi level, the hole mobility and D (implications and value
# checks of the other carrier)
P_TYPE = """name: p-type grid
material: GaAs
temperature: {from: 250 K, to: 400 K, steps: 4}
doping:
  acceptors: {Zn: {from: 1e16 cm-3, to: 1e19 cm-3, steps: 5}}
stated:
  ef_minus_ev: -0.05 eV
  hole_mobility: 300 cm^2/(V*s)
  hole_diffusivity: 7 cm^2/s
assumes: [non-degenerate]
"""
# a Kane conduction band, its parabolic shortcut declared
KANE = """name: Kane grid
material: InAs
temperature: {from: 77 K, to: 300 K, steps: 3}
doping:
  donors: {S: {from: 1e15 cm-3, to: 1e18 cm-3, steps: 4}}
assumes: [parabolic-band, non-degenerate, einstein-relation]
"""


def _example_sweeps():
    """Every calculation of the examples that sweeps an axis."""
    from checker.inputs.calculation_file import read_calculation_file

    found = []
    for path in sorted((ROOT / "examples").glob("*.yaml")):
        found += [c for c in read_calculation_file(path).calculations if c.sweep]
    return found


def test_a_probe_solved_for_the_names_it_is_asked_decides_as_a_full_one():
    """grid_rules solves its probe cell for evaluate.probed_names alone: the rules kept and
    the names they read must be those a probe with every quantity gives."""
    from checker.engine.regime import evaluate

    rules = rulebook.load_rules()
    calcs = [_sweep(t) for t in (STATED, PLAIN, CONDUCTOR, P_TYPE, KANE)] + _example_sweeps()
    for calc in calcs:
        embodied = check_calculations([calc]).reports[0].embodied
        grid_points = sweep.grid(calc)
        full = sweep._values_at(calc, grid_points, [0])
        expected = evaluate.sweep_rules(rules, evaluate.Cells.grid(calc, full, 1, embodied))
        assert sweep.grid_rules(calc, rules, embodied, grid_points) == expected, calc.name
