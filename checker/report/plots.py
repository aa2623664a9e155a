"""Regime map and η(T) curve, drawn with matplotlib (object API, no pyplot, no display).

matplotlib is imported only here and only when a plot is asked for: the `map` and
`curve` commands' PNG and SVG files (one drawing for both suffixes).  The HTML report
draws its maps without it (map_svg.py); both read what a map shows from map_parts.py.
"""

from __future__ import annotations

import io

import numpy as np

from ..physics.carriers import DEGENERATE_ETA, REGIMES
from .map_layout import Box, leader_end, place_point_labels, place_region_labels
from .map_parts import (
    COLOURS,
    CRITERIA,
    MOTT_COLOUR,
    REGION_SHARE_LEAST,
    SEVERITY_COLOURS,
    axis_label,
    boundaries,
    default_title,
    key_layout,
    key_lines,
    markers,
    mott_label,
    mott_line,
    named_regions,
    present_regimes,
    rank,
    severities_shown,
    sweep_outlines,
)
from .safe_text import visible


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
_MARK_SIZE = 6.0  # pt, a point's marker (a shared point's is larger)


def _key(fig, found, top: float, height: float) -> None:
    """The numbered list of the calculations, under the plot: ``top`` and ``height``
    in inches from the figure's bottom edge."""
    columns, rows, most = key_layout(sum(len(m.points) for m in found))
    for n, line in enumerate(key_lines(found, most)):
        column, row = divmod(n, rows)
        fig.text(
            0.02 + column * 0.96 / columns,
            (top - row * KEY_LINE) / height,
            _label(line),
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
    """Each region's name at a point deep inside it, clear of the other names
    (map_layout.place_region_labels); returns their boxes."""
    x = grid.doping * 1e-6
    columns = ax.transData.transform(np.column_stack([x, np.full(x.size, grid.T[0])]))[:, 0]
    rows = ax.transData.transform(np.column_stack([np.full(grid.T.size, x[0]), grid.T]))[:, 1]
    texts, sizes = {}, {}
    for code in named_regions(grid):
        text = ax.text(0, 0, REGIMES[code], ha="center", va="center", fontsize=8, color="#333333")
        text.set_label(REGION_TAG + REGIMES[code])
        extent = _display_box(text, renderer)
        texts[code], sizes[code] = text, (extent[2] - extent[0], extent[3] - extent[1])
    bounds = _display_box(ax, renderer)
    placed = place_region_labels(
        grid.codes, columns, rows, sizes, avoid, bounds, REGION_SHARE_LEAST
    )
    for code, box, upright in placed:
        text = texts.pop(code)
        if upright:
            text.set_rotation(90)
        text.set_position(
            ax.transData.inverted().transform(((box[0] + box[2]) / 2, (box[1] + box[3]) / 2))
        )
    for text in texts.values():
        text.remove()  # no place for it: the legend names the region by its colour
    return [box for _, box, _ in placed]


def _draw_markers(ax, found) -> None:
    """Markers in order of severity, the worst last and on top."""
    from matplotlib.patches import Rectangle

    for marker in sorted(found, key=lambda m: rank(m.severity)):
        colour = SEVERITY_COLOURS[marker.severity]
        order = 3 + rank(marker.severity) / 10
        label = MARKER_TAG + str(marker.number)
        (dx, dy), point = marker.spans(), marker.points[0]
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
        elif dx[0] != dx[1] and dy[0] != dy[1]:
            ax.add_patch(
                Rectangle(
                    (min(dx), min(dy)),
                    abs(dx[1] - dx[0]),
                    abs(dy[1] - dy[0]),
                    fill=False,
                    ec=colour,
                    lw=1.6,
                    zorder=order,
                    label=label,
                )
            )
        else:
            ax.plot(dx, dy, color=colour, lw=2.2, zorder=order, label=label)


def _number_markers(ax, found, renderer, obstacles) -> None:
    """Each marker's number beside it, clear of the region names, the markers and the
    other numbers; a number moved away from its point gets a thin leader line."""
    from matplotlib import patheffects

    gap = _MARK_SIZE * 0.6 * ax.figure.dpi / 72  # a little more than a marker's radius
    anchors = [tuple(ax.transData.transform(m.anchor())) for m in found]
    texts, sizes = [], []
    for marker in found:
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
    for text, box, anchor in zip(texts, boxes, anchors):
        text.set_position(to_data.transform(((box[0] + box[2]) / 2, (box[1] + box[3]) / 2)))
        near = leader_end(anchor, box, gap)
        if near is not None:
            ends = to_data.transform([anchor, near])
            ax.plot(ends[:, 0], ends[:, 1], color="#555555", lw=0.6, zorder=5)


def draw_map(grid, points=(), size=(7.8, 5.0)):
    """The regime map of ``grid`` (engine.regime_map.RegimeGrid) with ``points``, the
    screening-check sentence printed under it (a standalone figure).

    Calculations at the same doping and temperature share one marker in the colour
    of their worst finding (markers are drawn worst last, on top); every marker has a
    number, placed clear of the others, and the numbered calculations are listed
    under the plot (the figure grows by the list's height)."""
    from matplotlib.colors import BoundaryNorm, ListedColormap
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    columns, rows, _ = key_layout(len(points))
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
    handles = []
    with np.errstate(all="ignore"):
        for line in boundaries(grid):
            data = np.where(np.isfinite(line.values), line.values, np.nan)
            ax.contour(X, Y, data, levels=[line.level], colors=line.colour, linewidths=1.2)
            handles.append(Line2D([], [], color=line.colour, lw=1.2, label=line.label))
    mott = mott_line(grid)
    if mott is not None:
        ax.axvline(mott, color=MOTT_COLOUR, lw=1.2, ls="--")
        handles.append(Line2D([], [], color=MOTT_COLOUR, lw=1.2, ls="--", label=mott_label(mott)))
    _axes(ax, grid)  # scale and limits first: the labels are placed in display units
    renderer = _renderer(fig)

    def to_display(doping, T):
        return tuple(ax.transData.transform((doping, T)))

    found = markers(points, to_display, _MARK_SIZE * 0.5 * fig.dpi / 72)
    reach = _MARK_SIZE * 0.7 * fig.dpi / 72  # a marker's box: its radius and edge
    dots = [
        (px - reach, py - reach, px + reach, py + reach)
        for px, py in (to_display(*m.anchor()) for m in found if not m.swept)
    ]
    outlines = sweep_outlines(found, to_display)
    taken = _region_labels(ax, grid, renderer, [*dots, *outlines])
    _draw_markers(ax, found)
    _number_markers(ax, found, renderer, [*taken, *dots, *outlines])
    legend = [
        Patch(facecolor=COLOURS[r], edgecolor="#999999", label=CRITERIA[r])
        for r in present_regimes(grid)
    ] + handles
    legend += [
        Line2D([], [], marker="o", ls="", mfc=colour, mec="black", label=label)
        for label, colour in severities_shown(found)
    ]
    ax.legend(
        handles=legend, fontsize=7, loc="upper left", bbox_to_anchor=(1.01, 1.0), frameon=False
    )
    if found:
        _key(fig, found, key_height - 0.06, height)
    _notice(fig)
    return fig


def _axes(ax, grid) -> None:
    x = grid.doping * 1e-6
    ax.set_xscale("log")
    # plain "1e17" labels: the default 10^17 goes through mathtext, slow for many figures
    from matplotlib.ticker import FuncFormatter, LogLocator, NullLocator

    ax.xaxis.set_major_locator(LogLocator(base=10.0, numticks=12))
    ax.xaxis.set_major_formatter(FuncFormatter(lambda v, _: f"1e{np.log10(v):.0f}"))
    ax.xaxis.set_minor_locator(NullLocator())
    ax.set_xlim(x[0], x[-1])
    ax.set_ylim(grid.T[0], grid.T[-1])
    ax.set_xlabel(_label(axis_label(grid)))
    ax.set_ylabel("temperature (K)")
    ax.set_title(_label(default_title(grid)), fontsize=10)


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
