"""Where labels go on a figure so that none covers another: pure geometry on boxes in
display units (pixels), no matplotlib.

A box is (x0, y0, x1, y1).  Point labels are placed greedily around their anchor, on
rings of growing radius; region labels choose among the cells of their region the
deepest one whose box stays inside the region and clear of the labels already placed.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

Box = tuple[float, float, float, float]
RINGS = 14  # how far (in steps of the gap) a point label may move from its point
_DIRECTIONS = 16


def overlap(a: Box, b: Box) -> float:
    """The area two boxes share (0 where they only touch)."""
    width = min(a[2], b[2]) - max(a[0], b[0])
    height = min(a[3], b[3]) - max(a[1], b[1])
    return width * height if width > 0 and height > 0 else 0.0


def inside(box: Box, bounds: Box) -> bool:
    return (
        box[0] >= bounds[0] and box[1] >= bounds[1] and box[2] <= bounds[2] and box[3] <= bounds[3]
    )


def centred(x: float, y: float, width: float, height: float) -> Box:
    return (x - width / 2, y - height / 2, x + width / 2, y + height / 2)


def place_point_labels(
    anchors: Sequence[tuple[float, float]],
    sizes: Sequence[tuple[float, float]],
    obstacles: Sequence[Box],
    bounds: Box,
    gap: float,
) -> list[Box]:
    """A box per label, next to its anchor: the nearest position (rings of radius
    gap, 2 gap, ...; the first ring tries the right side first, as one reads) that lies
    inside ``bounds`` and clear of the obstacles and the labels placed before it; where
    none is clear, the position covering least."""
    placed: list[Box] = []
    for (x, y), (width, height) in zip(anchors, sizes):
        best, best_cover = None, math.inf
        for ring in range(1, RINGS + 1):
            radius = gap * ring
            for k in range(_DIRECTIONS):
                angle = 2 * math.pi * k / _DIRECTIONS
                dx, dy = math.cos(angle), math.sin(angle)
                # the box's near edge at ``radius`` from the anchor in this direction
                box = centred(
                    x + dx * (radius + width / 2), y + dy * (radius + height / 2), width, height
                )
                if not inside(box, bounds):
                    continue
                cover = sum(overlap(box, other) for other in (*obstacles, *placed))
                if cover < best_cover:
                    best, best_cover = box, cover
                if cover == 0:
                    break
            if best_cover == 0:
                break
        placed.append(best if best is not None else centred(x + gap + width / 2, y, width, height))
    return placed


def depth(cells: np.ndarray) -> np.ndarray:
    """How many erosions (4-neighbour) each cell of the mask survives; the plot's edge
    counts as a boundary.  Large in the middle of a region, 0 at its border."""
    out = np.zeros(cells.shape, dtype=int)
    core = cells.copy()
    level = 0
    while core.any():
        out[core] = level
        shrunk = core.copy()
        shrunk[1:, :] &= core[:-1, :]
        shrunk[:-1, :] &= core[1:, :]
        shrunk[:, 1:] &= core[:, :-1]
        shrunk[:, :-1] &= core[:, 1:]
        shrunk[[0, -1], :] = False
        shrunk[:, [0, -1]] = False
        core, level = shrunk, level + 1
    return out


def region_label_box(
    cells: np.ndarray,
    columns: np.ndarray,
    rows: np.ndarray,
    size: tuple[float, float],
    taken: Sequence[Box],
    avoid: Sequence[Box],
    bounds: Box,
    candidates: int = 300,
) -> tuple[Box, float] | None:
    """(box, share of it inside the region) for a region label of ``size`` (width,
    height): ``cells`` the region's mask (rows = y, columns = x), ``columns`` and
    ``rows`` the display positions of the cell centres (increasing).  The box never
    overlaps ``taken`` (labels already placed) and stays inside ``bounds``; the deepest
    position lying wholly in the region and missing ``avoid`` (points) is taken, else
    the best by: wholly in, missing ``avoid``, share in the region, depth.  None where
    no position is free."""
    level = depth(cells)
    js, is_ = np.nonzero(cells)
    if js.size == 0:
        return None
    spread = (js - js.mean()) ** 2 + (is_ - is_.mean()) ** 2
    order = np.lexsort((spread, -level[js, is_]))
    order = order[:: max(1, order.size // candidates)]
    width, height = size
    best, best_key = None, None
    for k in order:
        box = centred(float(columns[is_[k]]), float(rows[js[k]]), width, height)
        if not inside(box, bounds) or any(overlap(box, other) for other in taken):
            continue
        share = _share(cells, columns, rows, box)
        key = (share >= 0.98, not any(overlap(box, p) for p in avoid), share, level[js[k], is_[k]])
        if key[0] and key[1]:
            return box, share  # the deepest position that is wholly right: look no further
        if best_key is None or key > best_key:
            best, best_key = (box, share), key
    return best


def _share(cells: np.ndarray, columns: np.ndarray, rows: np.ndarray, box: Box) -> float:
    """The share of the cells under ``box`` that belong to the region."""
    i0, i1 = np.searchsorted(columns, [box[0], box[2]])
    j0, j1 = np.searchsorted(rows, [box[1], box[3]])
    under = cells[j0 : max(j1, j0 + 1), i0 : max(i1, i0 + 1)]
    return float(under.mean()) if under.size else 0.0


def place_region_labels(
    codes: np.ndarray,
    columns: np.ndarray,
    rows: np.ndarray,
    sizes: dict[int, tuple[float, float]],
    avoid: Sequence[Box],
    bounds: Box,
    least: float,
) -> list[tuple[int, Box, bool]]:
    """(code, box, upright) for each region name of ``sizes`` (code -> (width, height),
    taken in that order), clear of the names placed before it: where the name lying
    flat would mostly sit on a narrow region, it is tried upright; a name with less
    than ``least`` of its box in its region is left out (it would mislead; the legend
    still names the region by its colour)."""
    taken: list[Box] = []
    placed = []
    for code, size in sizes.items():
        cells = codes == code
        found = region_label_box(cells, columns, rows, size, taken, avoid, bounds)
        upright = False
        if found is not None and found[1] < 0.9:
            turned = region_label_box(cells, columns, rows, size[::-1], taken, avoid, bounds)
            if turned is not None and turned[1] > found[1]:
                found, upright = turned, True
        if found is None or found[1] < least:
            continue
        taken.append(found[0])
        placed.append((code, found[0], upright))
    return placed


def leader_end(anchor: tuple[float, float], box: Box, gap: float) -> tuple[float, float] | None:
    """Where a thin line from ``anchor`` to its label ``box`` ends (the box's edge
    nearest the anchor), or None where the label sits close enough to need none."""
    x, y = anchor
    centre = ((box[0] + box[2]) / 2, (box[1] + box[3]) / 2)
    reach = 2.5 * gap + max(box[2] - box[0], box[3] - box[1]) / 2
    if math.hypot(centre[0] - x, centre[1] - y) <= reach:
        return None
    return (min(max(x, box[0]), box[2]), min(max(y, box[1]), box[3]))
