"""LAND01: a stated conductance above the ballistic limit 2q^2/h per mode is an error.

The conductance quantum comes from scipy.constants (2e^2/h, exact in the SI since 2019;
CODATA 2018/2022: 7.748091729...e-5 S); the modes of a graphene sheet from an mpmath
quadrature of M(E) = g_v |E|/(pi hbar v_F) per spin and width (Lundstrom & Jeong,
Near-Equilibrium Transport (2012), ch. 2; Castro Neto et al., Rev. Mod. Phys. 81, 109
(2009) for the linear band).  The threshold edge on a parabolic 2D gas is pinned in
tests/test_thresholds.py (land01).
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import mpmath as mp
import pytest
import scipy.constants as sc

from checker.engine.run import check_calculations
from checker.inputs.calculation_file import parse_calculations
from checker.physics.energy_window import LANDAUER_QUANTUM

ROOT = Path(__file__).resolve().parents[1]
G0 = 2 * sc.e**2 / sc.h


def test_conductance_quantum_is_the_si_value():
    # 2e^2/h with e and h exact (SI 2019); CODATA lists 7.748091729e-5 S
    assert LANDAUER_QUANTUM == pytest.approx(G0, rel=1e-15)
    assert G0 == pytest.approx(7.748091729e-5, rel=1e-9)


def _graphene_limit(ef_eV, width_m, T=300.0):
    """2q^2/h x W <M> of graphene (v_F = 1e6 m/s, g_v = 2), both cones, mpmath."""
    kT = sc.k * T
    eta = ef_eV * sc.e / kT
    g_v, v_F = 2, 1e6

    def weighted(x):  # x = (E - E_D)/kT; -df/dE = f(1 - f)/kT
        f = 1 / (1 + mp.exp(x - eta))
        return g_v * abs(x) * kT / (mp.pi * sc.hbar * v_F) * f * (1 - f)

    with mp.workdps(30):
        modes = mp.quad(weighted, [-mp.inf, 0, eta, mp.inf])
    return G0 * width_m * float(modes)


def _graphene_sheet(stated_S):
    return (
        "material: graphene\ntemperature: 300 K\n"
        "structure: {width: 2 um, length: 0.1 um}\n"
        f"stated:\n  ef_minus_ec: 0.15 eV\n  conductance: {stated_S:.12e} S\n"
    )


def _land01(text):
    read = parse_calculations(text, "sheet.yaml")
    assert not read.errors, read.errors
    result = check_calculations(read.calculations)
    assert not result.input_errors, result.input_errors
    return [[f for f in r.findings if f.rule == "LAND01"] for r in result.reports]


def test_graphene_sheet_above_its_modes_is_an_error_and_below_is_not():
    bound = _graphene_limit(0.15, 2e-6)
    above, below = _land01(_graphene_sheet(1.05 * bound) + "---\n" + _graphene_sheet(0.5 * bound))
    assert len(above) == 1 and not below
    assert above[0].severity == "error"
    assert above[0].indicator_value == pytest.approx(1.05, rel=1e-4)


def test_bulk_conductor_is_judged_by_its_modes_per_cross_section():
    # a bulk bar's modes: A <M>, and in the Boltzmann regime n <v_x+> = (4/h) kT <M>
    # (Lundstrom & Jeong 2012, ch. 2), so 2q^2/h A <M> = q^2 A n <v_x+>/(2kT) with
    # <v_x+> = sqrt(2kT/(pi m_c)), m_c = 0.26 (silicon's conductivity mass, Sze & Ng 2007
    # App. F (from memory)) and n = N_D (1e16 cm-3 phosphorus is ionized to within 1 % at
    # 300 K, Sze & Ng 2007 ch. 1)
    kT, area, n = sc.k * 300.0, 1e-12, 1e22
    v = (2 * kT / (3.141592653589793 * 0.26 * sc.m_e)) ** 0.5
    bound = sc.e**2 * area * n * v / (2 * kT)
    text = (
        "material: Si\ntemperature: 300 K\ndoping: {donors: {P: 1e16 cm-3}}\n"
        "structure: {length: 10 um, cross_section: 1 um^2}\nstated: {conductance: 1 S}\n"
    )
    (fired,) = _land01(text)
    assert len(fired) == 1
    assert fired[0].indicator_value == pytest.approx(1.0 / bound, rel=0.01)


def input_error_shown(path) -> str:
    """What ``regimecheck check path`` prints for a bad input: exit code 2, no traceback."""
    result = subprocess.run(
        [sys.executable, "-m", "checker", "check", str(path)],
        capture_output=True,
        text=True,
        cwd=ROOT,
    )
    assert result.returncode == 2
    shown = result.stdout + result.stderr
    assert "Traceback" not in shown
    return shown


def test_conductance_in_a_wrong_unit_names_the_line_and_exits_2(tmp_path):
    path = tmp_path / "sheet.yaml"
    path.write_text(_graphene_sheet(1e-3).replace("e-03 S", "e-03 ohm"), encoding="utf-8")
    shown = input_error_shown(path)
    assert "sheet.yaml:6" in shown and "conductance" in shown


def test_landauer_value_of_a_long_sheet_is_the_diffusive_conductance():
    # L >> lambda: (2q^2/h) W <M> lambda/(lambda + L) -> sigma_s W/L with sigma_s = q n_s mu
    # (Lundstrom & Jeong 2012, ch. 3 and 6); a GaN 2D gas 1 um wide and 1 cm long
    from checker.engine.regime import state_values

    text = (
        "material: GaN\ntemperature: 300 K\n"
        "structure: {dimensionality: 2, width: 1 um, length: 1 cm}\n"
        "stated:\n  electron_sheet_density: 1e13 cm-2\n"
        "  electron_mobility: 1500 cm^2/(V*s)\n  conductance: 1e-6 S\n"
    )
    read = parse_calculations(text, "long.yaml")
    values, errors, _ = state_values.solve_all(read.calculations)
    assert not errors
    diffusive = sc.e * 1e17 * 0.15 * 1e-6 / 1e-2  # q n_s mu W/L in SI
    # lambda is about 126 nm, so the Landauer value lies 1.3e-5 below the diffusive one
    assert values["G_landauer"][0] == pytest.approx(diffusive, rel=3e-5)
    assert values["G_landauer"][0] < diffusive
