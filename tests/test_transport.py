"""Transport relations against mpmath, published limits and handbook values."""

import math

import mpmath as mp
import numpy as np
import pytest
import scipy.constants as sc
from conftest import PER_CM3, fd_reference

from checker import carrier_transport, load_material, solve_equilibrium
from checker.physics import transport
from checker.physics._relations import conductor_resistance

ETAS = [-10.0, -3.0, -1.0, 0.0, 1.0, 3.0, 10.0, 30.0]


@pytest.mark.parametrize("dimension,j", [(3, 0.5), (2, 0.0), (1, -0.5)])
def test_einstein_ratio_against_mpmath(dimension, j):
    # generalized Einstein relation (D/mu)/(kT/q) = F_j / F_{j-1} (Landsberg 1981)
    got = transport.einstein_ratio(np.array(ETAS), dimension)
    for eta, value in zip(ETAS, got):
        expected = fd_reference(j, eta) / fd_reference(j - 1, eta)
        assert value == pytest.approx(float(expected), rel=1e-13)


def test_einstein_ratio_2d_at_zero_is_two_ln_two():
    # 2D: F_0(0)/F_-1(0) = ln 2 / (1/2) = 2 ln 2 = 1.386 (closed forms, DLMF 25.12.16; the
    # example of rules/STAT02.yaml)
    assert transport.einstein_ratio(0.0, 2) == pytest.approx(2 * math.log(2), rel=1e-14)


def test_einstein_limits():
    # non-degenerate: D = mu kT/q ; degenerate 3D: D/mu -> (2/3)(E_F - E_C)/q,
    # with the Sommerfeld correction (1 + pi^2/(6 eta^2)) at order eta^-2 (mpmath check below)
    assert transport.einstein_ratio(-40.0) == pytest.approx(1.0, abs=1e-15)
    for eta in (200.0, 1000.0):
        ratio = transport.einstein_ratio(eta)
        assert ratio / (2 * eta / 3) == pytest.approx(1.0, rel=0.2 / eta**2 * 10)
        assert ratio == pytest.approx(
            float(fd_reference(0.5, eta) / fd_reference(-0.5, eta)), rel=1e-13
        )
    # 2D: F_0/F_-1 -> eta exactly up to e^-eta
    assert transport.einstein_ratio(50.0, 2) == pytest.approx(50.0, rel=1e-15)


def test_diffusion_coefficient_non_degenerate_silicon():
    # Ioffe NSM archive, Si electrical properties: mobility <= 1400 cm^2/Vs, diffusion
    # coefficient <= 36 cm^2/s (300 K, lightly doped)
    d = transport.diffusion_coefficient(0.14, 300.0, -20.0)
    assert d * 1e4 == pytest.approx(36, abs=0.5)


def test_field_dependent_mobility_limits():
    mu0, vsat = 0.14, 1.0e5
    assert transport.field_dependent_mobility(mu0, 1.0, vsat, 2.0) == pytest.approx(mu0, rel=1e-9)
    # at mu0 E = v_sat the mobility is mu0 / 2^(1/beta) (Caughey & Thomas 1967)
    E = vsat / mu0
    assert transport.field_dependent_mobility(mu0, E, vsat, 2.0) == pytest.approx(
        mu0 / math.sqrt(2)
    )
    assert transport.drift_velocity(mu0, 1e9, vsat, 1.1) == pytest.approx(vsat, rel=1e-3)


def test_jacoboni_canali_parameters_at_293K():
    # allpix-squared user manual ("Charge Carrier Mobility", Jacoboni-Canali at T = 293 K)
    # prints v_m, E_c and beta of electrons (1.0927393e7 cm/s, 6729.24 V/cm, 1.0916) and
    # holes (8.447804e6 cm/s, 17288.57 V/cm, 1.2081).  At E = E_c the Caughey-Thomas
    # mobility is (v_m/E_c) 2^(-1/beta) (Caughey & Thomas 1967): the silicon model at 293 K
    # with the low-field mobility v_m/E_c must give it
    si = load_material("Si")
    for band, vm, Ec, beta in (
        (si.electron, 1.0927393e5, 6729.24e2, 1.0916),
        (si.hole, 8.447804e4, 17288.57e2, 1.2081),
    ):
        vsat, exponent = float(band.vsat(293.0)), float(band.beta(293.0))
        assert vsat == pytest.approx(vm, rel=2e-5) and exponent == pytest.approx(beta, abs=1e-4)
        mu = transport.field_dependent_mobility(vm / Ec, Ec, vsat, exponent)
        assert mu == pytest.approx(vm / Ec * 2 ** (-1 / beta), rel=1e-4)


def test_intrinsic_silicon_resistivity():
    # intrinsic Si at 300 K: 3.2e5 ohm cm (Sze & Ng 2007, App. G (from memory)); both
    # carriers conduct, so this is the two-carrier conductivity q(n mu_n + p mu_p)
    state = solve_equilibrium("Si", 300.0)
    rho = float(carrier_transport(state)["rho"]) * 100
    assert rho == pytest.approx(3.2e5, rel=0.1)


@pytest.mark.parametrize("N,rho_published", [(1e15, 4.4), (1e16, 0.50), (1e17, 0.085)])
def test_silicon_resistivity_against_irvin_curve(N, rho_published):
    # n-type (phosphorus) Si at 300 K: Irvin's resistivity-doping curve as reproduced
    # in Sze & Ng 2007, Fig. 1.x: ~4.4, ~0.5, ~0.085 ohm cm (from memory; 15 %)
    state = solve_equilibrium("Si", 300.0, {"P": N * PER_CM3})
    rho = float(carrier_transport(state)["rho"]) * 100  # ohm m -> ohm cm
    assert rho == pytest.approx(rho_published, rel=0.15)


@pytest.mark.parametrize("dimension", [1, 2, 3])
@pytest.mark.parametrize("eta", [-30.0, 0.0, 4.29])
def test_unidirectional_velocity_in_every_dimensionality_against_quadrature(dimension, eta):
    # <v_x+> = (flux of carriers moving in +x)/(half the density), written out with
    # mpmath for a parabolic band of dimensionality d: the states at speed v carry
    # v^(d-1) dv, a carrier at v moving in +x has the mean x-velocity v <cos>_+ with
    # <cos>_+ = 1, 2/pi, 1/2 in 1D, 2D, 3D (Lundstrom & Jeong, Near-Equilibrium
    # Transport (2012), ch. 2); the non-degenerate limit is sqrt(2kT/(pi m*)) in each
    T, m = 300.0, 0.067
    kT, mass = sc.k * T, m * sc.m_e
    cosine = {1: mp.mpf(1), 2: 2 / mp.pi, 3: mp.mpf(1) / 2}[dimension]

    def occupied(v):
        return v ** (dimension - 1) / (1 + mp.exp(mass * v**2 / (2 * kT) - eta))

    unit = mp.sqrt(2 * kT / mass)  # speed at E = kT
    edges = [unit * mp.sqrt(x) for x in (0, 1, 4, 16, max(eta, 0) + 80)]
    if eta > 0:
        edges = sorted(edges + [unit * mp.sqrt(eta)])
    flux = mp.quad(lambda v: v * cosine * occupied(v), edges)
    count = mp.quad(occupied, edges)
    expected = float(flux / count)
    got = transport.unidirectional_thermal_velocity(T, m, eta, dimension)
    assert got == pytest.approx(expected, rel=1e-9)
    if eta < -20:
        assert got == pytest.approx(math.sqrt(2 * kT / (math.pi * mass)), rel=1e-9)


def test_unidirectional_thermal_velocity():
    # Ioffe NSM archive, Si: thermal velocity of electrons 2.3e5 m/s (rms, sqrt(3kT/m*)).
    # For a Maxwell-Boltzmann gas the mean of v_x over carriers moving in +x is
    # v_rms sqrt(2/(3 pi)) (Lundstrom & Jeong 2012, ch. 2)
    si = load_material("Si")
    T, m = 300.0, si.electron.thermal_mass
    base = transport.unidirectional_thermal_velocity(T, m)
    assert base * math.sqrt(3 * math.pi / 2) == pytest.approx(2.3e5, rel=0.01)
    # Fermi-Dirac form -> the non-degenerate one (F_1/F_1/2 -> 1)
    assert transport.unidirectional_thermal_velocity(T, m, -30.0) == pytest.approx(base, rel=1e-12)
    # degenerate 3D: <v_x+> -> (3/8) v_F (average over a Fermi hemisphere)
    eta = 2000.0
    v_f = math.sqrt(2 * eta * sc.k * T / (m * sc.m_e))
    assert transport.unidirectional_thermal_velocity(T, m, eta) == pytest.approx(
        3 / 8 * v_f, rel=1e-6
    )


def test_ballistic_limit_equals_landauer_conductance():
    # rho * lambda / A with lambda = 2D/<v+> equals the ballistic resistance
    # 2kT / (q^2 n <v+> A) of a non-degenerate conductor (Lundstrom & Jeong 2012, ch. 3)
    T, n, mu, m, area = 300.0, 1e23, 0.1, 0.26, 1e-14
    v = transport.unidirectional_thermal_velocity(T, m)
    lam = transport.backscattering_mean_free_path(transport.diffusion_coefficient(mu, T, -30.0), v)
    rho = 1.0 / transport.conductivity(n, 0.0, mu, 0.0)
    r_ballistic = conductor_resistance(rho, 0.0, lam, area)
    assert r_ballistic == pytest.approx(2 * sc.k * T / (sc.e**2 * n * v * area), rel=1e-9)
    long = conductor_resistance(rho, 1e-3, lam, area)
    assert long == pytest.approx(rho * 1e-3 / area, rel=1e-4)


def test_mean_free_path_in_silicon_is_tens_of_nanometres():
    # lightly doped Si electrons: lambda = 2D/<v+> ~ 2*36 cm^2/s / 1.06e7 cm/s ~ 68 nm
    # (order of magnitude as in Lundstrom & Jeong 2012; common practice (no source) for the number)
    state = solve_equilibrium("Si", 300.0, {"P": 1e14 * PER_CM3})
    lam = float(carrier_transport(state)["mfp_n"])
    assert 40e-9 < lam < 90e-9


def test_transport_is_vectorized():
    T = np.linspace(250, 400, 7)
    state = solve_equilibrium(
        "Si", T[:, None], {"P": np.geomspace(1e15, 1e19, 5)[None, :] * PER_CM3}
    )
    result = carrier_transport(state)
    assert result["rho"].shape == (7, 5)
    assert np.all(np.diff(result["mu_n"], axis=1) < 0)  # mobility falls with doping


def test_constants_match_scipy_codata():
    # scipy.constants carries CODATA 2022
    from checker.physics import constants as c

    for ours, name in [
        (c.BOLTZMANN, "Boltzmann constant"),
        (c.ELEMENTARY_CHARGE, "elementary charge"),
        (c.PLANCK, "Planck constant"),
        (c.ELECTRON_MASS, "electron mass"),
        (c.VACUUM_PERMITTIVITY, "vacuum electric permittivity"),
        (c.BOHR_RADIUS, "Bohr radius"),
    ]:
        assert ours == pytest.approx(sc.physical_constants[name][0], rel=1e-12), name
