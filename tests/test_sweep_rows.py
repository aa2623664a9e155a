"""A sweep's chunks hand the carrier transport their distinct temperatures and doping
rows (sweep.grid_rows, from the grid's axis indices), so that what depends on T alone or
on the doping alone is computed once per row: every value must be the one the point-by-
point evaluation gives, to the bit (the point-by-point values themselves are checked
against published mobilities and mpmath in tests/test_transport.py and
tests/test_published_physics.py)."""

import numpy as np
import pytest

from checker import load_material, solve_equilibrium
from checker.engine.regime import sweep
from checker.physics import carriers

PER_CM3 = 1e6


def _grid(n_T, n_N, start, stop, species=("P",)):
    """A chunk [start, stop) of a temperature x doping grid (temperature slowest)."""
    T_axis = np.linspace(200.0, 500.0, n_T)
    N_axis = np.geomspace(1e14, 1e20, n_N) * PER_CM3
    size = n_T * n_N
    T = sweep.GridQuantity(T_axis, n_N, size)
    dopings = {s: sweep.GridQuantity(N_axis * (k + 1), 1, size) for k, s in enumerate(species)}
    at = slice(start, stop)
    return T, dopings, at


@pytest.mark.parametrize(
    "n_T, n_N, start, stop",
    [(7, 11, 0, 77), (7, 11, 5, 40), (13, 5, 12, 60), (1, 30, 0, 30), (30, 1, 3, 29)],
)
def test_grid_rows_name_each_points_temperature_and_doping(n_T, n_N, start, stop):
    T, dopings, at = _grid(n_T, n_N, start, stop)
    (T_first, T_back), (N_first, N_back) = sweep.grid_rows(T, list(dopings.values()), at)
    T_points, N_points = T[at], dopings["P"][at]
    np.testing.assert_array_equal(T_points[T_first][T_back], T_points)
    np.testing.assert_array_equal(N_points[N_first][N_back], N_points)
    # one row per distinct value, no more
    assert T_first.size == np.unique(T_points).size
    assert N_first.size == np.unique(N_points).size


@pytest.mark.parametrize(
    "count, stride, size",
    [(1, 1, 10), (5, 1, 35), (5, 7, 35), (7, 5, 35), (3, 12, 36), (6, 8, 48), (40, 1, 1600)],
)
def test_a_slices_codes_and_rows_follow_the_flat_index(count, stride, size):
    """GridQuantity builds a slice's codes as runs and its rows per code: both must be
    what the flat index says, (i // stride) % count, at every start and stop."""
    quantity = sweep.GridQuantity(np.arange(count) * 1.5, stride, size)
    for start in range(min(size, 50)):
        for stop in sorted({start + 1, start + 5, start + 37, size}):
            stop = min(stop, size)
            codes = quantity.codes(slice(start, stop))
            np.testing.assert_array_equal(codes, (np.arange(start, stop) // stride) % count)
            values = quantity[start:stop]
            first, back = quantity.rows(start, stop)
            np.testing.assert_array_equal(values[first][back], values)
            assert first.size == np.unique(values).size


def test_two_doping_axes_make_one_row_per_combination():
    size = 6 * 8
    donors = sweep.GridQuantity(np.geomspace(1e15, 1e19, 6) * PER_CM3, 8, size)
    acceptors = sweep.GridQuantity(np.geomspace(1e15, 1e19, 8) * PER_CM3, 1, size)
    T = sweep.GridQuantity(300.0, 1, size)
    at = slice(3, 45)
    (T_first, _), (first, back) = sweep.grid_rows(T, [donors, acceptors], at)
    assert T_first.size == 1
    pairs = np.stack([donors[at], acceptors[at]], 1)
    np.testing.assert_array_equal(pairs[first][back], pairs)
    assert first.size == len({tuple(p) for p in pairs.tolist()})


@pytest.mark.parametrize(
    "material, species, n_T, n_N, start, stop",
    [
        ("Si", ("P",), 9, 40, 17, 300),  # the resistivity standard's mobility, its T0 credit
        ("Si", ("As",), 40, 9, 0, 360),  # Masetti carried by Arora's ratio
        ("GaAs", ("Si",), 6, 25, 4, 150),  # Caughey-Thomas
        ("Si", ("P", "As"), 5, 12, 0, 60),  # two species on one axis
    ],
)
def test_transport_on_grid_rows_is_the_point_by_point_value(
    material, species, n_T, n_N, start, stop
):
    crystal = load_material(material)
    T, dopings, at = _grid(n_T, n_N, start, stop, species)
    state = solve_equilibrium(crystal, T[at], {s: q[at] for s, q in dopings.items()})
    rows = sweep.grid_rows(T, list(dopings.values()), at)
    point_by_point = carriers.carrier_transport(state)
    on_rows = carriers.carrier_transport(state, temperatures=rows[0], dopings=rows[1])
    assert on_rows.keys() == point_by_point.keys()
    for name, value in point_by_point.items():
        np.testing.assert_array_equal(on_rows[name], value, err_msg=name)
        assert np.shape(on_rows[name]) == np.shape(value), name


STATED = """name: stated window
material: Si
temperature: {from: 200 K, to: 450 K, steps: 6}
doping:
  donors: {P: {from: 1e14 cm-3, to: 1e20 cm-3, steps: 13}}
assumes: [non-degenerate, full-ionization, einstein-relation, extrinsic]
stated:
  electron_mobility: 1350 cm^2/(V*s)
  resistivity: 2 ohm*cm
  intrinsic_density: 1e10 cm-3
  hole_density: 10.5 cm-3
formulas:
  - D_n = mu_n*k*T/q
"""


@pytest.mark.parametrize("text", ["TWO_AXES", "STATED"])
def test_rules_on_one_values_fire_as_on_full_arrays(tmp_path, text):
    """A chunk's rules read its one-value quantities as one element each
    (evaluate.Cells.read_values); the outcome is the one full arrays give, bit for bit."""
    from test_sweep import TWO_AXES
    from test_sweep import _calc as sweep_calculation

    from checker.engine.regime import evaluate, rulebook, state_values

    calc = sweep_calculation(tmp_path, TWO_AXES if text == "TWO_AXES" else STATED)
    rules = rulebook.load_rules()
    T, donors, acceptors, _ = sweep.grid(calc)
    at = slice(0, T.size)
    values, _ = state_values.solve_sweep(
        calc, T[at], {s: q[at] for s, q in donors.items()}, {s: q[at] for s, q in acceptors.items()}
    )
    full = {name: np.array(array) for name, array in values.items()}  # every array its own
    assert any(array.strides == (0,) for array in values.values())  # one-value views exist
    on_views = list(evaluate.rule_cells(rules, evaluate.Cells.grid(calc, values, T.size)))
    on_full = list(evaluate.rule_cells(rules, evaluate.Cells.grid(calc, full, T.size)))
    assert [(r.rule.id, r.x) for r in on_views] == [(r.rule.id, r.x) for r in on_full]
    assert any(r.fired.any() for r in on_full)
    for one, other in zip(on_views, on_full, strict=True):
        np.testing.assert_array_equal(one.fired, other.fired, err_msg=one.rule.id)
        np.testing.assert_array_equal(one.indicator, other.indicator, err_msg=one.rule.id)


@pytest.mark.parametrize("text", ["TWO_AXES", "STATED"])
def test_a_gate_multiplied_out_factor_by_factor_is_the_whole_gate(tmp_path, text):
    """evaluate._gate leaves a product gate at the first factor that zeroes every cell;
    where it holds must be where the whole expression, evaluated at once, is nonzero."""
    from test_sweep import TWO_AXES
    from test_sweep import _calc as sweep_calculation

    from checker.engine.regime import evaluate, rulebook, state_values

    calc = sweep_calculation(tmp_path, TWO_AXES if text == "TWO_AXES" else STATED)
    T, donors, acceptors, _ = sweep.grid(calc)
    at = slice(0, T.size)
    values, _ = state_values.solve_sweep(
        calc, T[at], {s: q[at] for s, q in donors.items()}, {s: q[at] for s, q in acceptors.items()}
    )
    gated = [rule for rule in rulebook.load_rules() if rule.when is not None]
    products = [rule for rule in gated if rule.when.tree.kind == "*"]
    assert len(products) >= 3
    cut_short = 0
    with np.errstate(all="ignore"):
        for rule in gated:
            for x in rule.carriers:
                whole = np.broadcast_to(rule.when.run[x](values), (T.size,))
                expected = np.isfinite(whole) & (whole != 0)
                found = evaluate._gate(rule.when, x, values, T.size)
                np.testing.assert_array_equal(found, expected, err_msg=f"{rule.id} {x}")
                cut_short += rule in products and not expected.any()
    assert cut_short  # some product gate holds nowhere here


KANE_SWEEP = """name: Kane band sweep
material: InAs
temperature: {from: 77 K, to: 400 K, steps: 4}
doping:
  donors: {S: {from: 1e15 cm-3, to: 1e19 cm-3, steps: 9}}
assumes: [parabolic-band, non-degenerate]
"""


@pytest.mark.parametrize("assumes", ["[parabolic-band, non-degenerate]", "[non-degenerate]"])
def test_kane_band_cells_give_the_findings_of_single_points(tmp_path, assumes):
    """A Kane conduction band (InAs): the parabolic Fermi level BAND01 reads is computed on
    a sweep chunk only where a rule reads it; either way every cell draws the findings of
    its point checked alone (the pipeline's own comparison, tests/test_pipeline.py)."""
    from test_sweep import _calc as sweep_calculation

    from checker.engine.findings import carrier_code
    from checker.engine.regime import rulebook
    from checker.engine.run import check_calculations

    calc = sweep_calculation(
        tmp_path, KANE_SWEEP.replace("[parabolic-band, non-degenerate]", assumes)
    )
    report = check_calculations([calc]).reports[0]
    grid_points = sweep.grid(calc)
    # as a sweep is checked: only the rules that can fire, computing only what they read
    ruled, reads = sweep.grid_rules(calc, rulebook.load_rules(), report.embodied, grid_points)
    masks, _ = sweep.rule_grid(calc, ruled, report.embodied, grid_points, None, reads)
    T, donors, acceptors, _ = grid_points
    band01 = set()
    for index in range(T.size):
        point = sweep.point(calc, T, donors, acceptors, index)
        single = {
            (f.rule, carrier_code(f.carrier))
            for f in check_calculations([point]).reports[0].findings
            if not f.rule.startswith("FORM")
        }
        on_grid = {
            (rule, x or None) for (rule, x), (mask, _) in masks.items() if mask.ravel()[index]
        }
        assert on_grid == single, (index, on_grid, single)
        band01.add(("BAND01", "n") in single)
    # declared, the parabolic band is wrong at the degenerate end only
    assert band01 == ({True, False} if "parabolic" in assumes else {False})


@pytest.mark.parametrize(
    "material, species, n_T, n_N, start, stop",
    [
        ("Si", "P", 9, 40, 17, 300),  # N_c, N_v from the Couderc DOS-mass cubics
        ("GaAs", "Si", 6, 25, 4, 150),  # power-law N_c, N_v
        ("InAs", "S", 5, 12, 0, 60),  # a Kane conduction band
    ],
)
def test_a_chunks_temperature_terms_on_rows_are_the_point_by_point_values(
    material, species, n_T, n_N, start, stop
):
    """solve_points evaluates kT, E_g, N_c, N_v and n_i once per distinct temperature of a
    chunk (state_values._per_temperature): every quantity it gives must be the one the
    point-by-point derivation gives, to the bit."""
    from checker.engine.regime import state_values
    from checker.inputs.calculation_file import parse_calculations

    read = parse_calculations(
        f"name: rows\nmaterial: {material}\ntemperature: 300 K\n"
        f"doping: {{donors: {{{species}: 1e16 cm-3}}}}\n",
        "rows.yaml",
    )
    (calc,) = read.calculations
    T, dopings, at = _grid(n_T, n_N, start, stop, (species,))
    points = (calc, T[at], {s: q[at] for s, q in dopings.items()}, {})
    rows = sweep.grid_rows(T, list(dopings.values()), at)
    plain, _ = state_values.solve_points(*points)
    on_rows, _ = state_values.solve_points(*points, rows=rows)
    assert on_rows.keys() == plain.keys()
    for name, value in plain.items():
        if isinstance(value, np.ndarray) and value.dtype == object:
            assert on_rows[name].tolist() == value.tolist(), name
        else:
            np.testing.assert_array_equal(on_rows[name], value, err_msg=name)
