"""Regime map and η(T) curve, drawn with matplotlib (object API, no pyplot, no display).

matplotlib is imported only here and only when a plot is asked for; it draws SVG
(inline in the HTML report) or PNG.
"""

from __future__ import annotations

import io
import math
from dataclasses import dataclass, field

import numpy as np

from ..physics.carriers import DEGENERATE_ETA, IONIZED_FRACTION, REGIMES
from ..vocabulary_words import SEVERITY_RANK
from .map_layout import Box, place_point_labels, region_label_box
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


def _figure(size, right=0.95):
    import matplotlib

    matplotlib.rcParams["svg.hashsalt"] = "regimecheck"  # the same input draws the same SVG
    matplotlib.rcParams["svg.fonttype"] = "none"  # text stays text (small, fast)
    from matplotlib.figure import Figure

    # fixed margins: an automatic layout would draw every figure twice
    fig = Figure(figsize=size)
    fig.subplots_adjust(left=0.1, right=right, bottom=0.16, top=0.92)
    return fig


def _label(text) -> str:
    """User text (material, dopant) on a figure: visible, and a '$' never starts mathtext."""
    return visible(text).replace("$", r"\$")


def render(fig, fmt: str) -> bytes:
    buffer = io.BytesIO()
    fig.savefig(buffer, format=fmt, dpi=110, metadata={"Date": None} if fmt == "svg" else None)
    return buffer.getvalue()


def _notice(fig):
    from . import DISCLAIMER

    fig.text(0.01, 0.005, DISCLAIMER, fontsize=6, color="#666666", ha="left", va="bottom")


# labels of the drawn artists (a leading "_" keeps them out of the legend): the tests
# and callers find the map's parts by them
REGION_TAG, MARKER_TAG, NUMBER_TAG, KEY_TAG = "_region:", "_marker:", "_number:", "_key:"
KEY_FONT = 6.5  # pt, the list of numbered calculations under the map
KEY_LINE = KEY_FONT * 1.45 / 72  # inches per line of that list
KEY_MOST = 60  # calculations listed at most; the rest are counted
REGION_SHARE_LEAST = 0.5  # a region's name is left out where less of it lies inside
_MARK_SIZE = 6.0  # pt, a point's marker (a shared point's is larger)


@dataclass
class _Marker:
    """One place on the map: a point (every calculation at that doping and
    temperature) or one sweep, numbered in the order the calculations came."""

    number: int
    points: list = field(default_factory=list)

    @property
    def severity(self):
        """The worst severity of the calculations here (None: no finding)."""
        return max((p.severity for p in self.points), key=_rank)

    @property
    def swept(self) -> bool:
        return bool(self.points[0].doping_span or self.points[0].T_span)

    def text(self) -> str:
        count = len(self.points)
        return f"{self.number} (×{count})" if count > 1 else str(self.number)


def _rank(severity) -> int:
    return -1 if severity is None else SEVERITY_RANK[severity]


def _markers(points, to_display, apart: float) -> list[_Marker]:
    """Points that fall on one place of the drawn map (the same doping and temperature,
    or closer than ``apart`` pixels, where their markers would cover each other) share
    one marker; each sweep has its own.  ``to_display``: data -> pixel transform."""
    markers: list[_Marker] = []
    places: list[tuple[float, float]] = []
    for point in points:
        here = tuple(to_display.transform((point.doping * 1e-6, point.T)))
        swept = point.doping_span or point.T_span
        shared = None
        if not swept:
            shared = next(
                (
                    m
                    for m, (x, y) in zip(markers, places)
                    if not m.swept and math.hypot(here[0] - x, here[1] - y) < apart
                ),
                None,
            )
        if shared is None:
            shared = _Marker(len(markers) + 1)
            markers.append(shared)
            places.append(here)
        shared.points.append(point)
    return markers


def _key_layout(count: int) -> tuple[int, int, int]:
    """(columns, rows, characters per name) of the list of ``count`` calculations."""
    shown = min(count, KEY_MOST) + (count > KEY_MOST)
    columns = 1 if shown <= 4 else 2 if shown <= 12 else 3
    return columns, -(-shown // columns), {1: 100, 2: 58, 3: 38}[columns]


def _short(text: str, most: int) -> str:
    text = _label(text)
    return text if len(text) <= most else text[: most - 1].rstrip() + "…"


def _key(fig, markers, top: float, height: float) -> None:
    """The numbered list of the calculations, under the plot: ``top`` and ``height``
    in inches from the figure's bottom edge."""
    entries = [(m.number, p) for m in markers for p in m.points]
    columns, rows, most = _key_layout(len(entries))
    lines = [
        f"{number}  {_short(p.label, most)} ({p.severity or 'no finding'})"
        for number, p in entries[:KEY_MOST]
    ]
    if len(entries) > KEY_MOST:
        lines.append(f"… and {len(entries) - KEY_MOST} more calculations")
    for n, line in enumerate(lines):
        column, row = divmod(n, rows)
        fig.text(
            0.02 + column * 0.96 / columns,
            (top - row * KEY_LINE) / height,
            line,
            fontsize=KEY_FONT,
            ha="left",
            va="top",
            color="#333333",
            label=KEY_TAG + str(n),
        )


def _display_box(artist, renderer) -> Box:
    extent = artist.get_window_extent(renderer)
    return (extent.x0, extent.y0, extent.x1, extent.y1)


def _region_labels(ax, grid, renderer, avoid) -> list[Box]:
    """Each region's name at a point deep inside it, clear of the other names (the
    smallest region chooses first: it has the fewest places); returns their boxes."""
    x = grid.doping * 1e-6
    columns = ax.transData.transform(np.column_stack([x, np.full(x.size, grid.T[0])]))[:, 0]
    rows = ax.transData.transform(np.column_stack([np.full(grid.T.size, x[0]), grid.T]))[:, 1]
    bounds = _display_box(ax, renderer)
    present = [code for code in range(len(REGIMES)) if (grid.codes == code).any()]
    present = [c for c in present if (grid.codes == c).sum() > 0.01 * grid.codes.size]
    taken: list[Box] = []
    for code in sorted(present, key=lambda c: (grid.codes == c).sum()):
        cells = grid.codes == code
        text = ax.text(0, 0, REGIMES[code], ha="center", va="center", fontsize=8, color="#333333")
        text.set_label(REGION_TAG + REGIMES[code])
        extent = _display_box(text, renderer)
        size = (extent[2] - extent[0], extent[3] - extent[1])
        found = region_label_box(cells, columns, rows, size, taken, avoid, bounds)
        if found is not None and found[1] < 0.9:  # a narrow region: try the name upright
            upright = region_label_box(cells, columns, rows, size[::-1], taken, avoid, bounds)
            if upright is not None and upright[1] > found[1]:
                found = upright
                text.set_rotation(90)
        if found is None or found[1] < REGION_SHARE_LEAST:
            # no free place, or the name would mostly lie on other regions and mislead:
            # the legend still names the region by its colour
            text.remove()
            continue
        box = found[0]
        text.set_position(
            ax.transData.inverted().transform(((box[0] + box[2]) / 2, (box[1] + box[3]) / 2))
        )
        taken.append(box)
    return taken


def _anchor(marker) -> tuple[float, float]:
    """Data position a marker's number is placed by: the point, or a sweep's
    low-doping, high-temperature corner."""
    point = marker.points[0]
    dx = point.doping_span or (point.doping, point.doping)
    dy = point.T_span or (point.T, point.T)
    return min(dx) * 1e-6, max(dy)


def _draw_markers(ax, markers) -> None:
    """Markers in order of severity, the worst last and on top."""
    from matplotlib.patches import Rectangle

    for marker in sorted(markers, key=lambda m: _rank(m.severity)):
        colour = SEVERITY_COLOURS[marker.severity]
        order = 3 + _rank(marker.severity) / 10
        label = MARKER_TAG + str(marker.number)
        point = marker.points[0]
        if not marker.swept:
            size = _MARK_SIZE * (1.3 if len(marker.points) > 1 else 1.0)
            ax.plot(
                point.doping * 1e-6,
                point.T,
                "o",
                ms=size,
                mfc=colour,
                mec="black",
                mew=0.6,
                zorder=order,
                label=label,
            )
            continue
        dx = point.doping_span or (point.doping, point.doping)
        dy = point.T_span or (point.T, point.T)
        if dx[0] != dx[1] and dy[0] != dy[1]:
            ax.add_patch(
                Rectangle(
                    (min(dx) * 1e-6, min(dy)),
                    abs(dx[1] - dx[0]) * 1e-6,
                    abs(dy[1] - dy[0]),
                    fill=False,
                    ec=colour,
                    lw=1.6,
                    zorder=order,
                    label=label,
                )
            )
        else:
            ax.plot(np.array(dx) * 1e-6, dy, color=colour, lw=2.2, zorder=order, label=label)


def _outlines(ax, markers) -> list[Box]:
    """Thin boxes along the drawn sweeps (rectangle sides, lines): numbers keep off them."""
    boxes: list[Box] = []
    for marker in markers:
        if not marker.swept:
            continue
        point = marker.points[0]
        dx = point.doping_span or (point.doping, point.doping)
        dy = point.T_span or (point.T, point.T)
        (x0, y0), (x1, y1) = ax.transData.transform(
            [(min(dx) * 1e-6, min(dy)), (max(dx) * 1e-6, max(dy))]
        )
        sides = [(x0, y0, x0, y1), (x1, y0, x1, y1), (x0, y0, x1, y0), (x0, y1, x1, y1)]
        boxes += [(a - 1.5, b - 1.5, c + 1.5, d + 1.5) for a, b, c, d in sides]
    return boxes


def _number_markers(ax, markers, renderer, obstacles) -> None:
    """Each marker's number beside it, clear of the region names, the markers and the
    other numbers; a number moved away from its point gets a thin leader line."""
    from matplotlib import patheffects

    gap = _MARK_SIZE * 0.6 * ax.figure.dpi / 72  # a little more than a marker's radius
    anchors = [tuple(ax.transData.transform(_anchor(m))) for m in markers]
    texts, sizes = [], []
    for marker in markers:
        text = ax.text(
            0,
            0,
            marker.text(),
            fontsize=7,
            ha="center",
            va="center",
            zorder=6,
            label=NUMBER_TAG + str(marker.number),
            path_effects=[patheffects.withStroke(linewidth=2.2, foreground="white")],
        )
        box = _display_box(text, renderer)
        texts.append(text)
        sizes.append((box[2] - box[0], box[3] - box[1]))
    boxes = place_point_labels(anchors, sizes, obstacles, _display_box(ax, renderer), gap)
    to_data = ax.transData.inverted()
    for text, box, (x, y) in zip(texts, boxes, anchors):
        centre = ((box[0] + box[2]) / 2, (box[1] + box[3]) / 2)
        text.set_position(to_data.transform(centre))
        if (
            math.hypot(centre[0] - x, centre[1] - y)
            > 2.5 * gap + max(box[2] - box[0], box[3] - box[1]) / 2
        ):
            # the leader ends at the box's edge nearest the point
            near = (min(max(x, box[0]), box[2]), min(max(y, box[1]), box[3]))
            ends = to_data.transform([(x, y), near])
            ax.plot(ends[:, 0], ends[:, 1], color="#555555", lw=0.6, zorder=5)


def draw_map(grid, points=(), title=None, size=(7.8, 5.0), notice=True):
    """The regime map of ``grid`` (engine.regime_map.RegimeGrid) with ``points``;
    ``notice``: print the screening-check sentence on it (a standalone figure).

    Calculations at the same doping and temperature share one marker in the colour
    of their worst finding (markers are drawn worst last, on top); every marker has a
    number, placed clear of the others, and the numbered calculations are listed
    under the plot (the figure grows by the list's height)."""
    from matplotlib.colors import BoundaryNorm, ListedColormap
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    columns, rows, _ = _key_layout(len(points))
    key_height = (rows * KEY_LINE + 0.18) if len(points) else 0.0
    width, height = size[0], size[1] + key_height
    fig = _figure((width, height), right=0.62)
    # the plot keeps its height in inches; the list goes between x label and notice
    fig.subplots_adjust(
        bottom=(0.16 * size[1] + key_height) / height, top=1 - 0.08 * size[1] / height
    )
    ax = fig.add_subplot()
    x = grid.doping * 1e-6
    cmap = ListedColormap([COLOURS[r] for r in REGIMES])
    ax.pcolormesh(
        x,
        grid.T,
        grid.codes,
        cmap=cmap,
        norm=BoundaryNorm(np.arange(len(REGIMES) + 1) - 0.5, len(REGIMES)),
        shading="nearest",
        rasterized=True,
    )
    X, Y = np.meshgrid(x, grid.T)
    carrier = grid.carrier
    lines = [
        (grid.eta, DEGENERATE_ETA, "#b45f06", f"η_{carrier} = {DEGENERATE_ETA:g}"),
        (grid.fraction, IONIZED_FRACTION, "#1155cc", f"{IONIZED_FRACTION:.0%} ionized"),
        (grid.ni_ratio, 1.0, "#bf9000", "n_i = N"),
    ]
    handles = []
    with np.errstate(all="ignore"):
        for field_, level, colour, label in lines:
            data = np.where(np.isfinite(field_), field_, np.nan)
            if np.nanmin(data) < level < np.nanmax(data):
                ax.contour(X, Y, data, levels=[level], colors=colour, linewidths=1.2)
                handles.append(Line2D([], [], color=colour, lw=1.2, label=label))
    if np.isfinite(grid.mott) and x[0] < grid.mott * 1e-6 < x[-1]:
        ax.axvline(grid.mott * 1e-6, color="#674ea7", lw=1.2, ls="--")
        handles.append(
            Line2D(
                [],
                [],
                color="#674ea7",
                lw=1.2,
                ls="--",
                label=f"Mott density {grid.mott * 1e-6:.3g} cm⁻³",
            )
        )
    _axes(ax, grid, title)  # scale and limits first: the labels are placed in display units
    renderer = _renderer(fig)
    markers = _markers(points, ax.transData, _MARK_SIZE * 0.5 * fig.dpi / 72)
    reach = _MARK_SIZE * 0.7 * fig.dpi / 72  # a marker's box: its radius and edge
    dots = [
        (px - reach, py - reach, px + reach, py + reach)
        for px, py in (ax.transData.transform(_anchor(m)) for m in markers if not m.swept)
    ]
    taken = _region_labels(ax, grid, renderer, dots)
    _draw_markers(ax, markers)
    _number_markers(ax, markers, renderer, [*taken, *dots, *_outlines(ax, markers)])
    present = set(np.unique(grid.codes))
    legend = [
        Patch(facecolor=COLOURS[r], edgecolor="#999999", label=CRITERIA[r])
        for r in REGIMES
        if REGIMES.index(r) in present
    ] + handles
    legend += [
        Line2D([], [], marker="o", ls="", mfc=c, mec="black", label=s or "no finding")
        for s, c in SEVERITY_COLOURS.items()
        if any(m.severity == s for m in markers)
    ]
    ax.legend(
        handles=legend, fontsize=7, loc="upper left", bbox_to_anchor=(1.01, 1.0), frameon=False
    )
    if markers:
        _key(fig, markers, key_height - 0.06, height)
    if notice:
        _notice(fig)
    return fig


def _axes(ax, grid, title) -> None:
    x = grid.doping * 1e-6
    ax.set_xscale("log")
    # plain "1e17" labels: the default 10^17 goes through mathtext, slow for many figures
    from matplotlib.ticker import FuncFormatter, LogLocator, NullLocator

    ax.xaxis.set_major_locator(LogLocator(base=10.0, numticks=12))
    ax.xaxis.set_major_formatter(FuncFormatter(lambda v, _: f"1e{np.log10(v):.0f}"))
    ax.xaxis.set_minor_locator(NullLocator())
    ax.set_xlim(x[0], x[-1])
    ax.set_ylim(grid.T[0], grid.T[-1])
    ax.set_xlabel(
        f"{_label(grid.species)} {'donor' if grid.kind == 'donor' else 'acceptor'} density (cm⁻³)"
    )
    ax.set_ylabel("temperature (K)")
    ax.set_title(
        _label(title or f"{grid.material.name}: regimes of {grid.species} doping"), fontsize=10
    )


def _renderer(fig):
    """A renderer to measure text with (Agg; the sizes hold for SVG too: both lay
    text out in points)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    return FigureCanvasAgg(fig).get_renderer()


def draw_eta_curve(curve, title=None, size=(6.4, 4.2), notice=True):
    """η of the majority carrier vs T at a fixed doping (``curve``: an
    engine.regime_map.EtaCurve), with the regimes along T."""
    from matplotlib.patches import Patch

    T, eta, codes = curve.T, curve.eta, curve.codes
    fig = _figure(size)
    ax = fig.add_subplot()
    edges = np.concatenate(([T[0]], (T[1:] + T[:-1]) / 2, [T[-1]]))  # cell edges in T
    for run in np.split(np.arange(T.size), np.flatnonzero(np.diff(codes)) + 1):
        ax.axvspan(edges[run[0]], edges[run[-1] + 1], color=COLOURS[REGIMES[codes[run[0]]]], lw=0)
    carrier = curve.carrier
    ax.plot(T, eta, color="black", lw=1.6, label=f"η_{carrier} (Fermi–Dirac solve)")
    ax.axhline(
        DEGENERATE_ETA,
        color="#b45f06",
        ls="--",
        lw=1.2,
        label=f"η = {DEGENERATE_ETA:g}: degenerate above (3kT rule)",
    )
    ax.axhline(0.0, color="#999999", ls=":", lw=1.0, label="η = 0: Fermi level at the band edge")
    handles, _ = ax.get_legend_handles_labels()
    handles += [Patch(facecolor=COLOURS[REGIMES[c]], label=REGIMES[c]) for c in np.unique(codes)]
    ax.legend(handles=handles, fontsize=7, loc="best")
    ax.set_xlabel("temperature (K)")
    ax.set_ylabel(f"η_{carrier} = (E_F − E_C)/kT" if carrier == "n" else "η_p = (E_V − E_F)/kT")
    ax.set_xlim(T[0], T[-1])
    ax.set_title(
        _label(title or f"{curve.material.name}, {curve.species} {curve.density * 1e-6:.3g} cm⁻³"),
        fontsize=10,
    )
    if notice:
        _notice(fig)
    return fig
