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
    long_text = "1." + "0" * 100_000 + " cm"  # read (the same value), never kept
    assert parse_quantity(long_text, "length") == pytest.approx(1e-2)
    assert all(len(text) <= quantities._LONGEST_KEPT for text, _ in quantities._READ)


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


def test_a_narrowed_solve_that_fails_leaves_its_calculation_not_checked(tmp_path):
    # A material file may give a Slotboom V1 up to 1 eV; at 1e20 cm-3 that narrows the gap
    # by more than the gap itself (13 eV against 1.12 eV: Thurmond's gap at 300 K), and
    # the solve with narrowing (read by DOPE01 and VAL01 beside a stated n_i or minority
    # density) cannot be done.  Such a calculation is reported as not checked (an input
    # error naming what to change, exit 2), never checked with the narrowed densities
    # unknown (DOPE01 then fired with an infinite factor).
    import yaml

    from checker.api import check_paths
    from checker.resources import materials_dir

    silicon = yaml.safe_load((materials_dir() / "Si.yaml").read_text(encoding="utf-8"))
    silicon["name"] = "Si-wide-narrowing"
    silicon["band_gap_narrowing"]["V1"] = "1 eV"
    plain = {
        "name": "no stated density",
        "material": silicon,
        "temperature": "300 K",
        "doping": {"donors": {"P": "1e20 cm-3"}},
    }
    stating = {
        **plain,
        "name": "stated n_i and p",
        "stated": {"intrinsic_density": "1e10 cm-3", "hole_density": "1e2 cm-3"},
    }
    path = tmp_path / "wide.yaml"
    path.write_text(yaml.safe_dump_all([plain, stating], sort_keys=False), encoding="utf-8")
    reports = check_paths([path]).reports
    assert reports[0].error is None
    assert reports[1].error is not None
    assert "closes the 1.12 eV band gap" in reports[1].error
    assert "band_gap_narrowing parameters" in reports[1].error
