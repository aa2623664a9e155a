"""Where a field sampled on a grid crosses a level, as polylines (marching squares),
for drawing a regime boundary without a plotting library.

The crossing on each grid edge is interpolated linearly in the coordinates given (the
map passes display positions, so a log-spaced axis is interpolated in log space).  A
cell with a non-finite corner has no line; a saddle cell (opposite corners on the
same side) is split by the mean of its corners.

References: W. E. Lorensen and H. E. Cline, "Marching cubes: a high resolution 3D
surface construction algorithm", Computer Graphics 21(4), 163-169 (1987), whose 2D
case this is.
"""

from __future__ import annotations

import numpy as np

Edge = tuple[str, int, int]  # ("h", j, i): from (j, i) to (j, i+1); ("v", j, i): to (j+1, i)


def contour_lines(
    values: np.ndarray, level: float, xs: np.ndarray, ys: np.ndarray
) -> list[np.ndarray]:
    """Polylines (arrays of (x, y) rows) along ``values == level``; ``values`` has shape
    (len(ys), len(xs)), row j at ys[j] and column i at xs[i]."""
    v = np.asarray(values, dtype=float) - level
    finite = np.isfinite(v)
    above = v > 0
    with np.errstate(all="ignore"):
        th = v[:, :-1] / (v[:, :-1] - v[:, 1:])  # where along each horizontal edge
        tv = v[:-1, :] / (v[:-1, :] - v[1:, :])
    cross_h = finite[:, :-1] & finite[:, 1:] & (above[:, :-1] != above[:, 1:])
    cross_v = finite[:-1, :] & finite[1:, :] & (above[:-1, :] != above[1:, :])
    whole = finite[:-1, :-1] & finite[:-1, 1:] & finite[1:, :-1] & finite[1:, 1:]
    points: dict[Edge, tuple[float, float]] = {}
    for j, i in zip(*np.nonzero(cross_h)):
        points[("h", int(j), int(i))] = (xs[i] + th[j, i] * (xs[i + 1] - xs[i]), ys[j])
    for j, i in zip(*np.nonzero(cross_v)):
        points[("v", int(j), int(i))] = (xs[i], ys[j] + tv[j, i] * (ys[j + 1] - ys[j]))
    crossed = (
        cross_h[:-1, :].astype(int) + cross_h[1:, :] + cross_v[:, :-1] + cross_v[:, 1:]
    ) * whole
    segments: list[tuple[Edge, Edge]] = []
    for j, i in zip(*np.nonzero(crossed)):
        j, i = int(j), int(i)
        bottom, top = ("h", j, i), ("h", j + 1, i)
        left, right = ("v", j, i), ("v", j, i + 1)
        if crossed[j, i] == 2:
            first, second = (e for e in (bottom, right, top, left) if e in points)
            segments.append((first, second))
            continue
        # a saddle: cut off the two corners on the other side from the cell's mean
        centre = v[j : j + 2, i : i + 2].mean() > 0
        if above[j, i] != centre:  # bottom-left and top-right corners are cut off
            segments += [(bottom, left), (top, right)]
        else:
            segments += [(bottom, right), (top, left)]
    return [np.array([points[e] for e in chain]) for chain in _chains(segments)]


def _chains(segments: list[tuple[Edge, Edge]]) -> list[list[Edge]]:
    """Join segments sharing an edge into chains: open ones from their ends first, then
    the closed loops."""
    touching: dict[Edge, list[int]] = {}
    for n, (a, b) in enumerate(segments):
        touching.setdefault(a, []).append(n)
        touching.setdefault(b, []).append(n)
    used = [False] * len(segments)
    ends = [e for e, ns in touching.items() if len(ns) == 1]
    starts = ends + [segments[n][0] for n in range(len(segments))]
    chains = []
    for start in starts:
        chain, here = [start], start
        while True:
            step = next((n for n in touching[here] if not used[n]), None)
            if step is None:
                break
            used[step] = True
            a, b = segments[step]
            here = b if a == here else a
            chain.append(here)
        if len(chain) > 1:
            chains.append(chain)
    return chains
