"""A sweep chunk's values are laid out without copying the solve's own arrays, so none may
share memory with another quantity or with the caller's inputs: a later in-place write to
one quantity (a rule's replacement, a group's fill) must never change another.  A quantity
with one value over the whole chunk (unknown, or a stated number) is a read-only view of
that value: a write to it fails instead of changing anything."""

import itertools

import numpy as np
import pytest

from checker.engine.regime import state_values
from checker.inputs.calculation_file import parse_calculations

SWEEP = """name: heavy-doping sweep of a sensor bar
material: Si
temperature: {from: 250 K, to: 450 K, steps: 4}
doping: {donors: {P: {from: 1e15 cm-3, to: 1e20 cm-3, steps: 5}}}
structure: {length: 2 um, cross_section: 1 um^2}
stated: {hole_density: 1e3 cm-3}
"""


def test_no_two_quantities_of_a_sweep_share_memory():
    read = parse_calculations(SWEEP, "sweep.yaml")
    assert not read.errors, read.errors
    T = np.repeat([250.0, 450.0], 5)
    donors = {"P": np.tile(np.geomspace(1e21, 1e26, 5), 2)}
    values, _ = state_values.solve_sweep(read.calculations[0], T, donors, {})
    arrays = [(name, a) for name, a in values.items() if isinstance(a, np.ndarray)]
    for (one, a), (other, b) in itertools.combinations(arrays, 2):
        assert not np.may_share_memory(a, b), (one, other)
    for name, a in arrays:
        one_value_view = a.strides == (0,) and not a.flags.writeable
        assert a.flags.writeable or one_value_view, name
        assert not np.may_share_memory(a, T) and not np.may_share_memory(a, donors["P"]), name


def test_a_chunk_quantity_without_a_value_of_its_own_refuses_a_write():
    read = parse_calculations(SWEEP, "sweep.yaml")
    T = np.repeat([250.0, 450.0], 5)
    values, _ = state_values.solve_sweep(read.calculations[0], T, {"P": np.full(10, 1e22)}, {})
    stated = values["stated_dens_p"]  # the stated hole density, the same at every cell
    assert not stated.flags.writeable and np.allclose(stated, 1e3 * 1e6, rtol=1e-15)
    with pytest.raises(ValueError, match="read-only"):
        stated[0] = 0.0
    assert np.allclose(stated, 1e3 * 1e6, rtol=1e-15)
