"""The neutrality residual's arithmetic: one bound level's neutral and ionized densities
and their slopes, the log-sums of each side, and the arithmetic pick that replaces
np.where.

Each level's terms are compared with the occupancy statistics of Sze & Ng, Physics of
Semiconductor Devices, 3rd ed. (2007), ch. 1 (N^0 = b N/(1 + e^-a), N^ion = N (1 - b +
b/(1 + e^a)), a = eta + E/kT + ln g; b the band-tail share of Altermatt et al., J. Appl.
Phys. 100, 113715 (2006)) evaluated in mpmath at 40 digits, in the linear form the solve
uses up to |a| = 690 and in the log form beyond; log-sums with mpmath; the solve through
the log form with the independent 40-digit bisection of ``tests/reference.py``.
"""

import mpmath as mp
import numpy as np
import pytest
from reference import reference_solve

from checker.inputs.material_catalog import resolve_material
from checker.physics import equilibrium

PER_CM3 = 1e6


def _level(a, b, ln_n):
    """The residual's rows of one level for arguments a (offset 0, so eta_band = a)."""
    rows = [
        np.zeros_like(a),
        np.full_like(a, ln_n),
        np.full_like(a, ln_n) + np.log(b),
        b,
        np.array([float(1 - mp.mpf(x)) for x in b]),
    ]
    return np.array(rows)


def _mp_terms(a, b, ln_n):
    """(ln N^0, d ln N^0/da, ln N^ion, -d ln N^ion/da) in 40 digits."""
    with mp.workdps(40):
        a, b, ln_n = mp.mpf(a), mp.mpf(b), mp.mpf(ln_n)
        u = 1 / (1 + mp.exp(-a))  # occupied share of the bindable atoms
        q = 1 / (1 + mp.exp(a))
        ionized = 1 - b + b * q
        return (
            float(ln_n + mp.log(b) + mp.log(u)),
            float(q),
            float(ln_n + mp.log(ionized)),
            float(u * b * q / ionized),
        )


def _check(a, b, ln_n, got):
    (neutral, neutral_slope), (ionized, ionized_slope) = got
    for k in range(a.size):
        want = _mp_terms(a[k], b[k], ln_n)
        # values: to rounding of ln N and of a (the solve's logs are of order |a|)
        scale = 4e-16 * max(1.0, abs(a[k]), abs(ln_n))
        assert abs(neutral[k] - want[0]) <= 4 * scale
        assert abs(ionized[k] - want[2]) <= 4 * scale
        # slopes serve only the Newton step: absolute accuracy in [0, 1] suffices
        assert abs(neutral_slope[k] - want[1]) <= 2e-15
        assert abs(ionized_slope[k] - want[3]) <= 2e-15


@pytest.mark.parametrize("b_kind", ["bindable", "band tail", "all bindable"])
def test_level_terms_match_mpmath(b_kind):
    rng = np.random.default_rng(21)
    a = np.concatenate([rng.uniform(-680.0, 680.0, 60), rng.uniform(-40.0, 40.0, 60), [0.0]])
    b = {
        "bindable": rng.uniform(0.9, 1.0, a.size),
        "band tail": rng.uniform(1e-6, 0.5, a.size),
        "all bindable": np.ones(a.size),
    }[b_kind]
    ln_n = np.log(3e23)
    level = _level(a, b, ln_n)
    assert np.max(np.abs(a)) < equilibrium._LINEAR_OCCUPANCY  # the linear form
    _check(a, b, ln_n, equilibrium._impurity_terms(level, a))
    # the log form, which serves |a| >= 690, agrees where both apply
    _check(a, b, ln_n, equilibrium._impurity_terms_in_logs(level, a.copy()))


def test_level_terms_beyond_the_linear_range_match_mpmath():
    rng = np.random.default_rng(22)
    a = np.concatenate([rng.uniform(690.0, 3000.0, 30), rng.uniform(-3000.0, -690.0, 30)])
    b = rng.uniform(0.5, 1.0, a.size)
    b[::3] = 1.0  # no band tail: N^ion is the bound part alone, e^-a small
    ln_n = np.log(1e22)
    _check(a, b, ln_n, equilibrium._impurity_terms(_level(a, b, ln_n), a))


def test_log_sums_match_mpmath():
    rng = np.random.default_rng(23)
    size = 50
    # terms up to 2000 apart (deeper than exp's range), a constant, and an absent term
    values = [
        rng.uniform(-50.0, 50.0, size),
        rng.uniform(-2000.0, 50.0, size),
        np.where(rng.random(size) < 0.3, -np.inf, rng.uniform(-800.0, 60.0, size)),
    ]
    slopes = [rng.uniform(0.0, 1.0, size), rng.uniform(0.0, 1.0, size), None]
    total, slope = equilibrium._logsumexp_with_slope(list(zip(values, slopes)))
    with mp.workdps(40):
        for k in range(size):
            parts = [mp.exp(mp.mpf(v[k])) if np.isfinite(v[k]) else mp.mpf(0) for v in values]
            whole = sum(parts)
            want = float(mp.log(whole))
            want_slope = float((parts[0] * slopes[0][k] + parts[1] * slopes[1][k]) / whole)
            assert abs(total[k] - want) <= 4.5e-16 * max(1.0, abs(want))
            assert abs(slope[k] - want_slope) <= 1e-15


def test_pick_is_numpy_where():
    rng = np.random.default_rng(24)
    a, b = rng.normal(0.0, 1e3, 1000), rng.normal(0.0, 1e-3, 1000)
    a[:10], b[10:20] = -0.0, 0.0
    mask = rng.random(1000) < 0.5
    picked = equilibrium._pick(mask, a, b)
    assert np.array_equal(picked, np.where(mask, a, b))


@pytest.mark.parametrize("T", [12.0, 15.0])
def test_compensated_silicon_through_the_log_form_matches_independent_solve(T):
    # near 15 K an acceptor's argument in n-type silicon lies below -690 (eta_p ~ -E_g/kT),
    # so the solve forms its occupancy in logarithms
    material = resolve_material("Si")
    donors, acceptors = {"P": 1e16 * PER_CM3}, {"B": 1e13 * PER_CM3}
    state = equilibrium.solve(
        material,
        np.array([T]),
        {k: np.array([v]) for k, v in donors.items()},
        {k: np.array([v]) for k, v in acceptors.items()},
    )
    reference = reference_solve(material, T, donors, acceptors)
    assert state.eta_n[0] == pytest.approx(reference, rel=1e-12, abs=1e-9)
    assert state.residual[0] <= 1e-10


def _mp_fd(j, eta):
    """F_j(eta) = -Li_{j+1}(-e^eta) (NIST DLMF 25.12(iii)), 30 digits."""
    return -mp.re(mp.polylog(j + 1, -mp.exp(eta)))


def test_log_f_half_curvature_lies_in_the_accept_step_bound():
    # ACCEPT_STEP rests on ln F_1/2'' = F_-3/2/F_1/2 - (F_-1/2/F_1/2)^2 in [-1/4, 0]
    # (dF_j/deta = F_j-1); it tends to 0 on both sides (e^eta/2^1.5-like below, -3/(2 eta^2)
    # above), so a grid fine over [-10, 30] and sparse out to -40 and 80 holds its minimum
    grid = [*range(-40, -10, 2), *(k / 10 for k in range(-100, 300)), *range(30, 81, 5)]
    with mp.workdps(20):
        curvature = []
        for eta in map(mp.mpf, grid):
            half = _mp_fd(0.5, eta)
            ratio = _mp_fd(-0.5, eta) / half
            curvature.append(float(_mp_fd(-1.5, eta) / half - ratio**2))
    assert -0.15 < min(curvature) < -0.14  # -0.1427 at eta = 0.8
    assert max(curvature) <= 0.0


@pytest.mark.parametrize("b", [1.0, 0.999, 0.9, 0.5, 0.1, 1e-6])
def test_level_curvatures_lie_in_the_accept_step_bound(b):
    # ln u(a)'' = -u q in [-1/4, 0] and ln(1 - b + b q(a))'' in [-1/4, 1/4], by mpmath's
    # numerical second derivative over the arguments where they are largest
    with mp.workdps(30):
        b = mp.mpf(b)

        def neutral(a):
            return -mp.log(1 + mp.exp(-a))

        def ionized(a):
            return mp.log(1 - b + b / (1 + mp.exp(a)))

        for k in range(-120, 121):
            a = mp.mpf(k) / 8
            assert -0.25 <= mp.diff(neutral, a, 2) <= 0
            assert -0.25 <= mp.diff(ionized, a, 2) <= 0.25
