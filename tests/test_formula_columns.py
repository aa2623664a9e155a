"""Formula sides are evaluated once per group of calculations that share a world of
definitions (dimension, majority carrier, band), as columns: each calculation must still
get its own numbers, in whatever order the groups interleave in the file."""

import pytest

from checker.engine.run import check_calculations
from checker.inputs.calculation_file import read_calculation_file

# (material, donors cm^-3, acceptors cm^-3): n-type Si, n-type Ge, p-type Si, n-type Si
POINTS = [("Si", 1e16, 2e15), ("Ge", 4e17, 1e15), ("Si", 3e14, 5e16), ("Si", 7e18, 6e14)]


def _text() -> str:
    docs = []
    for material, nd, na in POINTS:
        docs.append(
            f"material: {material}\ntemperature: 300 K\n"
            f"doping:\n  donors: {{{'P' if material == 'Si' else 'Sb'}: {nd:g} cm-3}}\n"
            f"  acceptors: {{B: {na:g} cm-3}}\n"
            "formulas:\n  - n = N_D\n  - p = N_A\n  - n = N_D - N_A\n"
        )
    return "---\n".join(docs)


def checked_reports(folder, text: str) -> list:
    """The reports of ``text`` checked as a calculation file (read without errors)."""
    path = folder / "groups.yaml"
    path.write_text(text, encoding="utf-8")
    read = read_calculation_file(path)
    assert read.errors == []
    return check_calculations(read.calculations).reports


def test_each_calculation_gets_its_own_formula_values(tmp_path):
    for (_, nd, na), report in zip(POINTS, checked_reports(tmp_path, _text())):
        values = [r.value for r in report.formulas]
        # the densities as written, cm^-3 -> m^-3 (1 cm^-3 = 1e6 m^-3: SI definition)
        expected = [nd * 1e6, na * 1e6, (nd - na) * 1e6]
        assert values == [pytest.approx(v, rel=1e-12) for v in expected]
