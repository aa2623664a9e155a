"""Each stated formula's error, computed as a column over the calculations stating it,
is the error of that calculation alone written out here in Python floats: the relative
error value/exact - 1 of a density or a diffusivity, and (value - exact)/kT of an energy,
with k the SI Boltzmann constant (scipy.constants, exact since the 2019 SI).  The formulas
are the trade's shortcuts: n = N_D (full ionization), D = mu kT/q (Einstein relation),
E_F - E_c = kT ln(N_D/N_c) (Boltzmann approximation; Sze & Ng, Physics of Semiconductor
Devices, 3rd ed. (2007), ch. 1).  The groups (n-type Si, p-type Si, n-type Ge, Kane-band
InGaAs) interleave in the file."""

import math

import pytest
from scipy import constants
from test_formula_columns import checked_reports

# (material, donor, donors cm^-3, acceptors cm^-3, temperature K): invented points
POINTS = [
    ("Si", "P", 1e16, 2e15, 300),
    ("Ge", "Sb", 4e17, 1e15, 250),
    ("Si", "P", 3e14, 5e16, 350),
    ("InGaAs", "Si", 2e17, 0, 300),
    ("Si", "As", 7e18, 6e14, 400),
    ("Ge", "Sb", 1e15, 0, 77),
]
FORMULAS = ("n = N_D", "D_n = mu_n*k*T/q", "E_F - E_c = k*T*ln(N_D/N_c)")


def _text() -> str:
    docs = []
    for material, donor, nd, na, T in POINTS:
        docs.append(
            f"material: {material}\ntemperature: {T} K\n"
            f"doping:\n  donors: {{{donor}: {nd:g} cm-3}}\n"
            + (f"  acceptors: {{B: {na:g} cm-3}}\n" if na else "")
            + "formulas:\n"
            + "".join(f"  - {f}\n" for f in FORMULAS)
        )
    return "---\n".join(docs)


def test_each_formula_error_as_its_calculation_alone(tmp_path):
    checked = 0
    for (*_, T), report in zip(POINTS, checked_reports(tmp_path, _text())):
        assert [r.text for r in report.formulas] == list(FORMULAS)
        for formula in report.formulas:
            value, exact = formula.value, formula.exact
            assert math.isfinite(value) and math.isfinite(exact), formula.text
            if formula.energy:
                expected = (value - exact) / (constants.k * T)
            else:
                expected = value / exact - 1.0
            assert formula.error == pytest.approx(expected, rel=1e-12, abs=1e-15), formula.text
            checked += 1
    assert checked == len(POINTS) * len(FORMULAS)
