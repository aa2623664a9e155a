"""Rule files are validated on load: one table of fields serves the loader and the JSON
Schema, every expression is dimension-checked, every problem names file, line and field.

External references: the rule-file format of DEVELOPERS.md ("Adding a rule"); JSON
Schema 2020-12 as implemented by the jsonschema package; dimensional homogeneity of
quantity equations (BIPM, The International System of Units, 9th ed. (2019), section
2.3.3); unit dimensions as pint computes them.  Expected lines are found in the edited
text itself, not asked of the loader.
"""

import json
import re
import subprocess
import sys
from pathlib import Path

import jsonschema
import pint
import pytest
import yaml

from checker.engine.regime.rulebook import (
    MODELINE,
    RuleFileError,
    configured,
    load_rule,
    load_rules,
)
from checker.inputs.config import Config
from checker.resources import rules_dir
from checker.vocabulary_words import TOLERANCE_NAMES

ROOT = Path(__file__).resolve().parents[1]
RULE_SCHEMA = ROOT / "checker" / "data" / "rule.schema.json"
SHIPPED = sorted(rules_dir().glob("*.yaml"))


def _validator():
    return jsonschema.Draft202012Validator(json.loads(RULE_SCHEMA.read_text(encoding="utf-8")))


def _edited(tmp_path, name, old, new):
    """A copy of a shipped rule file with one text edit; (path, text)."""
    text = (rules_dir() / name).read_text(encoding="utf-8")
    assert text.count(old) == 1, f"{old!r} must occur once in {name}"
    text = text.replace(old, new)
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path, text


def _line_of(text, marker):
    hits = [n for n, line in enumerate(text.split("\n"), start=1) if marker in line]
    assert len(hits) == 1, f"{marker!r} must mark one line"
    return hits[0]


# ---- every broken-rule class: refused with file, line and field -----------------------
# (file, text replaced, replacement, field named, text of the line named)
STRUCTURE = [
    # unknown keys, one per section (DEVELOPERS.md lists each section's fields)
    (
        "STAT01.yaml",
        "severity: warning\n",
        "severity: warning\ncolour: red\n",
        "colour",
        "colour: red",
    ),
    ("CARR01.yaml", '  unit: "%"\n', '  units: "%"\n', "indicator.units", "units:"),
    (
        "STAT01.yaml",
        "  declared: [non-degenerate]\n",
        "  declared: [non-degenerate]\n  whenever: maj_x\n",
        "applies.whenever",
        "whenever:",
    ),
    (
        "TRAN02.yaml",
        'shortcut: "used_mu_x*field", within: 0.02}',
        'shortcut: "used_mu_x*field", within: 0.02, tolerance: 0.1}',
        "applies.implied_by[0].tolerance",
        "tolerance: 0.1",
    ),
    (
        "STAT01.yaml",
        "    stated: stated_ef_x\n",
        "    stated: stated_ef_x\n    note: x\n",
        "corrections[1].note",
        "note: x",
    ),
    (
        "TRAN01.yaml",
        "mfp: {expression: lambda_x, unit: nm}",
        "mfp: {expression: lambda_x, units: nm}",
        "show.mfp.units",
        "units: nm",
    ),
    (
        "MODEL01.yaml",
        "models: {text: T_models}",
        "models: {text: T_models, unit: K}",
        "show.models.unit",
        "text: T_models",
    ),
    (
        "FORM03.yaml",
        "  above: 0.05\n",
        "  above: 0.05\n  below: 0.01\n",
        "indicator.below",
        "below: 0.01",
    ),
    # a missing field, and a key given twice
    ("STAT02.yaml", "why: >-", "reason: >-", "why", "id: STAT02"),
    (
        "ION02.yaml",
        "severity: warning\n",
        "severity: warning\nseverity: error  # again\n",
        "severity",
        "# again",
    ),
    # the comparison: exactly one of above and below
    ("STAT01.yaml", "  above: -3\n", "  above: -3\n  below: 0\n", "indicator", "indicator:"),
    ("STAT01.yaml", "  above: -3\n", "", "indicator", "indicator:"),
    # references: a non-empty list of non-empty texts
    (
        "ION01.yaml",
        'references:\n  - "S. M. Sze and K. K. Ng, Physics of Semiconductor '
        'Devices, 3rd ed. (Wiley, 2007), ch. 1"\n',
        "references: []\n",
        "references",
        "references: []",
    ),
    (
        "ION01.yaml",
        '  - "S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. '
        '(Wiley, 2007), ch. 1"\n',
        '  - " "\n',
        "references[0]",
        '- " "',
    ),
    # units: only the display units of engine/vocabulary.py
    ("CARR01.yaml", '  unit: "%"\n', '  unit: "percent"\n', "indicator.unit", "percent"),
    (
        "STAT01.yaml",
        "    unit: eV\n",
        "    unit: electronvolt\n",
        "corrections[1].unit",
        "electronvolt",
    ),
    (
        "TRAN01.yaml",
        "mfp: {expression: lambda_x, unit: nm}",
        "mfp: {expression: lambda_x, unit: nanometre}",
        "show.mfp.unit",
        "nanometre",
    ),
    # the configuration tolerance: a known name, and only for a threshold given as above
    (
        "MEAS01.yaml",
        "  tolerance: resistivity",
        "  tolerance: sheet_resistivity",
        "indicator.tolerance",
        "tolerance: sheet_resistivity",
    ),
    (
        "ION01.yaml",
        "  below: 0.95\n",
        "  below: 0.95\n  tolerance: mobility\n",
        "indicator.tolerance",
        "tolerance: mobility",
    ),
    # names of quantities and assumption words
    (
        "CARR01.yaml",
        "    stated: stated_sigma\n",
        "    stated: stated_sigmaa\n",
        "corrections[0].stated",
        "stated_sigmaa",
    ),
    (
        "STAT01.yaml",
        "  declared: [non-degenerate]\n",
        "  declared: [nondegenerate]\n",
        "applies.declared[0]",
        "[nondegenerate]",
    ),
]

# dimensional homogeneity (BIPM SI Brochure, 9th ed., 2.3.3): terms of a sum, and the
# values min/max choose between, share one dimension; exp, log and F take pure numbers
DIMENSIONS = [
    ("CARR01.yaml", "  when: maj_x\n", '  when: "T + ni"\n', "applies.when", "T + ni"),
    (
        "MOB01.yaml",
        'expression: "max(stated_mu_x/mu_x, mu_x/stated_mu_x)"',
        'expression: "max(stated_mu_x, mu_x/stated_mu_x)"',
        "indicator.expression",
        "max(stated_mu_x, mu_x",
    ),
    (
        "DOPE01.yaml",
        'expression: "exp(dEg_bgn/kT)"',
        'expression: "exp(dEg_bgn)"',
        "indicator.expression",
        "exp(dEg_bgn)",
    ),
    (
        "STAT01.yaml",
        'shortcut: "log(stated_or(stated_dens_x, Nnet)/Nband_x)"',
        'shortcut: "log(stated_or(stated_dens_x, Nnet))"',
        "applies.implied_by[0].shortcut",
        "log(stated_or(stated_dens_x, Nnet))",
    ),
    (
        "TRAN01.yaml",
        'exact: "stated_or(conductor_resistance(used_rho, L, lambda_x, A),',
        'exact: "stated_or(conductor_resistance(used_rho, L*kT, lambda_x, A),',
        "corrections[0].exact",
        "L*kT",
    ),
    (
        "CONST03.yaml",
        'expression: "T*(stated_Nband_x/Nband_x)^(2/3)"',
        'expression: "T*stated_Nband_x^eta_x"',
        "show.belongs.expression",
        "^eta_x",
    ),
    # a value against the unit it is shown in or compared with
    (
        "CARR02.yaml",
        'expression: "ni/Nnet"',
        'expression: "ni"',
        "indicator.expression",
        'expression: "ni"',
    ),
    (
        "ION01.yaml",
        '  unit: "%"\n',
        '  unit: "cm^-3"\n',
        "indicator.expression",
        'expression: "(Nion_x - Nion_o)/(N_x - Ncomp_x)"',
    ),
    (
        "STAT01.yaml",
        'shortcut: "Nband_x*exp(eta_x)"\n',
        'shortcut: "exp(eta_x)"\n',
        "corrections[0].shortcut",
        'shortcut: "exp(eta_x)"',
    ),
    (
        "STAT01.yaml",
        'exact: "kT*eta_x"',
        'exact: "eta_x"',
        "corrections[1].exact",
        'exact: "eta_x"',
    ),
    (
        "TRAN01.yaml",
        "mfp: {expression: lambda_x, unit: nm}",
        "mfp: {expression: lambda_x, unit: K}",
        "show.mfp.expression",
        "unit: K}",
    ),
    (
        "TRAN01.yaml",
        'shortcut: "stated_or(stated_rho, rho)*L/A", within',
        'shortcut: "stated_or(stated_rho, rho)/A", within',
        "applies.implied_by[0].shortcut",
        "rho)/A",
    ),
    (
        "DOPE02.yaml",
        "within: 0.02, exact: eta_x}",
        "within: 0.02, exact: T}",
        "applies.implied_by[0].exact",
        "exact: T}",
    ),
    (
        "CARR01.yaml",
        "    unit: S/cm\n    stated: stated_sigma\n",
        "    unit: S/cm\n    stated: stated_R\n",
        "corrections[0].stated",
        "stated: stated_R",
    ),
]

# what a schema cannot see: the editor modeline, and text the loader reads
BEYOND_SCHEMA = [
    (
        "STAT01.yaml",
        MODELINE,
        "# yaml-language-server: $schema=rule.schema.json",
        "(modeline)",
        "yaml-language-server",
    ),
    ("STAT01.yaml", MODELINE + "\n", "", "(modeline)", "id: STAT01"),
    ("STAT01.yaml", "{error}.", "{error} at {place}.", "message", "message: >-"),
    (
        "STAT01.yaml",
        "expression: eta_x\n",
        "expression: eta_x + import_os\n",
        "indicator.expression",
        "import_os",
    ),
]


BROKEN = STRUCTURE + DIMENSIONS + BEYOND_SCHEMA


@pytest.mark.parametrize(
    "name, old, new, field, marker",
    BROKEN,
    ids=[f"{case[0][:-5]}-{case[3]}-{n}" for n, case in enumerate(BROKEN)],
)
def test_broken_rule_refused_naming_file_line_and_field(tmp_path, name, old, new, field, marker):
    path, text = _edited(tmp_path, name, old, new)
    with pytest.raises(RuleFileError) as info:
        load_rule(path)
    expected = f"rule file {path}:{_line_of(text, marker)}: field {field!r}: "
    assert any(line.startswith(expected) for line in str(info.value).split("\n")), str(info.value)


def test_dimension_problem_says_what_does_not_fit(tmp_path):
    path, _ = _edited(tmp_path, "CARR01.yaml", "  when: maj_x\n", '  when: "T + ni"\n')
    with pytest.raises(RuleFileError) as info:
        load_rule(path)
    # K and m^-3: a temperature and a volume density cannot be added
    assert "T is K (a temperature) but ni is m⁻³ (a volume density)" in str(info.value)


def test_every_problem_of_a_file_is_reported_at_once(tmp_path):
    path, text = _edited(tmp_path, "CARR01.yaml", '  unit: "%"\n', '  units: "%"\n')
    text = text.replace("severity: warning", "severity: loud")
    path.write_text(text, encoding="utf-8")
    with pytest.raises(RuleFileError) as info:
        load_rule(path)
    lines = str(info.value).split("\n")
    assert any("field 'severity'" in line for line in lines)
    assert any("field 'indicator.units'" in line for line in lines)


# ---- the schema: generated from the loader's table, valid for every shipped file -------
def test_rule_schema_matches_the_loader_table(schema_generator):
    assert RULE_SCHEMA.read_text(encoding="utf-8") == schema_generator.render_rule(), (
        "run python tools/generate_schema.py"
    )
    jsonschema.Draft202012Validator.check_schema(json.loads(RULE_SCHEMA.read_text()))


@pytest.mark.parametrize("path", SHIPPED, ids=lambda p: p.name)
def test_shipped_rule_validates_and_carries_the_modeline(path):
    text = path.read_text(encoding="utf-8")
    assert (
        text.split("\n", 1)[0] == "# yaml-language-server: $schema=../checker/data/rule.schema.json"
    )
    errors = [e.message for e in _validator().iter_errors(yaml.safe_load(text))]
    assert errors == []


# ---- loader and schema agree on every structural case ---------------------------------
def _set(*keys, value):
    def edit(data):
        for key in keys[:-1]:
            data = data[key]
        data[keys[-1]] = value

    return edit


def _drop(*keys):
    def edit(data):
        for key in keys[:-1]:
            data = data[key]
        del data[keys[-1]]

    return edit


# (file, edit of its data) -- accepted and refused forms alike
AGREEMENT = [
    ("STAT01.yaml", lambda d: None),
    ("FORM01.yaml", lambda d: None),
    ("STAT01.yaml", _set("applies", "declared", value="non-degenerate")),
    ("STAT01.yaml", _set("applies", "declared", value=[])),
    ("STAT01.yaml", _set("applies", "declared", value="boltzmann")),
    ("STAT01.yaml", _set("applies", value={})),
    ("STAT01.yaml", _set("applies", value={"when": "maj_x"})),
    ("STAT01.yaml", _set("applies", value=["maj_x"])),
    ("STAT01.yaml", _set("applies", "implied_by", value=[])),
    ("STAT01.yaml", _set("applies", "implied_by", 0, "within", value=0)),
    ("STAT01.yaml", _set("applies", "implied_by", 0, "within", value="0.02")),
    ("STAT01.yaml", _drop("applies", "implied_by", 0, "within")),
    ("STAT01.yaml", _set("indicator", "below", value=0)),
    ("STAT01.yaml", _drop("indicator", "above")),
    ("STAT01.yaml", lambda d: d["indicator"].update(below=d["indicator"].pop("above"))),
    ("STAT01.yaml", _set("indicator", "above", value=True)),
    ("STAT01.yaml", _set("indicator", "above", value="-3")),
    ("STAT01.yaml", _set("indicator", "unit", value="1")),
    ("STAT01.yaml", _set("indicator", "unit", value=1)),
    ("STAT01.yaml", _set("indicator", "units", value="1")),
    ("STAT01.yaml", _set("indicator", "expression", value=-3)),
    ("STAT01.yaml", _set("indicator", "expression", value="")),
    ("STAT01.yaml", _set("indicator", "expression", value="x" * 4001)),
    ("STAT01.yaml", _set("indicator", "label", value=None)),
    ("STAT01.yaml", _set("indicator", value="eta_x > -3")),
    ("MEAS01.yaml", _drop("indicator", "tolerance")),
    ("MEAS01.yaml", _set("indicator", "tolerance", value="sheet_resistance")),
    ("ION01.yaml", _set("indicator", "tolerance", value="mobility")),
    ("STAT01.yaml", _set("corrections", value=[])),
    ("STAT01.yaml", _set("corrections", value=None)),
    ("STAT01.yaml", _drop("corrections", 1, "stated")),
    (
        "STAT01.yaml",
        _set("corrections", value=[{"label": "η", "shortcut": "eta_x", "exact": "eta_x"}]),
    ),
    ("STAT01.yaml", _drop("corrections", 0, "label")),
    ("STAT01.yaml", _set("corrections", 0, "stated", value="stated_dens_q")),
    ("STAT01.yaml", _set("corrections", 0, value="dens_x")),
    ("STAT01.yaml", _set("requires", value=["Nband_x"])),
    ("STAT01.yaml", _set("requires", value=[])),
    ("STAT01.yaml", _set("requires", value="Nband_x")),
    ("STAT01.yaml", _set("show", value={"state": {"text": "regime"}})),
    ("STAT01.yaml", _set("show", value={"state": {"text": "regimes"}})),
    ("STAT01.yaml", _set("show", value={"state": {"text": "regime", "unit": "1"}})),
    ("STAT01.yaml", _set("show", value={"density": {"expression": "dens_x", "unit": "cm^-3"}})),
    (
        "STAT01.yaml",
        _set(
            "show",
            value={"ratio": {"expression": "eta_x"}, "gap": {"expression": "Eg", "unit": "eV"}},
        ),
    ),
    ("STAT01.yaml", _set("show", value={"density": {"unit": "cm^-3"}})),
    ("STAT01.yaml", _set("show", value={"2nd": {"expression": "eta_x"}})),
    ("STAT01.yaml", _set("show", value={})),
    ("STAT01.yaml", _set("show", value=None)),
    ("STAT01.yaml", _set("references", value=[])),
    ("STAT01.yaml", _set("references", value="Sze and Ng (2007)")),
    ("STAT01.yaml", _set("references", value=["Sze and Ng (2007)", 2007])),
    ("STAT01.yaml", _set("per", value="electron")),
    ("STAT01.yaml", _set("per", value="calculation")),
    ("STAT01.yaml", _set("severity", value="fatal")),
    ("STAT01.yaml", _set("assumption", value="stated-formula")),
    ("STAT01.yaml", _set("assumption", value="room-temperature")),
    ("STAT01.yaml", _set("title", value="  ")),
    ("STAT01.yaml", _drop("fix")),
    ("STAT01.yaml", _set("evaluated_by", value="formula-analysis")),
    ("FORM01.yaml", _set("indicator", "above", value=0.05)),
    ("FORM01.yaml", _set("indicator", "below", value=0.05)),
    ("FORM01.yaml", _set("indicator", "expression", value="1")),
    ("FORM01.yaml", _set("evaluated_by", value="formula-check")),
    ("FORM01.yaml", _set("per", value="carrier")),
    ("FORM01.yaml", _set("applies", value={"when": "1"})),
    ("FORM01.yaml", _drop("evaluated_by")),
]


@pytest.mark.parametrize("name, edit", AGREEMENT)
def test_loader_and_schema_agree(tmp_path, name, edit):
    data = yaml.safe_load((rules_dir() / name).read_text(encoding="utf-8"))
    edit(data)
    path = tmp_path / name
    path.write_text(MODELINE + "\n" + yaml.safe_dump(data, allow_unicode=True), encoding="utf-8")
    try:
        load_rule(path)
        loader = "accepts"
    except RuleFileError as exc:
        loader = f"refuses: {exc}"
    schema = [e.message for e in _validator().iter_errors(data)]
    assert (loader == "accepts") == (not schema), (loader, schema)


def test_agreement_cases_cover_both_verdicts(tmp_path):
    verdicts = set()
    for name, edit in AGREEMENT:
        data = yaml.safe_load((rules_dir() / name).read_text(encoding="utf-8"))
        edit(data)
        verdicts.add(_validator().is_valid(data))
    assert verdicts == {True, False}


# ---- tolerances named by the rule files, not by the configuration ---------------------
def test_each_configuration_tolerance_sets_one_rule_threshold():
    claimed = [rule.tolerance for rule in load_rules() if rule.tolerance]
    assert sorted(claimed) == sorted(TOLERANCE_NAMES)
    rules = load_rules()
    for name in TOLERANCE_NAMES:
        rule = next(r for r in rules if r.tolerance == name)
        tuned = next(r for r in configured(rules, Config(tolerance={name: 0.4})) if r.id == rule.id)
        # [tool.regimecheck.tolerance] (inputs/config.py): a relative tolerance t allows
        # a factor 1 + t
        assert tuned.threshold == pytest.approx(1.4)
        assert rule.relation == "above"


def test_configuration_module_names_no_rule():
    import checker.inputs.config as config

    def texts(value):
        if isinstance(value, str):
            yield value
        elif isinstance(value, dict):
            for key, item in value.items():
                yield from texts(key)
                yield from texts(item)
        elif isinstance(value, (tuple, list, set, frozenset)):
            for item in value:
                yield from texts(item)

    ids = {rule.id for rule in load_rules()}
    held = {
        text
        for name, value in vars(config).items()
        if not name.startswith("__")
        for text in texts(value)
    }
    assert not held & ids


def test_rule_loader_imports_no_input_reader():
    code = (
        "import sys, checker.engine.regime.rulebook as r; r.load_rules(); "
        "print(sorted(m for m in sys.modules if m.startswith('checker.inputs')))"
    )
    out = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True, cwd=ROOT
    )
    assert out.stdout.strip() == "[]"


# ---- dimensions of units and names, against pint ---------------------------------------
UNITS = pint.UnitRegistry()
PINT_SPELLING = {
    "%": "percent",
    "ohm/sq": "ohm",
    "m0": "electron_mass",
    "um": "micrometer",
    "um^2": "micrometer**2",
    "1": "dimensionless",
}


def _pint_dimension(dimension):
    m, s, V, C, K = (float(e) for e in dimension)
    return (
        UNITS.meter**m * UNITS.second**s * UNITS.volt**V * UNITS.coulomb**C * UNITS.kelvin**K
    ).dimensionality


def test_every_display_unit_has_the_dimension_pint_gives_it():
    from checker.engine.expressions.dimension_check import UNIT_DIMENSIONS
    from checker.engine.vocabulary import DISPLAY_UNITS

    assert set(UNIT_DIMENSIONS) == set(DISPLAY_UNITS)
    for unit, dimension in UNIT_DIMENSIONS.items():
        spelled = PINT_SPELLING.get(unit, unit).replace("^", "**")
        assert UNITS(spelled).dimensionality == _pint_dimension(dimension), unit


def test_names_have_the_dimension_of_the_input_keys_that_fill_them():
    """A quantity a calculation states (or its structure gives) has, in rule expressions,
    the dimension the calculation reader parses it in (inputs/quantities.DIMENSIONS)."""
    from checker.engine.expressions.dimension_check import name_dimension
    from checker.inputs.calculation_file import STATED_KEYS, STRUCTURE_KEYS
    from checker.inputs.quantities import DIMENSIONS as READ_AS
    from checker.quantity_registry.registry import registered

    given = list(STATED_KEYS.values()) + list(STRUCTURE_KEYS.values())
    for name, kind in given:
        if not registered(name).in_rules:
            continue  # read to fill another quantity (width, voltage, E_F - E_C)
        if kind == "dimensionless":  # the dimensionality: a bare number
            assert name_dimension(name).dimensionless, name
            continue
        si_unit = READ_AS[kind][0]
        assert UNITS(si_unit).dimensionality == _pint_dimension(name_dimension(name)), name


def test_constants_have_their_si_dimensions():
    from checker.engine.expressions.dimension_check import name_dimension

    # CODATA: q in C, k in J/K
    assert _pint_dimension(name_dimension("q")) == UNITS.coulomb.dimensionality
    assert _pint_dimension(name_dimension("k")) == (UNITS.joule / UNITS.kelvin).dimensionality


def test_per_carrier_names_share_their_dimension():
    from checker.engine.expressions.dimension_check import name_dimension

    for stem in ("dens", "mu", "eta", "Eion", "lambda"):
        assert (
            name_dimension(f"{stem}_x")
            == name_dimension(f"{stem}_n")
            == name_dimension(f"{stem}_p")
            == name_dimension(f"{stem}_o")
        )


def test_rule_id_pattern_in_schema_matches_the_documented_form():
    # DEVELOPERS.md: "2-5 capitals + 2 digits"
    schema = json.loads(RULE_SCHEMA.read_text(encoding="utf-8"))
    pattern = schema["else"]["properties"]["id"]["pattern"]
    assert re.search(pattern, "STAT01") and re.search(pattern, "MODEL12")
    assert not re.search(pattern, "S01") and not re.search(pattern, "STAT1")
    assert not re.search(pattern, "STATE001") and not re.search(pattern, "stat01")


def test_compiled_forms_offer_exactly_the_rule_carriers():
    # the per-carrier closures are built on first use; a rule answers for its own carriers
    # (DEVELOPERS.md "Adding a rule": per carrier -> n and p, else one form) and no other
    for rule in load_rules():
        if rule.indicator is None:
            continue
        run = rule.indicator.run
        assert tuple(run) == rule.carriers == (("n", "p") if rule.per == "carrier" else ("",))
        assert all(callable(run[x]) and run[x] is run[x] for x in rule.carriers)
        with pytest.raises(KeyError):
            run["x"]
