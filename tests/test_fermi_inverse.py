"""The inverse of F_1/2 against roots from mpmath over the whole eta range.

Reference: F_j(eta) = -Li_{j+1}(-e^eta) (NIST DLMF §25.12.16) in mpmath at 30 digits.
For each chosen eta_k the float u_k = F_1/2(eta_k) is rounded to double; the exact root
of F_1/2(eta) = u_k is then eta_k + (u_k - F_1/2(eta_k))/F_-1/2(eta_k) (one Newton step
in 30 digits from a point ~1e-16 away; dF_j/deta = F_{j-1}, Blakemore, Solid-State
Electron. 25, 1067 (1982)), so the roots need no root finder.
"""

import mpmath as mp
import numpy as np
import pytest

from checker import inverse_fermi_dirac_half


def _fd(j, eta):
    return -mp.re(mp.polylog(mp.mpf(j) + 1, -mp.exp(eta)))


def _cases(etas):
    """(u, exact root) pairs: u = F_1/2(eta) rounded to double."""
    us, roots = [], []
    with mp.workdps(30):
        for eta in etas:
            e = mp.mpf(float(eta))
            exact_u = _fd(mp.mpf(1) / 2, e)
            u = float(exact_u)
            us.append(u)
            roots.append(float(e + (mp.mpf(u) - exact_u) / _fd(-mp.mpf(1) / 2, e)))
    return np.array(us), np.array(roots)


# where the method changes: the ends of the root table (ln u = -38 and 14, eta ~ 9.6e3
# at the top), the interval edges of the F_1/2 tables the Newton step evaluates, and the
# floats next to each
_EDGES = [-38.0, -2.0, 0.0, 2.0, 4.5, 9.5, 20.0, 40.0, 50.0]
_NEAR_EDGES = [x for e in _EDGES for x in (np.nextafter(e, -np.inf), e, np.nextafter(e, np.inf))]


@pytest.mark.slow
def test_roots_over_the_whole_range():
    """<= 1e-13 max(1, |eta|) at 600 seeded points in [-60, 120], the edges, and above
    the table (eta up to 3e4, u ~ 4e6)."""
    rng = np.random.default_rng(20261202)
    etas = np.concatenate(
        [rng.uniform(-60.0, 120.0, 600), _NEAR_EDGES, [300.0, 1e3, 5e3, 9.5e3, 1e4, 3e4]]
    )
    u, roots = _cases(etas)
    got = inverse_fermi_dirac_half(u)
    error = np.abs(got - roots) / np.maximum(1.0, np.abs(roots))
    assert error.max() <= 1e-13, (etas[np.argmax(error)], error.max())


@pytest.mark.slow
def test_roots_at_the_ends_of_the_root_table():
    """ln u on both sides of -38 and 14 (where the table starts and stops), same bound;
    roots by mpmath's secant method on ln F_1/2(eta) = ln u for the double u."""
    u = np.exp([-38.0 - 1e-9, -38.0, -38.0 + 1e-9, 14.0 - 1e-9, 14.0, 14.0 + 1e-9])
    roots = []
    with mp.workdps(30):
        for value in u:
            target = mp.log(mp.mpf(float(value)))
            start = target if value < 1 else mp.mpf((0.75 * np.sqrt(np.pi) * value) ** (2 / 3))
            roots.append(
                float(mp.findroot(lambda x: mp.log(_fd(mp.mpf(1) / 2, x)) - target, start))
            )
    got = inverse_fermi_dirac_half(u)
    error = np.abs(got - np.array(roots)) / np.maximum(1.0, np.abs(np.array(roots)))
    assert error.max() <= 1e-13, error


def test_block_and_thread_boundaries_do_not_change_values(monkeypatch):
    """A large array (several thread tasks, two workers forced) gives mpmath's roots at
    the points on both sides of the block and task boundaries."""
    from checker.physics import fermi

    monkeypatch.setattr(fermi, "WORKERS", 2)
    eta = np.linspace(-45.0, 70.0, 300_001)
    picks = np.array([0, 65_535, 65_536, 131_071, 131_072, 299_999, 300_000])
    u, roots = _cases(eta[picks])
    big = np.ones_like(eta)
    big[picks] = u
    got = inverse_fermi_dirac_half(big)[picks]
    error = np.abs(got - roots) / np.maximum(1.0, np.abs(roots))
    assert error.max() <= 1e-13, error


@pytest.mark.parametrize("bad", [0.0, -2.0, np.nan, np.inf])
def test_a_bad_value_deep_in_a_large_array_is_refused(bad, monkeypatch):
    """Values are checked block by block: one u outside (0, inf) in the third thread task
    of a large array still raises the clear error (F_1/2 > 0 for every eta, DLMF 25.12.16)."""
    from checker import InputError
    from checker.physics import fermi

    monkeypatch.setattr(fermi, "WORKERS", 2)
    u = np.ones(400_000)
    u[300_001] = bad
    with pytest.raises(InputError, match="u > 0"):
        inverse_fermi_dirac_half(u)
