"""Transport relations against mpmath, published limits and handbook values."""
import math

import numpy as np
import pytest
import scipy.constants as sc

from checker import carrier_transport, solve_equilibrium
from checker.physics import transport
from conftest import PER_CM3, fd_reference

ETAS = [-10.0, -3.0, -1.0, 0.0, 1.0, 3.0, 10.0, 30.0]


@pytest.mark.parametrize("dimension,j", [(3, 0.5), (2, 0.0), (1, -0.5)])
def test_einstein_ratio_against_mpmath(dimension, j):
    # generalized Einstein relation (D/mu)/(kT/q) = F_j / F_{j-1} (Landsberg 1981)
    got = transport.einstein_ratio(np.array(ETAS), dimension)
    for eta, value in zip(ETAS, got):
        expected = fd_reference(j, eta) / fd_reference(j - 1, eta)
        assert value == pytest.approx(float(expected), rel=1e-13)


def test_einstein_ratio_published_table():
    # references.md §2b (mpmath-computed): 3D 1.01727702357 at eta = -3,
    # 1.26491773944 at 0, 6.77910315862 at 10; 2D 1.38629436112 at 0
    assert transport.einstein_ratio(-3.0) == pytest.approx(1.01727702357, rel=1e-10)
    assert transport.einstein_ratio(0.0) == pytest.approx(1.26491773944, rel=1e-10)
    assert transport.einstein_ratio(10.0) == pytest.approx(6.77910315862, rel=1e-10)
    assert transport.einstein_ratio(0.0, 2) == pytest.approx(1.38629436112, rel=1e-10)


def test_einstein_limits():
    # non-degenerate: D = mu kT/q ; degenerate 3D: D/mu -> (2/3)(E_F - E_C)/q,
    # with the Sommerfeld correction (1 + pi^2/(6 eta^2)) at order eta^-2 (mpmath check below)
    assert transport.einstein_ratio(-40.0) == pytest.approx(1.0, abs=1e-15)
    for eta in (200.0, 1000.0):
        ratio = transport.einstein_ratio(eta)
        assert ratio / (2 * eta / 3) == pytest.approx(1.0, rel=0.2 / eta ** 2 * 10)
        assert ratio == pytest.approx(float(fd_reference(0.5, eta) / fd_reference(-0.5, eta)), rel=1e-13)
    # 2D: F_0/F_-1 -> eta exactly up to e^-eta
    assert transport.einstein_ratio(50.0, 2) == pytest.approx(50.0, rel=1e-15)


def test_diffusion_coefficient_non_degenerate_silicon():
    # D = mu kT/q with scipy.constants; 1400 cm^2/Vs -> 36.2 cm^2/s (Ioffe lists D_n <= 36)
    d = transport.diffusion_coefficient(0.14, 300.0, -20.0)
    assert d == pytest.approx(0.14 * sc.k * 300 / sc.e, rel=1e-8)
    assert d * 1e4 == pytest.approx(36.2, abs=0.1)


def test_field_dependent_mobility_limits():
    mu0, vsat = 0.14, 1.0e5
    assert transport.field_dependent_mobility(mu0, 1.0, vsat, 2.0) == pytest.approx(mu0, rel=1e-9)
    # at mu0 E = v_sat the mobility is mu0 / 2^(1/beta) (Caughey & Thomas 1967)
    E = vsat / mu0
    assert transport.field_dependent_mobility(mu0, E, vsat, 2.0) == pytest.approx(mu0 / math.sqrt(2))
    assert transport.drift_velocity(mu0, 1e9, vsat, 1.1) == pytest.approx(vsat, rel=1e-3)


def test_jacoboni_canali_example():
    # allpix-squared user manual: Jacoboni-Canali at 293 K, electrons
    # v_m = 1.0927393e7 cm/s, E_c = 6729.24 V/cm, beta = 1.0916; mu(E) = v_m/E_c/(1+(E/E_c)^b)^(1/b)
    vm, Ec, beta = 1.0927393e5, 6729.24e2, 1.0916
    E = 2e6  # 20 kV/cm
    expected = vm / Ec / (1 + (E / Ec) ** beta) ** (1 / beta)
    assert transport.field_dependent_mobility(vm / Ec, E, vm, beta) == pytest.approx(expected, rel=1e-12)


def test_two_carrier_conductivity():
    n, p, mu_n, mu_p = 1e21, 3e20, 0.12, 0.04
    assert transport.conductivity(n, p, mu_n, mu_p) == pytest.approx(sc.e * (n * mu_n + p * mu_p))
    assert transport.resistivity(0.0, 0.0, mu_n, mu_p) == math.inf


@pytest.mark.parametrize("N,rho_published", [(1e15, 4.4), (1e16, 0.50), (1e17, 0.085)])
def test_silicon_resistivity_against_irvin_curve(N, rho_published):
    # n-type (phosphorus) Si at 300 K: Irvin's resistivity-doping curve as reproduced
    # in Sze & Ng 2007, Fig. 1.x: ~4.4, ~0.5, ~0.085 ohm cm (from memory; 15 %)
    state = solve_equilibrium("Si", 300.0, {"P": N * PER_CM3})
    rho = float(carrier_transport(state)["rho"]) * 100  # ohm m -> ohm cm
    assert rho == pytest.approx(rho_published, rel=0.15)


def test_unidirectional_thermal_velocity():
    T, m = 300.0, 0.26
    # non-degenerate: sqrt(2kT/(pi m*)) (Lundstrom & Jeong 2012); rms sqrt(3kT/m*)
    # with m* = 0.26 m0 is Ioffe's 2.3e5 m/s for Si electrons
    base = math.sqrt(2 * sc.k * T / (math.pi * m * sc.m_e))
    assert transport.unidirectional_thermal_velocity(T, m) == pytest.approx(base, rel=1e-8)
    assert math.sqrt(3 * sc.k * T / (m * sc.m_e)) == pytest.approx(2.3e5, rel=0.01)
    assert transport.unidirectional_thermal_velocity(T, m, -30.0) == pytest.approx(base, rel=1e-12)
    # degenerate 3D: <v_x+> -> (3/8) v_F (average over a Fermi hemisphere)
    eta = 2000.0
    v_f = math.sqrt(2 * eta * sc.k * T / (m * sc.m_e))
    assert transport.unidirectional_thermal_velocity(T, m, eta) == pytest.approx(3 / 8 * v_f, rel=1e-6)


def test_ballistic_limit_equals_landauer_conductance():
    # rho * lambda / A with lambda = 2D/<v+> equals the ballistic resistance
    # 2kT / (q^2 n <v+> A) of a non-degenerate conductor (Lundstrom & Jeong 2012, ch. 3)
    T, n, mu, m, area = 300.0, 1e23, 0.1, 0.26, 1e-14
    v = transport.unidirectional_thermal_velocity(T, m)
    lam = transport.backscattering_mean_free_path(transport.diffusion_coefficient(mu, T, -30.0), v)
    rho = transport.resistivity(n, 0.0, mu, 0.0)
    r_ballistic = transport.short_conductor_resistance(rho, 0.0, area, lam)
    assert r_ballistic == pytest.approx(2 * sc.k * T / (sc.e ** 2 * n * v * area), rel=1e-9)
    long = transport.short_conductor_resistance(rho, 1e-3, area, lam)
    assert long == pytest.approx(rho * 1e-3 / area, rel=1e-4)


def test_mean_free_path_in_silicon_is_tens_of_nanometres():
    # lightly doped Si electrons: lambda = 2D/<v+> ~ 2*36 cm^2/s / 1.06e7 cm/s ~ 68 nm
    # (order of magnitude as in Lundstrom & Jeong 2012; common practice (no source) for the number)
    state = solve_equilibrium("Si", 300.0, {"P": 1e14 * PER_CM3})
    lam = float(carrier_transport(state)["mfp_n"])
    assert 40e-9 < lam < 90e-9


def test_transport_is_vectorized():
    T = np.linspace(250, 400, 7)
    state = solve_equilibrium("Si", T[:, None], {"P": np.geomspace(1e15, 1e19, 5)[None, :] * PER_CM3})
    result = carrier_transport(state)
    assert result["rho"].shape == (7, 5)
    assert np.all(np.diff(result["mu_n"], axis=1) < 0)  # mobility falls with doping


def test_constants_match_scipy_codata():
    # scipy.constants carries CODATA 2022
    from checker.physics import constants as c
    for ours, name in [(c.BOLTZMANN, "Boltzmann constant"), (c.ELEMENTARY_CHARGE, "elementary charge"),
                       (c.PLANCK, "Planck constant"), (c.ELECTRON_MASS, "electron mass"),
                       (c.VACUUM_PERMITTIVITY, "vacuum electric permittivity"),
                       (c.BOHR_RADIUS, "Bohr radius")]:
        assert ours == pytest.approx(sc.physical_constants[name][0], rel=1e-12), name
