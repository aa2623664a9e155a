"""Sheets and 2D gases, and zero-gap graphene sheets, through the engine: the sheet solve
against scipy.constants and mpmath, the rules that read it, and the inputs it refuses."""

import subprocess
import sys
from pathlib import Path

import mpmath as mp
import numpy as np
import pytest
import scipy.constants as sc

from checker.engine.regime import state_values
from checker.engine.run import check_calculations
from checker.inputs.calculation_file import parse_calculations

ROOT = Path(__file__).resolve().parents[1]
PER_CM2 = 1e-4


def _solve(text):
    read = parse_calculations(text, "sheet.yaml")
    assert not read.errors, read.errors
    values, errors, notes = state_values.solve_all(read.calculations)
    assert not errors
    state_values.fill_inputs(read.calculations, values)
    return values, notes


def _findings(text):
    read = parse_calculations(text, "sheet.yaml")
    assert not read.errors, read.errors
    run = check_calculations(read.calculations)
    return [{f.rule for f in report.findings} for report in run.reports], run


def _n2d(mass, T=300.0, valleys=1):
    # N_2D = g_v m* kT/(pi hbar^2), spin included (Ando, Fowler & Stern 1982), scipy.constants
    return valleys * mass * sc.m_e * sc.k * T / (np.pi * sc.hbar**2)


GAN = """
name: gan 2deg
material: GaN-AlGaN
temperature: 300 K
stated:
  electron_sheet_density: 1e13 cm-2
  electron_mobility: 1800 cm^2/(V*s)
  electron_diffusivity: 46.5 cm^2/s
"""


def test_gaas_effective_sheet_density_at_300_k():
    # N_2D for m* = 0.067 at 300 K = 7.24e11 cm-2 (computed from scipy.constants)
    values, notes = _solve(GAN.replace("GaN-AlGaN", "GaAs-AlGaAs").replace("1e13", "1e11"))
    assert _n2d(0.067) * PER_CM2 == pytest.approx(7.24e11, rel=2e-3)
    assert values["N2D_n"][0] == pytest.approx(_n2d(0.067), rel=1e-12)
    assert "N_2D = 7.24e+11 cm-2" in notes[0] and "1 subband" in notes[0]


def test_gan_2deg_fermi_level_and_einstein_ratio():
    values, _ = _solve(GAN)
    # eta = ln(e^(n_s/N_2D) - 1), one subband (Ando, Fowler & Stern 1982), in mpmath
    u = mp.mpf(1e17) / mp.mpf(_n2d(0.20))
    eta = float(mp.log(mp.exp(u) - 1))
    assert eta == pytest.approx(4.6, abs=0.05)
    assert values["eta_n"][0] == pytest.approx(eta, rel=1e-10)
    # D/mu = (kT/q)(1 + e^-eta) ln(1 + e^eta) exactly in 2D (Landsberg 1981)
    exact = float((1 + mp.exp(-eta)) * mp.log(1 + mp.exp(eta)))
    assert exact == pytest.approx(4.7, abs=0.05)
    assert values["einstein_n"][0] == pytest.approx(exact, rel=1e-10)
    assert values["ns_n"][0] == pytest.approx(1e17, rel=1e-10)
    # the bulk quantities stay unknown: a 2DEG is no undoped crystal
    assert np.isnan(values["ni"][0]) and np.isnan(values["dens_n"][0])


def test_gan_2deg_draws_stat02_but_neither_mob02_nor_intrinsic():
    found, _ = _findings(GAN)
    assert found[0] == {"STAT02"}  # and no MOB02 (no bulk lattice limit for a 2D gas)
    values, _ = _solve(GAN)
    assert values["regime"][0] == "degenerate 2D gas"


def test_subbands_add_their_densities():
    # two subbands of one mass: n = N_2D [ln(1 + e^eta) + ln(1 + e^(eta - E_2/kT))]
    # (Ando, Fowler & Stern 1982, sec. III), eta from the band edge, solved in mpmath
    text = GAN.replace("stated:", "structure:\n  subband_energies: [20 meV, 70 meV]\nstated:")
    values, notes = _solve(text)
    kT = sc.k * 300 / sc.e
    N = mp.mpf(_n2d(0.20))

    def total(e):
        return N * (mp.log(1 + mp.exp(e - 0.020 / kT)) + mp.log(1 + mp.exp(e - 0.070 / kT)))

    eta_edge = mp.findroot(lambda e: total(e) - mp.mpf(1e17), 5)
    assert values["eta_n"][0] == pytest.approx(float(eta_edge - 0.020 / kT), rel=1e-9)
    assert "2 subbands" in notes[0]


GRAPHENE = """
name: sheet
material: graphene
temperature: 300 K
stated:
  {given}
  electron_mobility: 5000 cm^2/(V*s)
"""


def _linear_density(eta):
    # n = int_0^inf D(E) f(E) dE, D = g_s g_v E/(2 pi hbar^2 v_F^2) (Castro Neto et al. 2009),
    # in units of N_eff = (2/pi)(kT/hbar v_F)^2: n/N_eff = int_0^inf x/(1 + e^(x - eta)) dx
    return mp.quad(lambda x: x / (1 + mp.exp(x - eta)), [0, max(eta, 1), mp.inf])


def _f1(eta):
    # the complete Fermi–Dirac integral F_1(eta) = -Li_2(-e^eta) (Blakemore 1982)
    return -mp.polylog(2, -mp.exp(eta))


def test_graphene_intrinsic_density_fang_2007():
    values, notes = _solve(GRAPHENE.format(given="net_sheet_density: 0 cm-2"))
    kT = sc.k * 300
    ni = np.pi / 6 * (kT / (sc.hbar * 1e6)) ** 2  # Fang et al., APL 91, 092109 (2007), eq. (2)
    assert ni * PER_CM2 == pytest.approx(8e10, rel=0.02)
    assert values["ni_s"][0] == pytest.approx(ni, rel=1e-12)
    assert values["ns_n"][0] == pytest.approx(ni, rel=1e-9)
    assert values["ns_p"][0] == pytest.approx(ni, rel=1e-9)
    assert "n_i = 8.08e+10 cm-2" in notes[0]


@pytest.mark.parametrize("ef_mev", [-80.0, 0.0, 20.0, 150.0])
def test_graphene_density_against_quadrature_of_the_linear_dos(ef_mev):
    values, _ = _solve(GRAPHENE.format(given=f"ef_minus_ec: {ef_mev} meV"))
    kT = sc.k * 300
    neff = 2 / np.pi * (kT / (sc.hbar * 1e6)) ** 2
    eta = mp.mpf(ef_mev * 1e-3 * sc.e / kT)
    assert values["ns_n"][0] == pytest.approx(float(neff * _linear_density(eta)), rel=1e-10)
    assert values["ns_p"][0] == pytest.approx(float(neff * _linear_density(-eta)), rel=1e-10)
    # D/mu = (kT/q) F_1/F_0 of the cone (Landsberg 1981): n/(dn/deta), F_0 = ln(1 + e^eta)
    ratio = _linear_density(eta) / mp.log(1 + mp.exp(eta))
    assert values["einstein_n"][0] == pytest.approx(float(ratio), rel=1e-10)


def test_graphene_zero_temperature_limit():
    # far above the Dirac point n -> E_F^2/(pi hbar^2 v_F^2) (+ pi^2/6 N_eff): Fang et al. 2007
    values, _ = _solve(GRAPHENE.format(given="ef_minus_ec: 0.4 eV"))
    zero = (0.4 * sc.e) ** 2 / (np.pi * sc.hbar**2 * 1e12)
    neff = 2 / np.pi * (sc.k * 300 / (sc.hbar * 1e6)) ** 2
    eta = 0.4 * sc.e / (sc.k * 300)
    # F_1(eta) = eta^2/2 + pi^2/6 - F_1(-eta) (reflection of the complete F_1)
    thermal = neff * float(np.pi**2 / 6 - _f1(-eta))
    assert values["ns_n"][0] == pytest.approx(zero + thermal, rel=1e-10)
    assert values["ns_n"][0] / zero == pytest.approx(1.0, abs=0.04)


def test_graphene_net_density_fixes_both_cones():
    values, _ = _solve(GRAPHENE.format(given="net_sheet_density: 1e11 cm-2"))
    assert values["ns_n"][0] - values["ns_p"][0] == pytest.approx(1e15, rel=1e-10)
    kT = sc.k * 300
    neff = mp.mpf(2 / np.pi * (kT / (sc.hbar * 1e6)) ** 2)
    target = mp.mpf(1e15) / neff
    eta = mp.findroot(lambda e: _f1(e) - _f1(-e) - target, 0.6)
    assert values["eta_n"][0] == pytest.approx(float(eta), rel=1e-9)
    # Fang et al. 2007: n p = n_i^2 only when non-degenerate; here p/n = 0.30
    assert values["ns_p"][0] / values["ns_n"][0] == pytest.approx(0.302, abs=0.002)


def test_examples_fire_the_sheet_rules():
    found = set()
    for name in ("lh9_gan_hemt_channel.yaml", "lq2_graphene_sensor.yaml"):
        path = ROOT / "examples" / name
        read = parse_calculations(path.read_text(), str(path))
        assert not read.errors
        run = check_calculations(read.calculations)
        ids = [{f.rule for f in report.findings} for report in run.reports]
        found |= set().union(*ids)
        assert ids[-1] == set()  # the reviewed calculation is clean
    assert {"STAT02", "GRAPH01", "GRAPH02", "GRAPH03"} <= found


@pytest.mark.parametrize(
    "text, place, words",
    [
        (
            "material: Si\ntemperature: 300 K\nstated:\n  electron_density: 1e12 cm-2\n",
            "x.yaml:4:",
            "electron_sheet_density",
        ),
        (
            "material: Si\ntemperature: 300 K\nstated:\n  electron_sheet_density: 1e12 cm-2\n",
            "x.yaml:4:",
            "dimensionality: 2",
        ),
        ("material: graphene\ntemperature: 300 K\n", "x.yaml:1:", "net_sheet_density"),
        (
            "material: GaN-AlGaN\ntemperature: 300 K\nstated: {hole_sheet_density: 1e12 cm-2}\n",
            "x.yaml:3:",
            "describes no hole band",
        ),
        (
            "material: GaN-AlGaN\ntemperature: 300 K\nstructure: {dimensionality: 3}\n"
            "stated: {electron_sheet_density: 1e13 cm-2}\n",
            "x.yaml:3:",
            "2D material",
        ),
    ],
)
def test_bad_sheet_input_names_file_line_and_fix(tmp_path, text, place, words):
    path = tmp_path / "x.yaml"
    path.write_text(text)
    done = subprocess.run(
        [sys.executable, "-m", "checker.cli", "check", str(path)],
        capture_output=True,
        text=True,
        cwd=tmp_path,
    )
    said = (done.stdout + done.stderr).replace(str(tmp_path) + "/", "")
    assert done.returncode == 2 and "Traceback" not in said
    assert place in said and words in said


def test_a_bulk_material_as_a_2d_gas_takes_its_own_mass():
    # a quantum well of a bulk crystal: one subband of the crystal's own (edge) mass,
    # N_2D = g_v m* kT/(pi hbar^2) (Ando, Fowler & Stern 1982); GaAs Gamma valley, g_v = 1
    text = GAN.replace("material: GaN-AlGaN", "material: GaAs\nstructure: {dimensionality: 2}")
    read = parse_calculations(text, "sheet.yaml")
    mass = read.calculations[0].material.dos_mass("electron")
    assert mass == pytest.approx(0.067, abs=0.005)  # GaAs Gamma mass (Vurgaftman et al. 2001)
    values, notes = _solve(text)
    assert values["N2D_n"][0] == pytest.approx(_n2d(mass), rel=1e-12)
    assert values["ns_n"][0] == pytest.approx(1e17, rel=1e-9)
    assert "2D statistics of the electrons" in notes[0]
