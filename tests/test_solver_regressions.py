"""Solver regressions: deep freeze-out on the acceptor side, wide-gap undoped material
near 1 K, and the regime of undoped material whose densities underflow.

Every point is compared with the independent 40-digit bisection of
``tests/reference.py`` (plain neutrality n + N_A^- = p + N_D^+ with the statistics
of Sze & Ng, Physics of Semiconductor Devices, 3rd ed. (2007), ch. 1), and the
returned residual is checked against a neutrality error computed here in mpmath.
"""

import mpmath as mp
import numpy as np
import pytest
from reference import K_B, ionized_fraction, mp_fermi_half, reference_solve

from checker.inputs.material_catalog import resolve_material
from checker.physics import equilibrium
from checker.physics.carriers import regime_label

PER_CM3 = 1e6

FREEZE_OUT = [("GaN", "Mg", 1e19, T) for T in (15, 20, 30, 40)] + [
    ("4H-SiC", "Al", 1e18, 30),
    ("4H-SiC", "Al", 1e18, 40),
    ("Si", "B", 1e16, 8),
    ("GaAs", "C", 1e16, 4),
]


def _mp_balance(material, T, eta, donors, acceptors):
    """|n + N_A^- - p - N_D^+| / max(sides), in 60-digit arithmetic from eta (ionized
    densities by the statistics written out in tests/reference.py)."""
    with mp.workdps(60):
        kT = mp.mpf(K_B) * T
        eta = mp.mpf(eta)
        eg = mp.mpf(float(material.band_gap(T)))
        neg = mp.mpf(float(material.Nc(T))) * mp_fermi_half(eta)
        pos = mp.mpf(float(material.Nv(T))) * mp_fermi_half(-eta - eg / kT)
        for name, N in acceptors.items():
            neg += N * ionized_fraction(
                material.dopant(name), -eta - eg / kT, kT, sum(acceptors.values())
            )
        for name, N in donors.items():
            pos += N * ionized_fraction(material.dopant(name), eta, kT, sum(donors.values()))
        return float(abs(neg - pos) / max(neg, pos))


@pytest.mark.parametrize("name,species,density_cm3,T", FREEZE_OUT)
def test_acceptor_freeze_out_matches_independent_solve(name, species, density_cm3, T):
    material = resolve_material(name)
    acceptors = {species: density_cm3 * PER_CM3}
    state = equilibrium.solve(
        material, np.array([float(T)]), {}, {k: np.array([v]) for k, v in acceptors.items()}
    )
    reference = reference_solve(material, T, {}, acceptors)
    # a wrong degeneracy in the start value put eta off by ln 2 (p off by sqrt 2)
    assert state.eta_n[0] == pytest.approx(reference, rel=1e-12, abs=1e-9)
    assert state.residual[0] <= 1e-10
    assert _mp_balance(material, T, state.eta_n[0], {}, acceptors) <= 1e-10


@pytest.mark.parametrize(
    "name,T",
    [("GaN", 1.0), ("GaN", 2.0), ("4H-SiC", 1.5), ("4H-SiC", 2.25), ("Si", 1.0), ("GaAs", 1.0)],
)
def test_undoped_wide_gap_near_one_kelvin(name, T):
    material = resolve_material(name)
    state = equilibrium.solve(material, np.array([T]))
    reference = reference_solve(material, T, {}, {})
    # the last Newton step fell below eta's rounding step and a fallback moved the point
    assert state.eta_n[0] == pytest.approx(reference, rel=1e-12)
    assert state.residual[0] <= 1e-10


@pytest.mark.parametrize("T", [2.0, 5.0, 8.0, 300.0])
def test_undoped_silicon_is_intrinsic_at_any_temperature(T):
    # n = p = n_i in undoped material by definition (Sze & Ng 2007, ch. 1), even where
    # the densities underflow in double precision
    state = equilibrium.solve(resolve_material("Si"), np.array([T]))
    assert regime_label(state)[0] == "intrinsic"


def test_residual_is_an_independent_check():
    # the returned residual is the plain neutrality error recomputed from eta: shifting
    # eta by ln 2 must show an error of order one (the mpmath balance says how much)
    material = resolve_material("GaN")
    acceptors = {"Mg": 1e19 * PER_CM3}
    state = equilibrium.solve(
        material, np.array([20.0]), {}, {k: np.array([v]) for k, v in acceptors.items()}
    )
    state.eta_n = state.eta_n - np.log(2.0)
    for key in ("n", "p", "eta_p", "acceptors_ionized"):
        state.__dict__.pop(key, None)
    expected = _mp_balance(material, 20.0, float(state.eta_n[0]), {}, acceptors)
    assert expected > 0.1
    assert equilibrium.charge_balance_error(state)[0] == pytest.approx(expected, rel=1e-6)
