"""Solves at a reference temperature kept across calls (carriers.ReferenceSolves): a
sweep's chunks repeat the same dopings, which are solved at T_0 once, and the kept
fractions are those a fresh solve gives (the credit itself is checked against the
resistivity standard's published values in tests/test_published_physics.py)."""

import numpy as np

from checker import load_material, solve_equilibrium
from checker.physics import carriers, equilibrium

PER_CM3 = 1e6


def _chunks():
    """Two chunks of a temperature x doping grid: the same dopings at other temperatures."""
    doping = np.geomspace(1e14, 1e19, 6) * PER_CM3
    return [(np.repeat(temps, 6), np.tile(doping, 2)) for temps in ([250.0, 300.0], [350, 400])]


def test_a_doping_is_solved_at_the_reference_temperature_once(monkeypatch):
    silicon = load_material("Si")
    states = [solve_equilibrium(silicon, T, {"P": nd}) for T, nd in _chunks()]
    fresh = [carriers.carrier_transport(state)["cond_n"] for state in states]
    solved_points = []
    solve = equilibrium.solve

    def counting(material, T, *args, **kwargs):
        solved_points.append(np.size(T))
        return solve(material, T, *args, **kwargs)

    monkeypatch.setattr(equilibrium, "solve", counting)
    kept = carriers.ReferenceSolves()
    reused = [carriers.carrier_transport(state, reference=kept)["cond_n"] for state in states]
    assert solved_points == [6]  # six distinct dopings, solved for the first chunk only
    for one, other in zip(fresh, reused, strict=True):
        np.testing.assert_array_equal(one, other)


def test_a_sweep_keeps_its_reference_solves_across_chunks(tmp_path, monkeypatch):
    """A grid in chunks of 7 cells: every chunk's carrier transport reads one kept set of
    reference-temperature solves, and each distinct doping is solved at T_0 once."""
    from test_sweep import TWO_AXES
    from test_sweep import _calc as sweep_calculation

    from checker.engine.regime import rulebook, sweep
    from checker.engine.run import check_calculations

    monkeypatch.setattr(sweep, "CHUNK", 7)
    calc = sweep_calculation(tmp_path, TWO_AXES)
    report = check_calculations([calc]).reports[0]
    kept_sets = []
    ionized_fraction = carriers.ReferenceSolves.ionized_fraction

    def recording(self, *args, **kwargs):
        kept_sets.append(id(self))
        return ionized_fraction(self, *args, **kwargs)

    monkeypatch.setattr(carriers.ReferenceSolves, "ionized_fraction", recording)
    grid_points = sweep.grid(calc)
    solved_points = []
    solve = equilibrium.solve

    def counting_reference(material, T, *args, **kwargs):
        if np.all(np.asarray(T) == 296.15):  # the standard's 23 degC (ASTM F723)
            solved_points.append(np.size(T))
        return solve(material, T, *args, **kwargs)

    monkeypatch.setattr(equilibrium, "solve", counting_reference)
    sweep.rule_grid(calc, rulebook.load_rules(), report.embodied, grid_points)
    chunks = -(-grid_points[0].size // 7)
    assert len(kept_sets) >= chunks and len(set(kept_sets)) == 1
    _, donors, _, _ = grid_points
    distinct = np.unique(donors["P"][: grid_points[0].size]).size
    assert sum(solved_points) == distinct  # each doping solved at T_0 once


def test_chunks_holding_the_same_doping_rows_share_their_fractions(monkeypatch):
    """Chunks of a grid whose temperature runs slowest hold the same doping rows in the same
    order: the second chunk takes the first one's fractions whole (no per-row look-up),
    and they are those a fresh set of reference solves gives."""
    silicon = load_material("Si")
    states = [solve_equilibrium(silicon, T, {"P": nd}) for T, nd in _chunks()]
    rows = [carriers.distinct_points([np.ravel(state.donors["P"])], 12) for state in states]
    made = []
    fractions = carriers.ReferenceSolves._fractions

    def counting(self, *args, **kwargs):
        made.append(1)
        return fractions(self, *args, **kwargs)

    monkeypatch.setattr(carriers.ReferenceSolves, "_fractions", counting)
    kept = carriers.ReferenceSolves()
    shared = [kept.ionized_fraction(s, 296.15, 0, r) for s, r in zip(states, rows, strict=True)]
    assert made == [1]
    for state, one in zip(states, shared, strict=True):
        fresh = carriers.ReferenceSolves().ionized_fraction(state, 296.15, 0)
        np.testing.assert_array_equal(one, fresh)
        assert np.all((one > 0) & (one <= 1))  # a fraction
