"""Fermi–Dirac integrals against mpmath and exact identities.

References: NIST DLMF §25.12 (F_j = -Li_{j+1}(-e^eta), normalized form);
J. S. Blakemore, Solid-State Electron. 25, 1067 (1982) (derivative rule, limits).
"""

import math
import warnings
from fractions import Fraction

import mpmath as mp
import numpy as np
import pytest
import reference_cache
from conftest import fd_reference

from checker import InputError, fermi_dirac, inverse_fermi_dirac_half, log_fermi_dirac

ORDERS = reference_cache.FD_ORDERS


@pytest.mark.parametrize("j", ORDERS)
def test_accuracy_against_mpmath(j):
    """<= 1e-13 relative error on >= 2,000 points in [-60, 120] (issue target), against
    the mpmath values cached in tests/data/reference_values.json."""
    cached = reference_cache.load()["fermi_dirac"]
    eta = np.array(cached["eta"])
    expected = np.array(cached["values"][str(j)])
    assert len(eta) >= 2000 and eta.min() < -59 and eta.max() > 119
    got = fermi_dirac(j, eta)
    worst = float(np.max(np.abs(got / expected - 1)))
    assert worst <= 1e-13, worst


@pytest.mark.slow
def test_reference_cache_matches_mpmath():
    """Every 97th cached F_j(eta) and every 12th inverse root, recomputed with mpmath by the
    same functions the generator (tools/make_reference_values.py) used."""
    cached = reference_cache.load()
    eta = cached["fermi_dirac"]["eta"]
    for j in ORDERS:
        values = cached["fermi_dirac"]["values"][str(j)]
        for i in range(0, len(eta), 97):
            assert values[i] == pytest.approx(reference_cache.fd_value(j, eta[i]), rel=1e-15)
    inverse = cached["inverse"]
    assert inverse["u"] == reference_cache.INVERSE_U
    for u, root in list(zip(inverse["u"], inverse["eta"]))[::12]:
        assert root == pytest.approx(reference_cache.inverse_value(u), rel=1e-15, abs=1e-15)


@pytest.mark.parametrize("j", [-1.5, -0.5, 0.5, 1, 1.5, 2, 2.5, 3, 3.5])
def test_values_on_both_sides_of_every_formula_edge(j):
    """Where the evaluator changes formula (the short exact series below eta = -8, the
    fitted series below -2, the ends of every fitted piece, the fit in 1/eta^2 above the
    last) or label (the second label of the last region, from eta = 50), and the floats
    next to each, mirrored to negative eta for the reflected integer orders: within
    1.6e-15 of mpmath (DLMF 25.12.16, 30 digits), the documented measured accuracy."""
    from checker.physics import _fd_tables, fermi

    key = str(fermi._order(j))
    edges = [fermi.ETA_SERIES, _fd_tables.ETA_LOW, fermi._LABEL_SPLIT]
    edges += [b for _, b, _ in _fd_tables.TABLES[key]["pieces"]]
    near = [x for e in edges for x in (np.nextafter(e, -np.inf), e, np.nextafter(e, np.inf))]
    eta = np.array(near + [-x for x in near if x > 0])
    got = fermi_dirac(j, eta)
    expected = np.array([float(fd_reference(j, x, dps=30)) for x in eta])
    worst = np.max(np.abs(got / expected - 1))
    assert worst <= 1.6e-15, (eta[np.argmax(np.abs(got / expected - 1))], worst)


@pytest.mark.parametrize("j", ["-3/2", "-1/2", "1/2", "3/2", "5/2", "7/2"])
def test_high_fit_from_its_cut_to_1e5(j):
    """Above the last fitted piece the evaluator uses eta^(j+1) H(1/eta^2), H a fitted
    polynomial: within 1.6e-15 of mpmath's F_j (DLMF 25.12.16, 30 digits) from the cut
    to eta = 1e5 (linear near the cut, where the fit's variable is largest, geometric
    beyond), the documented measured accuracy; and H(0), the Sommerfeld series' leading
    term, is 1/Gamma(j+2) (Blakemore 1982) to rounding."""
    from checker.physics import _fd_tables

    table = _fd_tables.TABLES[j]
    cut = table["pieces"][-1][1]
    order = float(Fraction(j))
    eta = np.concatenate(
        [[cut, np.nextafter(cut, np.inf)], np.linspace(cut, 2 * cut, 41)[1:]]
        + [np.geomspace(2 * cut, 1e5, 40)]
    )
    got = fermi_dirac(order, eta)
    expected = np.array([float(fd_reference(order, x, dps=30)) for x in eta])
    worst = np.max(np.abs(got / expected - 1))
    assert worst <= 1.6e-15, (eta[np.argmax(np.abs(got / expected - 1))], worst)
    assert table["high"][0] == pytest.approx(1 / math.gamma(order + 2), rel=1e-15)
    # ln F_j takes its own path there ((j+1) ln eta + ln H, not the generator's checked
    # product): within a few ulp of ln of mpmath's value, and finite far beyond eta^(j+1)'s
    # overflow (mpmath evaluates the polylogarithm at 1e300 directly)
    logs = log_fermi_dirac(order, eta)
    log_expected = np.log(expected)
    assert np.max(np.abs(logs - log_expected) / np.maximum(1.0, np.abs(log_expected))) <= 1e-15
    huge = np.array([1e100, 1e300, 1.7e308])
    huge_expected = [float(mp.log(fd_reference(order, x, dps=30))) for x in huge[:2]]
    huge_logs = log_fermi_dirac(order, huge)
    assert np.all(np.isfinite(huge_logs))
    assert huge_logs[:2] == pytest.approx(huge_expected, rel=1e-15)


@pytest.mark.parametrize("j", ORDERS)
def test_value_at_zero_is_dirichlet_eta(j):
    # F_j(0) = (1 - 2^-j) zeta(j+1) = Dirichlet eta(j+1); F_0(0) = ln 2 (DLMF 25.12)
    expected = math.log(2) if j == 0 else float((1 - mp.mpf(2) ** (-j)) * mp.zeta(j + 1))
    assert fermi_dirac(j, 0.0) == pytest.approx(expected, rel=1e-14)


def test_closed_form_orders_far_out():
    """F_0 = ln(1 + e^eta) and F_-1 = 1/(1 + e^-eta) (DLMF 25.12.16 with s = 1, 0),
    evaluated by mpmath at 22 digits out to |eta| = 700, where e^eta nearly overflows."""
    eta = np.linspace(-700, 700, 57)
    for j in (0, -1):
        got = fermi_dirac(j, eta)
        expected = np.array([float(fd_reference(j, e)) for e in eta])
        assert np.allclose(got, expected, rtol=1e-15, atol=0), j


@pytest.mark.parametrize("j", [-0.5, 0, 0.5, 1, 1.5, 2, 2.5, 3, 3.5])
def test_derivative_rule(j):
    # dF_j/deta = F_{j-1} (normalized integrals; Blakemore 1982)
    eta = np.array([-20.0, -3.3, -0.7, 0.4, 1.9, 3.7, 8.0, 25.0, 60.0])
    h = 1e-3
    # fourth-order central difference
    deriv = (
        -fermi_dirac(j, eta + 2 * h)
        + 8 * fermi_dirac(j, eta + h)
        - 8 * fermi_dirac(j, eta - h)
        + fermi_dirac(j, eta - 2 * h)
    ) / (12 * h)
    assert np.allclose(deriv, fermi_dirac(j - 1, eta), rtol=1e-9)


@pytest.mark.parametrize("j", ORDERS)
def test_limits(j):
    # non-degenerate: F_j -> e^eta, next term -e^(2 eta)/2^(j+1)
    eta = -30.0
    assert fermi_dirac(j, eta) == pytest.approx(
        math.exp(eta) * (1 - math.exp(eta) / 2 ** (j + 1)), rel=1e-14
    )
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
    """Arrays keep their shape element by element, broadcast operands give the broadcast
    result, and a float gives a float; every value is mpmath's (DLMF 25.12.16)."""
    eta = np.linspace(-5, 5, 12).reshape(3, 4)
    out = fermi_dirac(0.5, eta)
    assert out.shape == (3, 4)
    expected = np.array([[float(fd_reference(0.5, e)) for e in row] for row in eta])
    assert np.allclose(out, expected, rtol=1e-14, atol=0)
    column = fermi_dirac(0.5, eta[:, :1] + np.zeros((1, 4)))
    assert column.shape == (3, 4)
    assert np.allclose(column, expected[:, :1], rtol=1e-14, atol=0)
    scalar = fermi_dirac(0.5, 1.0)
    assert isinstance(scalar, float)
    assert scalar == pytest.approx(float(fd_reference(0.5, 1.0)), rel=1e-14)


@pytest.mark.parametrize("j", [-1.5, 0.5, 1, 3])
def test_large_arrays_split_over_blocks_and_threads(j, monkeypatch):
    """An array of several thread tasks (two workers forced) gives mpmath's values
    (DLMF 25.12.16) at the points on both sides of every block and task boundary."""
    from checker.physics import fermi

    monkeypatch.setattr(fermi, "WORKERS", 2)
    eta = np.linspace(-45.0, 70.0, 300_001)
    picks = [0, 65_535, 65_536, 131_071, 131_072, 196_608, 262_144, 300_000]
    got = fermi_dirac(j, eta)[picks]
    expected = np.array([float(fd_reference(j, eta[i])) for i in picks])
    assert np.allclose(got, expected, rtol=1e-14, atol=0)


def test_results_are_not_overwritten_by_later_calls():
    """The kernels keep work arrays from call to call: a returned array must own its
    values.  Results of each kernel, then calls of every other kernel on other points,
    then the first results again against mpmath (DLMF 25.12.16, 22 digits)."""
    from checker.physics.fermi import log_fermi_dirac_half_pair

    eta = np.linspace(-45.0, 70.0, 70_001)
    picks = [0, 9_000, 30_000, 35_000, 40_000, 52_000, 70_000]
    first = {j: fermi_dirac(j, eta) for j in (0.5, 1, 3)}
    first_pair = log_fermi_dirac_half_pair(eta)
    first_roots = inverse_fermi_dirac_half(first[0.5])
    other = np.linspace(-9.0, 55.0, 66_000)
    for j in (-1.5, 0.5, 1, 2, 3):
        fermi_dirac(j, other)
        log_fermi_dirac(j, other)
    log_fermi_dirac_half_pair(other)
    inverse_fermi_dirac_half(np.asarray(fermi_dirac(0.5, other)))
    for j, values in first.items():
        expected = np.array([float(fd_reference(j, eta[i])) for i in picks])
        assert np.allclose(values[picks], expected, rtol=1e-14, atol=0), j
    for j, logs in zip((0.5, -0.5), first_pair):
        expected = np.array([float(mp.log(fd_reference(j, eta[i]))) for i in picks])
        assert np.allclose(logs[picks], expected, rtol=1e-14, atol=1e-14), j
    assert np.allclose(first_roots[picks], eta[picks], rtol=1e-13, atol=1e-13)


def test_unsupported_order_is_a_clear_error():
    with pytest.raises(InputError, match="not supported"):
        fermi_dirac(0.25, 1.0)


def test_boltzmann_error_table():
    # the excess e^eta / F_1/2(eta) - 1 of the Boltzmann density (mpmath, DLMF 25.12.16):
    # 1.7 % at eta = -3 (the 3kT rule), 31 % at eta = 0, about 3.5 times at eta = 3
    for eta in (-3.0, 0.0, 3.0):
        expected = float(mp.exp(eta) / fd_reference(0.5, eta) - 1)
        assert math.exp(eta) / fermi_dirac(0.5, eta) - 1 == pytest.approx(expected, rel=1e-13)


class TestInverse:
    def test_against_mpmath_roots(self):
        # roots of F_1/2(eta) = u from mpmath, cached (tools/make_reference_values.py)
        cached = reference_cache.load()["inverse"]
        got = inverse_fermi_dirac_half(np.array(cached["u"]))
        for u, eta, ref in zip(cached["u"], got, cached["eta"]):
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


def test_ended_threads_leave_no_work_arrays_behind():
    import threading

    from checker.physics import fermi

    eta = np.linspace(-5.0, 5.0, 1000)
    for _ in range(12):  # short-lived threads, one after another, as an API user's
        worker = threading.Thread(target=fermi.fermi_dirac, args=(0.5, eta))
        worker.start()
        worker.join()
    alive = {thread.ident for thread in threading.enumerate()}
    held = {ident for ident, _ in fermi._WORK}
    assert len(held - alive) < fermi._KEPT_THREADS
