"""`regimecheck check` end to end: exit codes, JSON keys, the examples, and every
class of bad input (file:line message, exit 2, other calculations still checked)."""

import json
from pathlib import Path

import pytest
from test_cli import BAD_DOCS, ROOT, run

EXAMPLES = ROOT / "examples"
GOOD = (
    "name: good one\nmaterial: Si\ntemperature: 300 K\ndoping:\n  donors: {P: 1e16 cm-3}\n"
    "stated:\n  electron_density: 1e16 cm-3\n"
)
# every file of rules/ is a rule, named by its id (DEVELOPERS.md: the examples fire each)
ALL_RULES = {p.stem for p in (ROOT / "rules").glob("*.yaml")}


@pytest.fixture(scope="module")
def example_report():
    result = run("check", str(EXAMPLES), "--format", "json")
    assert "Traceback" not in result.stderr
    return result.returncode, json.loads(result.stdout)


def test_examples_fire_every_rule_and_keep_one_clean(example_report):
    code, data = example_report
    assert code == 1
    fired = {f["rule"] for c in data["calculations"] for f in c["findings"]}
    assert fired == ALL_RULES
    clean = [
        c
        for c in data["calculations"]
        if c["source"]["file"].endswith("ls2_reference_resistor.yaml")
    ]
    assert clean and clean[0]["findings"] == [] and clean[0]["notes"] == []
    files = {c["source"]["file"] for c in data["calculations"]}
    assert len(files) >= 9
    assert data["input_errors"] == []


def test_json_keys_are_stable(example_report):
    _, data = example_report
    assert data["format"] == "regimecheck-report/1"
    assert "screening check" in data["notice"].lower()
    assert set(data["summary"]) == {
        "calculations",
        "findings",
        "input_errors",
        "worst",
        "exit_code",
    }
    assert set(data) == {"format", "notice", "calculations", "input_errors", "notes", "summary"}
    calc = next(c for c in data["calculations"] if c["findings"])
    assert set(calc) == {
        "source",
        "name",
        "material",
        "temperature_K",
        "doping_cm3",
        "state",
        "sweep",
        "formulas",
        "findings",
        "corrected",
        "unchecked",
        "notes",
        "error",
    }
    assert set(calc["source"]) == {"file", "line"}
    finding = calc["findings"][0]
    assert set(finding) == {
        "rule",
        "title",
        "severity",
        "assumption",
        "carrier",
        "indicator",
        "message",
        "where",
        "corrections",
        "waived",
        "formula",
        "sweep",
    }
    assert set(finding["where"]) == {"file", "line", "column", "also_at_lines"}
    assert set(finding["indicator"]) == {
        "label",
        "value",
        "threshold",
        "relation",
        "unit",
        "source",
    }
    corrections = [
        c for cc in data["calculations"] for f in cc["findings"] for c in f["corrections"]
    ]
    assert set(corrections[0]) == {
        "quantity",
        "unit",
        "stated",
        "corrected",
        "relative_error",
        "stated_by",
        "corrects",
    }
    waived = [f for cc in data["calculations"] for f in cc["findings"] if f["waived"]]
    assert waived and data["summary"]["findings"]["waived"] == len(waived)
    formulas = [f for cc in data["calculations"] for f in cc["formulas"]]
    assert formulas, "the examples state formulas"
    for formula in formulas:
        assert set(formula) == {
            "formula",
            "line",
            "status",
            "dimensions",
            "embodies",
            "assumptions",
            "relations",
            "proof",
            "at_operating_point",
        }
        assert set(formula["dimensions"]) == {"left", "right", "problem", "likely_fix"}
        assert set(formula["at_operating_point"]) == {
            "unit",
            "formula",
            "exact",
            "error",
            "error_measure",
            "corrects",
        }


def test_exit_codes(tmp_path):
    clean = tmp_path / "clean.yaml"
    clean.write_text(GOOD)
    assert run("check", str(clean)).returncode == 0
    warn = tmp_path / "warn.yaml"
    warn.write_text(
        GOOD.replace(
            "electron_density: 1e16 cm-3",
            "electron_density: 1e16 cm-3\n  thermal_voltage: 0.0345 V",
        )
    )
    assert run("check", str(warn)).returncode == 1
    assert run("check", str(warn), "--fail-on", "error").returncode == 0
    assert run("check", str(warn), "--exit-zero").returncode == 0
    info = tmp_path / "info.yaml"
    info.write_text(GOOD.replace("300 K", "200 K").replace("  electron_density: 1e16 cm-3\n", ""))
    assert run("check", str(info)).returncode == 0  # info is below the default level
    assert run("check", str(info), "--fail-on", "info").returncode == 1
    assert run("check", str(tmp_path / "missing.yaml")).returncode == 2
    assert run("check", str(clean), "--fail-on", "loud").returncode == 2  # usage error


def test_console_report(tmp_path):
    result = run("check", str(EXAMPLES / "ld310_nwell_resistor.yaml"))
    out = result.stdout
    assert out.count("does not replace qualified device characterization or sign-off") == 1
    assert "\x1b[" not in out  # no colour when not a terminal
    assert "MOB02" in out and "→" in out and "calculation(s) in 1 file(s) checked" in out


EXTRA_BAD = {
    "waiver without reason": (GOOD + "waivers:\n  - {rule: MOB01}\n", "has no reason"),
    "waiver of unknown rule": (
        GOOD + "waivers:\n  - {rule: MOB99, reason: not relevant here}\n",
        "unknown rule 'MOB99'",
    ),
    "unknown assumption": (GOOD + "assumes: [non-degenrate]\n", "did you mean 'non-degenerate'"),
    "unknown stated key": (
        GOOD.replace("electron_density", "electron_densty"),
        "did you mean 'electron_density'",
    ),
    "structure plain number": (GOOD + "structure:\n  length: 40\n", "no unit"),
    "absurd temperature": (GOOD.replace("300 K", "3e4 K"), "not a plausible temperature"),
    "absurd density": (GOOD.replace("P: 1e16 cm-3", "P: 1e30 cm-3"), "not a plausible density"),
    "absurd length": (GOOD + "structure:\n  length: 40 km\n", "not a plausible length"),
}


# `state` shares the reader; rule ids are known only to `check`
BAD_RUNS = [("check", case) for case in sorted(BAD_DOCS) + sorted(EXTRA_BAD)] + [
    ("state", case)
    for case in sorted(BAD_DOCS) + sorted(EXTRA_BAD)
    if case != "waiver of unknown rule"
]


@pytest.mark.parametrize("command, case", BAD_RUNS)
def test_bad_input_is_reported_and_others_still_checked(tmp_path, case, command):
    text, expected = {**BAD_DOCS, **EXTRA_BAD}[case]
    bad = tmp_path / "bad.yaml"
    bad.write_text(text)
    good = tmp_path / "good.yaml"
    good.write_text(GOOD)
    before = bad.read_text()
    result = run(command, str(bad), str(good), "--format", "json")
    assert result.returncode == 2
    assert "Traceback" not in result.stdout + result.stderr
    data = json.loads(result.stdout)
    listed = data["calculations"] if command == "check" else data["points"]
    assert "good one" in [c["name"] for c in listed]
    message = (data["input_errors"] if command == "check" else data["errors"])[0]
    assert expected in message
    assert message.startswith(f"{bad}:")  # names the file and the line
    assert bad.read_text() == before  # input never modified


def test_directory_walk_and_rules_commands(tmp_path):
    (tmp_path / "sub").mkdir()
    (tmp_path / "sub" / "a.yaml").write_text(GOOD)
    (tmp_path / "b.yml").write_text(GOOD.replace("good one", "second"))
    data = json.loads(run("check", str(tmp_path), "--format", "json").stdout)
    assert sorted(c["name"] for c in data["calculations"]) == ["good one", "second"]
    listing = run("rules").stdout
    assert {line.split()[0] for line in listing.splitlines()} == ALL_RULES


@pytest.mark.parametrize("rule", sorted(ALL_RULES))
def test_explain_every_rule(rule):
    result = run("explain", rule.lower())
    assert result.returncode == 0, result.stderr
    for part in ("Condition", "Why it matters", "Example", "Fix", "References"):
        assert part in result.stdout


def test_explain_unknown_rule():
    result = run("explain", "STAT9")
    assert result.returncode == 2 and "did you mean" in result.stderr


def test_point_reports_regime_warnings():
    result = run(
        "point",
        "--material",
        "Si",
        "--temperature",
        "300K",
        "--donor",
        "P=1e19cm-3",
        "--format",
        "json",
    )
    assert result.returncode == 1
    rules = {f["rule"] for f in json.loads(result.stdout)["calculations"][0]["findings"]}
    assert {"STAT01", "STAT02", "DOPE02"} <= rules


def test_custom_material_without_mobility_still_gets_statistics_checks(tmp_path):
    path = tmp_path / "custom.yaml"
    path.write_text(
        "name: custom\nmaterial:\n  name: ExampleX\n"
        "  band_gap: {Eg0: 1.0 eV, alpha: 3e-4 eV/K, beta: 200 K}\n"
        "  density_of_states: {Nc300: 1e19 cm-3, Nv300: 1e19 cm-3}\n"
        "  permittivity: 10.0\n  dopants: {D1: {kind: donor, energy: 20 meV}}\n"
        "temperature: 300 K\ndoping:\n  donors: {D1: 5e18 cm-3}\n"
        "assumes: [non-degenerate]\n"
    )
    result = run("check", str(path), "--format", "json")
    data = json.loads(result.stdout)
    calc = data["calculations"][0]
    assert result.returncode == 1 and calc["error"] is None
    assert "STAT01" in {f["rule"] for f in calc["findings"]}
    assert any("transport checks skipped" in note for note in calc["notes"])


def test_point_with_field_and_length():
    result = run(
        "point",
        "--material",
        "Si",
        "--temperature",
        "300K",
        "--donor",
        "P=1e15cm-3",
        "--field",
        "30kV/cm",
        "--length",
        "20nm",
        "--format",
        "json",
    )
    rules = {f["rule"] for f in json.loads(result.stdout)["calculations"][0]["findings"]}
    assert {"TRAN01", "TRAN02"} <= rules


def test_batched_run_equals_one_file_at_a_time(example_report):
    """All calculations are solved and checked together (grouped by material and
    species); the findings must not depend on what else is in the run."""
    _, together = example_report
    key = lambda c: (Path(c["source"]["file"]).name, c["source"]["line"])
    batched = {
        key(c): sorted(
            (f["rule"], f["carrier"], round(f["indicator"]["value"] or 0, 9)) for f in c["findings"]
        )
        for c in together["calculations"]
    }
    for path in sorted(EXAMPLES.glob("*.yaml")):
        alone = json.loads(run("check", str(path.relative_to(ROOT)), "--format", "json").stdout)
        for c in alone["calculations"]:
            single = sorted(
                (f["rule"], f["carrier"], round(f["indicator"]["value"] or 0, 9))
                for f in c["findings"]
            )
            assert batched[key(c)] == single, key(c)


def test_point_says_the_diffusive_resistance_is_low(capsys):
    from checker.cli import main

    # R = rho L/A leaves out rho lambda/A (Lundstrom & Jeong, Near-Equilibrium Transport
    # (2012), ch. 3): the shortcut is low by lambda/(L + lambda), never "high"
    code = main(
        [
            "point",
            "--material",
            "Si",
            "--temperature",
            "300K",
            "--donor",
            "P=1e17cm-3",
            "--length",
            "50nm",
            "--format",
            "json",
            "--exit-zero",
        ]
    )
    assert code == 0
    data = json.loads(capsys.readouterr().out)
    (tran01,) = [f for f in data["calculations"][0]["findings"] if f["rule"] == "TRAN01"]
    ratio = tran01["indicator"]["value"] / 100  # lambda / L, shown in %
    low = ratio / (1 + ratio)
    assert f"{low * 100:.3g} % low against R = ρ(L + λ)/A" in tran01["message"]
    assert "ρL/A leaves out the ballistic resistance ρλ/A" in tran01["message"]
