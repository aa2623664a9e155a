"""Region names on the maps (report/map_layout.py), computed for all candidate positions
at once: the depths of every region in one pass, the share of each box in its region
from running sums, the free positions by array tests.  Each is held here to the
definition it stands for, written out one cell and one box at a time."""

from __future__ import annotations

import numpy as np
import pytest

from checker.report import map_layout
from checker.report.map_layout import centred, depth, inside, overlap, region_depths


def _eroded_depth(cells: np.ndarray) -> np.ndarray:
    """Erode the mask by its 4 neighbours (the grid's edge as outside) until nothing is
    left; each cell's depth is the last erosion it was still in."""
    out = np.zeros(cells.shape, dtype=int)
    core, level = cells.copy(), 0
    rows, columns = cells.shape
    while core.any():
        out[core] = level
        shrunk = np.zeros_like(core)
        for j in range(1, rows - 1):
            for i in range(1, columns - 1):
                shrunk[j, i] = (
                    core[j, i] and core[j - 1, i] and core[j + 1, i] and core[j, i - 1]
                ) and core[j, i + 1]
        core, level = shrunk, level + 1
    return out


def _grids():
    rng = np.random.default_rng(7)
    for shape in [(1, 1), (1, 6), (6, 1), (2, 2), (3, 7), (12, 12), (25, 18)]:
        for kinds in (1, 2, 4):
            yield rng.integers(0, kinds, size=shape).astype(np.int8)
            # blocks: regions with an inside
            j, i = np.indices(shape)
            yield ((j // max(1, shape[0] // 3) + i // max(1, shape[1] // 2)) % kinds).astype(
                np.int8
            )


@pytest.mark.parametrize("codes", list(_grids()))
def test_every_region_erodes_as_it_would_alone(codes):
    joint = region_depths(codes)
    for code in np.unique(codes):
        cells = codes == code
        expected = _eroded_depth(cells)
        assert np.array_equal(depth(cells), expected)
        assert np.array_equal(joint[cells], expected[cells])


def _share(cells, columns, rows, box) -> float:
    """The cells whose centres the box spans (at least one each way), sliced and averaged."""
    i0, i1 = np.searchsorted(columns, [box[0], box[2]])
    j0, j1 = np.searchsorted(rows, [box[1], box[3]])
    under = cells[j0 : max(j1, j0 + 1), i0 : max(i1, i0 + 1)]
    return float(under.mean()) if under.size else 0.0


def _label_box(cells, columns, rows, size, taken, avoid, bounds, candidates=300):
    """region_label_box one candidate at a time (deepest first, nearest the centre)."""
    level = _eroded_depth(cells)
    js, is_ = np.nonzero(cells)
    if js.size == 0:
        return None
    spread = (js - js.mean()) ** 2 + (is_ - is_.mean()) ** 2
    order = np.lexsort((spread, -level[js, is_]))
    order = order[:: max(1, order.size // candidates)]
    best, best_key = None, None
    for k in order:
        box = centred(float(columns[is_[k]]), float(rows[js[k]]), *size)
        if not inside(box, bounds) or any(overlap(box, other) for other in taken):
            continue
        share = _share(cells, columns, rows, box)
        key = (share >= 0.98, not any(overlap(box, p) for p in avoid), share, level[js[k], is_[k]])
        if key[0] and key[1]:
            return box, share
        if best_key is None or key > best_key:
            best, best_key = (box, share), key
    return best


def test_label_boxes_and_shares_are_those_of_one_candidate_at_a_time():
    rng = np.random.default_rng(11)
    checked = 0
    for _trial in range(60):
        rows_n, columns_n = rng.integers(3, 30, size=2)
        j, i = np.indices((rows_n, columns_n))
        codes = ((j * rng.integers(1, 4) + i * rng.integers(1, 4)) // rng.integers(3, 9)) % 3
        columns = np.cumsum(rng.uniform(2.0, 9.0, columns_n))
        rows = np.cumsum(rng.uniform(2.0, 9.0, rows_n))
        bounds = (columns[0] - 3, rows[0] - 3, columns[-1] + 3, rows[-1] + 3)
        size = (float(rng.uniform(5, 60)), float(rng.uniform(4, 20)))
        taken = [centred(float(rng.uniform(0, columns[-1])), float(rows[rows_n // 2]), 20, 8)]
        avoid = [centred(float(columns[columns_n // 3]), float(rows[rows_n // 3]), 6, 6)]
        for code in range(3):
            cells = codes == code
            expected = _label_box(cells, columns, rows, size, taken, avoid, bounds)
            found = map_layout.region_label_box(cells, columns, rows, size, taken, avoid, bounds)
            assert found == expected
            checked += found is not None
            boxes = tuple(np.array([b[k] for b in (taken[0], avoid[0], bounds)]) for k in range(4))
            shares = map_layout._shares(cells, columns, rows, boxes)
            assert shares.tolist() == [
                _share(cells, columns, rows, b) for b in (taken[0], avoid[0], bounds)
            ]
    assert checked > 60


def _row_by_row_rectangles(codes):
    """Rectangles of equal cells the plain way: each row's runs, a run kept open while
    the next row has the same run (same columns and code), closed where it has not."""
    rects: dict = {}
    open_runs: dict = {}
    for j in range(codes.shape[0] + 1):
        runs = set()
        if j < codes.shape[0]:
            row = codes[j]
            cuts = [0, *(np.flatnonzero(np.diff(row)) + 1).tolist(), row.size]
            runs = {(a, b, int(row[a])) for a, b in zip(cuts[:-1], cuts[1:])}
        for run in set(open_runs) - runs:
            rects.setdefault(run[2], []).append((run[0], run[1], open_runs.pop(run), j))
        for run in runs:
            open_runs.setdefault(run, j)
    return {code: sorted(rects[code]) for code in sorted(rects)}


@pytest.mark.parametrize("codes", list(_grids()))
def test_region_rectangles_are_those_merged_row_by_row(codes):
    from checker.report.map_svg import _rectangles

    found = _rectangles(codes)
    assert found == _row_by_row_rectangles(codes)
    # every cell in exactly one rectangle of its own code
    covered = np.full(codes.shape, -1)
    for code, boxes in found.items():
        for i0, i1, j0, j1 in boxes:
            assert (covered[j0:j1, i0:i1] == -1).all()
            covered[j0:j1, i0:i1] = code
    assert (covered == codes).all()
