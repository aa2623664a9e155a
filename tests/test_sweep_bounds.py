"""Bounds on what a sweep keeps between chunks, and a deferred quantity that is not given.

ReferenceSolves keeps the ionized fractions of doping rows solved at the mobility fit's
reference temperature; on a grid of ever new rows (donors x acceptors) it must not grow
without bound, and a row solved again after its set was dropped must give the same
fraction.  The check: against the equilibrium solve of each row at T_0 directly (the
fraction is the solve's own quantity, a pointwise function of the row)."""

import numpy as np

from checker import load_material
from checker.engine.regime import state_values
from checker.physics import carriers
from checker.physics.equilibrium import solve


def _state(nd, na):
    return solve(load_material("Si"), np.full(nd.size, 350.0), {"P": nd}, {"B": na})


def test_reference_solves_stay_bounded_and_equal_to_direct_solves(monkeypatch):
    monkeypatch.setattr(carriers.ReferenceSolves, "_KEPT_ROWS", 50)
    monkeypatch.setattr(carriers.ReferenceSolves, "_KEPT_SETS", 2)
    kept = carriers.ReferenceSolves()
    rng = np.random.default_rng(5)
    for _ in range(6):  # chunks of new rows, then a chunk repeating the first rows
        nd = 10 ** rng.uniform(21, 25, 40)
        na = 10 ** rng.uniform(20, 24, 40)
        state = _state(nd, na)
        got = kept.ionized_fraction(state, 300.0, 0)
        direct = solve(load_material("Si"), np.full(nd.size, 300.0), {"P": nd}, {"B": na})
        np.testing.assert_array_equal(got, direct.donor_fraction)
        assert len(kept._sets) <= 2
        assert all(len(rows) <= 50 for rows in kept._rows.values())


def test_a_deferred_name_not_given_is_unknown_not_an_error():
    values = state_values.LazyValues(4)
    values.defer(["a", "b"], state_values.Deferred(lambda _: {"a": np.ones(4)}))
    np.testing.assert_array_equal(values["a"], np.ones(4))
    assert np.isnan(values["b"]).all() and values["b"].shape == (4,)
    assert not values.pending("b")
