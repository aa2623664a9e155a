"""The neutrality solve's Newton start and its log-sum helpers.

The start (``equilibrium._initial_guess``: one level per dopant with its band-tail share,
the exact inverse of F_1/2 and one degeneracy correction) is compared with the
independent 40-digit bisection of ``tests/reference.py`` (plain neutrality with the
statistics of Sze & Ng, Physics of Semiconductor Devices, 3rd ed. (2007), ch. 1); the
helpers ln(e^a + e^b) and ln(1 + e^x) with mpmath at 40 digits.
"""

import mpmath as mp
import numpy as np
import pytest
from reference import reference_solve

from checker.inputs.material_catalog import resolve_material
from checker.physics import arrays, equilibrium

PER_CM3 = 1e6


def _start(monkeypatch, material, T, donors, acceptors):
    """The start the solve hands to Newton, and the solved state."""
    starts = []
    newton = equilibrium._newton

    def recording(residual, eta0):
        starts.append(eta0.copy())
        return newton(residual, eta0)

    monkeypatch.setattr(equilibrium, "_newton", recording)
    arrays = {k: np.array([v]) for k, v in donors.items()}
    state = equilibrium.solve(
        material, np.array([T]), arrays, {k: np.array([v]) for k, v in acceptors.items()}
    )
    return float(starts[0][0]), state


# (material, T K, donors cm^-3, acceptors cm^-3, how far the start may be from the root):
# one majority species with a minority one, from freeze-out through the band-tail
# crossover to degenerate, full ionization; bounds are 3-25x the error measured when
# written (a Newton step from within 2^-21 of the root is the last one)
START_CASES = [
    ("Si", 300.0, {"P": 1e15}, {"B": 1e13}, 1e-12),
    ("Si", 300.0, {"P": 1e18}, {}, 1e-5),  # partly bound, a tenth in the band tail
    ("Si", 77.0, {"P": 1e17}, {"B": 1e14}, 2e-6),  # freeze-out
    ("Si", 300.0, {"P": 1e20}, {}, 1e-7),  # degenerate, fully ionized
    ("Si", 300.0, {}, {"B": 3e17}, 1e-6),  # acceptor degeneracy 4
    ("GaN", 300.0, {"Si": 1e17}, {}, 1e-5),
    ("GaN", 400.0, {}, {"Mg": 1e19}, 5e-5),  # deep acceptor, a few per cent ionized
    ("Ge", 300.0, {"P": 1e16}, {}, 1e-7),
]


@pytest.mark.parametrize("name,T,donors,acceptors,bound", START_CASES)
def test_start_is_near_the_independent_solve(monkeypatch, name, T, donors, acceptors, bound):
    material = resolve_material(name)
    donors = {k: v * PER_CM3 for k, v in donors.items()}
    acceptors = {k: v * PER_CM3 for k, v in acceptors.items()}
    start, state = _start(monkeypatch, material, T, donors, acceptors)
    reference = reference_solve(material, T, donors, acceptors)
    assert abs(start - reference) <= bound
    assert state.eta_n[0] == pytest.approx(reference, rel=1e-12, abs=1e-9)


def test_random_silicon_points_need_at_most_three_iterations():
    # T 50-1000 K, P and B 1e12-1e20 cm^-3 each: with the start within ~1e-3 of the root,
    # two Newton steps and a last one suffice (the old start needed up to six)
    rng = np.random.default_rng(3)
    n = 20_000
    T = rng.uniform(50.0, 1000.0, n)
    nd, na = (10 ** rng.uniform(12, 20, n) * PER_CM3 for _ in range(2))
    state = equilibrium.solve(resolve_material("Si"), T, {"P": nd}, {"B": na})
    assert state.iterations <= 3
    assert np.max(state.residual) <= 1e-10


def _mp_log_add(a, b):
    with mp.workdps(40):
        return float(mp.log(mp.exp(mp.mpf(a)) + mp.exp(mp.mpf(b))))


def test_log_add_matches_mpmath():
    rng = np.random.default_rng(4)
    a = rng.uniform(-700.0, 700.0, 400)
    b = a + rng.normal(0.0, 20.0, 400)
    got = arrays.log_add(a, b)
    want = np.array([_mp_log_add(x, y) for x, y in zip(a, b)])
    assert np.all(np.abs(got - want) <= 4.5e-16 * np.maximum(1.0, np.abs(want)))


def test_log_add_keeps_infinities_as_logaddexp_does():
    a = np.array([-np.inf, -np.inf, np.inf, 3.0])
    b = np.array([-np.inf, 2.0, 1.0, np.inf])
    # ln(0 + 0) = -inf, ln(0 + e^2) = 2, and +inf on either side gives +inf
    assert arrays.log_add(a, b).tolist() == [-np.inf, 2.0, np.inf, np.inf]
    assert float(arrays.log_add(1.0, 1.0)) == pytest.approx(1.0 + np.log(2.0), rel=1e-16)


def test_softplus_matches_mpmath():
    x = np.linspace(-745.0, 745.0, 601)
    got = arrays.softplus(x)
    with mp.workdps(40):
        want = np.array([float(mp.log1p(mp.exp(mp.mpf(v)))) for v in x])
    # relative to max(1, |x|): the solve uses it in sums of logs of order |x|
    assert np.all(np.abs(got - want) <= 4.5e-16 * np.maximum(1.0, np.abs(want)))
