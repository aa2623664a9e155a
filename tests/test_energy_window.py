"""Energy-window engine (physics/bands.py, physics/energy_window.py) against mpmath
quadrature and polylogarithms, scipy.constants (CODATA) and published values.

The references below are written out from the published formulas in multiple
precision and share no code with the package: densities of states from the
dispersion (Lundstrom & Jeong, Near-Equilibrium Transport, 2012, ch. 2), the Kane
density of states (Kane 1957), the graphene statistics of Fang et al., Appl. Phys.
Lett. 91, 092109 (2007), the Boltzmann conductivity q^2/d ∫ D v^2 tau (-df/dE) dE.
"""

import math

import mpmath as mp
import numpy as np
import pytest
import scipy.constants as sc

from checker.errors import InputError
from checker.physics import bands as bd
from checker.physics import energy_window as ew

mp.mp.dps = 30
T300 = 300.0
KT = sc.k * T300
HBAR = sc.hbar
M0 = sc.m_e
PER_CM2, PER_CM3 = 1e4, 1e6
# eta in [-40, 60]: the stated range of the quadrature
ETAS = [-40.0, -20.0, -5.0, -1.0, -0.3, 0.0, 0.4, 1.7, 3.0, 7.5, 15.0, 30.0, 60.0]
# CODATA 2022 m_e of the package vs the m_e of the installed scipy (2018 or 2022)
MASS_REL = 2e-10


def _breaks(eta):
    pts = [mp.mpf(0), mp.mpf(1)]
    if eta > 1:
        pts.append(mp.mpf(eta))
    pts += [max(mp.mpf(eta), 1) + 40, mp.inf]
    return pts


def fermi_quad(g, eta):
    """∫_0^inf g(x) / (1 + e^(x - eta)) dx in multiple precision (mpmath tanh–sinh)."""
    eta = mp.mpf(eta)
    return mp.quad(lambda x: g(x) / (1 + mp.exp(x - eta)), _breaks(eta))


def window_quad(g, eta):
    """∫_0^inf g(x) (-df/dx) dx, -df/dx = e^(x-eta) / (1 + e^(x-eta))^2 (mpmath)."""
    eta = mp.mpf(eta)

    def integrand(x):
        e = mp.exp(-abs(x - eta))
        return g(x) * e / (1 + e) ** 2

    return mp.quad(integrand, _breaks(eta))


def fd_mp(j, eta):
    """Normalized F_j (Blakemore 1982): 1/Γ(j+1) ∫ x^j f dx, or the window form for j <= -1."""
    if j > -1:
        return fermi_quad(lambda x: x**j, eta) / mp.gamma(j + 1)
    return window_quad(lambda x: x ** (j + 1), eta) / mp.gamma(j + 2)


def rel(a, b):
    return abs(float(a) / float(b) - 1.0)


# ------------------------------------------------------------------ constants


def test_landauer_quantum_is_codata():
    # conductance quantum 2e^2/h = 7.748091729e-5 S (CODATA, exact since the 2019 SI)
    assert ew.LANDAUER_QUANTUM == pytest.approx(
        sc.physical_constants["conductance quantum"][0], rel=1e-15
    )
    assert ew.LANDAUER_QUANTUM == pytest.approx(7.748091729e-5, rel=1e-10)


def test_two_d_effective_density_gaas():
    # N_2D = m* kT/(pi hbar^2) for GaAs (m* = 0.067, g_v = 1, spin included) at 300 K,
    # written out from scipy.constants: 7.24e11 cm^-2
    expected = 0.067 * M0 * KT / (math.pi * HBAR**2)
    got = ew.effective_density(bd.ParabolicBand(2, 0.067), T300)
    assert got == pytest.approx(expected, rel=MASS_REL)
    assert got / PER_CM2 == pytest.approx(7.24e11, rel=1e-3)


@pytest.mark.parametrize(
    "dimension,formula",
    [
        # N_c = 2 (m kT/(2 pi hbar^2))^(3/2) (Sze & Ng 2007, ch. 1); N_1D = sqrt(2 m kT/(pi hbar^2))
        (3, lambda m: 2 * (m * KT / (2 * math.pi * HBAR**2)) ** 1.5),
        (1, lambda m: math.sqrt(2 * m * KT / (math.pi * HBAR**2))),
    ],
)
def test_effective_densities_3d_1d(dimension, formula):
    got = ew.effective_density(bd.ParabolicBand(dimension, 0.26, valley_degeneracy=6), T300)
    assert got == pytest.approx(6 * formula(0.26 * M0), rel=MASS_REL)


# ------------------------------------------------------------------ parabolic bands


@pytest.mark.parametrize("dimension", [1, 2, 3])
@pytest.mark.parametrize("method,tol", [("auto", 1e-13), ("quadrature", 1e-12)])
def test_parabolic_density_and_slope_against_mpmath(dimension, method, tol):
    # n = N_eff F_(d/2-1), dn/deta = N_eff F_(d/2-2): the closed forms of physics/fermi.py
    # and the quadrature both against F_j from mpmath quadrature
    band = bd.ParabolicBand(dimension, 0.1, valley_degeneracy=2)
    n_eff = (
        2
        * {
            3: 2 * (0.1 * M0 * KT / (2 * math.pi * HBAR**2)) ** 1.5,
            2: 0.1 * M0 * KT / (math.pi * HBAR**2),
            1: math.sqrt(2 * 0.1 * M0 * KT / (math.pi * HBAR**2)),
        }[dimension]
    )
    j = dimension / 2 - 1
    n = ew.carrier_density(band, np.array(ETAS), T300, method=method)
    slope = ew.density_slope(band, np.array(ETAS), T300, method=method)
    for eta, got_n, got_s in zip(ETAS, n, slope):
        assert rel(got_n, n_eff * fd_mp(j, eta)) <= tol + MASS_REL, eta
        assert rel(got_s, n_eff * fd_mp(j - 1, eta)) <= tol + MASS_REL, eta


def test_two_d_einstein_ratio_is_exact_closed_form():
    # D/mu in 2D = (kT/q)(1 + e^-eta) ln(1 + e^eta) exactly (one parabolic subband)
    band = bd.ParabolicBand(2, 0.067)
    for method, tol in (("auto", 1e-13), ("quadrature", 1e-12)):
        got = ew.generalized_einstein_ratio(band, np.array(ETAS), T300, method=method)
        for eta, value in zip(ETAS, got):
            expected = (1 + mp.exp(-eta)) * mp.log1p(mp.exp(eta))
            assert rel(value, expected) <= tol, (method, eta)


# ------------------------------------------------------------------ Kane bands


def kane_dos_3d(m, alpha):
    """Kane 3D density of states, spin included (Kane 1957; Lundstrom & Jeong 2012, ch. 2):
    D(E) = (1/(2 pi^2)) (2m/hbar^2)^(3/2) sqrt(E (1 + alpha E)) (1 + 2 alpha E)."""
    pref = (2 * mp.mpf(m) / mp.mpf(HBAR) ** 2) ** 1.5 / (2 * mp.pi**2)
    return lambda E: pref * mp.sqrt(E * (1 + alpha * E)) * (1 + 2 * alpha * E)


def kane_density_mp(m, alpha, eta, T=T300):
    kT = mp.mpf(sc.k) * T
    dos = kane_dos_3d(m, alpha)
    return kT * fermi_quad(lambda x: dos(x * kT), eta)


@pytest.mark.parametrize("alpha_ev", [0.7, 2.7, 10.0])
def test_kane_density_against_mpmath(alpha_ev):
    # InAs-like m* = 0.023 with alpha = 2.7 eV^-1 (from memory; Vurgaftman et al., J. Appl.
    # Phys. 89, 5815 (2001) list the parameters), and a weaker and a stronger non-parabolicity
    m = 0.023 * M0
    alpha = alpha_ev / sc.e
    band = bd.KaneBand(3, 0.023, alpha)
    n = ew.carrier_density(band, np.array(ETAS), T300)
    ratio = ew.generalized_einstein_ratio(band, np.array(ETAS), T300)
    kT = mp.mpf(sc.k) * T300
    dos = kane_dos_3d(m, alpha)
    for eta, got_n, got_r in zip(ETAS, n, ratio):
        expected = kane_density_mp(m, alpha, eta)
        assert rel(got_n, expected) <= 1e-12 + MASS_REL, eta
        slope = kT * window_quad(lambda x: dos(x * kT), eta)
        assert rel(got_r, expected / slope) <= 1e-12, eta


def test_kane_without_non_parabolicity_is_fermi_half():
    # alpha = 0: n = N_c F_1/2(eta) (F_1/2 from mpmath)
    band = bd.KaneBand(3, 0.067, 0.0)
    n_c = 2 * (0.067 * M0 * KT / (2 * math.pi * HBAR**2)) ** 1.5
    got = ew.carrier_density(band, np.array(ETAS), T300)
    for eta, value in zip(ETAS, got):
        assert rel(value, n_c * fd_mp(0.5, eta)) <= 1e-12 + MASS_REL


def test_kane_two_d_against_mpmath():
    # 2D Kane: D = g_v m* (1 + 2 alpha E)/(pi hbar^2) (from k^2 = 2 m E (1 + alpha E)/hbar^2)
    m, alpha = 0.04 * M0, 1.5 / sc.e
    band = bd.KaneBand(2, 0.04, alpha)
    kT = mp.mpf(sc.k) * T300
    got = ew.carrier_density(band, np.array(ETAS), T300)
    for eta, value in zip(ETAS, got):
        expected = kT * fermi_quad(lambda x: m * (1 + 2 * alpha * x * kT) / (mp.pi * HBAR**2), eta)
        assert rel(value, expected) <= 1e-12 + MASS_REL, eta


def test_inas_fermi_level_kane_and_parabolic():
    # InAs, m* = 0.023, alpha = 2.7 eV^-1 (from memory; Vurgaftman et al. 2001), 300 K.
    # Rounded values of the brief: E_F - E_C ~ 0.37 eV (Kane) vs ~0.74 eV (parabolic) at
    # 1e19 cm^-3, ~0.111 vs ~0.156 eV at 1e18 (from memory).  The engine is checked against
    # an mpmath root of n(E_F) = N; the rounded values within 10 meV.
    m, alpha = 0.023 * M0, 2.7 / sc.e
    kane, parabolic = bd.KaneBand(3, 0.023, alpha), bd.ParabolicBand(3, 0.023)
    n_c = 2 * (m * KT / (2 * math.pi * HBAR**2)) ** 1.5
    for N, kane_ev, parabolic_ev in ((1e19, 0.37, 0.74), (1e18, 0.111, 0.156)):
        target = N * PER_CM3
        eta_k = ew.eta_from_density(kane, target, T300)
        eta_p = ew.eta_from_density(parabolic, target, T300)
        root_k = mp.findroot(lambda e: kane_density_mp(m, alpha, e) / target - 1, eta_k)
        root_p = mp.findroot(lambda e: n_c * fd_mp(0.5, e) / target - 1, eta_p)
        assert eta_k == pytest.approx(float(root_k), abs=1e-9)
        assert eta_p == pytest.approx(float(root_p), abs=1e-9)
        assert eta_k * KT / sc.e == pytest.approx(kane_ev, abs=0.01)
        assert eta_p * KT / sc.e == pytest.approx(parabolic_ev, abs=0.01)


# ------------------------------------------------------------------ sheet density -> eta


def test_gan_eta_at_1e13():
    # n_s = 1e13 cm^-2 in GaN (m* = 0.2, g_v = 1) at 300 K: eta = ln(e^(n_s/N_2D) - 1) ~ +4.6
    n2d = 0.2 * M0 * KT / (math.pi * HBAR**2)
    expected = mp.log(mp.expm1(1e13 * PER_CM2 / n2d))
    band = bd.ParabolicBand(2, 0.2)
    for method in ("auto", "quadrature"):
        got = ew.eta_from_density(band, 1e13 * PER_CM2, T300, method=method)
        assert got == pytest.approx(float(expected), abs=1e-9)
    assert got == pytest.approx(4.6, abs=0.05)


def test_sheet_density_inverse_over_the_whole_range():
    # eta = ln(e^u - 1), u = n/N_2D from 1e-300 to 700, against mpmath (to a few ulp of eta)
    band = bd.ParabolicBand(2, 0.067)
    n2d = ew.effective_density(band, T300)
    u = np.array([1e-300, 1e-40, 1e-8, 0.3, 1.0, 2.5, 30.0, 300.0, 700.0])
    eta = ew.eta_from_density(band, u * n2d, T300)
    for ui, e in zip(u, eta):
        expected = mp.log(mp.expm1(mp.mpf(float(ui * n2d)) / mp.mpf(float(n2d))))
        assert abs(e - float(expected)) <= 1e-15 * (1 + abs(e))


def test_several_subbands_newton():
    # two subbands of a GaAs well at 0 and 60 meV, and an Si(100)-like ladder of 2 + 4 valleys:
    # eta against an mpmath root of sum_i N_i ln(1 + e^(eta - E_i/kT)) = n_s
    gaas = bd.parabolic_subbands(2, 0.067, [0.0, 0.060 * sc.e])
    si = bd.parabolic_subbands(2, 0.19, [0.0], valley_degeneracy=2) + bd.parabolic_subbands(
        2, 0.417, [0.03 * sc.e], valley_degeneracy=4
    )
    for group in (gaas, si):
        ns = np.array([1e9, 1e11, 3e12, 2e13]) * PER_CM2
        eta = ew.eta_from_density(group, ns[:, None], np.array([77.0, 300.0]))
        assert eta.shape == (4, 2)
        for i, n in enumerate(ns):
            for k, T in enumerate((77.0, 300.0)):
                kT = sc.k * T

                def total(e):
                    return sum(
                        b.valley_degeneracy
                        * b.mass
                        * M0
                        * kT
                        / (math.pi * HBAR**2)
                        * mp.log1p(mp.exp(e - b.edge / kT))
                        for b in group
                    )

                root = mp.findroot(lambda e: total(e) / n - 1, eta[i, k])
                assert eta[i, k] == pytest.approx(float(root), abs=1e-9)


def test_one_d_inverse_by_newton():
    # a quantum wire: n_1D = N_1D F_-1/2(eta); root against mpmath F_-1/2
    band = bd.ParabolicBand(1, 0.067)
    n1d = math.sqrt(2 * 0.067 * M0 * KT / (math.pi * HBAR**2))
    for eta_true in (-12.0, 0.5, 25.0):
        n = n1d * float(fd_mp(-0.5, eta_true))
        assert ew.eta_from_density(band, n, T300) == pytest.approx(eta_true, abs=1e-9)


# ------------------------------------------------------------------ graphene


V_F = 1.0e8 / 100  # 1.0e8 cm/s in m/s


def test_graphene_intrinsic_density_fang():
    # n_i = (pi/6)(kT/(hbar v_F))^2 (Fang et al. 2007), ~8e10 cm^-2 at 300 K, v_F = 1e8 cm/s
    expected = math.pi / 6 * (KT / (HBAR * V_F)) ** 2
    got = ew.dirac_intrinsic_density(bd.DiracBand(V_F), T300)
    assert got == pytest.approx(expected, rel=1e-14)
    assert got / PER_CM2 == pytest.approx(8e10, rel=0.02)
    # the same from the electron density of the upper cone at the Dirac point
    assert ew.carrier_density(bd.DiracBand(V_F), 0.0, T300) == pytest.approx(expected, rel=1e-14)


def test_graphene_net_density_against_mpmath():
    # n - p = ∫ D(E) [f(E - E_F) - f(E + E_F)] dE, D = 2E/(pi hbar^2 v_F^2) (Fang et al. 2007)
    band = bd.DiracBand(V_F)
    kT = mp.mpf(KT)
    pref = 2 * kT**2 / (mp.pi * mp.mpf(HBAR * V_F) ** 2)
    etas = [-30.0, -2.0, -1e-3, 1e-3, 0.5, 4.0, 40.0]
    got = ew.dirac_net_density(band, np.array(etas), T300)
    for eta, value in zip(etas, got):
        n = pref * fermi_quad(lambda x: x, eta)
        p = pref * fermi_quad(lambda x: x, -eta)
        assert value == pytest.approx(float(n - p), rel=1e-12, abs=1e-15 * float(n + p))


def test_graphene_zero_temperature_limit():
    # T -> 0: n = E_F^2/(pi hbar^2 v_F^2) (Fang et al. 2007); at finite T exactly
    # E_F^2/(pi hbar^2 v_F^2) + (pi/3)(kT/(hbar v_F))^2 up to e^-eta (Sommerfeld, F_1 reflection)
    band = bd.DiracBand(V_F)
    E_F = 0.2 * sc.e
    for T in (50.0, 10.0, 0.5):  # eta >= 46
        kT = sc.k * T
        got = ew.dirac_net_density(band, E_F / kT, T)
        exact = E_F**2 / (math.pi * HBAR**2 * V_F**2) + math.pi / 3 * (kT / (HBAR * V_F)) ** 2
        assert got == pytest.approx(exact, rel=1e-13)
    zero_t = E_F**2 / (math.pi * HBAR**2 * V_F**2)
    assert got == pytest.approx(zero_t, rel=1e-6)
    assert bd.states_below(band, E_F) == pytest.approx(zero_t, rel=1e-14)


def test_graphene_einstein_ratio():
    # one cone: n/(dn/deta) = F_1/F_0 (polylog, DLMF 25.12.16) -> eta/2 when degenerate
    band = bd.DiracBand(V_F)
    for method in ("auto", "quadrature"):
        got = ew.generalized_einstein_ratio(band, np.array(ETAS), T300, method=method)
        for eta, value in zip(ETAS, got):
            expected = mp.polylog(2, -mp.exp(eta)) / mp.polylog(1, -mp.exp(eta))
            assert rel(value, expected) <= 1e-12, (method, eta)
    assert ew.generalized_einstein_ratio(band, 200.0, T300) == pytest.approx(
        100.0 * (1 + math.pi**2 / 3 / 200**2), rel=1e-12
    )


# ------------------------------------------------------------------ conductance


def test_one_d_ballistic_conductance_is_the_quantum():
    # one spin-degenerate mode fully occupied: G = 2q^2/h (Landauer 1957); G0 f(0) in general
    band = bd.ParabolicBand(1, 0.067)
    assert ew.ballistic_conductance(band, 40.0, T300) == pytest.approx(
        sc.physical_constants["conductance quantum"][0], rel=1e-15
    )
    got = ew.ballistic_conductance(band, np.array(ETAS), T300, method="quadrature")
    for eta, value in zip(ETAS, got):
        expected = sc.physical_constants["conductance quantum"][0] / (1 + mp.exp(-eta))
        assert rel(value, expected) <= 1e-12


def mode_density_mp(dimension, m, alpha):
    """M(E) per spin from k^2 = 2 m E (1 + alpha E)/hbar^2: 1, k/pi, k^2/(4 pi)
    (Lundstrom & Jeong 2012, ch. 2)."""

    def modes(E):
        k2 = 2 * mp.mpf(m) * E * (1 + alpha * E) / mp.mpf(HBAR) ** 2
        return {1: mp.mpf(1), 2: mp.sqrt(k2) / mp.pi, 3: k2 / (4 * mp.pi)}[dimension]

    return modes


@pytest.mark.parametrize(
    "dimension,alpha_ev,r,L_over",
    [
        (2, 0.0, 0.0, 1.0),
        (3, 0.0, 0.5, 0.2),
        (3, 2.7, 1.0, 3.0),
        (2, 1.5, -0.5, 10.0),
        (1, 0.0, 2.0, 1e-3),
        (1, 0.0, 1.5, 1e-4),
        (2, 0.0, 2.0, 1e-2),
    ],
)
def test_conductance_against_mpmath(dimension, alpha_ev, r, L_over):
    # G = (2q^2/h) ∫ M(E) lambda/(lambda + L) (-df/dE) dE, lambda = lambda_0 (E/kT)^r
    m, alpha, lam0 = 0.05 * M0, alpha_ev / sc.e, 50e-9
    band = bd.KaneBand(dimension, 0.05, alpha)
    etas = [-30.0, -2.0, 0.0, 3.0, 20.0]
    got = ew.conductance(band, np.array(etas), T300, L_over * lam0, lam0, r)
    kT = mp.mpf(KT)
    modes = mode_density_mp(dimension, m, alpha)
    g0 = 2 * mp.mpf(sc.e) ** 2 / mp.mpf(sc.h)
    for eta, value in zip(etas, got):
        expected = g0 * window_quad(lambda x: modes(x * kT) * x**r / (x**r + L_over), eta)
        assert rel(value, expected) <= 1e-10 + MASS_REL, eta


def test_ballistic_limit_counts_modes():
    # L -> 0: G = (2q^2/h) <M>; parabolic 2D <M> = sqrt(2 m kT)/(pi hbar) Γ(3/2) F_-1/2 (mpmath)
    band = bd.ParabolicBand(2, 0.2)
    lam0 = 40e-9
    for eta in (-3.0, 2.0, 12.0):
        modes = math.sqrt(2 * 0.2 * M0 * KT) / (math.pi * HBAR) * mp.gamma(1.5) * fd_mp(-0.5, eta)
        g0 = sc.physical_constants["conductance quantum"][0]
        assert rel(ew.modes_in_window(band, eta, T300), modes) <= 1e-13 + MASS_REL
        assert rel(ew.ballistic_conductance(band, eta, T300), g0 * modes) <= 1e-13 + MASS_REL
        near = ew.conductance(band, eta, T300, 1e-9 * lam0, lam0, 0.0)
        assert rel(near, g0 * modes) <= 2e-9
        assert ew.conductance(band, eta, T300, 0.0, lam0, 0.0) == pytest.approx(
            ew.ballistic_conductance(band, eta, T300), rel=1e-15
        )


def boltzmann_sigma(dimension, dos, velocity, lam0, r, eta):
    """sigma = (q^2/d) ∫ D(E) v(E)^2 tau(E) (-df/dE) dE with tau = lambda/(c_d v), c_d = 2,
    pi/2, 4/3 in 1D/2D/3D (Lundstrom & Jeong 2012, ch. 6: lambda(E) and tau(E))."""
    c_d = {1: mp.mpf(2), 2: mp.pi / 2, 3: mp.mpf(4) / 3}[dimension]
    kT = mp.mpf(KT)

    def integrand(x):
        E = x * kT
        return dos(E) * velocity(E) * lam0 * x**r / c_d

    return mp.mpf(sc.e) ** 2 / dimension * window_quad(integrand, eta)


def test_diffusive_limit_is_q_n_mu_parabolic_3d():
    # L >> lambda: L G -> sigma = q n mu; mu = q <<tau>>/m* with tau = tau_0 (E/kT)^s,
    # <<tau>> = tau_0 Γ(s + 5/2) F_(s+1/2) / (Γ(5/2) F_1/2) (Lundstrom, Fundamentals of
    # Carrier Transport, 2000, ch. 3); lambda = (4/3) v tau gives lambda_0 = (4/3) sqrt(2kT/m) tau_0
    m = 0.26 * M0
    band = bd.ParabolicBand(3, 0.26)
    for s in (-0.5, 0.0, 1.5):
        tau0 = 1e-13
        lam0 = 4 / 3 * math.sqrt(2 * KT / m) * tau0
        r = bd.mean_free_path_exponent(band, s)
        assert r == s + 0.5
        for eta in (-10.0, 0.0, 8.0):
            ratio = mp.gamma(s + 2.5) * fd_mp(s + 0.5, eta) / (mp.gamma(2.5) * fd_mp(0.5, eta))
            mu = sc.e * tau0 / m * ratio
            got_mu = ew.diffusive_mobility(band, eta, T300, lam0, r)
            assert rel(got_mu, mu) <= 1e-12 + MASS_REL, (s, eta)
            sigma = ew.diffusive_conductivity(band, eta, T300, lam0, r)
            n = ew.carrier_density(band, eta, T300)
            assert rel(sigma, sc.e * n * mu) <= 1e-12 + MASS_REL
            L = 1e7 * lam0
            long = ew.conductance(band, eta, T300, L, lam0, r) * L
            assert rel(long, sigma) <= 1e-5


@pytest.mark.parametrize("case", ["kane3d", "graphene", "wire"])
def test_diffusive_conductivity_equals_boltzmann(case):
    # the same identity for bands without a closed form: sigma from modes and lambda(E)
    # against (q^2/d) ∫ D v^2 tau (-df/dE) dE with D and v = dE/(hbar dk) written out
    hbar = mp.mpf(HBAR)
    if case == "kane3d":
        m, alpha, d = 0.023 * M0, 2.7 / sc.e, 3
        band, r = bd.KaneBand(3, 0.023, alpha), 1.0
        dos = kane_dos_3d(m, alpha)

        def velocity(E):  # hbar k = sqrt(2 m E (1 + alpha E)); v = hbar k / (m (1 + 2 alpha E))
            return mp.sqrt(2 * m * E * (1 + alpha * E)) / (m * (1 + 2 * alpha * E))
    elif case == "graphene":
        d, band, r = 2, bd.DiracBand(V_F), 0.5
        dos = lambda E: 2 * E / (mp.pi * hbar**2 * V_F**2)  # noqa: E731 (Fang et al. 2007)
        velocity = lambda E: mp.mpf(V_F)  # noqa: E731
    else:
        m, d = 0.067 * M0, 1
        band, r = bd.ParabolicBand(1, 0.067), -0.5
        dos = lambda E: mp.sqrt(2 * m) / (mp.pi * hbar * mp.sqrt(E))  # noqa: E731
        velocity = lambda E: mp.sqrt(2 * E / m)  # noqa: E731
    lam0 = 30e-9
    for eta in (-15.0, -1.0, 2.0, 25.0):
        sigma = ew.diffusive_conductivity(band, eta, T300, lam0, r)
        expected = boltzmann_sigma(d, dos, velocity, lam0, r, eta)
        assert rel(sigma, expected) <= 1e-11 + MASS_REL, eta
        L = 1e7 * lam0
        assert rel(ew.conductance(band, eta, T300, L, lam0, r) * L, sigma) <= 1e-5


def test_quadrature_and_closed_forms_agree_on_diffusive_graphene():
    band = bd.DiracBand(V_F)
    eta = np.linspace(-40, 60, 201)
    a = ew.diffusive_conductivity(band, eta, T300, 20e-9, 1.0)
    b = ew.diffusive_conductivity(band, eta, T300, 20e-9, 1.0, method="quadrature")
    assert np.max(np.abs(b / a - 1)) <= 1e-12


# ------------------------------------------------------------------ shapes and inputs


def test_broadcasting_and_several_bands():
    group = bd.parabolic_subbands(2, 0.067, [0.0, 0.05 * sc.e]) + (
        bd.KaneBand(2, 0.067, 0.0, edge=0.1 * sc.e),
    )
    eta = np.linspace(-5, 10, 3)[:, None]
    T = np.array([77.0, 200.0, 300.0, 400.0])
    n = ew.carrier_density(group, eta, T)
    assert n.shape == (3, 4)
    for i, e in enumerate(eta[:, 0]):
        for k, t in enumerate(T):
            kT = sc.k * t
            expected = sum(
                0.067 * M0 * kT / (math.pi * HBAR**2) * mp.log1p(mp.exp(e - E / kT))
                for E in (0.0, 0.05 * sc.e, 0.1 * sc.e)
            )
            assert rel(n[i, k], expected) <= 1e-12 + MASS_REL
    assert isinstance(ew.carrier_density(group, 1.0, 300.0), float)


@pytest.mark.parametrize(
    "make",
    [
        lambda: bd.ParabolicBand(4, 0.1),
        lambda: bd.ParabolicBand(3, -0.1),
        lambda: bd.KaneBand(3, 0.1, -1.0),
        lambda: bd.DiracBand(0.0),
        lambda: bd.ParabolicBand(2, float("nan")),
        lambda: bd.ParabolicBand(2, True),
    ],
)
def test_bad_band_parameters_are_refused(make):
    with pytest.raises(InputError):
        make()


def test_bad_inputs_are_refused():
    band = bd.ParabolicBand(3, 0.1)
    with pytest.raises(InputError):
        ew.carrier_density(band, 0.0, -1.0)
    with pytest.raises(InputError):
        ew.carrier_density(band, 0.0, 300.0, method="simpson")
    with pytest.raises(InputError):
        ew.eta_from_density(band, 0.0, 300.0)
    with pytest.raises(InputError):
        ew.conductance(band, 0.0, 300.0, -1e-6, 1e-8)
    with pytest.raises(InputError):
        ew.effective_density(bd.KaneBand(3, 0.1, 0.0), 300.0)
    with pytest.raises(InputError):
        bd.mean_free_path_exponent(bd.KaneBand(3, 0.1, 0.0), -0.5)
