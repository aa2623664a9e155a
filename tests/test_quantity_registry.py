"""The quantity registry against what the program really does: the solve produces exactly
the registered quantities, the calculation reader fills every registered key, formula
symbols and report keys name registered quantities, and the shared words (severity,
carrier) keep their exact spelling."""

import json
from pathlib import Path

import numpy as np
import pytest
import scipy.constants as sc

from checker.engine.expressions.dimension_check import name_dimension
from checker.engine.expressions.parser import names_in
from checker.engine.formulas import symbols
from checker.engine.formulas.relations import world
from checker.engine.regime import rulebook, state_values
from checker.engine.regime.trade_summary import state_values as summary_inputs
from checker.engine.regime.trade_summary import trade_summary
from checker.engine.run import check_calculations
from checker.inputs.calculation_file import parse_calculations
from checker.inputs.sources import read_input
from checker.physics import equilibrium
from checker.quantity_registry.registry import (
    QUANTITIES,
    Source,
    formula_symbols,
    registered,
    value_names,
)
from checker.quantity_registry.summary_fields import FIELDS, JSON_FIELDS
from checker.vocabulary_words import Carrier, Severity

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted(p for p in (ROOT / "examples").iterdir() if p.suffix in (".yaml", ".md", ".csv"))

# Invented test data: two calculations that between them give every structure and stated
# key once (the alternatives a single calculation may not combine go to the second).
EVERY_KEY = """
name: every key, first form
material: Si
temperature: 300 K
doping:
  donors: {P: 1e16 cm-3}
structure:
  dimensionality: 3
  length: 10 um
  thickness: 1 um
  width: 2 um
  voltage: 1 V
  modes: 2
stated:
  electron_density: 1e16 cm-3
  hole_density: 1e4 cm-3
  ef_minus_ec: -0.2 eV
  electron_mobility: 1200 cm^2/(V*s)
  hole_mobility: 400 cm^2/(V*s)
  electron_diffusivity: 31 cm^2/s
  hole_diffusivity: 10 cm^2/s
  electron_velocity: 1e6 cm/s
  hole_velocity: 1e5 cm/s
  conductivity: 2 S/cm
  sheet_resistance: 5000 ohm/sq
  resistance: 25 kohm
  thermal_voltage: 0.02585 V
  intrinsic_density: 1e10 cm-3
  conduction_dos: 2.8e19 cm-3
  valence_dos: 1.04e19 cm-3
  mean_free_path: 30 nm
  hall_density: 1e16 cm-3
---
name: every key, second form
material: Si
temperature: 300 K
doping:
  acceptors: {B: 1e17 cm-3}
structure:
  length: 10 um
  cross_section: 2 um^2
  field: 1 kV/cm
stated:
  ef_minus_ev: 0.15 eV
  resistivity: 0.2 ohm*cm
---
name: every key, a zero-gap sheet
material: graphene
temperature: 300 K
structure: {width: 1 um, length: 0.5 um}
stated:
  electron_mobility: 5000 cm^2/(V*s)
  net_sheet_density: 1e12 cm-2
  electron_sheet_density: 1.006e12 cm-2
  hole_sheet_density: 6e9 cm-2
  conductance: 1e-4 S
---
name: every key, a 1D wire
material: GaAs
temperature: 300 K
structure: {dimensionality: 1}
stated:
  electron_line_density: 2e6 cm-1
  hole_line_density: 1e3 cm-1
"""


def _every_key_calculations():
    read = parse_calculations(EVERY_KEY, "every_key.yaml")
    assert not read.errors, read.errors
    return read.calculations


@pytest.fixture(scope="module")
def calculations():
    found = []
    for path in EXAMPLES:
        read = read_input(str(path))
        assert not read.errors, read.errors
        found += read.calculations
    return found + _every_key_calculations()


class _Written(dict):
    """Values that remember which names were written into them."""

    def __init__(self, values):
        super().__init__(values)
        self.written = set()

    def __setitem__(self, name, value):
        self.written.add(name)
        super().__setitem__(name, value)


def _names(*sources) -> set:
    return {
        name for q in QUANTITIES if q.in_rules and q.source in sources for _, name in q.carriers()
    }


def test_the_solve_produces_every_registered_quantity_and_no_other(calculations):
    solved = set()
    for calc in calculations:
        one = {s: np.array([v]) for s, v in calc.donors.items()}
        other = {s: np.array([v]) for s, v in calc.acceptors.items()}
        put, _ = state_values.solve_points(calc, np.array([calc.temperature]), one, other)
        solved |= set(put)
    values, errors, _ = state_values.solve_all(calculations)
    assert not errors
    written = _Written(values)
    state_values.fill_inputs(calculations, written)

    assert solved == _names(Source.SOLVE, Source.TEXT)
    assert written.written - solved == _names(Source.INPUTS, Source.STATED, Source.DERIVED)
    assert set(values) == value_names()
    # the constants are CODATA's exact SI values (scipy.constants)
    assert values["q"][0] == sc.e and values["k"][0] == sc.k


def test_every_registered_quantity_gets_a_value_somewhere(calculations):
    """Over the shipped examples and the calculation giving every key, each quantity is
    known (finite, or non-empty words) for at least one calculation: none is laid out
    and then never filled."""
    values, _, _ = state_values.solve_all(calculations)
    never = [
        name
        for name in sorted(value_names())
        if not (
            any(values[name] != "")
            if values[name].dtype == object
            else np.isfinite(values[name]).any()
        )
    ]
    assert never == []


def test_a_sweep_lays_out_the_quantities_of_single_points(calculations):
    sweep = next(c for c in calculations if c.sweep)
    axis = sweep.sweep[0]
    count = len(axis.values)
    T = np.full(count, sweep.temperature)
    donors = {s: np.full(count, v) for s, v in sweep.donors.items()}
    acceptors = {s: np.full(count, v) for s, v in sweep.acceptors.items()}
    values, _ = state_values.solve_sweep(sweep, T, donors, acceptors)
    assert set(values) == value_names()


def test_the_reader_fills_every_registered_key():
    given = set()
    for calc in _every_key_calculations():
        given |= set(calc.structure) | set(calc.stated)
    registered_keys = {name for q in QUANTITIES if q.section for _, name in q.carriers()}
    assert given == registered_keys


def test_formula_symbols_are_trade_symbols_of_the_same_dimension():
    """The registry's symbol of a quantity is one stated formulas know (formulas/symbols.py,
    written separately) with the quantity's dimension, or a primitive of the exact
    relations (the dopant's ionization energy dE_D)."""
    relations = world(3, "donor", "n").definitions
    primitives = set().union(*(names_in(tree) for tree in relations.values()))
    for symbol, name in formula_symbols().items():
        if symbol not in symbols.SYMBOLS:
            assert symbol in primitives, symbol
        elif registered(name).in_rules:
            assert symbols.dimension_of(symbol, 3) == name_dimension(name), (symbol, name)


def test_both_reports_name_the_summary_by_the_registry(calculations):
    """The check report's state and the state command's are built from one table whose
    fields read registered quantities; for one point both give the same numbers."""
    for field in FIELDS:
        for name in field.reads:
            assert registered(name) is not None, (field.key, name)
    calc = next(c for c in calculations if c.donors and not c.acceptors and not c.sweep)
    checked = check_calculations([calc]).reports[0].state
    state = equilibrium.solve(
        calc.material,
        np.array([calc.temperature]),
        {s: np.array([v]) for s, v in calc.donors.items()},
        band_gap_narrowing=calc.band_gap_narrowing,
    )
    bare = summary_inputs(state)
    solved = trade_summary(bare, 0)
    assert list(solved) == [f.key for f in JSON_FIELDS]
    assert list(checked) == [f.key for f in JSON_FIELDS if not f.state_only]
    reads = {f.key: f.reads for f in FIELDS}
    for key, value in checked.items():
        if not all(name in bare for name in reads[key]):
            # what a bare solve does not carry is shown as unknown, never made up
            assert solved[key] is None, key
        elif isinstance(value, float):
            assert value == pytest.approx(solved[key], rel=1e-9, abs=1e-12), key
        else:
            assert value == solved[key], key


def test_json_output_keeps_the_severity_and_carrier_words():
    # rule files, configuration, JSON and SARIF spell them so (DEVELOPERS.md, "Adding a rule")
    assert [s.value for s in Severity] == ["info", "warning", "error"]
    assert json.dumps({Severity.ERROR: Carrier.N}) == '{"error": "n"}'
    assert Severity.worst(["warning", "info"]) == "warning"
    assert Severity.worst(["error", "info", "warning"]) is Severity.ERROR
    assert Severity.worst([]) is None
    assert [c.plural for c in Carrier] == ["electrons", "holes"]
    assert Carrier.from_plural("holes") is Carrier.P and Carrier.from_plural("ions") is None
    assert Carrier.N.other is Carrier.P and Carrier.P.other is Carrier.N


def test_every_rule_severity_is_a_severity_word():
    rules = rulebook.load_rules()
    assert rules
    for rule in rules:
        assert Severity(rule.severity).value == rule.severity
