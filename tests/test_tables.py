"""Datasheet tables (CSV) and the measured-number checks MEAS01-03, with the Hall factor."""

import json
import math
import subprocess
import sys

import mpmath as mp
import numpy as np
import pytest

from checker.engine.run import check_paths
from checker.inputs.table import read_table
from checker.physics.hall import hall_density, hall_factor

TABLE = "examples/lt9_wafer_lots.csv"


@pytest.mark.parametrize(
    "r, limit",
    [
        (-0.5, 3 * math.pi / 8),  # acoustic phonons (Lundstrom 2000, ch. 4; Blakemore 1962)
        (1.5, 315 * math.pi / 512),  # ionized impurities (same sources)
        (0.0, 1.0),  # energy-independent tau
    ],
)
def test_hall_factor_limits(r, limit):
    assert hall_factor(-30.0, r) == pytest.approx(limit, rel=1e-9)
    assert hall_factor(200.0, r) == pytest.approx(1.0, abs=2e-4)  # degenerate -> 1


@pytest.mark.parametrize("eta, r", [(0.0, -0.5), (2.0, 1.5), (-1.0, 1.5)])
def test_hall_factor_against_direct_integration(eta, r):
    """<tau^2>/<tau>^2 with weight x^(3/2)(-df/dx), integrated by mpmath (Lundstrom 2000)."""

    def moment(k):
        weight = lambda x: x**1.5 * mp.exp(x - eta) / (1 + mp.exp(x - eta)) ** 2
        return mp.quad(lambda x: weight(x) * x ** (k * r), [0, 1, 10, 80])

    expected = moment(2) * moment(0) / moment(1) ** 2
    assert float(hall_factor(eta, r)) == pytest.approx(float(expected), rel=1e-9)


def test_two_carrier_hall_density_reduces_to_one_carrier():
    """n_H = n / r_H for one carrier type (Sze & Ng 2007, ch. 1)."""
    assert hall_density(1e22, 0.0, 0.1, 0.04, 1.2, 1.2) == pytest.approx(1e22 / 1.2)
    # equal n mu^2 and p mu^2: R_H -> 0, the Hall density diverges
    assert not np.isfinite(hall_density(1e22, 4e22, 0.2, 0.1, 1.0, 1.0))


def test_resistivity_against_the_conversion_standard(tmp_path):
    """Si:P 1e16 and 1e18 cm-3, 300 K: the expected resistivity of a table row follows the
    silicon conversion standard ASTM F723 (Thurber et al., NBS SP 400-64, 1981), eqs. (5)-(6)
    at 23 degC; 300 K is 4 K warmer, which raises rho by about 3 % (Arora et al. 1982), so
    within 5 %."""
    table = tmp_path / "rows.csv"
    table.write_text(
        "material,dopant,density,temperature,resistivity\n"
        "Si,P,1e16 cm-3,300 K,100 ohm*cm\nSi,P,1e18 cm-3,300 K,100 ohm*cm\n"
    )
    result = check_paths([str(table)])
    for report, N in zip(result.reports, (1e16, 1e18)):
        y = math.log10(N) - 16
        z = (-3.0769 + 2.2108 * y - 0.62272 * y**2 + 0.057501 * y**3) / (
            1 - 0.68157 * y + 0.19833 * y**2 - 0.018376 * y**3
        )
        standard = 6.242e18 / N * 10**z / 100  # ohm m
        (finding,) = [f for f in report.findings if f.rule == "MEAS01"]
        assert finding.column == "resistivity" and finding.line == report.calc.line
        assert finding.corrections[0].corrected == pytest.approx(standard, rel=0.05)
    # Van Zeghbroeck, Principles of Semiconductor Devices, example 2.6: rho = 22.6 mOhm cm
    # for 1e18 phosphorus (Masetti mobility, every donor counted)
    rho = result.reports[1].findings[0].corrections[0].corrected
    assert rho * 100 == pytest.approx(0.0226, rel=0.06)


def test_example_table_findings_name_row_and_column():
    result = check_paths([TABLE])
    lines = open(TABLE, encoding="utf-8").read().splitlines()
    found = {(f.rule, f.line, f.column) for r in result.reports for f in r.findings}
    row = lambda label: next(i for i, line in enumerate(lines, 1) if line.startswith(label))
    assert found == {
        ("MEAS01", row("lot A-115"), "resistivity [ohm*cm]"),
        ("MEAS02", row("lot A-115"), "hall_density [cm-3]"),
        ("MEAS01", row("lot B-202"), "resistivity [ohm*cm]"),
        ("MEAS03", row("lot C-310"), "diffusivity [cm^2/s]"),
    }


def test_mapping_aliases_and_tolerance(tmp_path):
    (tmp_path / "pyproject.toml").write_text(
        '[tool.regimecheck]\n[tool.regimecheck.columns]\nresistivity = "Rho (ohm cm)"\n'
        "[tool.regimecheck.tolerance]\nresistivity = 10.0\n"
    )
    (tmp_path / "lots.csv").write_text(
        "Material;Species;Doping (cm-3);Temp;Rho (ohm cm)\nSi;P;1e16;300 K;4.8\n"
    )
    done = subprocess.run(
        [sys.executable, "-m", "checker.cli", "check", "lots.csv", "--format", "json"],
        cwd=tmp_path,
        capture_output=True,
        text=True,
    )
    data = json.loads(done.stdout)
    assert not data["input_errors"] and data["calculations"][0]["findings"] == []
    (tmp_path / "pyproject.toml").write_text(
        '[tool.regimecheck]\n[tool.regimecheck.columns]\nresistivity = "Rho (ohm cm)"\n'
    )
    done = subprocess.run(
        [sys.executable, "-m", "checker.cli", "check", "lots.csv", "--format", "json"],
        cwd=tmp_path,
        capture_output=True,
        text=True,
    )
    (finding,) = json.loads(done.stdout)["calculations"][0]["findings"]
    assert finding["rule"] == "MEAS01" and finding["where"]["column"] == "Rho (ohm cm)"


@pytest.mark.parametrize(
    "text, expected",
    [
        ("material,dopant,density,temperature\nSi,P,1e16 cm-3,300 K\n", "no measured column"),
        (
            "material,density,temperature,resistivity\nSi,1e16 cm-3,300 K,1 ohm*cm\n",
            "the header lacks dopant",
        ),
        (
            'material,dopant,density,temperature,resistivity\n"Si,P,1e16 cm-3,300 K,1\n',
            "malformed CSV",
        ),
    ],
)
def test_bad_tables(tmp_path, text, expected):
    path = tmp_path / "bad.csv"
    path.write_text(text)
    read = read_table(path)
    assert not read.calculations and expected in read.errors[0]
    assert read.errors[0].startswith(str(path))


def test_bad_cells_skip_only_their_row(tmp_path):
    path = tmp_path / "rows.csv"
    path.write_text(
        "material,dopant,density,temperature,resistivity\n"
        "Si,P,1e16 cm-3,300 K,0.5 ohm*cm\n"
        "Si,P,1e16 furlongs,300 K,0.5 ohm*cm\n"
        "Unobtainium,P,1e16 cm-3,300 K,0.5 ohm*cm\n"
        "Si,B,1e16 cm-3,300 K,-1 ohm*cm\n"
    )
    before = path.read_text()
    done = subprocess.run(
        [sys.executable, "-m", "checker.cli", "check", str(path), "--format", "json"],
        capture_output=True,
        text=True,
    )
    assert done.returncode == 2 and "Traceback" not in done.stderr
    data = json.loads(done.stdout)
    assert len(data["calculations"]) == 1
    errors = data["input_errors"]
    assert [e.split(": column ")[0] for e in errors] == [f"{path}:3", f"{path}:4", f"{path}:5"]
    assert "'density'" in errors[0] and "'material'" in errors[1] and "'resistivity'" in errors[2]
    assert path.read_text() == before
