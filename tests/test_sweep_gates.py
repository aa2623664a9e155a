"""A sweep leaves out the rules (per carrier) whose gate its stated numbers alone close
(sweep_gates.open_rules): a factor of the gate that is 0 or NaN at every cell whatever
the solved quantities are.  Leaving them out must change no cell: the masks and worst
cells are those of a run of every rule, and the reports those of the unpruned engine.

The gate arithmetic is numpy's (IEEE 754: NaN compares False, propagates through + - * /
and exp/log/sqrt/abs; np.fmin/np.fmax return the other argument of a NaN)."""

import math

import numpy as np
import pytest

from checker.engine.expressions.parser import parse
from checker.engine.regime import rulebook, sweep
from checker.engine.regime.sweep_gates import _closed_for, open_rules
from checker.engine.run import check_calculations
from checker.inputs.calculation_file import parse_calculations
from checker.records import replace

# one grid point's quantities: n_i and the hole density not stated, the electron density
# stated (a solved name's value is never read: its cells vary)
PROBE = {
    "stated_ni": np.array([math.nan]),
    "stated_dens_p": np.array([math.nan]),
    "stated_dens_n": np.array([1e23]),
    "stated_rho": np.array([math.nan]),
    "stated_Rsh": np.array([math.nan]),
}


def _rule_with_gate(text):
    """A loaded rule (DOPE01, per carrier) with ``text`` as its gate."""
    (rule,) = [r for r in rulebook.load_rules() if r.id == "DOPE01"]
    when = rulebook.Compiled(text, parse(text), {})
    return replace(rule, when=when)


@pytest.mark.parametrize(
    ("gate", "closed"),
    [
        # DOPE01's own gate: n_i not stated, the minority (hole) density not stated
        (
            "maj_x*(1 - bgn_on)*min(present(stated_ni) + less(stated_dens_o, 0.01*dens_x), 1)",
            True,
        ),
        ("present(stated_ni)", True),
        ("maj_x*less(dens_x, stated_dens_o)", True),  # NaN on either side: False
        ("min(present(stated_rho) + present(stated_Rsh)*present(thickness), 1)", True),
        ("maj_x*(stated_ni + dens_x)", True),  # NaN propagates through a sum
        ("log(stated_ni)*maj_x", True),
        # open: the factor depends on the cells
        ("maj_x*less(-3, eta_x)", False),
        ("min(present(stated_ni), maj_x)", False),  # fmin(0, x): x where x < 0
        ("max(present(stated_ni), 1 - linear)", False),  # fmax gives 1 - linear
        ("0*exp(eta_x)", True),  # a factor 0: the product is 0 or NaN
        ("min(0*exp(eta_x), 1)", False),  # 0 * inf is NaN and fmin(NaN, 1) is 1: unknown
        ("present(stated_dens_n)", False),  # stated: 1 at every cell
        ("less(stated_dens_n, dens_x)", False),  # a stated number compared with a cell's
        ("stated_ni**0", False),  # NaN**0 is 1 (not followed)
        ("present(1/0)", True),  # present() of inf is 0, as the parser's present gives
        ("1 - present(1/0)", False),
    ],
)
def test_a_gate_is_closed_only_where_the_stated_numbers_fix_a_factor_at_0_or_nan(gate, closed):
    rule = _rule_with_gate(gate)
    # for the electrons: _o is the hole
    assert _closed_for(rule, "n", PROBE) is closed


def test_closed_carriers_are_left_out_and_the_rest_kept():
    # the minority density stated for one carrier: DOPE01 stays open for that one
    gate = "min(present(stated_ni) + less(stated_dens_o, 0.01*dens_x), 1)"
    rule = _rule_with_gate(gate)
    (kept,) = open_rules([rule], PROBE)
    assert kept.carriers == ("p",)  # the electrons' minority (holes) is not stated
    assert open_rules([rule], {**PROBE, "stated_dens_n": np.array([math.nan])}) == []


# heavy doping over temperature, n_i stated: DOPE01 (narrowing ignored) can fire
STATED_NI = """name: n_i stated over a grid
material: Si
temperature: {from: 250 K, to: 400 K, steps: 5}
doping:
  donors: {P: {from: 1e16 cm-3, to: 1e20 cm-3, steps: 9}}
stated:
  intrinsic_density: 1e10 cm-3
  resistivity: 0.05 ohm*cm
assumes: [non-degenerate, full-ionization, einstein-relation]
"""
PLAIN = STATED_NI.split("stated:")[0] + "assumes: [non-degenerate, full-ionization]\n"


@pytest.mark.parametrize(("text", "dope01_open"), [(STATED_NI, True), (PLAIN, False)])
def test_pruned_grids_rule_every_cell_as_every_rule_does(text, dope01_open, monkeypatch):
    monkeypatch.setattr(sweep, "CHUNK", 16)  # several chunks, and a short last one
    read = parse_calculations(text, "grid.yaml")
    assert not read.errors, read.errors
    (calc,) = read.calculations
    rules = rulebook.load_rules()
    report = check_calculations([calc]).reports[0]
    grid_points = sweep.grid(calc)
    ruled, reads = sweep.grid_rules(calc, rules, report.embodied, grid_points, open_only=True)
    assert ("DOPE01" in {r.id for r in ruled}) is dope01_open
    assert ("MEAS01" in {r.id for r in ruled}) is dope01_open  # a resistivity stated
    full, _ = sweep.rule_grid(calc, rules, report.embodied, grid_points)
    pruned, _ = sweep.rule_grid(calc, ruled, report.embodied, grid_points, reads=reads)
    assert full.keys() == pruned.keys()
    if dope01_open:
        assert ("DOPE01", "n") in full  # the pruning is checked where DOPE01 fires
    for key, (mask, worst) in full.items():
        np.testing.assert_array_equal(pruned[key][0], mask, err_msg=str(key))
        assert pruned[key][1] == worst, key
