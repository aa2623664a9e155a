"""BAND01 (parabolic band assumed where non-parabolicity matters): fires on the wrong side
of its threshold, stays quiet on the right side, for a parabolic material and where the
shortcut is not used; its corrections against the 40-digit reference solve with the Kane
density of states (tests/reference.py, mpmath quadrature; E. O. Kane, J. Phys. Chem.
Solids 1, 249 (1957)) and mpmath F_1/2 roots (NIST DLMF 25.12.16)."""

import mpmath as mp
import pytest
import scipy.constants as sc
from reference import mp_fermi_half, mp_kane_half, reference_solve
from test_rules import calc, check, correction, one, quiet

from checker import load_material

CM3 = 1e6
T300 = 300.0
KT = sc.k * T300


def _parabolic_eta(material, density):
    """eta of N_c F_1/2(eta) = density (mpmath root)."""
    nc = float(material.Nc(T300))
    with mp.workdps(30):
        return float(mp.findroot(lambda e: nc * mp_fermi_half(e) / density - 1, mp.mpf(5)))


def _kane(material, density_cm3):
    """eta_n of the 40-digit reference solve with the Kane density of states."""
    return reference_solve(material, T300, {"S": density_cm3 * CM3}, {})


def _kane_einstein_ratio(material, eta):
    """n/(dn/deta) of the Kane band (Landsberg, Eur. J. Phys. 2, 213 (1981)), mpmath."""
    beta = material.band_shape("electron").nonparabolicity * KT
    with mp.workdps(30):
        density = mp_kane_half(eta, beta)
        slope = mp.diff(lambda e: mp_kane_half(e, beta), mp.mpf(eta))
    return float(density / slope)


def _stated_ef(eta):
    return f"stated:\n  ef_minus_ec: {eta * KT / sc.e:.6f} eV\n"


def test_band01_fires_for_a_parabolic_fermi_level_in_inas(tmp_path):
    # InAs, 1e18 cm^-3 S, 300 K (alpha = 2.68 1/eV of the material file): the stated
    # Fermi level is the parabolic inversion; the check values 0.156 vs 0.111 eV
    material = load_material("InAs")
    parabolic = _parabolic_eta(material, 1e18 * CM3)
    report = check(tmp_path, calc("InAs", "300 K", "S: 1e18 cm-3", extra=_stated_ef(parabolic)))
    finding = one(report, "BAND01", "electrons")
    eta = _kane(material, 1e18)
    # the indicator inverts the solved density (n = N_D + p, a little above N_D)
    beta = material.band_shape("electron").nonparabolicity * KT
    with mp.workdps(30):
        solved = float(material.Nc(T300)) * float(mp_kane_half(eta, beta))
    par_solved = _parabolic_eta(material, solved)
    assert finding.indicator_value == pytest.approx(par_solved - eta, rel=1e-8)
    assert finding.indicator_value > 1
    level = correction(finding, "Fermi level")
    # corrections carry SI values (J, m^-3, m^2/s)
    assert level.corrected == pytest.approx(eta * KT, rel=1e-9)
    assert level.corrected / sc.e == pytest.approx(0.111, abs=0.002)
    assert level.stated / sc.e == pytest.approx(0.156, abs=0.002)
    density = correction(finding, "carrier density")
    with mp.workdps(30):
        at_fermi_level = float(material.Nc(T300)) * float(mp_fermi_half(mp.mpf(eta)))
    assert density.stated == pytest.approx(at_fermi_level, rel=1e-8)
    assert density.corrected == pytest.approx(1e18 * CM3, rel=1e-6)


def test_band01_implied_by_a_parabolic_diffusivity(tmp_path):
    material = load_material("InAs")
    parabolic = _parabolic_eta(material, 1e18 * CM3)
    with mp.workdps(30):
        e = mp.mpf(parabolic)
        parabolic_ratio = float(mp_fermi_half(e) / -mp.re(mp.polylog(0.5, -mp.exp(e))))
    mu = 18000.0
    d = mu * KT / sc.e * parabolic_ratio
    extra = (
        f"stated:\n  electron_mobility: {mu} cm^2/(V*s)\n  electron_diffusivity: {d:.2f} cm^2/s\n"
    )
    report = check(tmp_path, calc("InAs", "300 K", "S: 1e18 cm-3", extra=extra))
    finding = one(report, "BAND01", "electrons")
    eta = _kane(material, 1e18)
    diffusion = correction(finding, "diffusion coefficient")
    # SI: mu in m^2/(V s), D in m^2/s
    expected = mu * 1e-4 * KT / sc.e * _kane_einstein_ratio(material, eta)
    assert diffusion.corrected == pytest.approx(expected, rel=1e-8)
    assert diffusion.stated == pytest.approx(round(d, 2) * 1e-4, rel=1e-12)


def test_band01_quiet_below_its_threshold_and_for_the_kane_value(tmp_path):
    material = load_material("InAs")
    # 3e17 cm^-3: the parabolic Fermi level lies 0.65 kT above the Kane one (< 1 kT)
    parabolic = _parabolic_eta(material, 3e17 * CM3)
    eta = _kane(material, 3e17)
    assert 0.3 < parabolic - eta < 1.0
    report = check(tmp_path, calc("InAs", "300 K", "S: 3e17 cm-3", extra=_stated_ef(parabolic)))
    assert quiet(report, "BAND01")
    # the Kane Fermi level stated: no parabolic shortcut used
    eta = _kane(material, 1e18)
    report = check(tmp_path, calc("InAs", "300 K", "S: 1e18 cm-3", extra=_stated_ef(eta)))
    assert quiet(report, "BAND01")


def test_band01_quiet_for_a_parabolic_material(tmp_path):
    # degenerate Si (no Kane band): the F_1/2 inversion is the exact Fermi level
    eta = reference_solve(load_material("Si"), T300, {"As": 5e19 * CM3}, {})
    report = check(tmp_path, calc("Si", "300 K", "As: 5e19 cm-3", extra=_stated_ef(eta)))
    assert quiet(report, "BAND01")
