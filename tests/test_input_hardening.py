"""Hostile and careless calculation files: each problem is an input error naming
file:line:column and the key, the command exits 2 without a traceback, and the other
calculations of the same file are still checked.

Unit factors are checked against the SI definitions (BIPM, The International System
of Units, 9th ed. 2019: 1 cm = 1e-2 m; the radian and the turn are dimensionless) and
scipy.constants; the rest of these tests check refusals, whose expected outcome is
the rule of the input format itself (a message, exit code 2)."""

import json
import re
import subprocess
import sys

import jsonschema
import pytest
import scipy.constants as sc
import yaml
from test_cli import ROOT, run

from checker.inputs.calculation_file import parse_calculations
from checker.inputs.quantities import parse_quantity, parse_temperature

SI = "material: Si\ntemperature: 300 K\n"
GOOD = "name: good\n" + SI
CM3 = sc.centi**-3  # cm^-3 in m^-3 (scipy.constants, SI prefixes)


def errors_of(text: str, name: str = "calc.yaml"):
    result = parse_calculations(text, name)
    return result.errors, [c.name for c in result.calculations]


def one_error(text: str) -> str:
    errors, names = errors_of(text + "---\n" + GOOD)
    assert len(errors) == 1, errors
    assert names == ["good"], "the sound document after the bad one is still read"
    return errors[0]


# --- YAML ---------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "text, line, message",
    [
        (
            SI + "options: {hall_scattering: nan}\n",
            3,
            r"options\.hall_scattering: hall_scattering must be one of acoustic.*got 'nan'",
        ),
        (
            SI + "options: {hall_scattering: inf}\n",
            3,
            r"options\.hall_scattering: hall_scattering must be one of",
        ),
        (
            SI + "options: {hall_scattering: .inf}\n",
            3,
            r"options\.hall_scattering: hall_scattering must be one of",
        ),
        ("material: [Si]\ntemperature: 300 K\n", 1, r"material must be a built-in name such as Si"),
        (SI + "? [a, b]\n: 1\n", 3, r"a key must be a plain word"),
        ("material: Si\ntemperature: !!float abc\n", 2, r"YAML tags \(!!float\) are not accepted"),
        (SI + "name: !!int abc\n", 3, r"YAML tags \(!!int\)"),
        (SI + "name: !!timestamp 2001-13-45\n", 3, r"YAML tags \(!!timestamp\)"),
        (SI + 'name: "\\ud800"\n', 3, r"holds an invalid character U\+D800"),
        (SI + 'name: "a\\x07"\n', 3, r"holds the control character U\+0007 \(BEL\)"),
        ("material: Si\ntemperature: &t 300 K\nname: *t\n", 3, r"aliases"),
        (SI + "material: Ge\n", 3, r"duplicate key 'material'"),
    ],
)
def test_yaml_refusals_name_the_line(text, line, message):
    error = one_error(text)
    assert re.search(message, error), error
    assert error.startswith(f"calc.yaml:{line}:")


@pytest.mark.parametrize(
    "char, label",
    [("\x0c", "U+000C (form feed)"), ("\x07", "U+0007 (BEL)"), ("\x00", "U+0000 (NUL)")],
)
def test_control_characters_anywhere_in_the_file(char, label):
    # a control character in a value, at the start of a line, and inside a comment
    for text, line, column in (
        (f"material: Si\ntemperature: 300 K\nname: a{char}b\n", 3, 8),
        (f"material: Si\n{char}temperature: 300 K\n", 2, 1),
        (f"material: Si # a{char}\ntemperature: 300 K\n", 1, 17),
    ):
        error = one_error(text)
        assert error.startswith(
            f"calc.yaml:{line}:{column}: the file holds the control character {label}"
        ), error


@pytest.mark.parametrize(
    "nested",
    [
        "name: " + "[" * 400 + "]" * 400 + "\n",
        "x:\n" + "".join("  " * i + f"k{i}:\n" for i in range(400)),
        "name: " + "{a: " * 400 + "1" + "}" * 400 + "\n",
    ],
)
def test_deep_nesting_is_refused_without_recursion_error(nested):
    from checker.inputs.yaml_source import MAX_NESTING

    error = one_error("material: Si\ntemperature: 300 K\n" + nested)
    assert f"nested more than {MAX_NESTING} levels" in error


def test_the_command_reports_every_bad_document_and_checks_the_good_one(tmp_path):
    bad = [
        "material: Si\ntemperature: 300 K\noptions: {hall_scattering: nan}\n",
        "material: [Si]\ntemperature: 300 K\n",
        "? [a, b]\n: 1\nmaterial: Si\ntemperature: 300 K\n",
        "material: Si\ntemperature: !!float abc\n",
        'material: Si\ntemperature: 300 K\nname: "\\ud800"\n',
        "material: Si\ntemperature: 300 K\nname: a\x0cb\n",
    ]
    path = tmp_path / "mixed.yaml"
    path.write_text("---\n".join(bad + [GOOD]), encoding="utf-8")
    before = path.read_bytes()
    result = run("check", str(path), "--format", "json")
    assert result.returncode == 2, result.stderr
    assert "Traceback" not in result.stderr and "internal error" not in result.stderr
    data = json.loads(result.stdout)
    assert len(data["input_errors"]) == len(bad)
    assert all(re.match(rf"{re.escape(str(path))}:\d+:\d+: ", e) for e in data["input_errors"])
    assert [c["name"] for c in data["calculations"]] == ["good"]
    assert path.read_bytes() == before, "input files are never modified"


# --- contradictory structure --------------------------------------------------------------


@pytest.mark.parametrize(
    "structure, line_key, both",
    [
        ("{length: 10 um, voltage: 1 V, field: 5 kV/cm}", "field", ("field", "voltage")),
        ("{voltage: 1 V}", "voltage", ("voltage", "length")),
        (
            "{cross_section: 4 um^2, thickness: 1 um, width: 2 um}",
            "cross_section",
            ("cross_section", "thickness", "width"),
        ),
    ],
)
def test_contradictory_structure_names_both_keys(structure, line_key, both):
    error = one_error(f"material: Si\ntemperature: 300 K\nstructure: {structure}\n")
    assert re.match(rf"calc\.yaml:3:\d+: structure\.{line_key}", error), error
    assert all(f"structure.{key}" in error for key in both), error


def test_agreeing_structure_values_are_accepted():
    # 1 V over 10 um is 1 kV/cm (SI: 1 V / 1e-5 m = 1e5 V/m); 1 um x 2 um = 2 um^2
    errors, names = errors_of(
        "material: Si\ntemperature: 300 K\nstructure: {length: 10 um, "
        "voltage: 1 V, field: 1 kV/cm, cross_section: 2 um^2, "
        "thickness: 1 um, width: 2 um}\n"
    )
    assert errors == [] and names == ["calc.yaml:1"]


# --- units --------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "text, dimension",
    [
        ("1e17 cm-3*turn", "density"),  # a turn is 2 pi rad (SI Brochure, table 4)
        ("1 pi*m", "length"),
        ("1 m*cycle", "length"),
        ("1 m*radian", "length"),
        ("1 m*degree", "length"),  # the degree as an angle: pi/180
        ("2 percent*cm", "length"),
    ],
)
def test_pure_number_units_are_refused(text, dimension):
    from checker.errors import InputError

    with pytest.raises(InputError, match="is a pure number; write the value as a plain number"):
        parse_quantity(text, dimension, "f.yaml:3:5")


def test_ohm_cm_per_square_is_not_a_resistivity():
    from checker.errors import InputError

    for dimension in ("resistivity", "sheet resistance"):
        with pytest.raises(
            InputError, match="'/sq' \\(per square\\) belongs to a sheet resistance"
        ):
            parse_quantity("9 ohm*cm/sq", dimension)


@pytest.mark.parametrize(
    "text, dimension, si",
    [
        ("9 ohm-cm", "resistivity", 9 * sc.centi),
        ("9 Ω·cm", "resistivity", 9 * sc.centi),
        ("1x10^16 cm-3", "density", 1e16 * CM3),
        ("1×10¹⁶ cm⁻³", "density", 1e16 * CM3),
        ("2.5 × 10^-3 cm²", "area", 2.5e-3 * sc.centi**2),
        ("1350 cm²/V·s", "mobility", 1350 * sc.centi**2),
        ("1350 cm2/V-s", "mobility", 1350 * sc.centi**2),
        ("−0.2 eV", "energy", -0.2 * sc.electron_volt),  # U+2212 minus sign
        ("3 kOhm", "resistance", 3 * sc.kilo),
    ],
)
def test_trade_spellings(text, dimension, si):
    assert parse_quantity(text, dimension) == pytest.approx(si, rel=1e-12)


def test_trade_spelling_of_a_temperature():
    assert parse_temperature("3×10² K") == pytest.approx(300.0)
    assert parse_temperature("27 ℃") == pytest.approx(27 + sc.zero_Celsius)


def test_wrong_dimension_names_the_key_and_the_expected_unit():
    error = one_error("material: Si\ntemperature: 300 K\nstated: {electron_mobility: 5 m}\n")
    assert error.startswith(
        "calc.yaml:3:29: stated.electron_mobility: '5 m' has a unit of "
        "length where mobility is expected; write e.g. '1350 cm^2/(V*s)'"
    )


def test_sheet_density_for_a_volume_density():
    error = one_error("material: Si\ntemperature: 300 K\ndoping: {donors: {P: 1e12 cm-2}}\n")
    assert error.startswith("calc.yaml:3:22: doping.donors.P: '1e12 cm-2' is a sheet density")
    assert "electron_sheet_density" in error and "dimensionality: 2" in error and "cm-3" in error


# --- all errors at once; material names ---------------------------------------------------


def test_every_bad_key_of_a_document_is_listed():
    text = (
        "material: Si\ntemperature: 300\ndoping: {donors: {P: 1e17 V/cm, B: 1e16 cm-3}}\n"
        "stated: {electron_mobility: -3 cm^2/Vs, hole_density: 1e17}\n"
        "structure: {dimensionality: 4, colour: red}\nassumes: [boltzman]\n"
    )
    errors, names = errors_of(text)
    assert names == []
    expected = [
        (2, "temperature"),
        (3, "doping.donors.P"),
        (3, "doping.donors.B"),
        (4, "stated.electron_mobility"),
        (4, "stated.hole_density"),
        (5, "structure.dimensionality"),
        (5, "colour"),
        (6, "assumption"),
    ]
    assert len(errors) == len(expected), errors
    for line, key in expected:
        assert any(e.startswith(f"calc.yaml:{line}:") and key in e for e in errors), (key, errors)


@pytest.mark.parametrize(
    "spelling, name",
    [
        ("silicon", "Si"),
        ("Silicon", "Si"),
        ("  SILICON ", "Si"),
        ("si", "Si"),
        ("gallium nitride", "GaN"),
        ("Gallium  Nitride", "GaN"),
        ("gallium arsenide", "GaAs"),
        ("4h-sic", "4H-SiC"),
    ],
)
def test_material_names_ignore_case_and_spacing(spelling, name):
    errors, _ = errors_of(f'material: "{spelling}"\ntemperature: 300 K\n')
    assert errors == []
    assert (
        parse_calculations(f'material: "{spelling}"\ntemperature: 300 K\n', "c.yaml")
        .calculations[0]
        .material.name
        == name
    )


def test_unknown_material_suggests_the_close_name():
    error = one_error("material: silicn\ntemperature: 300 K\n")
    assert error.startswith("calc.yaml:1:11: material: unknown material 'silicn'")
    assert "silicon" in error


# --- the calculation schema accepts what the reader accepts -------------------------------

SCHEMA = json.loads(
    (ROOT / "checker" / "data" / "calculation.schema.json").read_text(encoding="utf-8")
)


def _document(body: str):
    """A calculation text (Si at 300 K unless ``body`` says otherwise) and its YAML value."""
    override = yaml.safe_load(body)
    text = (
        "".join(
            f"{key}: {value}\n"
            for key, value in (("material", "Si"), ("temperature", "300 K"))
            if key not in override
        )
        + body
        + "\n"
    )
    return text, yaml.safe_load(text)


def _valid(document) -> bool:
    return jsonschema.Draft202012Validator(SCHEMA).is_valid(document)


@pytest.mark.parametrize(
    "body",
    [
        "options: {hall_scattering: nan}",
        "options: {hall_scattering: '1.25'}",
        "options: {band_gap_narrowing: maybe}",
        "structure: {dimensionality: 4}",
        "structure: {length: 1e17}",
        "structure: {length: '1.2.3 um'}",
        "doping: {donors: {P: {from: 1e15 cm-3, to: 1e17 cm-3, steps: 1}}}",
        "assumes: [boltzman]",
        "material: {band_gap: {Eg0: 1 eV}, colour: red}",
        "material: {dopants: [P]}",
        "material: {thermal_mass: 5}",
        "material: {band_gap_narrowing: slotboom}",
        "material: {permittivity: 0}",
        "temperature: 1.2.3 K",
    ],
)
def test_schema_and_reader_refuse_the_same(body):
    text, document = _document(body)
    assert not _valid(document), body
    errors, _ = errors_of(text)
    assert errors, body


@pytest.mark.parametrize(
    "body",
    [
        "options: {hall_scattering: Ionized_Impurity, band_gap_narrowing: 'Yes'}",
        "options: {hall_scattering: -1.5}",
        "options: {hall_scattering: '2.0'}",
        "structure: {dimensionality: 2, length: 1x10^-4 cm}",
        "stated: {electron_density: 1×10¹⁶ cm⁻³, resistivity: 9 Ω·cm}",
        "assumes: Non_Degenerate",
        "doping: {donors: {P: {from: 1e15 cm-3, to: 1e17 cm-3, steps: '5'}}}",
        "doping:",
    ],
)
def test_schema_and_reader_accept_the_same(body):
    text, document = _document(body)
    assert _valid(document), body
    errors, _ = errors_of(text)
    assert errors == [], errors


def test_deep_flow_nesting_is_refused_before_parsing(tmp_path):
    # found by the fuzz run: 20,000 nested '[' made PyYAML's scanner take minutes (its
    # simple-key bookkeeping grows with the flow level); the text is refused up front
    path = tmp_path / "deep.yaml"
    path.write_text(
        "name: deep\nmaterial: Si\ntemperature: 300 K\nformulas: "
        + "[" * 20000
        + "]" * 20000
        + "\n"
    )
    done = subprocess.run(
        [sys.executable, "-m", "checker", "check", str(path)],
        capture_output=True,
        text=True,
        timeout=60,
    )
    assert done.returncode == 2 and "Traceback" not in done.stderr
    assert (
        f"{path}:4:" in done.stdout + done.stderr
        and "nested more than" in done.stdout + done.stderr
    )
