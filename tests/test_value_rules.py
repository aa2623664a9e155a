"""Stated numbers that match no shortcut are compared with the solve (rules VAL01-05).

Expected values come from the independent 40-digit solve of tests/reference.py, mpmath
and scipy.constants; the cases are the missed mistakes of a practitioner's trial (a
density, Fermi level, velocity, mean free path or resistance a decade off)."""

import math

import mpmath as mp
import pytest
import scipy.constants as sc
from reference import K_B, mp_fermi_half, reference_solve

from checker import load_material
from checker.engine.run import check_paths


def _check(tmp_path, body):
    path = tmp_path / "calc.yaml"
    path.write_text("name: case\nmaterial: Si\ntemperature: 300 K\n" + body)
    (report,) = check_paths([str(path)]).reports
    return report


def _one(report, rule):
    found = [f for f in report.findings if f.rule == rule]
    assert len(found) == 1, [f.rule for f in report.findings]
    return found[0]


def _electrons(N):
    si = load_material("Si")
    eta = reference_solve(si, 300.0, {"P": N * 1e6}, {})
    return eta, float(si.Nc(300.0)) * float(mp_fermi_half(eta))


def test_val01_density_a_decade_off(tmp_path):
    report = _check(
        tmp_path, "doping: {donors: {P: 1e16 cm-3}}\nstated: {electron_density: 1e15 cm-3}\n"
    )
    finding = _one(report, "VAL01")
    _, n = _electrons(1e16)
    assert finding.corrections[0].corrected == pytest.approx(n, rel=1e-8)
    assert finding.indicator_value == pytest.approx(n / 1e21, rel=1e-8)


def test_val01_minority_density_and_quiet_cases(tmp_path):
    si = load_material("Si")
    eta, n = _electrons(1e16)
    p = float(si.Nv(300.0)) * float(mp_fermi_half(-eta - float(si.band_gap(300.0)) / (K_B * 300.0)))
    report = _check(
        tmp_path,
        "doping: {donors: {P: 1e16 cm-3}}\n"
        f"stated: {{hole_density: {p * 1e-6 * 10:.4e} cm-3}}\n",
    )
    assert _one(report, "VAL01").corrections[0].corrected == pytest.approx(p, rel=1e-8)
    # the solve's own number, and a shortcut value (n = N_D: ION01's, not VAL01's), are quiet
    for stated in (f"{n * 1e-6:.6e}", "1e16"):
        report = _check(
            tmp_path,
            f"doping: {{donors: {{P: 1e16 cm-3}}}}\nstated: {{electron_density: {stated} cm-3}}\n",
        )
        assert not [f for f in report.findings if f.rule == "VAL01"]


def test_val02_fermi_level_sign_or_edge_slip(tmp_path):
    report = _check(tmp_path, "doping: {donors: {P: 1e16 cm-3}}\nstated: {ef_minus_ec: -0.05 eV}\n")
    finding = _one(report, "VAL02")
    eta, _ = _electrons(1e16)
    kT = sc.k * 300.0
    assert finding.indicator_value == pytest.approx(abs(-0.05 * sc.e / kT - eta), rel=1e-8)
    assert finding.corrections[0].corrected == pytest.approx(eta * kT, rel=1e-8)


def test_val03_velocity_against_the_canali_curve(tmp_path):
    # Canali et al., IEEE TED 22, 1045 (1975): v_m = 1.53e9 T^-0.87 cm/s, beta = 2.57e-2 T^0.66;
    # mobility 1417 cm^2/Vs (Masetti et al. 1983, mu_max for undoped Si at 300 K)
    report = _check(
        tmp_path, "structure: {field: 10 kV/cm}\nstated: {electron_velocity: 6.7e5 cm/s}\n"
    )
    finding = _one(report, "VAL03")
    vm, beta, mu, E = 1.53e9 * 300**-0.87, 2.57e-2 * 300**0.66, 1417.0, 1e4
    v = mu * E / (1 + (mu * E / vm) ** beta) ** (1 / beta)
    assert finding.corrections[0].corrected * 100 == pytest.approx(v, rel=1e-5)


def _fd(j, eta):
    """Normalized Fermi–Dirac integral F_j(eta) = -Li_{j+1}(-e^eta) (mpmath)."""
    return float(-mp.re(mp.polylog(j + 1, -mp.exp(eta))))


def _arora_n(N, T):
    """Arora, Hauser & Roulston, IEEE TED 29, 292 (1982), electrons."""
    Tn = T / 300.0
    return 88 * Tn**-0.57 + 7.4e8 * T**-2.33 / (
        1 + (N / (1.26e17 * Tn**2.4)) ** (0.88 * Tn**-0.146)
    )


def test_val04_mean_free_path(tmp_path):
    report = _check(
        tmp_path, "doping: {donors: {P: 1e17 cm-3}}\nstated: {mean_free_path: 300 nm}\n"
    )
    finding = _one(report, "VAL04")
    # mobility: ASTM F723 eqs. (5)-(6) at 23 degC, mu = 1/(q N rho), carried to 300 K by
    # Arora's ratio; lambda = 2D/<<v_x+>>, D = mu kT/q F_1/2/F_-1/2, the window velocity
    # <<v_x+>> = sqrt(2kT/(pi m*)) F_0/F_-1/2 with the conductivity mass 0.26 m0 (Lundstrom &
    # Jeong, Near-Equilibrium Transport (2012), ch. 6; mass: Sze & Ng (2007), from memory)
    y = 1.0
    z = (-3.0769 + 2.2108 * y - 0.62272 * y**2 + 0.057501 * y**3) / (
        1 - 0.68157 * y + 0.19833 * y**2 - 0.018376 * y**3
    )
    mu = 1 / (6.242e18 / 1e17 * 10**z * sc.e * 1e17)  # cm^2/Vs at 23 degC
    mu *= _arora_n(1e17, 300.0) / _arora_n(1e17, 296.15)
    eta, _ = _electrons(1e17)
    kT = sc.k * 300.0
    D = mu * 1e-4 * kT / sc.e * _fd(0.5, eta) / _fd(-0.5, eta)
    v = math.sqrt(2 * kT / (math.pi * 0.26 * sc.m_e)) * _fd(0, eta) / _fd(-0.5, eta)
    assert finding.corrections[0].corrected == pytest.approx(2 * D / v, rel=1e-6)
    assert finding.indicator_value == pytest.approx(300e-9 / (2 * D / v), rel=1e-6)


def test_val05_resistance_against_own_geometry(tmp_path):
    body = "doping: {donors: {P: 1e16 cm-3}}\nstructure: {length: 200 um, cross_section: 8 um^2}\n"
    report = _check(tmp_path, body + "stated: {resistance: 10 ohm}\n")
    finding = _one(report, "VAL05")
    # ASTM F723 eqs. (5)-(6) at 23 degC: rho(1e16 P) = 0.5229 ohm cm; 300 K is ~3 % higher
    rho = 6.242e18 / 1e16 * 10 ** (-3.0769) / 100  # ohm m
    assert finding.corrections[0].corrected == pytest.approx(rho * 200e-6 / 8e-12, rel=0.05)
    # R = rho*L/A exactly is the diffusive shortcut (TRAN01's), not a VAL05 finding
    expected = finding.corrections[0].corrected
    quiet = _check(tmp_path, body + f"stated: {{resistance: {expected:.6e} ohm}}\n")
    assert not [f for f in quiet.findings if f.rule == "VAL05"]


def test_one_finding_per_stated_number(tmp_path):
    # the minority density n_i^2/N_D with the old n_i = 1.45e10 cm^-3 (Sze 1981) is off the
    # solve, but the shortcut rule that explains it (DOPE01: no band-gap narrowing) reports
    # it; the value check does not repeat it at the same line
    report = _check(
        tmp_path,
        "doping: {donors: {P: 2e19 cm-3}}\n"
        "stated:\n  intrinsic_density: 1.45e10 cm-3\n"
        "  hole_density: 10.5 cm-3\n",
    )
    lines = {}
    for finding in report.findings:
        lines.setdefault(finding.line, []).append(finding.rule)
    assert "DOPE01" in lines[7] and "VAL01" not in lines[7]  # the hole_density line
