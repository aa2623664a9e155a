"""One corrected calculation per operating point.

- No quantity gets two different corrected values in one calculation, over every shipped
  example and every acceptance case: the rules' corrections and the stated formulas' exact
  values are read off one corrected calculation.
- A stated input a rule rejects is not used downstream: D, R, v follow the corrected
  mobility and resistivity (the generalized Einstein relation from mpmath; Landsberg,
  Eur. J. Phys. 2, 213 (1981)).
- The minority density has one value where band-gap narrowing matters (the solve with the
  material's narrowing), and n_i one (the undoped crystal's).
- A shortcut made on several formula lines is located at each of them.
"""

import math
from pathlib import Path

import mpmath as mp
import pytest
import scipy.constants as sc

from checker.engine.run import check_paths

ROOT = Path(__file__).resolve().parents[1]
CM2 = 1e-4


def _write(tmp_path, text, name="calc.yaml"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def _check(tmp_path, text):
    result = check_paths([str(_write(tmp_path, text))])
    assert not result.input_errors, result.input_errors
    return result.reports


def _values_by_key(report):
    """key -> [(where, corrected value)] over the findings' corrections and the formulas."""
    seen = {}
    for finding in report.findings:
        for c in finding.corrections:
            if c.key:
                seen.setdefault(c.key, []).append((f"{finding.rule}:{finding.line}", c.corrected))
    for result in report.formulas:
        if getattr(result, "key", None) and math.isfinite(result.exact):
            seen.setdefault(result.key, []).append((f"line {result.line}", result.exact))
    return seen


def _contradictions(reports):
    found = []
    # a sweep's findings stand at each rule's worst grid point: different points
    for report in (r for r in reports if not r.sweep):
        for key, values in _values_by_key(report).items():
            first = values[0][1]
            for where, value in values[1:]:
                if not math.isclose(value, first, rel_tol=1e-9):
                    found.append((report.calc.name, key, values[0], (where, value)))
    return found


@pytest.mark.parametrize(
    "paths, config",
    [
        (["examples"], None),
        (["tests/acceptance"], "tests/acceptance/settings.toml"),
    ],
    ids=["examples", "acceptance"],
)
def test_no_quantity_has_two_corrected_values(paths, config, monkeypatch):
    monkeypatch.chdir(ROOT)
    from checker.inputs.config import load_config

    result = check_paths(paths, config=load_config(config) if config else None)
    assert len(result.reports) > 10
    assert _contradictions(result.reports) == []
    # and the corrected set holds each quantity once, with the value of every correction
    for report in (r for r in result.reports if not r.sweep):
        keys = [entry.key for entry in report.corrected]
        assert len(keys) == len(set(keys)), report.calc.name
        by_key = {entry.key: entry.corrected for entry in report.corrected}
        for finding in report.findings:
            for c in finding.corrections:
                if c.key:
                    assert by_key[c.key] == pytest.approx(c.corrected, rel=1e-12)


def _einstein_ratio_3d(eta):
    """F_1/2(eta)/F_-1/2(eta) with F_j = polylog form (DLMF 25.12.16), mpmath."""
    return float(-mp.polylog(1.5, -mp.exp(eta)) / -mp.polylog(0.5, -mp.exp(eta)))


def test_diffusivity_follows_the_corrected_mobility(tmp_path):
    # Si:P 1e17 at 300 K: the memo states mu = 1250 (far above the doped value) and
    # D = mu kT/q with it; D is corrected with the mobility MOB01 proposes, not the stated one
    (report,) = _check(
        tmp_path,
        "material: Si\ntemperature: 300 K\ndoping: {donors: {P: 1e17 cm-3}}\n"
        "stated:\n  electron_mobility: 1250 cm^2/(V*s)\n  electron_diffusivity: 32.4 cm^2/s\n",
    )
    rules = {f.rule: f for f in report.findings}
    mobility = next(c for c in rules["MOB01"].corrections if c.key == "electron_mobility")
    diffusivity = next(
        c for f in report.findings for c in f.corrections if c.key == "electron_diffusivity"
    )
    eta = report.state["eta_n"]
    kT_q = sc.k * 300.0 / sc.e
    assert diffusivity.stated == pytest.approx(32.4 * CM2)
    assert diffusivity.corrected == pytest.approx(
        mobility.corrected * kT_q * _einstein_ratio_3d(eta), rel=1e-9
    )


def test_a_mobility_above_the_lattice_limit_draws_one_verdict(tmp_path):
    # Si:P 1e18 at 300 K stated at 1500 cm^2/(V s): above the lattice-limited 1414 of
    # Masetti et al., IEEE Trans. Electron Devices 30, 764 (1983) (MOB02, an error) and far
    # from the doped value, about 280 there (MOB01, a warning): one finding, the error,
    # with the one correction both would give
    (report,) = _check(
        tmp_path,
        "material: Si\ntemperature: 300 K\ndoping: {donors: {P: 1e18 cm-3}}\n"
        "stated:\n  electron_mobility: 1500 cm^2/(V*s)\n",
    )
    on_mobility = [
        f for f in report.findings if any(c.key == "electron_mobility" for c in f.corrections)
    ]
    assert [f.rule for f in on_mobility] == ["MOB02"]
    (correction,) = on_mobility[0].corrections
    assert 200 * CM2 < correction.corrected < 350 * CM2


def test_resistance_follows_the_corrected_resistivity(tmp_path):
    # a resistivity stated 10x off (MEAS01) and R = rho L/A from it: R is corrected with
    # the calculation's rho, R = rho (L + lambda)/A (Lundstrom & Jeong, Near-Equilibrium
    # Transport (2012), ch. 3); L = 200 um >> lambda, so R = rho L/A to 1e-3
    (report,) = _check(
        tmp_path,
        "material: Si\ntemperature: 300 K\ndoping: {donors: {P: 1e16 cm-3}}\n"
        "structure: {length: 200 um, cross_section: 8 um^2}\n"
        "stated:\n  resistivity: 0.05 ohm*cm\n  resistance: 12500 ohm\n",
    )
    by_key = {entry.key: entry for entry in report.corrected}
    rho = by_key["resistivity"].corrected
    assert by_key["resistivity"].stated == pytest.approx(0.05e-2)
    assert by_key["resistance"].corrected == pytest.approx(rho * 200e-6 / 8e-12, rel=1e-3)
    assert _contradictions([report]) == []


def test_minority_density_has_one_value_with_narrowing(tmp_path):
    # Si:As 1e20 without the narrowing option, a memo with p = n_i^2/N_D: the formula line,
    # DOPE01 and the state give one minority density (the solve with narrowing)
    (report,) = _check(
        tmp_path,
        "material: Si\ntemperature: 300 K\ndoping: {donors: {As: 1e20 cm-3}}\n"
        "stated: {hole_density: 1.0 cm-3, intrinsic_density: 1.45e10 cm-3}\n"
        "formulas: ['p = n_i^2/N_D']\n",
    )
    values = _values_by_key(report)["hole_density"]
    assert {where.split(":")[0] for where, _ in values} >= {"DOPE01", "line 5"}
    assert _contradictions([report]) == []
    assert report.state["p_cm3"] * 1e6 == pytest.approx(values[0][1], rel=1e-12)
    # n_i: one corrected value, the undoped crystal's (CONST02); DOPE01 shows n_ie in words
    n_i = _values_by_key(report)["intrinsic_density"]
    assert [where.split(":")[0] for where, _ in n_i] == ["CONST02"]
    assert "n_ie" in next(f.message for f in report.findings if f.rule == "DOPE01")


def test_a_shortcut_is_located_at_every_formula_line(tmp_path):
    # degenerate GaAs:Si 5e18 (eta > 0 at 300 K): the Boltzmann density on two lines
    (report,) = _check(
        tmp_path,
        "material: GaAs\ntemperature: 300 K\ndoping: {donors: {Si: 5e18 cm-3}}\n"
        "formulas:\n"
        "  - n = N_c*exp(eta_n)\n"
        "  - E_F - E_c = k*T*ln(n/N_c)\n"
        "  - D_n = mu_n*k*T/q\n",
    )
    stat01 = next(f for f in report.findings if f.rule == "STAT01")
    assert {stat01.line, *stat01.also_at} == {5, 6}


def test_stated_numbers_no_rule_can_compare_are_listed(tmp_path):
    # a resistance without the conductor's length and cross-section, a sheet resistance
    # without a thickness: nothing to compare them with, so they are listed, not passed
    bare, with_geometry = _check(
        tmp_path,
        "name: bare\nmaterial: Si\ntemperature: 300 K\ndoping: {donors: {P: 1e16 cm-3}}\n"
        "stated: {resistance: 100 ohm, sheet_resistance: 100 ohm/sq, "
        "electron_mobility: 1300 cm^2/(V*s)}\n"
        "---\n"
        "name: with geometry\nmaterial: Si\ntemperature: 300 K\n"
        "doping: {donors: {P: 1e16 cm-3}}\n"
        "structure: {length: 100 um, cross_section: 10 um^2, thickness: 1 um}\n"
        "stated: {resistance: 100 ohm, sheet_resistance: 100 ohm/sq}\n",
    )
    assert sorted(bare.unchecked) == ["resistance", "sheet_resistance"]
    assert with_geometry.unchecked == []


def test_reports_carry_the_corrected_set_the_unchecked_numbers_and_every_line(tmp_path):
    import json

    from checker.cli import main

    path = _write(
        tmp_path,
        "name: resistor\nmaterial: Si\ntemperature: 300 K\ndoping: {donors: {P: 1e17 cm-3}}\n"
        "stated:\n  electron_mobility: 1250 cm^2/(V*s)\n  electron_diffusivity: 32.4 cm^2/s\n"
        "  sheet_resistance: 50 ohm/sq\n"
        "---\n"
        "name: degenerate\nmaterial: GaAs\ntemperature: 300 K\n"
        "doping: {donors: {Si: 5e18 cm-3}}\n"
        "formulas:\n  - n = N_c*exp(eta_n)\n  - E_F - E_c = k*T*ln(n/N_c)\n",
    )
    out = tmp_path / "report.json"
    assert main(["check", str(path), "--output", str(out), "--exit-zero"]) == 0
    first, second = json.loads(out.read_text(encoding="utf-8"))["calculations"]
    corrected = {e["quantity"]: e for e in first["corrected"]}
    assert set(corrected) == {"electron_mobility", "electron_diffusivity"}
    assert corrected["electron_diffusivity"]["stated"] == pytest.approx(32.4)
    assert corrected["electron_mobility"]["rules"] == ["MOB01"]
    assert first["unchecked"] == ["sheet_resistance"]
    stat01 = next(f for f in second["findings"] if f["rule"] == "STAT01")
    assert [stat01["where"]["line"], *stat01["where"]["also_at_lines"]] == [15, 16]
    # the compact form for CI logs: one line per finding, the other lines named
    compact = tmp_path / "report.txt"
    assert main(["check", str(path), "--format", "compact", "--output", str(compact)]) == 1
    text = compact.read_text(encoding="utf-8")
    assert "(also line 16)" in text and "not checked: sheet_resistance" in text


def test_two_stated_numbers_on_one_line_are_checked_apart(tmp_path):
    # a flow mapping puts the resistivity and the resistance on one line: the resistivity
    # rejected by MEAS01 must not hide the resistance computed from it (VAL05)
    (report,) = _check(
        tmp_path,
        "material: Si\ntemperature: 300 K\ndoping: {donors: {P: 1e16 cm-3}}\n"
        "structure: {length: 200 um, cross_section: 8 um^2}\n"
        "stated: {resistivity: 0.05 ohm*cm, resistance: 12500 ohm}\n",
    )
    assert {f.rule for f in report.findings} >= {"MEAS01", "VAL05"}


def test_every_format_renders_sheets_and_zero_gap_sheets(tmp_path, monkeypatch):
    # a 2D gas and a graphene sheet have no bulk densities or band edges: every report
    # format must still render them (the Markdown state line once raised on E_F - E_C)
    from checker.cli import main

    monkeypatch.chdir(ROOT)
    files = ["examples/lh9_gan_hemt_channel.yaml", "examples/lq2_graphene_sensor.yaml"]
    for suffix in (".md", ".json", ".sarif", ".xml", ".html", ".txt"):
        out = tmp_path / f"report{suffix}"
        assert main(["check", *files, "--output", str(out), "--exit-zero"]) == 0, suffix
        assert "graphene" in out.read_text(encoding="utf-8"), suffix
    text = (tmp_path / "report.md").read_text(encoding="utf-8")
    assert "E\\_F - E\\_D (Dirac point) =" in text and "n\\_s (sheet) =" in text


def test_a_value_check_gives_way_to_the_shortcut_that_explains_the_number(tmp_path):
    # GaN:Si 5e18 at 300 K (a parabolic band) is degenerate (generalized Einstein relation,
    # Landsberg, Eur. J. Phys. 2, 213 (1981)): a memo's D, stated beside its formula
    # D_n = mu_n*k*T/q, is corrected by STAT02 (the shortcut, named at the formula);
    # MEAS03, a value check like VAL.., would only repeat the same stated number
    (report,) = _check(
        tmp_path,
        "material: GaN\ntemperature: 300 K\ndoping: {donors: {Si: 5e18 cm-3}}\n"
        "stated:\n  electron_mobility: 90 cm^2/(V*s)\n  electron_diffusivity: 1.5 cm^2/s\n"
        "formulas:\n  - D_n = mu_n*k*T/q\n",
    )
    on_d = [
        f.rule
        for f in report.findings
        if any(c.key == "electron_diffusivity" for c in f.corrections)
    ]
    assert "STAT02" in on_d and "MEAS03" not in on_d
