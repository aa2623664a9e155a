"""Transport over a temperature x doping grid, where the package evaluates what depends on
one axis once per distinct value and lays it back over the grid: every point must carry
the value of its own doping or temperature.

The conduction credit of a mobility given per dopant atom (silicon's B and P fits follow
the conversion standard ASTM F723, which counts every dopant as a carrier at 23 degC) is
solved once per distinct doping; the lattice-limited mobility mu0 (N = 0) once per
distinct temperature."""

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


def arora_lattice(T, carrier):
    """mu_min + mu_0 of Arora, Hauser and Roulston, IEEE TED 29, 292 (1982), Table I (the
    N = 0 limit of their fit), cm^2/(V s): electrons 88 Tn^-0.57 + 7.4e8 T^-2.33, holes
    54.3 Tn^-0.57 + 1.36e8 T^-2.23, Tn = T/300 K."""
    tn = np.asarray(T) / 300.0
    if carrier == "n":
        return 88.0 * tn**-0.57 + 7.4e8 * np.asarray(T) ** -2.33
    return 54.3 * tn**-0.57 + 1.36e8 * np.asarray(T) ** -2.23


def test_lattice_mobility_depends_on_temperature_alone():
    """mu0 (the highest of the material's published fits at N = 0) is the same at every
    doping of a temperature, and at least Arora et al.'s lattice mobility there (one of
    the fits it is the highest of)."""
    result = grid_transport()
    for x in ("n", "p"):
        mu0 = np.asarray(result[f"mu0_{x}"]).reshape(len(TEMPERATURES), len(PHOSPHORUS)) * 1e4
        assert np.all(mu0 == mu0[:, :1])  # one value per temperature
        floor = arora_lattice(np.array(TEMPERATURES), x)
        assert np.all(mu0[:, 0] >= floor * (1 - 1e-12))
        # the fits agree within 60 % at N = 0 (common practice (no source))
        assert np.all(mu0[:, 0] <= 1.6 * floor)
