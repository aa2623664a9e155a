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
    return region_depths(cells.astype(np.int8)) * cells


def region_depths(codes: np.ndarray) -> np.ndarray:
    """:func:`depth` of every region of ``codes`` (cells of one code) at once: each cell's
    depth in its own region.  A cell's neighbour keeps it only where the two share a
    code, so the regions erode side by side as each would alone."""
    same_down = codes[1:, :] == codes[:-1, :]  # cell (j, i) and (j + 1, i)
    same_right = codes[:, 1:] == codes[:, :-1]
    out = np.zeros(codes.shape, dtype=int)
    core = np.ones(codes.shape, dtype=bool)
    # each erosion's survivors are a subset of the last's, so a cell's depth is the
    # number of erosions it was in, less one
    while core.any():
        out += core
        down = core[1:, :] & same_down  # the neighbour below is in the core, same code
        right = core[:, 1:] & same_right
        shrunk = core.copy()
        shrunk[:-1, :] &= down
        shrunk[1:, :] &= core[:-1, :] & same_down
        shrunk[:, :-1] &= right
        shrunk[:, 1:] &= core[:, :-1] & same_right
        shrunk[0, :] = shrunk[-1, :] = False
        shrunk[:, 0] = shrunk[:, -1] = False
        core = shrunk
    return out - 1


def region_label_box(
    cells: np.ndarray,
    columns: np.ndarray,
    rows: np.ndarray,
    size: tuple[float, float],
    taken: Sequence[Box],
    avoid: Sequence[Box],
    bounds: Box,
    candidates: int = 300,
    ranked: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None,
) -> tuple[Box, float] | None:
    """(box, share of it inside the region) for a region label of ``size`` (width,
    height): ``cells`` the region's mask (rows = y, columns = x), ``columns`` and
    ``rows`` the display positions of the cell centres (increasing).  The box never
    overlaps ``taken`` (labels already placed) and stays inside ``bounds``; the deepest
    position lying wholly in the region and missing ``avoid`` (points) is taken, else
    the best by: wholly in, missing ``avoid``, share in the region, depth.  None where
    no position is free."""
    js, is_, levels_ranked = ranked if ranked is not None else ranked_cells(cells, candidates)
    if js.size == 0:
        return None
    # every candidate at once, in rank order: its box (centred), whether it may be taken
    # (inside ``bounds``, clear of ``taken``), its share in the region and its key
    width, height = size
    x, y = columns[is_].astype(float), rows[js].astype(float)
    boxes = (x - width / 2, y - height / 2, x + width / 2, y + height / 2)
    free = (
        (boxes[0] >= bounds[0])
        & (boxes[1] >= bounds[1])
        & (boxes[2] <= bounds[2])
        & (boxes[3] <= bounds[3])
        & ~_overlaps(boxes, taken)
    )
    candidates_free = np.flatnonzero(free)
    if candidates_free.size == 0:
        return None
    picked = tuple(side[candidates_free] for side in boxes)
    shares = _shares(cells, columns, rows, picked).tolist()
    clear = (~_overlaps(picked, avoid)).tolist()
    levels = levels_ranked[candidates_free].tolist()
    corners = np.stack(picked, axis=1).tolist()
    best, best_key = None, None
    for box, share, missing, depth_here in zip(corners, shares, clear, levels):
        key = (share >= 0.98, missing, share, depth_here)
        if key[0] and key[1]:
            return tuple(box), share  # the deepest position that is wholly right
        if best_key is None or key > best_key:
            best, best_key = (tuple(box), share), key
    return best


def ranked_cells(
    cells: np.ndarray, candidates: int = 300, level: np.ndarray | None = None
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(rows, columns, depths) of about ``candidates`` cells of the region ``cells``, the
    deepest first and, among equally deep ones, the nearest its centre: where
    region_label_box tries a label, in that order (the same for a label lying flat and
    upright).  ``level``: the cells' depths where known (region_depths)."""
    level = depth(cells) if level is None else level
    js, is_ = np.nonzero(cells)
    if js.size == 0:
        return js, is_, js
    spread = (js - js.mean()) ** 2 + (is_ - is_.mean()) ** 2
    order = np.lexsort((spread, -level[js, is_]))
    order = order[:: max(1, order.size // candidates)]
    js, is_ = js[order], is_[order]
    return js, is_, level[js, is_]


def _overlaps(boxes: tuple[np.ndarray, ...], others: Sequence[Box]) -> np.ndarray:
    """Whether each of ``boxes`` (x0, y0, x1, y1 arrays) shares an area with any of
    ``others`` (as overlap() > 0)."""
    hit = np.zeros(boxes[0].shape, dtype=bool)
    for other in others:
        width = np.minimum(boxes[2], other[2]) - np.maximum(boxes[0], other[0])
        height = np.minimum(boxes[3], other[3]) - np.maximum(boxes[1], other[1])
        hit |= (width > 0) & (height > 0) & (width * height != 0)
    return hit


def _shares(
    cells: np.ndarray, columns: np.ndarray, rows: np.ndarray, boxes: tuple[np.ndarray, ...]
) -> np.ndarray:
    """The share of the cells under each of ``boxes`` that belong to the region (the
    cells whose centres the box spans, at least one each way, cut at the grid's edge;
    0 where none is left), from the running sums of the region's cells."""
    total = np.zeros((cells.shape[0] + 1, cells.shape[1] + 1), dtype=np.int64)
    total[1:, 1:] = cells.cumsum(axis=0).cumsum(axis=1)
    i0, i1 = np.searchsorted(columns, boxes[0]), np.searchsorted(columns, boxes[2])
    j0, j1 = np.searchsorted(rows, boxes[1]), np.searchsorted(rows, boxes[3])
    i1, j1 = (
        np.minimum(np.maximum(i1, i0 + 1), cells.shape[1]),
        np.minimum(np.maximum(j1, j0 + 1), cells.shape[0]),
    )
    i0, j0 = np.minimum(i0, cells.shape[1]), np.minimum(j0, cells.shape[0])
    count = total[j1, i1] - total[j0, i1] - total[j1, i0] + total[j0, i0]
    size = (j1 - j0) * (i1 - i0)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(size > 0, count / np.maximum(size, 1), 0.0)


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
    level = region_depths(codes) if sizes else None
    for code, size in sizes.items():
        cells = codes == code
        ranked = ranked_cells(cells, level=level)
        found = region_label_box(cells, columns, rows, size, taken, avoid, bounds, ranked=ranked)
        upright = False
        if found is not None and found[1] < 0.9:
            turned = region_label_box(
                cells, columns, rows, size[::-1], taken, avoid, bounds, ranked=ranked
            )
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
