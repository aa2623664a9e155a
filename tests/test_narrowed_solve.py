"""The second solve, with the material's band-gap narrowing (dens_bgn_x), is done for the
calculations whose rules read it -- those stating n_i or a carrier density (DOPE01, VAL01)
-- also when they are solved in one group with calculations that state neither.

References: the narrowing of Klaassen, Slotboom & de Graaff, Solid-State Electron. 35, 125
(1992): ΔE_g = 6.92 meV [x + sqrt(x² + 0.5)], x = ln(N/1.3e17 cm^-3); the hole density
p = N_v F_1/2(η_p) from the 40-digit solve (tests/reference.py) of silicon with and without
that narrowing; constants from scipy.constants.
"""

import math

import pytest
import scipy.constants as sc
from reference import mp_fermi_half, reference_solve
from test_rules import CM3, _NarrowedGap

from checker import load_material
from checker.engine.regime import state_values
from checker.inputs.calculation_file import parse_calculations

T, DONORS = 300.0, 1e18  # K, cm^-3 of P
POINT = "material: Si\ntemperature: 300 K\ndoping: {donors: {P: 1e18 cm-3}}\n"
STATED = {
    "hole density": "stated: {hole_density: 110 cm-3}\n",
    "intrinsic density": "stated: {intrinsic_density: 1e10 cm-3}\n",
    "nothing": "",
}


def reference_holes(narrowed):
    """p (m^-3) of the 40-digit solve, of silicon with the 1992 narrowing or without."""
    silicon = load_material("Si")
    kT = sc.k * T
    if narrowed:
        x = math.log(DONORS / 1.3e17)
        silicon = _NarrowedGap(silicon, 6.92e-3 * (x + math.sqrt(x * x + 0.5)) * sc.e)
    eta = reference_solve(silicon, T, {"P": DONORS * CM3}, {})
    eta_p = -eta - float(silicon.band_gap(T)) / kT
    return float(silicon.Nv(T)) * float(mp_fermi_half(eta_p))


def test_narrowed_densities_where_a_density_or_n_i_is_stated():
    text = "---\n".join(POINT + stated for stated in STATED.values())
    read = parse_calculations(text, "points.yaml")
    assert not read.errors, read.errors
    values, errors, _ = state_values.solve_all(read.calculations)
    assert not errors
    with_narrowing, without = reference_holes(True), reference_holes(False)
    for index, what in enumerate(STATED):
        # the solve itself never narrows (the calculation does not ask for it)
        assert values["dens_p"][index] == pytest.approx(without, rel=1e-7), what
        expected = without if what == "nothing" else with_narrowing
        assert values["dens_bgn_p"][index] == pytest.approx(expected, rel=1e-7), what
