"""The conduction credit of a mobility given per dopant atom (silicon's B and P fits follow
the conversion standard ASTM F723, which counts every dopant as a carrier at 23 degC) over a
temperature x doping grid: the reference-temperature solve is done once per distinct doping
and laid back over the grid, so every point must carry the credit of its own doping."""

import numpy as np
import pytest
from test_rules import CM3, conduction_credit

from checker import carrier_transport, load_material, solve_equilibrium

TEMPERATURES = (250.0, 300.0, 400.0)  # K: each doping repeats at every temperature
PHOSPHORUS = (1e16, 1e17, 1e18)  # cm^-3
BORON = 1e15  # cm^-3, the same at every point: two dopant columns, one of them constant


def grid_transport():
    T = np.repeat(TEMPERATURES, len(PHOSPHORUS))
    P = np.tile(PHOSPHORUS, len(TEMPERATURES)) * CM3
    B = np.full_like(T, BORON * CM3)
    state = solve_equilibrium(load_material("Si"), T, {"P": P}, {"B": B})
    return carrier_transport(state)


def test_every_point_carries_its_own_dopings_credit():
    """1/f at 23 degC against the 40-digit solve (tests/reference.py), per doping, at
    every temperature of the grid (electrons are the majority at every point)."""
    credit = np.asarray(grid_transport()["cond_n"]).reshape(len(TEMPERATURES), len(PHOSPHORUS))
    for column, density in enumerate(PHOSPHORUS):
        expected = conduction_credit({"P": density}, {"B": BORON}, "n")
        assert credit[:, column] == pytest.approx(np.full(len(TEMPERATURES), expected), rel=1e-8)


def test_minority_carrier_gets_no_credit():
    """The credit counts the dopants of the majority carrier only: the holes of n-type
    silicon conduct as free carriers (1) at every point."""
    assert np.all(np.asarray(grid_transport()["cond_p"]) == 1.0)
