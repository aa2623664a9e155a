"""The bulk neutrality solve, Einstein ratio and mean free path with a Kane conduction
band, against mpmath quadrature of the Kane density of states (E. O. Kane, J. Phys.
Chem. Solids 1, 249 (1957)) and the 40-digit reference solve of tests/reference.py."""

import math

import mpmath as mp
import numpy as np
import pytest
import scipy.constants as sc
from conftest import PER_CM3
from reference import mp_fermi_half, mp_kane_half, reference_solve

from checker import load_material, solve_equilibrium
from checker.physics import bands as bd
from checker.physics import energy_window as ew
from checker.physics import equilibrium
from checker.physics.carriers import carrier_transport

T300 = 300.0
ETAS = [-700.0, -40.0, -5.0, -1.0, 0.0, 2.0, 8.0, 20.0, 60.0]


def _alpha(material):
    return material.band_shape("electron").nonparabolicity


def _root(function, start):
    with mp.workdps(30):
        return float(mp.findroot(function, mp.mpf(start)))


def test_kane_factor_against_mpmath_quadrature():
    # F_K(eta, alpha kT) = n/N_c by mpmath quadrature of the Kane DOS (Kane 1957);
    # beta from 1e-5 (GaAs near 1 K) to 0.3 (InAs near 1000 K)
    for alpha_ev, T in ((0.61, 1.0), (2.68, 300.0), (2.68, 1000.0)):
        band = bd.KaneBand(3, 0.023, alpha_ev / sc.e)
        got, _ = ew.kane_density_factor(band, np.array(ETAS), T)
        beta = band.alpha * sc.k * T
        for eta, value in zip(ETAS, got):
            with mp.workdps(30):
                expected = mp.log(mp_kane_half(eta, beta))
            assert float(value) == pytest.approx(float(expected), abs=1e-11), (alpha_ev, T, eta)


def test_kane_factor_without_non_parabolicity_is_fermi_half():
    # alpha = 0: F_K = F_1/2 (mpmath polylog, NIST DLMF 25.12.16) to 1e-12
    band = bd.KaneBand(3, 0.067, 0.0)
    got, _ = ew.kane_density_factor(band, np.array(ETAS), T300)
    for eta, value in zip(ETAS, got):
        with mp.workdps(30):
            expected = mp.log(mp_fermi_half(mp.mpf(eta)))
        assert math.exp(float(value) - float(expected)) - 1 == pytest.approx(0, abs=1e-12)


@pytest.mark.parametrize(
    "density_cm3,kane_ev,parabolic_ev",
    # issue 15 check values: InAs at 300 K, alpha ~ 2.7 eV^-1 (values from memory, rounded)
    [(1e19, 0.37, 0.74), (1e18, 0.111, 0.156)],
)
def test_inas_fermi_level_from_the_solve(density_cm3, kane_ev, parabolic_ev):
    material = load_material("InAs")
    state = solve_equilibrium(material, T300, {"S": density_cm3 * PER_CM3})
    kT = sc.k * T300
    # the 40-digit bisection of tests/reference.py with the Kane density (mpmath quadrature)
    expected = reference_solve(material, T300, {"S": density_cm3 * PER_CM3}, {})
    assert float(state.eta_n) == pytest.approx(expected, rel=1e-10)
    assert float(state.residual) <= 1e-10
    assert float(state.eta_n) * kT / sc.e == pytest.approx(kane_ev, abs=0.005)
    # the parabolic band at the same density: an mpmath root of N_c F_1/2(eta) = n
    nc = float(material.Nc(T300))
    n = float(state.n)
    eta_parabolic = _root(lambda e: nc * mp_fermi_half(e) / n - 1, 20.0)
    assert eta_parabolic * kT / sc.e == pytest.approx(parabolic_ev, abs=0.01)


def test_kane_solve_batch_meets_the_neutrality_promise():
    # n-, p-type, compensated, cold and hot points of a Kane material in one call
    material = load_material("InAs")
    T = np.array([4.0, 77.0, 300.0, 300.0, 300.0, 600.0, 300.0])
    donors = np.array([1e17, 1e16, 1e20, 0.0, 1e17, 1e15, 3e18]) * PER_CM3
    acceptors = np.array([0.0, 0.0, 0.0, 1e18, 9.9e16, 0.0, 1e18]) * PER_CM3
    state = solve_equilibrium(material, T, {"S": donors}, {"Zn": acceptors})
    assert np.all(state.residual <= 1e-10)
    assert np.all(equilibrium.charge_balance_error(state) <= 1e-10)
    for i in (1, 3, 6):
        expected = reference_solve(
            material, float(T[i]), {"S": donors[i]}, {"Zn": acceptors[i]} if acceptors[i] else {}
        )
        assert state.eta_n[i] == pytest.approx(expected, rel=1e-10, abs=1e-10)


def test_parabolic_materials_take_the_closed_form():
    # Si has no Kane band: the solve keeps the F_1/2 fast path (no electron band stored)
    assert equilibrium.kane_conduction_band(load_material("Si")) is None
    assert solve_equilibrium("Si", T300, {"P": 1e17 * PER_CM3}).electron_band is None
    band = equilibrium.kane_conduction_band(load_material("InAs"))
    assert band is not None and band.alpha == _alpha(load_material("InAs"))


def _kane_window(alpha, T, eta, weight):
    """(2/sqrt(pi)) ∫ weight(x) sqrt(x(1+bx))(1+2bx) f(1-f) dx by mpmath, b = alpha kT."""
    beta = mp.mpf(alpha * sc.k * T)

    def integrand(x):
        e = mp.exp(-abs(x - eta))
        return weight(x) * mp.sqrt(x * (1 + beta * x)) * (1 + 2 * beta * x) * e / (1 + e) ** 2

    top = max(eta, 1)
    return 2 / mp.sqrt(mp.pi) * mp.quad(integrand, [0, top, top + 40, mp.inf])


def test_inas_einstein_ratio_and_velocity_use_the_kane_band():
    material = load_material("InAs")
    state = solve_equilibrium(material, T300, {"S": np.array([1e16, 1e18, 1e19]) * PER_CM3})
    result = carrier_transport(state)
    alpha = _alpha(material)
    band = state.electron_band
    kT = sc.k * T300
    for i, eta in enumerate(state.eta_n):
        with mp.workdps(30):
            density = mp_kane_half(eta, alpha * kT)
            slope = _kane_window(alpha, T300, mp.mpf(eta), lambda x: 1)
            # D/mu = (kT/q) n/(dn/deta) (Landsberg, Eur. J. Phys. 2, 213 (1981))
            ratio = float(density / slope)
            # <v_x^+> = (2 g_s/h) ∫ M f dE / n, M = k^2/(4 pi) for one valley in 3D
            # (Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2), as a window
            # integral of M_c = c (E^2/2 + alpha E^3/3)/(4 pi), c = 2 m* m_0/hbar^2
            c = 2 * band.mass * sc.m_e / sc.hbar**2
            e_kt = mp.mpf(kT)

            def modes(x, c=c, e_kt=e_kt):
                E = x * e_kt
                return c * (E**2 / 2 + alpha * E**3 / 3) / (4 * mp.pi)

            flux = 4 / sc.h * window_quad(modes, mp.mpf(eta))
            nc = 2 * (band.mass * sc.m_e * kT / (2 * math.pi * sc.hbar**2)) ** 1.5
            velocity = float(flux / (nc * density))

            # the window velocity <<v_x^+>> = (4kT/h) ∫ M (-df/dE) dE / (dn/deta) ties lambda to
            # D (D = <<v_x^+>> lambda/2, Lundstrom & Jeong 2012, ch. 6), M = dM_c/dE
            def mode_density(x, c=c, e_kt=e_kt):
                E = x * e_kt
                return c * (E + alpha * E**2) / (4 * mp.pi)

            window = float(4 * kT / sc.h * window_quad(mode_density, mp.mpf(eta)) / (nc * slope))
        got_ratio = result["D_n"][i] / (result["mu_n"][i] * kT / sc.e)
        assert got_ratio == pytest.approx(ratio, rel=1e-10)
        own = math.sqrt(2 * kT / (math.pi * band.mass * sc.m_e))
        thermal = math.sqrt(2 * kT / (math.pi * material.electron.thermal_mass * sc.m_e))
        assert result["v_n"][i] == pytest.approx(thermal * velocity / own, rel=1e-9)
        assert result["mfp_n"][i] == pytest.approx(
            2 * result["D_n"][i] / (thermal * window / own), rel=1e-9
        )
    # degenerate InAs: the Kane ratio lies well below the parabolic F_1/2/F_-1/2 (mpmath)
    with mp.workdps(30):
        eta = mp.mpf(float(state.eta_n[2]))
        parabolic = float(mp_fermi_half(eta) / -mp.re(mp.polylog(0.5, -mp.exp(eta))))
    assert result["D_n"][2] / (result["mu_n"][2] * kT / sc.e) < 0.8 * parabolic


def test_a_kane_crystal_written_as_a_layer_keeps_its_band_in_the_plane():
    # InAs 1e18 written as a 2D layer (bulk solve, 2D ratios): D/mu and <v_x+> of the
    # in-plane Kane band E(1 + aE) = hbar^2 k^2/2m*, whose 2D density of states is
    # (m*/pi hbar^2)(1 + 2aE) (Kane, J. Phys. Chem. Solids 1, 249 (1957)); by mpmath:
    # D/mu = (kT/q) n/(dn/deta) (Landsberg 1981) and <v_x+> = (2/pi) <v> over the
    # occupied states (Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2)
    material = load_material("InAs")
    state = solve_equilibrium(material, T300, {"S": np.array([1e18]) * PER_CM3})
    result = carrier_transport(state, 2)
    alpha, mass = state.electron_band.alpha, state.electron_band.mass * sc.m_e
    kT = sc.k * T300
    eta = mp.mpf(float(state.eta_n[0]))
    with mp.workdps(30):
        beta = mp.mpf(alpha * kT)  # x = E/kT below

        def dos(x):
            return 1 + 2 * beta * x

        def speed(x):  # in units of sqrt(2kT/m*)
            return mp.sqrt(x * (1 + beta * x)) / (1 + 2 * beta * x)

        def occupied(x):
            return 1 / (1 + mp.exp(x - eta))

        edges = [0, 1, eta, eta + 60]
        count = mp.quad(lambda x: dos(x) * occupied(x), edges)
        window = mp.quad(lambda x: dos(x) * occupied(x) * (1 - occupied(x)), edges)
        flux = mp.quad(lambda x: dos(x) * speed(x) * occupied(x), edges)
        ratio = float(count / window)
        velocity = float(2 / mp.pi * flux / count) * math.sqrt(2 * kT / mass)
    assert result["D_n"][0] / (result["mu_n"][0] * kT / sc.e) == pytest.approx(ratio, rel=1e-10)
    own = math.sqrt(2 * sc.k * T300 / (math.pi * mass))
    thermal = math.sqrt(2 * sc.k * T300 / (math.pi * material.electron.thermal_mass * sc.m_e))
    assert result["v_n"][0] == pytest.approx(thermal * velocity / own, rel=1e-9)


def window_quad(g, eta):
    """∫_0^inf g(x) (-df/dx) dx with -df/dx = e^(x-eta)/(1 + e^(x-eta))^2 (mpmath)."""

    def integrand(x):
        e = mp.exp(-abs(x - eta))
        return g(x) * e / (1 + e) ** 2

    top = max(eta, 1)
    return mp.quad(integrand, [0, top, top + 40, mp.inf])


def test_forward_velocity_parabolic_limit():
    # parabolic 3D: <v_x^+> = sqrt(2kT/(pi m*)) F_1/F_1/2 (Lundstrom & Jeong 2012, ch. 6;
    # F_j from mpmath polylog)
    band = bd.ParabolicBand(3, 0.26)
    got = ew.forward_velocity(band, np.array(ETAS), T300)
    base = math.sqrt(2 * sc.k * T300 / (math.pi * 0.26 * sc.m_e))
    for eta, value in zip(ETAS, got):
        with mp.workdps(30):
            e = mp.mpf(eta)
            expected = base * float(-mp.polylog(2, -mp.exp(e)) / mp_fermi_half(e))
        assert value == pytest.approx(expected, rel=1e-11)


@pytest.mark.parametrize("alpha_ev", [0.0, 0.005, 1.5, 40.0])
def test_two_d_kane_modes_below_against_mpmath(alpha_ev):
    # M_c(E) = ∫ M dE, M = (g_v/pi) k, k^2 = 2 m* E (1 + alpha E)/hbar^2 (Kane 1957;
    # Lundstrom & Jeong 2012, ch. 2); energies around kT, small and large alpha E
    band = bd.KaneBand(2, 0.04, alpha_ev / sc.e)
    c = 2 * 0.04 * sc.m_e / sc.hbar**2
    energies = np.array([1e-4, 0.01, 0.05, 0.3]) * sc.e
    got = bd.modes_below(band, energies)
    for energy, value in zip(energies, got):
        with mp.workdps(30):
            a = mp.mpf(band.alpha)
            expected = mp.quad(lambda E, a=a: mp.sqrt(c * E * (1 + a * E)) / mp.pi, [0, energy])
        assert value == pytest.approx(float(expected), rel=1e-12)


def test_a_cold_undoped_kane_crystal_is_checked_like_any_other(tmp_path):
    # fuzz reproduction: an InGaAs sweep down to 1.05 K underflows n to 0; the parabolic
    # Fermi level of BAND01 must not stop the run (it is the solve's own there: Boltzmann)
    from checker.engine.run import check_paths

    path = tmp_path / "cold.yaml"
    path.write_text(
        "material: InGaAs\ntemperature: {from: 0 degC, to: -272.1 degC, steps: 2}\n"
        "assumes: [non-degenerate]\n"
        "---\nmaterial: Si\ntemperature: 300 K\ndoping: {donors: {P: 1e16 cm-3}}\n",
        encoding="utf-8",
    )
    result = check_paths([str(path)])
    assert not result.input_errors, result.input_errors
    assert len(result.reports) == 2 and all(r.error is None for r in result.reports)


def test_a_sweep_the_solve_cannot_finish_loses_only_itself(tmp_path, monkeypatch):
    # the run's other calculations are still checked when one sweep's solve fails
    from checker.engine.regime import sweep
    from checker.engine.run import check_paths
    from checker.errors import ConvergenceError

    def fails(*args, **kwargs):
        raise ConvergenceError("the solve did not converge on this grid")

    monkeypatch.setattr(sweep, "rule_grid", fails)
    path = tmp_path / "two.yaml"
    path.write_text(
        "material: Si\ntemperature: {from: 250 K, to: 400 K, steps: 4}\n"
        "doping: {donors: {P: 1e16 cm-3}}\n"
        "---\nmaterial: Si\ntemperature: 300 K\ndoping: {donors: {P: 1e16 cm-3}}\n",
        encoding="utf-8",
    )
    result = check_paths([str(path)])
    first, second = result.reports
    assert "did not converge" in first.error and first.error.startswith(f"{path}:1")
    assert second.error is None and second.state is not None
