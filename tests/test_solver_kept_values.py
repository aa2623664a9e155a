"""What a solved state keeps from its solve instead of deriving it again: the ionized
dopant densities from the level logs (equilibrium.State.level_logs, evaluated by the
neutrality check at the returned eta), eta_p, and the dopant totals' one-pass sum.

They must be the very numbers the state derives afresh (equilibrium.ionized_density at
the same eta: the same level terms, the same reduction), for one and several species,
several bound levels (4H-SiC's two nitrogen sites), compensation, band-gap narrowing,
a Kane band and zero densities; and, at a few points, the occupancy statistics of Sze &
Ng, Physics of Semiconductor Devices, 3rd ed. (2007), ch. 1, with the band-tail share of
Altermatt et al., J. Appl. Phys. 100, 113715 (2006), in 40-digit mpmath
(tests/reference.py: ionized_fraction).
"""

import dataclasses

import mpmath as mp
import numpy as np
import pytest
from reference import K_B, ionized_fraction

from checker.inputs.material_catalog import resolve_material
from checker.physics import equilibrium

PER_CM3 = 1e6
RNG = np.random.default_rng(20261203)


def _densities(size, low=1e13, high=1e20):
    """Random log-uniform densities (m^-3), a few of them zero."""
    values = 10 ** RNG.uniform(np.log10(low), np.log10(high), size) * PER_CM3
    values[RNG.random(size) < 0.05] = 0.0
    return values


CASES = [
    ("Si", {"P": None}, {}, False),
    ("Si", {"P": None, "As": None}, {"B": None}, False),
    ("Si", {"P": None}, {"B": None}, True),
    ("GaAs", {"Si": None}, {"C": None}, False),
    ("Ge", {}, {"Ga": None}, False),
    ("InAs", {"S": None}, {}, False),
    ("4H-SiC", {"N": None}, {"Al": None}, False),
]


def _solve(name, donors, acceptors, narrowing, shape=(40, 50)):
    material = resolve_material(name)
    size = int(np.prod(shape))
    T = RNG.uniform(30.0, 700.0, size).reshape(shape)
    donors = {s: _densities(size).reshape(shape) for s in donors}
    acceptors = {s: _densities(size).reshape(shape) for s in acceptors}
    return equilibrium.solve(material, T, donors, acceptors, band_gap_narrowing=narrowing)


@pytest.mark.parametrize(("name", "donors", "acceptors", "narrowing"), CASES)
def test_kept_ionized_densities_are_the_fresh_ones_to_the_bit(name, donors, acceptors, narrowing):
    state = _solve(name, donors, acceptors, narrowing)
    assert state.level_logs is not None
    fresh = dataclasses.replace(state, level_logs=None)
    for kept, again in (
        (state.donors_ionized, fresh.donors_ionized),
        (state.acceptors_ionized, fresh.acceptors_ionized),
    ):
        assert list(kept) == list(again)
        for species in kept:
            assert kept[species].shape == state.T.shape
            np.testing.assert_array_equal(kept[species], again[species])
    np.testing.assert_array_equal(state.donors_ionized_total, fresh.donors_ionized_total)
    np.testing.assert_array_equal(state.acceptor_fraction, fresh.acceptor_fraction)


@pytest.mark.parametrize(("name", "donors", "acceptors", "narrowing"), CASES)
def test_kept_eta_p_and_totals_are_the_properties_to_the_bit(name, donors, acceptors, narrowing):
    """eta_p = -eta_n - E_g/kT (E_g with any narrowing); totals 0 + each species in turn."""
    state = _solve(name, donors, acceptors, narrowing)
    fresh = dataclasses.replace(state, level_logs=None)
    assert "eta_p" in state.__dict__ and "eta_p" not in fresh.__dict__
    np.testing.assert_array_equal(state.eta_p, -fresh.eta_n - fresh.Eg / fresh.kT)
    np.testing.assert_array_equal(fresh.eta_p, state.eta_p)
    for group, total in (
        (state.donors, state.donors_total),
        (state.acceptors, state.acceptors_total),
    ):
        expected = np.zeros(state.T.shape)
        for density in group.values():
            expected = expected + density
        np.testing.assert_array_equal(total, expected)
        assert total.shape == state.T.shape


def test_a_total_of_negative_zero_is_zero_as_before():
    """0.0 + (-0.0) is 0.0 (IEEE 754 round-to-nearest): the one-pass total keeps it so."""
    state = equilibrium.solve(resolve_material("Si"), np.array([300.0]), {"P": np.array([-0.0])})
    assert np.signbit(state.donors["P"][0])  # (kept as given)
    assert not np.signbit(state.donors_total[0])


def test_a_species_of_two_levels_reads_both_rows():
    state = _solve("4H-SiC", {"N": None}, {"Al": None}, False, shape=(300,))
    assert len(state.material.dopant("N").bound_levels()) == 2
    assert state.level_logs.shape == (
        2 + len(state.material.dopant("Al").bound_levels()),
        300,
    )


@pytest.mark.parametrize(("name", "donor", "acceptor"), [("Si", "P", "B"), ("4H-SiC", "N", "Al")])
def test_kept_ionized_densities_against_mpmath(name, donor, acceptor):
    """N^ion = N sum_k s_k [1 - b + b/(1 + g_k e^(eta + E_k(N)/kT))] (Sze & Ng 2007 ch. 1;
    b(N), E(N): Altermatt et al. 2006) at the solved eta, in 40 digits."""
    material = resolve_material(name)
    T = np.array([40.0, 120.0, 300.0, 450.0])
    nd = np.array([1e15, 3e17, 5e18, 2e16]) * PER_CM3
    na = np.array([1e14, 1e16, 1e15, 5e16]) * PER_CM3
    state = equilibrium.solve(material, T, {donor: nd}, {acceptor: na})
    with mp.workdps(40):
        for k in range(T.size):
            kT = mp.mpf(K_B) * mp.mpf(T[k])
            for species, density, eta, kept in (
                (donor, nd[k], state.eta_n[k], state.donors_ionized[donor][k]),
                (acceptor, na[k], state.eta_p[k], state.acceptors_ionized[acceptor][k]),
            ):
                dopant = material.dopant(species)
                exact = mp.mpf(density) * ionized_fraction(dopant, mp.mpf(eta), kT, mp.mpf(density))
                assert abs(kept / exact - 1) < 1e-13
