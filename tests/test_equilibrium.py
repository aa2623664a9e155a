"""Equilibrium solver against an independent multiple-precision solve and
published handbook values."""

import math
import os
import warnings

import mpmath as mp
import numpy as np
import pytest
import reference_cache
import scipy.constants as sc
from conftest import PER_CM3
from reference import mp_fermi_half

from checker import (
    InputError,
    UnknownDopantError,
    UnknownMaterialError,
    load_material,
    solve_equilibrium,
)

K_B, Q = sc.k, sc.e


CASES = reference_cache.EQUILIBRIUM_CASES


@pytest.mark.parametrize(
    "name,T,donors,acceptors,regime", CASES, ids=[f"{c[0]}-{c[1]}K-{c[4]}" for c in CASES]
)
def test_matches_independent_solve(name, T, donors, acceptors, regime):
    """eta_n against the 40-digit bisection solve of tests/reference.py (cached in
    tests/data/reference_values.json) and n against N_c F_1/2 (mpmath) there."""
    material = load_material(name)
    d = {k: v * PER_CM3 for k, v in donors.items()}
    a = {k: v * PER_CM3 for k, v in acceptors.items()}
    state = solve_equilibrium(material, T, d, a)
    reference = reference_cache.equilibrium_entry(material, name, T, donors, acceptors)
    expected = reference["eta_n"]
    assert float(state.eta_n) == pytest.approx(expected, rel=1e-10, abs=1e-10)
    assert float(state.residual) <= 1e-10
    # n and p are consistent with eta through F_1/2 (mpmath)
    if reference["n"] > 1e-300:
        assert float(state.n) == pytest.approx(reference["n"], rel=1e-9 * max(1, abs(expected)))


# a quick case of each kind: extrinsic, compensated freeze-out, deep compensated acceptor
RECOMPUTED = [CASES[1], CASES[9], CASES[21]]


@pytest.mark.slow
@pytest.mark.parametrize(
    "name,T,donors,acceptors,regime", RECOMPUTED, ids=[f"{c[0]}-{c[1]}K-{c[4]}" for c in RECOMPUTED]
)
def test_reference_cache_matches_the_independent_solve(name, T, donors, acceptors, regime):
    """The cached reference is what the 40-digit solve (tests/reference.py) gives today."""
    material = load_material(name)
    entry = reference_cache.load()["equilibrium"][
        reference_cache.case_key(name, T, donors, acceptors)
    ]
    assert entry["material"] == reference_cache.material_inputs(
        material, float(T), {**donors, **acceptors}
    )
    fresh = reference_cache.equilibrium_value(material, T, donors, acceptors)
    assert entry["eta_n"] == pytest.approx(fresh["eta_n"], rel=1e-15, abs=1e-15)
    assert entry["n"] == pytest.approx(fresh["n"], rel=1e-14)


def test_silicon_intrinsic_density_at_300K():
    # Handbook spread: 9.65e9 (Altermatt et al., J. Appl. Phys. 93, 1598 (2003))
    # to 1.08e10 cm^-3 (Green, J. Appl. Phys. 67, 2944 (1990)); Sproul & Green
    # 1991 give 1.00e10.  The undoped solve must land inside that spread.
    # (1 % below the low end allowed: the Thurmond gap used here is 0.3 meV above Pässler's)
    state = solve_equilibrium("Si", 300.0)
    n = float(state.n) / PER_CM3
    assert 9.55e9 <= n <= 1.08e10
    assert float(state.ni) / PER_CM3 == pytest.approx(n, rel=1e-3)
    assert float(state.n) == pytest.approx(float(state.p), rel=1e-9)


def test_thermal_voltage_at_300K_against_scipy():
    from checker.physics.constants import thermal_voltage

    # scipy.constants (CODATA): k/e * 300 K = 25.852 mV
    assert thermal_voltage(300.0) == pytest.approx(sc.k * 300 / sc.e, rel=1e-15)
    assert thermal_voltage(300.0) == pytest.approx(0.025852, abs=5e-7)


def test_three_kT_rule_marks_the_boltzmann_limit():
    # The "E_C - E_F >= 3 kT" rule for non-degeneracy is common practice (no source);
    # at eta = -3 the Boltzmann density is 1.74 % above Fermi-Dirac (mpmath).
    state = solve_equilibrium("Si", 300.0, {"P": 1e18 * PER_CM3})
    eta = float(state.eta_n)
    boltzmann = float(state.Nc) * math.exp(eta)
    excess = boltzmann / float(state.n) - 1
    reference = float(mp.exp(eta) / mp_fermi_half(mp.mpf(eta)) - 1)
    assert excess == pytest.approx(reference, rel=1e-9)
    assert -4 < eta < -3 and 0.005 < excess < 0.0174


def test_metallic_regime_is_flagged_and_ionization_completes_smoothly():
    # Above the Mott density (Si:P 3.74e18 cm^-3, Rosenbaum et al., Phys. Rev. B 27, 7509
    # (1983)) the point is flagged metallic; ionization completes through the transition
    # (Altermatt et al., J. Appl. Phys. 100, 113715 (2006): the band-tail share b(N) -> 0),
    # not by a switch at the Mott density.
    state = solve_equilibrium("Si", 300.0, {"P": 1e19 * PER_CM3})
    assert bool(state.metallic)
    assert 0.7 < float(state.donor_fraction) < 1.0
    far = solve_equilibrium("Si", 300.0, {"P": 1e20 * PER_CM3})
    assert float(far.donor_fraction) > 0.97
    below = solve_equilibrium("Si", 300.0, {"P": 1e18 * PER_CM3})
    assert not bool(below.metallic)


def test_converges_everywhere_on_a_wide_grid():
    """T in [1, 1500] K, densities 0 and 1e10..1e22 cm^-3, compensated and not."""
    T = np.geomspace(1.0, 1500.0, 30)[:, None, None]
    N = np.concatenate([[0.0], np.geomspace(1e10, 1e22, 19)]) * PER_CM3
    nd, na = N[None, :, None], N[None, None, :]
    for name, donor, acceptor in [
        ("Si", "P", "B"),
        ("GaN", "Si", "Mg"),
        ("InAs", "S", "Zn"),
        ("Ge", "Sb", "Ga"),
    ]:
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            state = solve_equilibrium(name, T, {donor: nd}, {acceptor: na})
            n, p = state.n, state.p
        assert state.eta_n.shape == (30, 20, 20)
        assert np.all(np.isfinite(state.eta_n))
        assert np.all(state.residual <= 1e-10), name
        assert np.all(np.isfinite(n)) and np.all(np.isfinite(p))


def test_broadcasts_and_matches_pointwise():
    T = np.array([250.0, 300.0, 350.0])
    nd = np.array([[1e15], [1e17]]) * PER_CM3
    grid = solve_equilibrium("Si", T, {"P": nd})
    assert grid.eta_n.shape == (2, 3)
    single = solve_equilibrium("Si", 350.0, {"P": 1e17 * PER_CM3})
    assert grid.eta_n[1, 2] == pytest.approx(float(single.eta_n), rel=1e-14)


@pytest.mark.parametrize("N", [1e17, 1e18, 1e19])
def test_band_gap_narrowing_raises_minority_density(N):
    """With the gap narrowed by dE_g the effective intrinsic density obeys
    n_ie^2 = n_i^2 exp(dE_g/kT) (Slotboom & de Graaff, Solid-State Electron. 19, 857
    (1976)); the donor level moves with its band, so the electrons stay as they were and
    the (non-degenerate) holes rise by exactly exp(dE_g/kT).  dE_g is the published
    narrowing of silicon, 6.92 meV [ln(N/1.3e17) + sqrt(ln(N/1.3e17)^2 + 0.5)]
    (Klaassen, Slotboom & de Graaff, Solid-State Electron. 35, 125 (1992))."""
    plain = solve_equilibrium("Si", 300.0, {"P": N * PER_CM3})
    narrowed = solve_equilibrium("Si", 300.0, {"P": N * PER_CM3}, band_gap_narrowing=True)
    x = math.log(N / 1.3e17)
    published = 6.92e-3 * (x + math.sqrt(x * x + 0.5)) * sc.e  # J
    assert float(narrowed.n) == pytest.approx(float(plain.n), rel=1e-9)
    ratio = float(narrowed.p) / float(plain.p)
    assert ratio == pytest.approx(math.exp(published / (sc.k * 300.0)), rel=1e-9)


@pytest.mark.parametrize(
    "call,error,text",
    [
        (lambda: solve_equilibrium("Si", -5.0), InputError, "above 0 K"),
        (lambda: solve_equilibrium("Si", float("nan")), InputError, "finite"),
        (lambda: solve_equilibrium("Si", 300.0, {"P": -1e22}), InputError, ">= 0"),
        (lambda: solve_equilibrium("Si", 300.0, {"P": float("inf")}), InputError, "finite"),
        (lambda: solve_equilibrium("Si", 300.0, {"Xx": 1e22}), UnknownDopantError, "known: "),
        (lambda: solve_equilibrium("Si", 300.0, {"B": 1e22}), InputError, "acceptor"),
        (lambda: solve_equilibrium("Unobtainium", 300.0), UnknownMaterialError, "Built in"),
    ],
)
def test_bad_input_is_a_clear_error(call, error, text):
    with pytest.raises(error, match=text):
        call()


@pytest.mark.parametrize("name", ["Si", "Ge", "GaAs", "InP", "GaN", "4H-SiC", "InAs", "InGaAs"])
def test_random_mixtures_converge_and_stay_physical(name):
    """Seeded random T, species and densities: finite, converged, and ordered.

    Physical checks (no reference needed): 0 <= N^+ <= N; n p = n_i^2 exactly
    when both carriers are non-degenerate (mass action, Sze & Ng 2007 ch. 1).
    """
    material = load_material(name)
    rng = np.random.default_rng(sum(map(ord, name)))
    size = 4000
    T = rng.uniform(1.0, 1500.0, size)
    donors = {
        k: 10 ** rng.uniform(8, 22, size) * PER_CM3 * (rng.random(size) < 0.7)
        for k, d in material.dopants.items()
        if d.kind == "donor"
    }
    acceptors = {
        k: 10 ** rng.uniform(8, 22, size) * PER_CM3 * (rng.random(size) < 0.7)
        for k, d in material.dopants.items()
        if d.kind == "acceptor"
    }
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        state = solve_equilibrium(material, T, donors, acceptors)
        assert np.all(np.isfinite(state.eta_n)) and np.all(state.residual <= 1e-10)
        for group, ionized in (
            (state.donors, state.donors_ionized),
            (state.acceptors, state.acceptors_ionized),
        ):
            for species, density in group.items():
                assert np.all(ionized[species] >= 0)
                assert np.all(ionized[species] <= density * (1 + 1e-12))
        both = (state.eta_n < -40) & (state.eta_p < -40) & (state.n > 1e-250) & (state.p > 1e-250)
        if both.any():
            assert np.allclose((state.n * state.p)[both], (state.ni**2)[both], rtol=1e-9)


def test_fermi_level_rises_with_donor_density():
    N = np.geomspace(1e10, 1e21, 200) * PER_CM3
    for T in (50.0, 300.0, 900.0):
        eta = solve_equilibrium("Si", T, {"P": N}, {"B": 1e15 * PER_CM3}).eta_n
        assert np.all(np.diff(eta) > 0)


@pytest.mark.skipif(not hasattr(os, "fork"), reason="needs os.fork")
def test_a_forked_child_starts_its_own_thread_pool():
    """Large solves keep one thread pool; a forked child inherits it without its threads
    (work sent there would never run), so the child must start afresh.  The child's solve
    of 1e20 cm^-3 phosphorus at 300 K must also meet the neutrality promise."""
    from checker.physics import equilibrium

    T = np.full(4 * equilibrium.MIN_BLOCK, 300.0)
    donors = {"P": np.full(T.size, 1e20 * PER_CM3)}
    solve_equilibrium("Si", T, donors)
    if equilibrium.WORKERS < 2:
        pytest.skip("one worker: no pool")
    assert equilibrium._POOLS  # the parent keeps its pool
    pid = os.fork()
    if pid == 0:  # the child: exit 0 only with no inherited pool and a sound solve
        if equilibrium._POOLS:
            os._exit(1)  # before solving: an inherited pool would never return
        state = solve_equilibrium("Si", T, donors)
        os._exit(0 if np.all(state.residual <= 1e-10) else 2)
    _, status = os.waitpid(pid, 0)
    assert os.waitstatus_to_exitcode(status) == 0
