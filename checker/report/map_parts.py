"""What a regime map shows, apart from how it is drawn: the colours and criteria of
the regions, the boundary lines present on a grid, the markers (coincident points
share one), the numbered list of calculations under the map and the legend's entries.

Both drawings read it: plots.py (matplotlib, the `map` command's PNG and SVG files)
and map_svg.py (the HTML report's inline SVG, no matplotlib).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from ..physics.carriers import DEGENERATE_ETA, IONIZED_FRACTION, REGIMES
from ..vocabulary_words import SEVERITY_RANK
from .map_layout import Box
from .safe_text import visible

COLOURS = {
    "extrinsic": "#d9ead3",
    "incomplete ionization": "#cfe2f3",
    "intrinsic": "#fff2cc",
    "degenerate": "#f9cb9c",
    "metallic": "#d9d2e9",
}
SEVERITY_COLOURS = {None: "#2e7d32", "info": "#0277bd", "warning": "#ef6c00", "error": "#c62828"}
CRITERIA = {
    "extrinsic": "extrinsic, non-degenerate",
    "incomplete ionization": f"incomplete ionization: < {IONIZED_FRACTION:.0%} ionized",
    "intrinsic": "intrinsic: n_i > |N_D − N_A|",
    "degenerate": f"degenerate: η > {DEGENERATE_ETA:g} (3kT rule)",
    "metallic": "metallic: above the Mott density",
}
MOTT_COLOUR = "#674ea7"
KEY_MOST = 60  # calculations listed at most; the rest are counted
REGION_SHARE_LEAST = 0.5  # a region's name is left out where less of it lies inside
REGION_MOST_CELLS = 0.01  # regions smaller than this share of the map go unnamed


@dataclass(frozen=True)
class Boundary:
    """A regime boundary drawn on the map: where ``values`` crosses ``level``."""

    values: np.ndarray
    level: float
    colour: str
    label: str
    logarithmic: bool = False  # spans decades: crossings are placed in its logarithm


def boundaries(grid) -> list[Boundary]:
    """The boundary lines that cross the plane of ``grid`` (a RegimeGrid)."""
    carrier = grid.carrier
    candidates = [
        Boundary(grid.eta, DEGENERATE_ETA, "#b45f06", f"η_{carrier} = {DEGENERATE_ETA:g}"),
        Boundary(grid.fraction, IONIZED_FRACTION, "#1155cc", f"{IONIZED_FRACTION:.0%} ionized"),
        Boundary(grid.ni_ratio, 1.0, "#bf9000", "n_i = N", logarithmic=True),
    ]
    drawn = []
    with np.errstate(all="ignore"):
        for boundary in candidates:
            finite = boundary.values[np.isfinite(boundary.values)]
            if finite.size and finite.min() < boundary.level < finite.max():
                drawn.append(boundary)
    return drawn


def mott_line(grid) -> float | None:
    """The Mott density in cm⁻³ where it lies inside the map's doping range."""
    x = grid.doping * 1e-6
    mott = grid.mott * 1e-6
    return float(mott) if np.isfinite(mott) and x[0] < mott < x[-1] else None


def mott_label(mott: float) -> str:
    return f"Mott density {mott:.3g} cm⁻³"


def present_regimes(grid) -> list[str]:
    """The regimes on the map, in the order of REGIMES (the legend's order)."""
    codes = set(np.unique(grid.codes).tolist())
    return [r for n, r in enumerate(REGIMES) if n in codes]


def named_regions(grid) -> list[int]:
    """The regime codes whose region is large enough to carry its name, smallest first
    (the smallest has the fewest places, so it chooses first)."""
    counts = np.bincount(grid.codes.ravel().astype(np.intp), minlength=len(REGIMES))
    present = [c for c in range(len(REGIMES)) if counts[c] > REGION_MOST_CELLS * grid.codes.size]
    return sorted(present, key=lambda c: counts[c])


def rank(severity) -> int:
    return -1 if severity is None else SEVERITY_RANK[severity]


@dataclass
class Marker:
    """One place on the map: a point (every calculation at that doping and
    temperature) or one sweep, numbered in the order the calculations came."""

    number: int
    points: list = field(default_factory=list)

    @property
    def severity(self):
        """The worst severity of the calculations here (None: no finding)."""
        return max((p.severity for p in self.points), key=rank)

    @property
    def swept(self) -> bool:
        return bool(self.points[0].doping_span or self.points[0].T_span)

    def text(self) -> str:
        count = len(self.points)
        return f"{self.number} (×{count})" if count > 1 else str(self.number)

    def spans(self) -> tuple[tuple[float, float], tuple[float, float]]:
        """(doping from, to) in cm⁻³ and (T from, to) in K; equal ends for a point."""
        point = self.points[0]
        dx = point.doping_span or (point.doping, point.doping)
        dy = point.T_span or (point.T, point.T)
        return (dx[0] * 1e-6, dx[-1] * 1e-6), (dy[0], dy[-1])

    def anchor(self) -> tuple[float, float]:
        """Data position the marker's number is placed by: the point, or a sweep's
        low-doping, high-temperature corner."""
        dx, dy = self.spans()
        return min(dx), max(dy)


def markers(
    points, to_display: Callable[[float, float], tuple[float, float]], apart: float
) -> list[Marker]:
    """Points that fall on one place of the drawn map (the same doping and temperature,
    or closer than ``apart`` display units, where their markers would cover each other)
    share one marker; each sweep has its own.  ``to_display``: (cm⁻³, K) -> display."""
    found: list[Marker] = []
    places: list[tuple[float, float]] = []
    for point in points:
        here = to_display(point.doping * 1e-6, point.T)
        shared = None
        if not (point.doping_span or point.T_span):
            shared = next(
                (
                    m
                    for m, (x, y) in zip(found, places)
                    if not m.swept and math.hypot(here[0] - x, here[1] - y) < apart
                ),
                None,
            )
        if shared is None:
            shared = Marker(len(found) + 1)
            found.append(shared)
            places.append(here)
        shared.points.append(point)
    return found


def sweep_outlines(found, to_display) -> list[Box]:
    """Thin boxes along the drawn sweeps (rectangle sides, lines): numbers keep off them.
    ``to_display``: (cm⁻³, K) -> display units."""
    boxes: list[Box] = []
    for marker in found:
        if not marker.swept:
            continue
        dx, dy = marker.spans()
        x0, y0 = to_display(min(dx), min(dy))
        x1, y1 = to_display(max(dx), max(dy))
        x0, x1, y0, y1 = min(x0, x1), max(x0, x1), min(y0, y1), max(y0, y1)
        sides = [(x0, y0, x0, y1), (x1, y0, x1, y1), (x0, y0, x1, y0), (x0, y1, x1, y1)]
        boxes += [(a - 1.5, b - 1.5, c + 1.5, d + 1.5) for a, b, c, d in sides]
    return boxes


def key_layout(count: int) -> tuple[int, int, int]:
    """(columns, rows, characters per name) of the list of ``count`` calculations."""
    shown = min(count, KEY_MOST) + (count > KEY_MOST)
    columns = 1 if shown <= 4 else 2 if shown <= 12 else 3
    return columns, -(-shown // columns), {1: 100, 2: 58, 3: 38}[columns]


def short(text: str, most: int) -> str:
    text = visible(text)
    return text if len(text) <= most else text[: most - 1].rstrip() + "…"


def key_entries(found: list[Marker]) -> tuple[list[tuple[str, str, str]], str | None]:
    """The list under the map as (number, name, severity) of each calculation, at most
    KEY_MOST of them, and the line counting the rest (None where all are listed)."""
    entries = [
        (f"{m.number}  ", visible(p.label), f" ({p.severity or 'no finding'})")
        for m in found
        for p in m.points
    ]
    rest = len(entries) - KEY_MOST
    return entries[:KEY_MOST], (f"… and {rest} more calculations" if rest > 0 else None)


def key_lines(found: list[Marker], most: int) -> list[str]:
    """The list under the map, names cut to ``most`` characters (key_entries)."""
    entries, rest = key_entries(found)
    lines = [number + short(name, most) + severity for number, name, severity in entries]
    return lines + ([rest] if rest else [])


def severities_shown(found: list[Marker]) -> list[tuple[str, str]]:
    """(legend text, colour) of each severity some marker has, mildest first."""
    return [
        (s or "no finding", c)
        for s, c in SEVERITY_COLOURS.items()
        if any(m.severity == s for m in found)
    ]


def axis_label(grid) -> str:
    kind = "donor" if grid.kind == "donor" else "acceptor"
    return f"{visible(grid.species)} {kind} density (cm⁻³)"


def default_title(grid) -> str:
    return f"{grid.material.name}: regimes of {grid.species} doping"
