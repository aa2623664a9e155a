"""Sweeps in pieces: the grid's flat order is numpy's, and chunk and thread seams change
no cell (the 3kT rule checked at every cell against an independent 40-digit solve)."""

import numpy as np
import pytest
from test_pipeline import _charge_at
from test_sweep import TWO_AXES
from test_sweep import _calc as sweep_calculation

from checker import load_material
from checker.engine.regime import rulebook, sweep
from checker.engine.run import check_calculations
from checker.physics import equilibrium


def test_grid_points_follow_numpys_meshgrid_order(tmp_path):
    """The grid is computed on indexing; its flat order is np.meshgrid(indexing="ij")
    raveled (numpy's documented C order: the last axis fastest), fixed inputs repeated."""
    calc = sweep_calculation(tmp_path, TWO_AXES)
    T, donors, acceptors, shape = sweep.grid(calc)
    temperatures, densities = (axis.values for axis in calc.sweep)
    T_ref, N_ref = (a.ravel() for a in np.meshgrid(temperatures, densities, indexing="ij"))
    assert shape == (len(temperatures), len(densities)) and T.size == T_ref.size
    np.testing.assert_array_equal(T[np.arange(T.size)], T_ref)
    np.testing.assert_array_equal(donors["P"][: T.size], N_ref)
    np.testing.assert_array_equal(donors["P"][5:40:3], N_ref[5:40:3])
    assert float(T[int(T.size) - 1]) == temperatures[-1]
    fixed = calc.acceptors["B"]  # 1e15 cm^-3 in m^-3, repeated at every cell
    assert fixed == pytest.approx(1e21, rel=1e-12)
    np.testing.assert_array_equal(acceptors["B"][[0, 17, 77]], np.full(3, fixed))


def test_chunk_and_thread_seams_change_no_cell(tmp_path, monkeypatch):
    """78 cells in chunks of 7, each chunk's solve split over threads from 2 points up:
    the 3kT rule (Sze & Ng 2007, ch. 1) fires at exactly the cells where the 40-digit
    neutrality balance at eta_n = -3 is negative (tests/reference.py statistics)."""
    monkeypatch.setattr(sweep, "CHUNK", 7)
    monkeypatch.setattr(equilibrium, "MIN_BLOCK", 2)
    monkeypatch.setattr(equilibrium, "WORKERS", 2)
    calc = sweep_calculation(tmp_path, TWO_AXES)
    report = check_calculations([calc]).reports[0]
    grid_points = sweep.grid(calc)
    masks, _ = sweep.rule_grid(calc, rulebook.load_rules(), report.embodied, grid_points)
    T, donors, acceptors, _ = grid_points
    fires = masks[("STAT01", "n")][0].ravel()
    silicon = load_material("Si")
    expected = [
        _charge_at(silicon, -3, float(T[i]), float(donors["P"][i]), float(acceptors["B"][i])) < 0
        for i in range(T.size)
    ]
    np.testing.assert_array_equal(fires, expected)
    assert 0 < fires.sum() < fires.size  # both sides of 3kT on the grid
