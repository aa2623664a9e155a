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
