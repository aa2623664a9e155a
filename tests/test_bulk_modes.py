"""A bulk conductor's modes in the energy window, computed where the calculation gives a
cross-section (the only points whose modes reach a conductance), in single calculations
solved as one group and in a sweep.

References: M(E) = g_v m* E/(2πħ²) per area and spin of a parabolic 3D band, so that
<M> = g_v m* kT/(2πħ²) ln(1 + e^η) over the window (Lundstrom & Jeong, Near-Equilibrium
Transport (2012), ch. 2); the modes of anisotropic valleys scale by sqrt(m_d/m_c), the ratio
of <v_x+> = sqrt(2kT/(π m)) F_0/F_1/2-weighted velocities (same reference, ch. 2 and 6;
C. Jeong et al., J. Appl. Phys. 107, 023707 (2010)); constants from scipy.constants; the
Fermi level from the 40-digit solve (tests/reference.py).
"""

import math

import numpy as np
import pytest
import scipy.constants as sc
from reference import reference_solve

from checker.engine.regime import state_values
from checker.inputs.calculation_file import parse_calculations

T = 300.0
DONORS = 1e17  # cm^-3
BAR = (
    "name: {name}\nmaterial: Si\n"
    + f"temperature: {T} K\ndoping: {{{{donors: {{{{P: {DONORS} cm-3}}}}}}}}\n"
    + "{structure}"
)
WITH_AREA = BAR.format(name="bar", structure="structure: {length: 1 um, cross_section: 1 um^2}\n")
NO_AREA = BAR.format(name="no cross-section", structure="")


def expected_modes_per_area():
    """<M> per m^2 (per spin) of silicon's conduction band at 1e17 P, 300 K, with the
    valley factor sqrt(m_d/m_c): masses from the material file (data)."""
    calcs = parse_calculations(WITH_AREA, "bar.yaml").calculations
    material = calcs[0].material
    m_d = material.bands("electron", 3)[0].mass
    m_c = material.electron.thermal_mass
    eta = reference_solve(material, T, {"P": DONORS * 1e6}, {})
    scale = m_d * sc.m_e * sc.k * T / (2 * math.pi * sc.hbar**2)
    return scale * math.log1p(math.exp(eta)) * math.sqrt(m_d / m_c)


def solved(text):
    read = parse_calculations(text, "bars.yaml")
    assert not read.errors, read.errors
    values, errors, _ = state_values.solve_all(read.calculations)
    assert not errors
    return values


def test_modes_where_a_cross_section_is_given_in_one_group():
    # the two calculations share material, species and options: solved in one call
    values = solved(WITH_AREA + "---\n" + NO_AREA)
    assert values["modes_a_n"][0] == pytest.approx(expected_modes_per_area(), rel=1e-9)
    # 2q²/h per mode times the modes of 1 um^2 (scipy.constants: 2e²/h exact in the SI)
    assert values["G_ballistic"][0] == pytest.approx(
        2 * sc.e**2 / sc.h * (values["modes_a_n"][0] + values["modes_a_p"][0]) * 1e-12,
        rel=1e-12,
    )
    # no cross-section: no conductor, so neither modes nor a ballistic limit
    assert np.isnan(values["modes_a_n"][1]) and np.isnan(values["G_ballistic"][1])


def test_sweep_of_a_bar_counts_its_modes():
    read = parse_calculations(WITH_AREA, "bar.yaml")
    count = 3
    values, _ = state_values.solve_sweep(
        read.calculations[0],
        np.full(count, T),
        {"P": np.full(count, DONORS * 1e6)},
        {},
    )
    assert values["modes_a_n"] == pytest.approx(np.full(count, expected_modes_per_area()), rel=1e-9)
