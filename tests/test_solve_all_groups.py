"""solve_all solves calculations of one material, species and options together and finds the
intrinsic-onset temperatures of each material's points in one bisection: every quantity of a
file of mixed calculations must equal, to the bit, that of each calculation solved alone.

The onset itself is checked against a root of n_i(T) = 0.1 |N_D - N_A| found by mpmath
(findroot at 40 digits) from n_i = sqrt(N_c N_v) exp(-E_g / 2kT) (Sze & Ng, Physics of
Semiconductor Devices, 3rd ed. (2007), ch. 1) and the Boltzmann constant of scipy.constants.
"""

import mpmath
import numpy as np
import pytest
import scipy.constants as sc

from checker import MissingParameterError, load_material
from checker.engine.regime import state_values
from checker.inputs.calculation_file import parse_calculations

# invented points over several materials, dopant sets and dominant species
POINTS = [
    ("Si", 300, "donors: {P: 1e15 cm-3}"),
    ("Si", 350, "donors: {As: 3e17 cm-3}, acceptors: {B: 1e16 cm-3}"),
    ("Si", 420, "donors: {P: 2e16 cm-3}, acceptors: {B: 4e16 cm-3}"),
    ("Si", 250, "donors: {As: 5e19 cm-3}"),
    ("Si", 500, "donors: {P: 1e14 cm-3, As: 2e14 cm-3}"),
    ("Ge", 300, "donors: {Sb: 1e16 cm-3}"),
    ("Ge", 380, "donors: {Sb: 1e15 cm-3}, acceptors: {Ga: 3e15 cm-3}"),
    ("GaAs", 300, "donors: {Si: 1e17 cm-3}"),
    ("GaAs", 600, "donors: {Si: 1e16 cm-3}, acceptors: {C: 1e15 cm-3}"),
    ("GaN", 300, "donors: {Si: 1e18 cm-3}, acceptors: {Mg: 1e17 cm-3}"),
    ("Si", 300, "donors: {P: 1e16 cm-3}, acceptors: {B: 1e16 cm-3}"),
]
TEXT = "---\n".join(
    f"name: point {i}\nmaterial: {material}\ntemperature: {T} K\ndoping: {{{doping}}}\n"
    "stated: {electron_mobility: 1000 cm^2/(V*s)}\n"
    for i, (material, T, doping) in enumerate(POINTS)
)


def _same(a, b):
    if a.dtype == object:
        return bool(np.all(a == b))
    return bool(np.all((a == b) | (np.isnan(a) & np.isnan(b))))


def test_every_quantity_as_each_calculation_solved_alone():
    read = parse_calculations(TEXT, "mixed.yaml")
    assert not read.errors, read.errors
    together, errors, notes = state_values.solve_all(read.calculations)
    assert not errors
    for index, calc in enumerate(read.calculations):
        alone, alone_errors, alone_notes = state_values.solve_all([calc])
        assert not alone_errors
        assert notes.get(index) == alone_notes.get(0)
        for name, array in alone.items():
            assert _same(together[name][index : index + 1], array), (index, name)


def _mp_onset(material, net):
    """T (K) where n_i(T) = 0.1 net (m^-3), by mpmath's findroot in ln T (the fits are
    evaluated in double precision, so the root is as exact as they allow)."""
    mpmath.mp.dps = 40

    def ln_ni(ln_T):
        T = float(mpmath.exp(ln_T))
        Nc, Nv, Eg = float(material.Nc(T)), float(material.Nv(T)), float(material.band_gap(T))
        return mpmath.log(mpmath.sqrt(mpmath.mpf(Nc) * Nv)) - mpmath.mpf(Eg) / (2 * sc.k * T)

    return float(
        mpmath.exp(
            mpmath.findroot(
                lambda u: ln_ni(u) - mpmath.log(0.1 * net), 6.0, tol=1e-24, verify=False
            )
        )
    )


@pytest.mark.parametrize("index", [0, 1, 5, 7])
def test_onset_temperature_against_mpmath(index):
    read = parse_calculations(TEXT, "mixed.yaml")
    values, errors, _ = state_values.solve_all(read.calculations)
    assert not errors
    material = load_material(POINTS[index][0])
    net = float(values["Nnet"][index])
    # the bisection in ln T stops at 60 halvings (relative error < 1e-15); the material's
    # fits are evaluated in double precision inside the root
    assert values["T_onset"][index] == pytest.approx(_mp_onset(material, net), rel=1e-9)


def test_a_point_whose_onset_cannot_be_found_is_lost_alone(monkeypatch):
    """Where the onset bisection of a material's points fails for one of them, that
    calculation is lost as a failed solve is (its error kept, its values unknown) and the
    others keep theirs, as when each group was solved with its onset."""
    read = parse_calculations(TEXT, "mixed.yaml")
    calcs = read.calculations
    expected, _, _ = state_values.solve_all(calcs)
    bad_net = float(expected["Nnet"][2])  # a silicon point
    onset = state_values._onset

    def failing(material, net):
        if np.any(net == bad_net):
            raise MissingParameterError(f"material {material.name!r}: no onset here")
        return onset(material, net)

    monkeypatch.setattr(state_values, "_onset", failing)
    values, errors, _ = state_values.solve_all(calcs)
    assert list(errors) == [2] and "no onset here" in errors[2]
    assert np.isnan(values["eta_n"][2]) and np.isnan(values["T_onset"][2])
    assert values["regime"][2] == ""
    for index in range(len(POINTS)):
        if index != 2:
            for name in ("eta_n", "T_onset", "mu_n", "regime"):
                assert _same(values[name][index : index + 1], expected[name][index : index + 1])
