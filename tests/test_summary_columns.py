"""The summary fields as columns: every calculation of the shipped examples (bulk, sheets,
graphene, wires, Kane bands; 3D, 2D and 1D in one set) summarized together gives each
point what that point's column alone gives, and the columns agree with the published
forms evaluated here point by point in Python floats with scipy.constants and mpmath:
E_F - E_C = η_n kT/q, and D = μ (kT/q) F_1/2(η)/F_-1/2(η) (generalized Einstein relation;
P. T. Landsberg, Eur. J. Phys. 2, 213 (1981)), with F_j(η) = -Li_{j+1}(-e^η) (the complete
Fermi–Dirac integral; NIST DLMF 25.12.16).
"""

import json
from pathlib import Path

import mpmath
import pytest
from scipy import constants

from checker.engine.regime import state_values
from checker.engine.regime.trade_summary import PointSummaries, trade_summary
from checker.inputs.calculation_file import parse_calculations

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"
# parabolic bulk bands (the Kane-band materials take the solve's own ratio n/(dn/dη))
PARABOLIC = {"Si", "Ge", "GaN", "4H-SiC"}


@pytest.fixture(scope="module")
def solved():
    calculations = []
    for path in sorted(EXAMPLES.glob("*.yaml")):
        read = parse_calculations(path.read_text(encoding="utf-8"), str(path))
        calculations += [calc for calc in read.calculations if not calc.sweep]
    values, errors, _ = state_values.solve_all(calculations)
    assert not errors, errors
    dims = {calc.structure.get("dim", 3) for calc in calculations}
    assert dims == {1, 2, 3}, dims  # the set mixes every dimensionality
    return calculations, values


def test_each_point_as_its_column_alone(solved):
    calculations, values = solved
    summaries = PointSummaries(values)
    for index in range(len(calculations)):
        # (as JSON writes them: NaN, a float no other equals, is written alike)
        alone = json.dumps(trade_summary(values, index))
        assert json.dumps(summaries[index]) == alone, index


def test_fermi_level_and_diffusivity_against_the_published_forms(solved):
    calculations, values = solved
    summaries = PointSummaries(values)
    kT_over_q = constants.k / constants.e  # V/K
    checked = 0
    for index, calc in enumerate(calculations):
        summary = summaries[index]
        T, eta = float(values["T"][index]), float(values["eta_n"][index])
        if summary["EF_minus_EC_eV"] is not None:
            assert summary["EF_minus_EC_eV"] == pytest.approx(
                eta * kT_over_q * T, rel=1e-12, nan_ok=True
            )
        if calc.material.name not in PARABOLIC or "dim" in calc.structure:
            continue
        mu = float(values["used_mu_n"][index])
        if summary["D_n_cm2_per_s"] is None:
            continue
        x = -mpmath.exp(eta)
        ratio = mpmath.re(mpmath.polylog(1.5, x) / mpmath.polylog(0.5, x))  # F_1/2 / F_-1/2
        expected = mu * kT_over_q * T * float(ratio) * 1e4  # m^2/s -> cm^2/s
        assert summary["D_n_cm2_per_s"] == pytest.approx(expected, rel=1e-12), index
        checked += 1
    assert checked >= 10


def test_a_summary_of_several_points_asks_for_one_index():
    import pytest

    from checker import load_material, solve_equilibrium
    from checker.api import state_summary

    state = solve_equilibrium(load_material("Si"), [300.0, 400.0], {"P": 1e22})
    assert state_summary(state, 1)["temperature_K"] == 400.0
    with pytest.raises(ValueError, match="selects 2 points"):
        state_summary(state)
