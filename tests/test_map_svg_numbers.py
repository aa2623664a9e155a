"""Boundary lines and numbers in the maps' SVG paths.  A whole path is written with
two decimals and trimmed in three passes (map_svg._trimmed); each number must read as
map_svg._n writes one number alone: no trailing zeros, no lone point, no '-0'.  A value
that is not finite cuts a boundary line (contourpy masks it)."""

from __future__ import annotations

import random

import numpy as np

from checker.report.map_svg import _n, _polyline, _trimmed


def test_a_trimmed_path_writes_each_number_as_n_does():
    rng = random.Random(3)
    values = [0.0, -0.0, -0.004, 0.004, -0.005, 0.005, 0.995, -0.995, 1.0, 10.0, 100.0]
    values += [12.5, -12.5, 1e16, -1e-9, 0.1, 0.05, 1.1, 2.01, 1000.0, -100.5]
    values += [rng.uniform(-1000, 1000) for _ in range(20000)]
    values += [round(rng.uniform(-100, 100), rng.choice([0, 1, 2])) for _ in range(20000)]
    pairs = list(zip(values[0::2], values[1::2]))
    path = "M" + "L".join(f"{x:.2f} {y:.2f}" for x, y in pairs)
    assert _trimmed(path) == "M" + "L".join(f"{_n(x)} {_n(y)}" for x, y in pairs)
    assert _polyline(np.array(pairs)) == "M" + "L".join(f"{_n(x)} {_n(y)}" for x, y in pairs)


def test_n_by_hand():
    assert [_n(v) for v in (12.0, 12.5, 12.25, -0.001, 0.0, 3.14159, -7.0)] == [
        "12",
        "12.5",
        "12.25",
        "0",
        "0",
        "3.14",
        "-7",
    ]


def test_a_value_that_is_not_finite_breaks_a_boundary_line():
    from checker.report.map_svg import level_lines

    # values = x on a 5 x 5 grid: the level 1.5 is the straight line x = 1.5, y 0..4
    x = np.arange(5.0)
    y = np.arange(5.0)
    values = np.tile(x, (5, 1))
    (whole,) = level_lines(values, 1.5, x, y)
    assert sorted(whole.tolist()) == [[1.5, k] for k in range(5)]
    for bad in (np.nan, np.inf):
        broken = values.copy()
        broken[2, 1] = bad  # masks the cells around (1, 2): the line is cut between them
        pieces = level_lines(broken, 1.5, x, y)
        assert sorted(sorted(piece[:, 1].tolist()) for piece in pieces) == [
            [0.0, 1.0, 1.5],
            [2.5, 3.0, 4.0],
        ]
        assert all((piece[:, 0] == 1.5).all() for piece in pieces)
