"""A sweep chunk computes some quantities on their first read (state_values.LazyValues):
the transport and what follows from it, the parabolic bands' Einstein ratios, the band-gap
narrowing and the densities of the solve with it.  A chunk whose rules never read them
never computes them; one that does reads the values the solve would have given at once,
also where a rule replaced a density before (the corrected
calculation's conductivity is that of the solved densities until every replacing rule has
run, as for single points)."""

import numpy as np
import pytest

from checker.engine.regime import evaluate, rulebook, state_values, sweep
from checker.engine.run import check_calculations
from checker.inputs.calculation_file import parse_calculations
from checker.physics.carriers import ReferenceSolves

# the textbook shortcuts declared over a silicon grid, no number stated (bench_sweep's grid)
PLAIN = """name: plain grid
material: Si
temperature: {from: 200 K, to: 500 K, steps: 5}
doping:
  donors: {P: {from: 1e14 cm-3, to: 1e20 cm-3, steps: 7}}
assumes: [non-degenerate, full-ionization, einstein-relation, single-carrier, extrinsic]
formulas:
  - D_n = mu_n*k*T/q
"""
# an undoped n_i and a minority density stated (DOPE01 replaces the density with the one
# of the solve with narrowing) beside a resistivity (MEAS01 reads the model conductivity)
STATED = """name: stated densities
material: Si
temperature: {from: 250 K, to: 400 K, steps: 4}
doping:
  donors: {P: {from: 1e17 cm-3, to: 1e20 cm-3, steps: 7}}
assumes: [non-degenerate, full-ionization, extrinsic]
stated:
  intrinsic_density: 1e10 cm-3
  hole_density: 10 cm-3
  resistivity: 0.01 ohm*cm
"""


def _calc(text):
    read = parse_calculations(text, "grid.yaml")
    assert not read.errors, read.errors
    (calc,) = read.calculations
    return calc


def _chunk(calc, reads):
    """(the whole grid as one chunk's values, as rule_grid solves it, the grid's rules)."""
    report = check_calculations([calc]).reports[0]
    grid_points = sweep.grid(calc)
    T, donors, acceptors, _ = grid_points
    ruled, read = sweep.grid_rules(calc, rulebook.load_rules(), report.embodied, grid_points)
    at = slice(0, T.size)
    values, _ = state_values.solve_sweep(
        calc,
        T[at],
        {s: q[at] for s, q in donors.items()},
        {s: q[at] for s, q in acceptors.items()},
        read if reads else None,
        ReferenceSolves(),
        sweep.grid_rows(T, [*donors.values(), *acceptors.values()], at),
    )
    return values, ruled, read, report.embodied


def test_a_chunk_whose_rules_read_no_mobility_computes_no_transport():
    calc = _calc(PLAIN)
    values, ruled, reads, embodied = _chunk(calc, reads=True)
    assert isinstance(values, state_values.LazyValues)
    assert values.pending("mu_n") and values.pending("sigma_model")
    assert values.pending("einstein_p")
    outcome = list(
        evaluate.rule_cells(
            ruled, evaluate.Cells.grid(calc, values, len(values["T"]), embodied, reads)
        )
    )
    assert any(r.fired.any() for r in outcome)
    # ruled: the electrons' Einstein ratio was read (STAT02), the rest never was
    assert not values.pending("einstein_n")
    assert values.pending("mu_n") and values.pending("einstein_p")
    assert values.pending("dEg_bgn") and values.pending("dens_bgn_p")
    # looked up now, each is what the solve gives at once, bit for bit
    eager, _, _, _ = _chunk(calc, reads=False)
    names = ("mu_n", "mu_p", "cond_n", "kT_q", "sigma_model", "sigma", "used_rho")
    for name in (*names, "dEg_bgn", "dens_bgn_n", "dens_bgn_p"):
        np.testing.assert_array_equal(values[name], eager[name], err_msg=name)
    np.testing.assert_array_equal(values["einstein_p"], eager["einstein_p"])
    assert not values.pending("mu_n")


@pytest.mark.parametrize("text", [PLAIN, STATED])
def test_lazy_chunks_rule_every_cell_as_chunks_computed_at_once(text):
    calc = _calc(text)
    values, ruled, reads, embodied = _chunk(calc, reads=True)
    eager, _, _, _ = _chunk(calc, reads=False)
    count = len(eager["T"])
    lazy_out = list(
        evaluate.rule_cells(ruled, evaluate.Cells.grid(calc, values, count, embodied, reads))
    )
    eager_out = list(evaluate.rule_cells(ruled, evaluate.Cells.grid(calc, eager, count, embodied)))
    fired = {r.rule.id for r in eager_out if r.fired.any()}
    if text is STATED:  # a density replaced before the resistivity is compared
        assert {"DOPE01", "MEAS01"} <= fired, fired
    for lazy, at_once in zip(lazy_out, eager_out, strict=True):
        assert (lazy.rule.id, lazy.x) == (at_once.rule.id, at_once.x)
        np.testing.assert_array_equal(lazy.fired, at_once.fired, err_msg=lazy.rule.id)
        where = at_once.fired  # a chunk reads the indicator only where a rule fires
        np.testing.assert_array_equal(
            lazy.indicator[where], at_once.indicator[where], err_msg=lazy.rule.id
        )


def test_a_value_given_directly_is_not_computed_again():
    values = state_values.LazyValues(3)
    calls = []

    def compute(_):
        calls.append(1)
        return {"a": np.arange(3.0), "b": np.ones(3)}

    values.defer(("a", "b"), state_values.Deferred(compute))
    values["b"] = np.zeros(3)
    np.testing.assert_array_equal(values["a"], [0.0, 1.0, 2.0])
    np.testing.assert_array_equal(values["b"], [0.0, 0.0, 0.0])  # kept, not overwritten
    values["a"]
    assert calls == [1]
    with pytest.raises(KeyError):
        values["c"]


# a material without mobility models: its transport is never computed on first read (a
# note says what is skipped, as for single points)
NO_MOBILITY = """name: custom swept
material:
  name: ExampleX
  band_gap: {Eg0: 1.0 eV, alpha: 3e-4 eV/K, beta: 200 K}
  density_of_states: {Nc300: 1e19 cm-3, Nv300: 1e19 cm-3}
  permittivity: 10.0
  dopants: {D1: {kind: donor, energy: 20 meV}}
temperature: {from: 250 K, to: 350 K, steps: 3}
doping:
  donors: {D1: {from: 1e17 cm-3, to: 5e18 cm-3, steps: 4}}
assumes: [non-degenerate]
"""


def test_a_sweep_of_a_material_without_mobility_says_its_transport_is_skipped():
    calc = _calc(NO_MOBILITY)
    assert not state_values._transport_given(calc.material)
    report = check_calculations([calc]).reports[0]
    assert report.error is None
    assert any("transport checks skipped" in note for note in report.notes)
    assert "STAT01" in {f.rule for f in report.findings}
    values, _, _, _ = _chunk(calc, reads=True)
    assert not values.pending("mu_n") and np.isnan(values["mu_n"]).all()


# an undoped n_i and a minority density stated, nothing read of the mobility: DOPE01
# replaces the density (with the one of the solve with narrowing) and no rule after it
# reads what the corrected calculation derives from the transport
DENSITY_ONLY = STATED.replace("  resistivity: 0.01 ohm*cm\n", "")


def test_a_replaced_density_computes_no_transport_until_read():
    calc = _calc(DENSITY_ONLY)
    values, ruled, reads, embodied = _chunk(calc, reads=True)
    count = len(values["T"])
    outcome = list(
        evaluate.rule_cells(ruled, evaluate.Cells.grid(calc, values, count, embodied, reads))
    )
    assert ("DOPE01", "n") in {(r.rule.id, r.x) for r in outcome if r.fired.any()}
    assert values.pending("mu_n") and values.pending("sigma")
    # looked up now, the corrected calculation is the one ruled at once, bit for bit
    eager, _, _, _ = _chunk(calc, reads=False)
    eager_out = list(evaluate.rule_cells(ruled, evaluate.Cells.grid(calc, eager, count, embodied)))
    for lazy, at_once in zip(outcome, eager_out, strict=True):
        np.testing.assert_array_equal(lazy.fired, at_once.fired, err_msg=lazy.rule.id)
    for name in ("used_mu_n", "used_mu_p", "sigma", "rho", "used_rho", "dens_p"):
        np.testing.assert_array_equal(values[name], eager[name], err_msg=name)
    assert not values.pending("mu_n")
