"""Fermi–Dirac integrals against mpmath and exact identities.

References: NIST DLMF §25.12 (F_j = -Li_{j+1}(-e^eta), normalized form);
J. S. Blakemore, Solid-State Electron. 25, 1067 (1982) (derivative rule, limits).
"""
import math
import warnings

import mpmath as mp
import numpy as np
import pytest

from checker import InputError, fermi_dirac, inverse_fermi_dirac_half, log_fermi_dirac
from conftest import fd_reference

ORDERS = [-1.5, -1, -0.5, 0, 0.5, 1, 1.5, 2, 2.5, 3, 3.5]


def _eta_points(seed):
    rng = np.random.default_rng(seed)
    wide = rng.uniform(-60.0, 120.0, 1300)
    hard = rng.uniform(-1.0, 5.0, 700)          # the hard band of the approximations
    edges = np.array([-38.0, -2.0, 0.0, 2.0, 4.5, 9.5, 20.0, 40.0, 50.0])
    return np.concatenate([wide, hard, edges, np.nextafter(edges, -np.inf)])


@pytest.mark.parametrize("j", ORDERS)
def test_accuracy_against_mpmath(j):
    """<= 1e-13 relative error on >= 2,000 points in [-60, 120] (issue target)."""
    eta = _eta_points(int(10 * j) + 100)
    got = fermi_dirac(j, eta)
    worst = max(abs(float(g / fd_reference(j, e) - 1)) for g, e in zip(got, eta))
    assert worst <= 1e-13, worst


@pytest.mark.parametrize("j", ORDERS)
def test_value_at_zero_is_dirichlet_eta(j):
    # F_j(0) = (1 - 2^-j) zeta(j+1) = Dirichlet eta(j+1); F_0(0) = ln 2 (DLMF 25.12)
    expected = math.log(2) if j == 0 else float((1 - mp.mpf(2) ** (-j)) * mp.zeta(j + 1))
    assert fermi_dirac(j, 0.0) == pytest.approx(expected, rel=1e-14)


def test_published_values_at_zero():
    # references.md §1a (mpmath-computed closed forms)
    assert fermi_dirac(0.5, 0.0) == pytest.approx(0.765147024625408, rel=1e-14)
    assert fermi_dirac(-0.5, 0.0) == pytest.approx(0.604898643421630, rel=1e-14)
    assert fermi_dirac(1, 0.0) == pytest.approx(math.pi ** 2 / 12, rel=1e-14)
    assert fermi_dirac(1.5, 0.0) == pytest.approx(0.867199889012184, rel=1e-14)


def test_closed_forms():
    eta = np.linspace(-700, 700, 4001)
    assert np.allclose(fermi_dirac(0, eta), np.logaddexp(0, eta), rtol=2e-16 * 4, atol=0)
    logistic = np.where(eta >= 0, 1 / (1 + np.exp(-np.abs(eta))),
                        np.exp(-np.abs(eta)) / (1 + np.exp(-np.abs(eta))))
    assert np.allclose(fermi_dirac(-1, eta), logistic, rtol=1e-15, atol=0)


@pytest.mark.parametrize("j", [-0.5, 0, 0.5, 1, 1.5, 2, 2.5, 3, 3.5])
def test_derivative_rule(j):
    # dF_j/deta = F_{j-1} (normalized integrals; Blakemore 1982)
    eta = np.array([-20.0, -3.3, -0.7, 0.4, 1.9, 3.7, 8.0, 25.0, 60.0])
    h = 1e-3
    # fourth-order central difference
    deriv = (-fermi_dirac(j, eta + 2 * h) + 8 * fermi_dirac(j, eta + h)
             - 8 * fermi_dirac(j, eta - h) + fermi_dirac(j, eta - 2 * h)) / (12 * h)
    assert np.allclose(deriv, fermi_dirac(j - 1, eta), rtol=1e-9)


def test_reflection_identities():
    eta = np.linspace(0.01, 80, 500)
    # exact for integer orders (DLMF 25.12.4 inversion formula)
    assert np.allclose(fermi_dirac(0, eta) - fermi_dirac(0, -eta), eta, rtol=1e-14)
    assert np.allclose(fermi_dirac(-1, eta) + fermi_dirac(-1, -eta), 1.0, rtol=1e-15)
    assert np.allclose(fermi_dirac(1, eta) + fermi_dirac(1, -eta),
                       eta ** 2 / 2 + math.pi ** 2 / 6, rtol=1e-14)
    assert np.allclose(fermi_dirac(2, eta) - fermi_dirac(2, -eta),
                       eta ** 3 / 6 + math.pi ** 2 * eta / 6, rtol=1e-14)
    # references.md §1a: F_1(10) + F_1(-10) = 51.644934066848
    assert fermi_dirac(1, 10.0) + fermi_dirac(1, -10.0) == pytest.approx(51.644934066848, rel=1e-13)


@pytest.mark.parametrize("j", ORDERS)
def test_limits(j):
    # non-degenerate: F_j -> e^eta, next term -e^(2 eta)/2^(j+1)
    eta = -30.0
    assert fermi_dirac(j, eta) == pytest.approx(math.exp(eta) * (1 - math.exp(eta) / 2 ** (j + 1)),
                                                rel=1e-14)
    # degenerate: F_j -> eta^(j+1)/Gamma(j+2) (Sommerfeld leading term)
    eta = 1e4
    if j > -1:
        assert fermi_dirac(j, eta) == pytest.approx(eta ** (j + 1) / math.gamma(j + 2), rel=1e-6)


@pytest.mark.parametrize("j", ORDERS)
def test_no_overflow_nan_or_warning_over_wide_range(j):
    eta = np.linspace(-1e4, 1e4, 20001)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        values = fermi_dirac(j, eta)
        logs = log_fermi_dirac(j, eta)
    assert np.all(np.isfinite(values)) and np.all(values >= 0)
    assert np.all(np.isfinite(logs))
    assert np.all(np.diff(values) >= 0) or j == -1.5  # F_j is increasing for j > -1


def test_broadcasting_and_scalars():
    eta = np.linspace(-5, 5, 12).reshape(3, 4)
    out = fermi_dirac(0.5, eta)
    assert out.shape == (3, 4)
    assert isinstance(fermi_dirac(0.5, 1.0), float)
    assert np.array_equal(fermi_dirac(0.5, eta[:, :1] + np.zeros((1, 4))), fermi_dirac(0.5, eta[:, :1] + 0 * eta))


def test_unsupported_order_is_a_clear_error():
    with pytest.raises(InputError, match="not supported"):
        fermi_dirac(0.25, 1.0)


def test_boltzmann_error_table():
    # references.md §1a: Boltzmann overestimates n by 1.74 % at eta = -3 and
    # 30.7 % at eta = 0 (e^eta vs F_1/2, mpmath-computed)
    # (the table rounds to 3 significant digits: tolerance half a unit of the last one)
    for eta, excess, half_unit in [(-3.0, 0.0174, 5e-5), (0.0, 0.307, 5e-4), (3.0, 3.48, 5e-3)]:
        assert math.exp(eta) / fermi_dirac(0.5, eta) - 1 == pytest.approx(excess, abs=half_unit)


class TestInverse:
    def test_against_mpmath_roots(self):
        us = np.logspace(-300, 8, 120)
        got = inverse_fermi_dirac_half(us)
        for u, eta in zip(us, got):
            with mp.workdps(30):
                f = lambda x: -mp.re(mp.polylog(mp.mpf(1.5), -mp.exp(x))) - mp.mpf(float(u))
                guess = mp.log(u) if u < 1 else mp.mpf((0.75 * math.sqrt(math.pi) * u) ** (2 / 3))
                ref = float(mp.findroot(f, guess))
            tol = 1e-12 * max(1.0, abs(ref))
            assert abs(eta - ref) <= tol, (u, eta, ref)

    def test_round_trip_dense(self):
        us = np.logspace(-300, 8, 5000)
        eta = inverse_fermi_dirac_half(us)
        back = fermi_dirac(0.5, eta)
        # |d eta| = |d u / u| / (d ln F/d eta); d ln F / d eta <= 1
        assert np.max(np.abs(back / us - 1)) < 1e-13

    @pytest.mark.parametrize("bad", [0.0, -1.0, np.nan, np.inf])
    def test_rejects_non_positive(self, bad):
        with pytest.raises(InputError, match="u > 0"):
            inverse_fermi_dirac_half(np.array([1.0, bad]))
