"""The shortcuts a check of many calculations takes give what the plain paths give.

- A quantity text read before is looked up: the second reading equals the first and a
  fresh reading, and the SI value is the definition's (1 cm = 1e-2 m, 1 V*s, the SI
  brochure, BIPM 9th ed. (2019), table 8 / section 2.3.4); a refusal is not kept, so a
  second refusal names its own place; the table is bounded.
- A rule message is filled from its placeholders split once: the same text as
  PLACEHOLDER.sub on every message of the rule set.
- The typical mobilities read once per material equal the per-calculation column.
- A read-through view (Taken: the formulas' rows, the summaries' lists, a sweep chunk's
  one-value elements) equals the eager take of every quantity; a name the values lack
  raises KeyError.
"""

import numpy as np
import pytest

from checker.engine.regime import evaluate, rulebook, state_values
from checker.engine.regime.taken import Taken
from checker.errors import InputError
from checker.inputs import quantities
from checker.inputs.calculation_file import parse_calculations
from checker.inputs.quantities import parse_quantity, parse_temperature
from checker.vocabulary_words import Carrier


def test_a_text_read_again_gives_the_same_si_value():
    text = "2.5e17 cm^-3"
    first = parse_quantity(text, "density")
    again = parse_quantity(text, "density")
    fresh = quantities._read_quantity(text, "density", "")
    # 1 cm^-3 = 1e6 m^-3 (1 cm = 1e-2 m by definition)
    assert first == again == fresh == pytest.approx(2.5e23, rel=1e-15)
    # the same text in another dimension is another reading (and here a refusal)
    with pytest.raises(InputError, match="unit of density where mobility is expected"):
        parse_quantity(text, "mobility", "f.yaml:9:3")


def test_a_temperature_read_again_gives_the_same_kelvin():
    # 0 degC = 273.15 K (SI brochure, BIPM 9th ed. (2019), section 2.3.1)
    assert parse_temperature("27 degC") == parse_temperature("27 degC") == 300.15
    # the temperature reader's texts are kept apart from the quantity reader's
    assert parse_quantity("300 K", "temperature") == parse_temperature("300 K") == 300.0
    with pytest.raises(InputError, match="^t.yaml:2:1: '-5 K' is at or below absolute zero"):
        parse_temperature("-5 K", "t.yaml:2:1")


def test_a_refusal_is_not_kept_and_names_each_place():
    for place in ("a.yaml:3:5", "b.yaml:7:2"):
        with pytest.raises(InputError, match=f"^{place}: "):
            parse_quantity("1e17", "density", place)
    assert ("1e17", "density") not in quantities._READ


def test_the_kept_readings_are_bounded():
    for k in range(quantities._MOST_KEPT + 10):
        assert parse_quantity(f"{k + 1} cm", "length") == pytest.approx((k + 1) * 1e-2)
    assert len(quantities._READ) <= quantities._MOST_KEPT


def test_messages_from_split_placeholders_equal_substitution():
    fields = {}
    for rule in rulebook.load_rules():
        names = [m.group(1) for m in rulebook.PLACEHOLDER.finditer(rule.message)]
        fields = {name: f"<{name}:{k}>" for k, name in enumerate(names)}
        texts, slots = evaluate._template(rule.message)
        filled = texts[0] + "".join(fields[n] + t for n, t in zip(slots, texts[1:]))
        assert filled == rulebook.PLACEHOLDER.sub(lambda m: fields[m.group(1)], rule.message)
    assert fields  # the rule set has messages with placeholders


# invented calculations over several materials, in an order that revisits them
_FILE = "---\n".join(
    f"name: c{k}\nmaterial: {material}\ntemperature: {300 + 10 * k} K\n"
    f"doping:\n  donors: {{{donor}: 1e16 cm-3}}\n"
    "stated:\n  electron_mobility: 900 cm^2/(V*s)\n"
    + ("formulas:\n  - D_n = mu_n*k*T/q\n  - n = N_D\n" if k % 2 else "")
    for k, (material, donor) in enumerate(
        [("Si", "P"), ("GaAs", "Si"), ("Si", "As"), ("Ge", "Sb"), ("GaAs", "Si"), ("Si", "P")]
    )
)


def _calculations():
    result = parse_calculations(_FILE, "many.yaml")
    assert not result.errors
    return result.calculations


def test_material_columns_equal_per_calculation_columns():
    calcs = _calculations()
    by_material = state_values._per_material(calcs)
    for field in ("T", "low", "high"):
        for carrier in (None, *Carrier):
            if (field == "T") != (carrier is None):
                continue

            def getter(c, field=field, carrier=carrier):
                return state_values._typical_mobility(c, field, carrier)

            direct = np.array([getter(c) for c in calcs], dtype=float)
            np.testing.assert_array_equal(by_material(getter), direct)


def test_taken_values_equal_the_eager_take():
    calcs = _calculations()
    values, _, _ = state_values.solve_all(calcs)
    rows = np.array([i for i, c in enumerate(calcs) if c.formulas], dtype=np.intp)
    lazy = Taken(values, lambda array: np.asarray(array)[rows] if np.ndim(array) else array)
    for name, array in values.items():
        eager = np.asarray(array)[rows] if np.ndim(array) else array
        assert name in lazy
        np.testing.assert_array_equal(lazy[name], eager)
    assert "no such quantity" not in lazy
    with pytest.raises(KeyError):
        lazy["no such quantity"]
    listed = Taken(values, lambda array: np.asarray(array).tolist())
    assert listed["T"] == np.asarray(values["T"]).tolist()


# a p-type point stating its minority (electron) density, read by DOPE01 through
# dens_bgn_n, beside n-type points that state their doping as n (VAL01's gate ends first)
_NARROWING_FILE = (
    _FILE
    + "---\n"
    + (
        "name: minority\nmaterial: Si\ntemperature: 300 K\n"
        "doping:\n  acceptors: {B: 1e19 cm-3}\n"
        "stated:\n  electron_density: 12 cm-3\n"
        "assumes: [non-degenerate]\n"
    )
)


def _solve_calls(monkeypatch):
    """The solves with band-gap narrowing that state_values asks for, counted."""
    narrowed = []
    solve = state_values.equilibrium.solve

    def counted(*args, **kwargs):
        if kwargs.get("band_gap_narrowing"):
            narrowed.append(np.size(args[1]))
        return solve(*args, **kwargs)

    monkeypatch.setattr(state_values.equilibrium, "solve", counted)
    return narrowed


def test_the_solve_with_narrowing_waits_for_its_first_reader(monkeypatch):
    # heavily doped n-type points stating n = N_D: the narrowing matters there (more
    # than 1 % in n_i^2), but VAL01's gate ends at n = N_D and DOPE01's at no stated
    # minority density
    text = "---\n".join(
        f"material: Si\ntemperature: {T} K\ndoping:\n  donors: {{P: 1e19 cm-3}}\n"
        "stated:\n  electron_density: 1e19 cm-3\n"
        for T in (250, 300, 350)
    )
    calcs = parse_calculations(text, "doped.yaml").calculations
    narrowed = _solve_calls(monkeypatch)
    values, errors, _ = state_values.solve_all(calcs)
    assert not errors and not narrowed
    evaluate.evaluate(rulebook.load_rules(), calcs, values)
    assert not narrowed  # no gate got as far as dens_bgn_x
    assert values.pending("dens_bgn_n") and "dens_bgn_n" in values and not narrowed
    # a reader of the whole mapping gets every quantity: the pending ones computed then
    assert {"dens_bgn_n", "dens_bgn_p"} <= set(values)
    assert narrowed == [3] and not values.pending("dens_bgn_n")


def test_narrowed_densities_read_later_equal_the_eager_solve():
    result = parse_calculations(_NARROWING_FILE, "many.yaml")
    assert not result.errors
    calcs = result.calculations
    values, errors, _ = state_values.solve_all(calcs)
    assert not errors
    for index, calc in enumerate(calcs):
        T = np.array([calc.temperature])
        donors = {s: np.array([d]) for s, d in calc.donors.items()}
        acceptors = {s: np.array([d]) for s, d in calc.acceptors.items()}
        eager, _ = state_values.solve_points(calc, T, donors, acceptors, calcs=[calc])
        for name in ("dens_bgn_n", "dens_bgn_p"):
            assert values[name][index] == eager[name][0], (calc.name, name)
    # the p-type point's narrowed minority density differs from its plain solve's
    assert values["dens_bgn_n"][-1] > 1.5 * values["dens_n"][-1]


def test_a_narrowed_solve_that_fails_leaves_the_densities_unknown(monkeypatch):
    result = parse_calculations(_NARROWING_FILE, "many.yaml")
    solve = state_values.equilibrium.solve

    def failing(*args, **kwargs):
        if kwargs.get("band_gap_narrowing"):
            raise state_values.RegimecheckError("no convergence (a test's)")
        return solve(*args, **kwargs)

    monkeypatch.setattr(state_values.equilibrium, "solve", failing)
    values, errors, _ = state_values.solve_all(result.calculations)
    assert not errors
    assert np.isfinite(values["dens_n"]).all()
    # the p-type point's group asks for the solve with narrowing: unknown there; the other
    # groups need none (no stated density their narrowing would change): their own solve's
    np.testing.assert_array_equal(values["dens_bgn_n"][:-1], values["dens_n"][:-1])
    assert np.isnan(values["dens_bgn_n"][-1])
