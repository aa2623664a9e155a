"""The regime map as inline SVG for the HTML report, written directly from the map's
data without matplotlib (whose import alone costs more than the console report).

What is shown is shared with plots.py (map_parts.py) and so is where labels go
(map_layout.py): regions as one path per regime (cells of equal regime merged into
rectangles), the boundary lines (traced by contourpy), a log doping axis with decade
ticks, the region names, the markers and their numbers, the legend and the numbered
list of calculations.  Text stays text (selectable, read by screen readers); each
region, line and marker carries a <title>.  Text is measured with DejaVu Sans advance
widths (text_widths.py), the report's first font and wider than its fallbacks, so the
boxes the layout keeps apart hold the drawn text.  The same input writes the same
bytes: fixed ids from the caller, numbers rounded to 0.01 px.
"""

from __future__ import annotations

import html
import math
import re
import unicodedata
from dataclasses import dataclass
from typing import cast

import numpy as np

from ..physics.carriers import REGIMES
from .map_layout import Box, leader_end, place_point_labels, place_region_labels
from .map_parts import (
    COLOURS,
    CRITERIA,
    MOTT_COLOUR,
    REGION_SHARE_LEAST,
    SEVERITY_COLOURS,
    Marker,
    axis_label,
    boundaries,
    default_title,
    key_entries,
    key_layout,
    markers,
    mott_label,
    mott_line,
    named_regions,
    present_regimes,
    rank,
    severities_shown,
    sweep_outlines,
)
from .text_widths import WIDTHS

FONT_FAMILY = "DejaVu Sans, Arial, sans-serif"
TITLE_FONT, AXIS_FONT, LEGEND_FONT, REGION_FONT, NUMBER_FONT, KEY_FONT = (
    14,
    12,
    11.5,
    11.5,
    10.5,
    11,
)
ASCENT, DESCENT = 0.928, 0.236  # em, DejaVu Sans: a line's box and where its baseline is
PLOT_WIDTH, PLOT_HEIGHT = 440.0, 290.0  # px, the plotting area
LEFT, TOP, BELOW = 66.0, 34.0, 52.0  # px: y-axis labels, title, x-axis labels
LEGEND_GAP, LEGEND_LINE, SWATCH = 18.0, 18.0, 22.0
KEY_LINE = KEY_FONT * 1.45
WIDTH_LEAST = 800.0
RADIUS = 4.6  # px, a point's marker (a shared point's is 1.3 times larger)
_SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")


def text_width(text: str, size: float) -> float:
    """Advance width in px of ``text`` at ``size`` px in DejaVu Sans; characters not in
    the table count as an em where East Asian wide, else 0.7 em (more than most)."""
    total = 0
    for character in text:
        width = WIDTHS.get(character)
        if width is None:
            if unicodedata.combining(character):
                width = 0
            elif unicodedata.east_asian_width(character) in "WF":
                width = 1000
            else:
                width = 700
        total += width
    return total * size / 1000


def text_box(text: str, size: float) -> tuple[float, float]:
    """(width, height) in px of one line of text."""
    return text_width(text, size), (ASCENT + DESCENT) * size


def _n(value: float) -> str:
    text = f"{value:.2f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


# _n() applied to every number of a path written with two decimals, in three passes over
# the whole text: "12.00" -> "12", "12.50" -> "12.5", then "-0" -> "0"
_WHOLE = re.compile(r"\.00(?![0-9])")
_TENTHS = re.compile(r"(\.[0-9])0(?![0-9])")
_MINUS_ZERO = re.compile(r"(?<![0-9.])-0(?![0-9.])")


def _trimmed(path: str) -> str:
    """``path`` (numbers written '{:.2f}', letters and spaces between) with each number
    as _n() writes it."""
    return _MINUS_ZERO.sub("0", _TENTHS.sub(r"\1", _WHOLE.sub("", path)))


def _e(text: str) -> str:
    return html.escape(text, quote=True)


def _text(x, y, text, size, css="", anchor="start", extra="") -> str:
    """A line of text whose box is vertically centred on ``y``."""
    baseline = y + (ASCENT - DESCENT) / 2 * size
    attributes = f' class="{css}"' if css else ""
    if anchor != "start":
        attributes += f' text-anchor="{anchor}"'
    return (
        f'<text x="{_n(x)}" y="{_n(baseline)}" font-size="{_n(size)}"{attributes}{extra}>'
        f"{_e(text)}</text>"
    )


def _fit(text: str, size: float, width: float) -> str:
    """``text`` cut (with an ellipsis) to ``width`` px."""
    if text_width(text, size) <= width:
        return text
    while text and text_width(text + "…", size) > width:
        text = text[:-1]
    return text.rstrip() + "…"


@dataclass(frozen=True)
class _Frame:
    """The plotting area in SVG px (y down) and its scales: log doping, linear T."""

    left: float
    top: float
    right: float
    bottom: float
    log_doping: tuple[float, float]  # log10 cm⁻³ at left and right
    T: tuple[float, float]  # K at bottom and top

    def x(self, doping):
        """SVG x of doping in cm⁻³ (array or number)."""
        a, b = self.log_doping
        return self.left + (np.log10(doping) - a) / (b - a) * (self.right - self.left)

    def y(self, T):
        a, b = self.T
        return self.bottom - (np.asarray(T) - a) / (b - a) * (self.bottom - self.top)

    def display(self, doping: float, T: float) -> tuple[float, float]:
        """Layout units (map_layout works y up): (x, -y)."""
        return float(self.x(doping)), -float(self.y(T))

    @property
    def bounds(self) -> Box:
        return (self.left, -self.bottom, self.right, -self.top)


def _svg_box(box: Box) -> tuple[float, float, float, float]:
    """A layout box (y up) as SVG (x0, y0, x1, y1), y down."""
    return box[0], -box[3], box[2], -box[1]


def map_svg(grid, points=(), title: str | None = None, ident: str = "map") -> str:
    """The regime map of ``grid`` (engine.regime_map.RegimeGrid) with ``points``
    (MapPoint) as an <svg> element; ``ident`` prefixes its ids (unique per page)."""
    x = grid.doping * 1e-6
    frame = _Frame(
        LEFT,
        TOP,
        LEFT + PLOT_WIDTH,
        TOP + PLOT_HEIGHT,
        (float(np.log10(x[0])), float(np.log10(x[-1]))),
        (float(grid.T[0]), float(grid.T[-1])),
    )
    found = markers(points, frame.display, RADIUS)
    lines, mott = boundaries(grid), mott_line(grid)  # drawn and named in the legend
    legend, legend_width = _legend_entries(grid, lines, mott, found)
    width = max(WIDTH_LEAST, frame.right + LEGEND_GAP + SWATCH + 8 + legend_width + 10)
    key = _key(found, width, frame.bottom + BELOW)
    height = frame.bottom + BELOW + (len(key[1]) and key[0] * KEY_LINE + 10)
    title = title or default_title(grid)
    clip = f"{ident}-plot"
    reach = RADIUS * 1.4  # a marker's box: its radius and edge
    dots = [
        (px - reach, py - reach, px + reach, py + reach)
        for px, py in (frame.display(*m.anchor()) for m in found if not m.swept)
    ]
    outlines = sweep_outlines(found, frame.display)
    names, taken = _region_names(grid, frame, [*dots, *outlines])
    parts = [
        f'<svg xmlns="http://www.w3.org/2000/svg" width="{_n(width)}" height="{_n(height)}" '
        f'viewBox="0 0 {_n(width)} {_n(height)}" role="img" aria-labelledby="{ident}-title" '
        f'font-family="{FONT_FAMILY}" fill="#222222">',
        f'<title id="{ident}-title">{_e(title)}</title>',
        f'<defs><clipPath id="{clip}"><rect x="{_n(frame.left)}" y="{_n(frame.top)}" '
        f'width="{_n(PLOT_WIDTH)}" height="{_n(PLOT_HEIGHT)}"/></clipPath></defs>',
        _regions(grid, frame),
        f'<g clip-path="url(#{clip})" fill="none">',
        *_boundary_paths(grid, frame, lines, mott),
        "</g>",
        f'<rect x="{_n(frame.left)}" y="{_n(frame.top)}" width="{_n(PLOT_WIDTH)}" '
        f'height="{_n(PLOT_HEIGHT)}" fill="none" stroke="#333333"/>',
        *_axes(grid, frame, title),
        *names,
        f'<g clip-path="url(#{clip})">',
        *_markers(found, frame),
        "</g>",
        *_numbers(found, frame, [*taken, *dots, *outlines]),
        *_legend(legend, frame.right + LEGEND_GAP, frame.top),
        *key[1],
        "</svg>",
    ]
    return "".join(parts)


def _regions(grid, frame: _Frame) -> str:
    """One path per regime: runs of equal cells along a row, merged with the same run
    in the rows above, as rectangles (cell edges halfway between the grid points)."""
    xs = frame.x(grid.doping * 1e-6)
    ys = frame.y(grid.T)
    x_edges = np.concatenate(([frame.left], (xs[1:] + xs[:-1]) / 2, [frame.right]))
    y_edges = np.concatenate(([frame.bottom], (ys[1:] + ys[:-1]) / 2, [frame.top]))
    rects = _rectangles(grid.codes)
    paths = []
    xe, ye = x_edges.tolist(), y_edges.tolist()
    for code, found in rects.items():
        d = _trimmed(
            "".join(
                f"M{xe[i0]:.2f} {ye[j1]:.2f}H{xe[i1]:.2f}V{ye[j0]:.2f}H{xe[i0]:.2f}Z"
                for i0, i1, j0, j1 in found
            )
        )
        name = REGIMES[code]
        paths.append(
            f'<path d="{d}" fill="{COLOURS[name]}"><title>{_e(CRITERIA[name])}</title></path>'
        )
    # crisp edges: no pale seams where two regions meet
    return f'<g shape-rendering="crispEdges">{"".join(paths)}</g>'


def _rectangles(codes: np.ndarray) -> dict[int, list[tuple[int, int, int, int]]]:
    """code -> (i0, i1, j0, j1) of each rectangle of cells (columns i0..i1-1, rows
    j0..j1-1), in order: each run of equal cells along a row, merged with the same run
    (same columns, same code) in the rows next to it.  All runs of all rows at once:
    sorted by columns, code and row, a rectangle is a stretch of consecutive rows."""
    rows, columns = codes.shape
    if rows == 0 or columns == 0:
        return {}
    starts = np.ones(codes.shape, dtype=bool)
    starts[:, 1:] = codes[:, 1:] != codes[:, :-1]
    j, i0 = np.nonzero(starts)  # row by row, left to right
    i1 = np.append(i0[1:], columns)
    i1[np.append(j[1:] != j[:-1], True)] = columns  # a row's last run ends at its edge
    code = codes[j, i0].astype(np.int64)
    order = np.lexsort((j, code, i1, i0))
    j, i0, i1, code = j[order], i0[order], i1[order], code[order]
    same = (i0[1:] == i0[:-1]) & (i1[1:] == i1[:-1]) & (code[1:] == code[:-1])
    first = np.append(True, ~(same & (j[1:] == j[:-1] + 1)))  # a rectangle's first row
    last = np.append(first[1:], True)
    rects: dict[int, list[tuple[int, int, int, int]]] = {}
    for a, b, top, bottom, c in zip(
        i0[first].tolist(),
        i1[first].tolist(),
        j[first].tolist(),
        (j[last] + 1).tolist(),
        code[first].tolist(),
    ):
        rects.setdefault(c, []).append((a, b, top, bottom))
    return {c: sorted(rects[c]) for c in sorted(rects)}


def _polyline(points: np.ndarray) -> str:
    flat = np.asarray(points, dtype=float).ravel().tolist()
    return _trimmed("M" + "L".join(["{:.2f} {:.2f}"] * (len(flat) // 2)).format(*flat))


def level_lines(values: np.ndarray, level: float, xs: np.ndarray, ys: np.ndarray) -> list:
    """Polylines ((x, y) rows) along ``values == level`` (shape (len(ys), len(xs))),
    traced by contourpy (matplotlib's own contouring, installed with it), crossings
    interpolated linearly in the coordinates given; a non-finite value breaks the line
    (contourpy masks every NaN and inf of ``values`` itself)."""
    import contourpy

    generator = contourpy.contour_generator(
        xs, ys, np.asarray(values, dtype=float), line_type=contourpy.LineType.Separate
    )
    return cast(list, generator.lines(level))  # Separate: one (n, 2) array per line


def _boundary_paths(grid, frame: _Frame, lines, mott) -> list[str]:
    xs = frame.x(grid.doping * 1e-6)
    ys = frame.y(grid.T)
    paths = []
    for line in lines:
        values, level = line.values, line.level
        if line.logarithmic:
            with np.errstate(all="ignore"):
                values, level = np.log(values), math.log(level)
        d = "".join(_polyline(p) for p in level_lines(values, level, xs, ys))
        paths.append(
            f'<path d="{d}" stroke="{line.colour}" stroke-width="1.5" '
            f'stroke-linejoin="round"><title>{_e(line.label)}</title></path>'
        )
    if mott is not None:
        at = _n(float(frame.x(mott)))
        paths.append(
            f'<path d="M{at} {_n(frame.top)}V{_n(frame.bottom)}" stroke="{MOTT_COLOUR}" '
            f'stroke-width="1.5" stroke-dasharray="6 3"><title>{_e(mott_label(mott))}</title>'
            "</path>"
        )
    return paths


def _ticks(low: float, high: float, most: int = 7) -> list[float]:
    """Round linear tick values from ``low`` to ``high``: steps of 1, 2, 2.5 or 5 times
    a power of ten, at most about ``most`` of them."""
    raw = (high - low) / most
    power = 10 ** math.floor(math.log10(raw))
    step = next(s * power for s in (1, 2, 2.5, 5, 10) if s * power >= raw)
    first = math.ceil(low / step - 1e-9)
    return [k * step for k in range(first, math.floor(high / step + 1e-9) + 1)]


def _axes(grid, frame: _Frame, title: str) -> list[str]:
    """Decade ticks (10¹⁶ as text) with minor ticks on the doping axis, round values on
    the temperature axis, both axis names and the title."""
    out = []
    low, high = frame.log_doping
    ticks = []
    for decade in range(math.floor(low), math.ceil(high) + 1):
        for step in range(1, 10):
            value = math.log10(step) + decade
            if low - 1e-9 <= value <= high + 1e-9:
                ticks.append((float(frame.x(10**value)), step == 1, decade))
    d = "".join(f"M{_n(at)} {_n(frame.bottom)}v{5 if major else 3}" for at, major, _ in ticks)
    out.append(f'<path d="{d}" stroke="#333333" fill="none"/>')
    for at, major, decade in ticks:
        if major:
            label = "10" + str(decade).translate(_SUPERSCRIPT)
            out.append(_text(at, frame.bottom + 16, label, AXIS_FONT, anchor="middle"))
    values = _ticks(*frame.T)
    d = "".join(f"M{_n(frame.left)} {_n(float(frame.y(v)))}h-5" for v in values)
    out.append(f'<path d="{d}" stroke="#333333" fill="none"/>')
    for value in values:
        out.append(
            _text(frame.left - 8, float(frame.y(value)), f"{value:g}", AXIS_FONT, anchor="end")
        )
    centre_x = (frame.left + frame.right) / 2
    centre_y = (frame.top + frame.bottom) / 2
    out.append(_text(centre_x, frame.bottom + 38, axis_label(grid), AXIS_FONT, anchor="middle"))
    out.append(
        _text(
            16,
            centre_y,
            "temperature (K)",
            AXIS_FONT,
            anchor="middle",
            extra=f' transform="rotate(-90 16 {_n(centre_y)})"',
        )
    )
    fitted = _fit(title, TITLE_FONT, WIDTH_LEAST - 16)
    if text_width(fitted, TITLE_FONT) <= PLOT_WIDTH:
        out.append(_text(centre_x, TOP / 2, fitted, TITLE_FONT, anchor="middle"))
    else:
        out.append(_text(8, TOP / 2, fitted, TITLE_FONT))
    return out


def _region_names(grid, frame: _Frame, dots: list[Box]) -> tuple[list[str], list[Box]]:
    """Each region's name deep inside it, apart from the others
    (map_layout.place_region_labels); the text elements and their boxes."""
    columns = frame.x(grid.doping * 1e-6)
    rows = -frame.y(grid.T)
    sizes = {code: text_box(REGIMES[code], REGION_FONT) for code in named_regions(grid)}
    placed = place_region_labels(
        grid.codes, columns, rows, sizes, dots, frame.bounds, REGION_SHARE_LEAST
    )
    texts = []
    for code, box, upright in placed:
        x0, y0, x1, y1 = _svg_box(box)
        cx, cy = (x0 + x1) / 2, (y0 + y1) / 2
        turn = f' transform="rotate(-90 {_n(cx)} {_n(cy)})"' if upright else ""
        # a halo in the region's own colour: a boundary line passing under the name
        # is hidden there, not drawn through its letters
        turn += f' stroke="{COLOURS[REGIMES[code]]}" stroke-width="3" paint-order="stroke"'
        turn += ' stroke-linejoin="round"'

        texts.append(
            _text(
                cx,
                cy,
                REGIMES[code],
                REGION_FONT,
                "region-name",
                "middle",
                turn + ' fill="#333333"',
            )
        )
    return texts, [box for _, box, _ in placed]


def _calculations(marker: Marker) -> str:
    return "; ".join(
        f"{marker.number}: {p.label} ({p.severity or 'no finding'})" for p in marker.points
    )


def _markers(found: list[Marker], frame: _Frame) -> list[str]:
    """Markers in order of severity, the worst last and on top; each names its
    calculations in a <title>."""
    out = []
    for marker in sorted(found, key=lambda m: rank(m.severity)):
        colour = SEVERITY_COLOURS[marker.severity]
        tag = f'class="marker" data-number="{marker.number}"'
        title = f"<title>{_e(_calculations(marker))}</title>"
        (dx, dy) = marker.spans()
        (x0, x1), (y0, y1) = frame.x(np.array(dx)), frame.y(np.array(dy))
        if not marker.swept:
            r = RADIUS * (1.3 if len(marker.points) > 1 else 1.0)
            out.append(
                f'<circle {tag} cx="{_n(x0)}" cy="{_n(y0)}" r="{_n(r)}" fill="{colour}" '
                f'stroke="#000000" stroke-width="0.8">{title}</circle>'
            )
        elif dx[0] != dx[1] and dy[0] != dy[1]:
            out.append(
                f'<rect {tag} x="{_n(min(x0, x1))}" y="{_n(min(y0, y1))}" '
                f'width="{_n(abs(x1 - x0))}" height="{_n(abs(y1 - y0))}" fill="none" '
                f'stroke="{colour}" stroke-width="2">{title}</rect>'
            )
        else:
            out.append(
                f'<path {tag} d="M{_n(x0)} {_n(y0)}L{_n(x1)} {_n(y1)}" stroke="{colour}" '
                f'stroke-width="2.6">{title}</path>'
            )
    return out


def _numbers(found: list[Marker], frame: _Frame, obstacles: list[Box]) -> list[str]:
    """Each marker's number beside it, clear of the region names, the markers and the
    other numbers, on a white halo; one moved away gets a thin leader line."""
    gap = RADIUS * 1.2  # a little more than a marker's radius
    anchors = [frame.display(*m.anchor()) for m in found]
    sizes = [text_box(m.text(), NUMBER_FONT) for m in found]
    boxes = place_point_labels(anchors, sizes, obstacles, frame.bounds, gap)
    leaders, texts = [], []
    for marker, box, anchor in zip(found, boxes, anchors):
        near = leader_end(anchor, box, gap)
        if near is not None:
            leaders.append(f"M{_n(anchor[0])} {_n(-anchor[1])}L{_n(near[0])} {_n(-near[1])}")
        x0, y0, x1, y1 = _svg_box(box)
        halo = ' stroke="#ffffff" stroke-width="3" stroke-linejoin="round" paint-order="stroke"'
        texts.append(
            _text(
                (x0 + x1) / 2, (y0 + y1) / 2, marker.text(), NUMBER_FONT, "number", "middle", halo
            )
        )
    path = (
        [f'<path d="{"".join(leaders)}" stroke="#555555" stroke-width="0.8"/>'] if leaders else []
    )
    return path + texts


def _legend_entries(
    grid, lines, mott, found: list[Marker]
) -> tuple[list[tuple[str, str, str]], float]:
    """(kind, colour, text) of each legend line, and the widest text in px."""
    entries = [("region", COLOURS[r], CRITERIA[r]) for r in present_regimes(grid)]
    entries += [("line", b.colour, b.label) for b in lines]
    if mott is not None:
        entries.append(("dashed", MOTT_COLOUR, mott_label(mott)))
    entries += [("marker", colour, label) for label, colour in severities_shown(found)]
    return entries, max(text_width(text, LEGEND_FONT) for _, _, text in entries)


def _legend(entries, left: float, top: float) -> list[str]:
    out = ['<g class="legend">']
    for n, (kind, colour, text) in enumerate(entries):
        y = top + 8 + n * LEGEND_LINE
        if kind == "region":
            out.append(
                f'<rect x="{_n(left)}" y="{_n(y - 5.5)}" width="{_n(SWATCH)}" height="11" '
                f'fill="{colour}" stroke="#999999"/>'
            )
        elif kind == "marker":
            out.append(
                f'<circle cx="{_n(left + SWATCH / 2)}" cy="{_n(y)}" r="{_n(RADIUS)}" '
                f'fill="{colour}" stroke="#000000" stroke-width="0.8"/>'
            )
        else:
            dash = ' stroke-dasharray="6 3"' if kind == "dashed" else ""
            out.append(
                f'<path d="M{_n(left)} {_n(y)}h{_n(SWATCH)}" stroke="{colour}" '
                f'stroke-width="1.5"{dash}/>'
            )
        out.append(_text(left + SWATCH + 8, y, text, LEGEND_FONT))
    out.append("</g>")
    return out


def _key(found: list[Marker], width: float, top: float) -> tuple[int, list[str]]:
    """(rows, text elements) of the numbered list of calculations under the plot; a
    name too long for its column is cut, its number and severity kept."""
    if not found:
        return 0, []
    columns, rows, _ = key_layout(sum(len(m.points) for m in found))
    column_width = (width - 16) / columns
    entries, rest = key_entries(found)
    lines = [
        number
        + _fit(name, KEY_FONT, column_width - 12 - text_width(number + severity, KEY_FONT))
        + severity
        for number, name, severity in entries
    ]
    out = []
    for n, line in enumerate(lines + ([rest] if rest else [])):
        column, row = divmod(n, rows)
        out.append(
            _text(
                8 + column * column_width,
                top + (row + 0.5) * KEY_LINE,
                line,
                KEY_FONT,
                "key",
                extra=' fill="#333333"',
            )
        )
    return rows, out
