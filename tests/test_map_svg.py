"""The HTML report's regime map, written as SVG without matplotlib (report/map_svg.py),
read back from the SVG it writes: the regions carry the grid's regimes, the boundary
lines lie where the field crosses its level, coincident points share one marker in the
worst colour, numbers and region names keep apart, every part has a title, the same
input writes the same bytes, and the HTML path never imports matplotlib."""

import html
import itertools
import json
import os
import re
import shutil
import subprocess
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pytest
from scipy.interpolate import RegularGridInterpolator
from test_map_labels import CM3, COINCIDENT, crowded_points
from test_maps import FILES

from checker import load_material
from checker.engine.regime.regime_map import MapPoint, regime_grid
from checker.physics.carriers import REGIMES
from checker.report.map_parts import COLOURS, CRITERIA, SEVERITY_COLOURS
from checker.report.map_svg import ASCENT, DESCENT, level_lines, map_svg, text_box, text_width

ROOT = Path(__file__).resolve().parents[1]
SVG = "{http://www.w3.org/2000/svg}"


@pytest.fixture(scope="module")
def silicon():
    return regime_grid(load_material("Si"), "P", size=(60, 48))


def _plot(root):
    """(left, top, right, bottom) of the plotting area: the clip rectangle."""
    rect = root.find(f"{SVG}defs/{SVG}clipPath/{SVG}rect")
    x, y = float(rect.get("x")), float(rect.get("y"))
    return x, y, x + float(rect.get("width")), y + float(rect.get("height"))


def _to_svg(root, grid):
    """(cm^-3, K) -> SVG px, from the axes' definition: log doping across the plot's
    width, temperature linear up its height, the grid's first and last values at the
    edges."""
    left, top, right, bottom = _plot(root)
    a, b = np.log10(grid.doping[[0, -1]] * 1e-6)
    T0, T1 = grid.T[[0, -1]]

    def to_svg(doping, T):
        x = left + (np.log10(doping) - a) / (b - a) * (right - left)
        return x, bottom - (np.asarray(T) - T0) / (T1 - T0) * (bottom - top)

    return to_svg


def _rects(d: str) -> list[tuple[float, float, float, float]]:
    """The rectangles of a region path "Mx yHx2Vy2Hx Z..." as (x0, y0, x1, y1)."""
    out = []
    for x0, y0, x1, y1 in re.findall(r"M([\d.]+) ([\d.]+)H([\d.]+)V([\d.]+)H[\d.]+Z", d):
        x0, y0, x1, y1 = map(float, (x0, y0, x1, y1))
        out.append((min(x0, x1), min(y0, y1), max(x0, x1), max(y0, y1)))
    return out


def _text_boxes(root, css):
    """(text, box) of the <text class=css> elements; the box from the element's centre
    (baseline back up by the font's ascent and descent), its font size and the text's
    width, turned for text rotated by -90 degrees."""
    found = []
    for text in root.iter(f"{SVG}text"):
        if text.get("class") != css:
            continue
        size = float(text.get("font-size"))
        width, height = text_box(text.text, size)
        cx = float(text.get("x"))
        cy = float(text.get("y")) - (ASCENT - DESCENT) / 2 * size
        if "rotate(-90" in (text.get("transform") or ""):
            width, height = height, width
        found.append(
            (text.text, (cx - width / 2, cy - height / 2, cx + width / 2, cy + height / 2))
        )
    return found


def _overlap(a, b) -> bool:
    return min(a[2], b[2]) > max(a[0], b[0]) and min(a[3], b[3]) > max(a[1], b[1])


def test_every_cell_is_drawn_in_the_colour_of_its_regime(silicon):
    root = ET.fromstring(map_svg(silicon, ident="t"))
    to_svg = _to_svg(root, silicon)
    by_code = {}
    for path in root.iter(f"{SVG}path"):
        title = path.find(f"{SVG}title")
        if title is not None and title.text in CRITERIA.values():
            regime = next(r for r, text in CRITERIA.items() if text == title.text)
            assert path.get("fill") == COLOURS[regime]
            by_code[REGIMES.index(regime)] = _rects(path.get("d"))
    assert set(by_code) == set(np.unique(silicon.codes).tolist())
    X, Y = to_svg(silicon.doping[None, :] * 1e-6, silicon.T[:, None])
    X, Y = np.broadcast_arrays(X, Y)
    for j, i in itertools.product(range(silicon.T.size), range(silicon.doping.size)):
        x, y = X[j, i], Y[j, i]
        # a cell's centre lies in exactly one rectangle (edge cells: nudged inwards)
        x += 0.2 if i == 0 else -0.2 if i == silicon.doping.size - 1 else 0
        y -= 0.2 if j == 0 else -0.2 if j == silicon.T.size - 1 else 0
        holders = [
            code
            for code, rects in by_code.items()
            for r in rects
            if r[0] <= x <= r[2] and r[1] <= y <= r[3]
        ]
        assert holders == [silicon.codes[j, i]], (j, i, holders)


def test_a_circle_is_traced_at_its_radius():
    """The trace of |r| = 0.5 on a 41 x 41 grid: one closed line, every
    vertex within the linear interpolation's error of the exact circle (geometry)."""
    x = y = np.linspace(-1, 1, 41)
    radius = np.hypot(*np.meshgrid(x, y))
    (line,) = level_lines(radius, 0.5, x, y)
    assert np.allclose(line[0], line[-1]) and len(line) > 40
    assert np.abs(np.hypot(line[:, 0], line[:, 1]) - 0.5).max() < 1e-3


def test_a_line_with_missing_values_is_broken_not_bridged():
    x = y = np.linspace(0, 1, 11)
    field = np.tile(x, (11, 1))  # crosses 0.55 on one column of edges
    field[5, :] = np.nan
    lines = level_lines(field, 0.55, x, y)
    assert len(lines) == 2
    assert all(np.allclose(line[:, 0], 0.55) for line in lines)


def test_boundary_lines_lie_where_the_field_crosses_its_level(silicon):
    root = ET.fromstring(map_svg(silicon, ident="t"))
    left, top, right, bottom = _plot(root)
    a, b = np.log10(silicon.doping[[0, -1]] * 1e-6)
    T0, T1 = silicon.T[[0, -1]]
    # the crossing is interpolated along a grid edge in the ionized fraction, and in the
    # logarithm of n_i/N (it spans decades across one cell)
    fields = {
        "90% ionized": (silicon.fraction, 0.9),
        "n_i = N": (np.log(silicon.ni_ratio), 0.0),
    }
    checked = 0
    for path in root.iter(f"{SVG}path"):
        title = path.find(f"{SVG}title")
        if title is None or title.text not in fields:
            continue
        values, level = fields[title.text]
        interpolate = RegularGridInterpolator((silicon.T, np.log10(silicon.doping * 1e-6)), values)
        xy = np.array(re.findall(r"([\d.]+) ([\d.]+)", path.get("d")), dtype=float)
        log_doping = a + (xy[:, 0] - left) / (right - left) * (b - a)
        T = T0 + (bottom - xy[:, 1]) / (bottom - top) * (T1 - T0)
        # each vertex lies on a grid edge, where the bilinear interpolation is the linear
        # one along the edge: the drawn line is the level to the 0.01 px the SVG keeps
        assert np.allclose(interpolate(np.column_stack([T, log_doping])), level, atol=2e-3)
        checked += len(xy)
    assert checked > 50


def test_coincident_points_share_one_marker_in_the_worst_colour(silicon):
    here = COINCIDENT
    root = ET.fromstring(map_svg(silicon, here, ident="t"))
    markers = [e for e in root.iter() if e.get("class") == "marker"]
    assert len(markers) == 3
    by_number = {m.get("data-number"): m for m in markers}
    assert by_number["1"].get("fill") == SEVERITY_COLOURS["error"]
    assert by_number["2"].get("fill") == SEVERITY_COLOURS["info"]
    ranks = {colour: n for n, colour in enumerate(SEVERITY_COLOURS.values())}
    drawn = [ranks[m.get("fill")] for m in markers]
    assert drawn == sorted(drawn)  # the worst last: on top
    # the marker's title names each of its calculations (what a hover or reader shows)
    title = by_number["1"].find(f"{SVG}title").text
    assert all(p.label in title for p in here[:3])
    to_svg = _to_svg(root, silicon)
    x, y = to_svg(1e19, 300.0)
    assert abs(float(by_number["2"].get("cx")) - x) < 0.01
    assert abs(float(by_number["2"].get("cy")) - y) < 0.01
    numbers = {text for text, _ in _text_boxes(root, "number")}
    assert numbers == {"1 (×3)", "2", "3"}
    key = [text for text, _ in _text_boxes(root, "key")]
    assert len(key) == len(here) and "1  LX-1 resistor, hot (error)" in key


def test_numbers_of_forty_crowded_points_cover_nothing(silicon):
    crowd = crowded_points()
    root = ET.fromstring(map_svg(silicon, crowd, ident="t"))
    numbers = [box for _, box in _text_boxes(root, "number")]
    regions = [box for _, box in _text_boxes(root, "region-name")]
    assert len(numbers) >= 10
    assert not any(_overlap(a, b) for a, b in itertools.combinations(numbers, 2))
    assert not any(_overlap(n, r) for n in numbers for r in regions)
    left, top, right, bottom = _plot(root)
    assert all(left <= b[0] and b[2] <= right and top <= b[1] and b[3] <= bottom for b in numbers)
    centres = [
        (float(c.get("cx")), float(c.get("cy")))
        for c in root.iter(f"{SVG}circle")
        if c.get("class") == "marker"
    ]
    assert not any(b[0] < x < b[2] and b[1] < y < b[3] for b in numbers for x, y in centres)
    key = [box for _, box in _text_boxes(root, "key")]
    assert len(key) == 40
    assert not any(_overlap(a, b) for a, b in itertools.combinations(key, 2))


@pytest.mark.parametrize(
    "material, species", [("Si", "P"), ("Si", "B"), ("GaAs", "Si"), ("GaN", "Mg"), ("Ge", "Sb")]
)
def test_region_names_are_apart_and_inside_their_regions(material, species):
    grid = regime_grid(load_material(material), species, size=(90, 90))
    root = ET.fromstring(map_svg(grid, ident="t"))
    names = _text_boxes(root, "region-name")
    assert len(names) >= 2
    assert not any(_overlap(a, b) for (_, a), (_, b) in itertools.combinations(names, 2))
    to_svg = _to_svg(root, grid)
    columns, _ = to_svg(grid.doping * 1e-6, grid.T[0])
    _, rows = to_svg(grid.doping[0] * 1e-6, grid.T)
    for name, box in names:
        i = int(np.argmin(abs(columns - (box[0] + box[2]) / 2)))
        j = int(np.argmin(abs(rows - (box[1] + box[3]) / 2)))
        assert REGIMES[grid.codes[j, i]] == name


def test_text_is_measured_as_the_font_draws_it():
    """The width table against the DejaVu Sans font file matplotlib ships, measured by
    FreeType (the report's first font; kerning left out, as the table leaves it)."""
    from matplotlib import font_manager, ft2font

    font = ft2font.FT2Font(font_manager.findfont("DejaVu Sans"))
    font.set_size(100, 72)  # 100 px to the em
    for text in ("incomplete ionization", "Mott density 3.74e+18 cm⁻³", "η_n = -3", "10¹⁷"):
        advances = 0.0
        for character in text:
            glyph = font.load_char(ord(character), flags=ft2font.LoadFlags.NO_HINTING)
            advances += glyph.linearHoriAdvance / 65536
        assert text_width(text, 100) == pytest.approx(advances, rel=0.005), text
    assert text_width("日本", 10) == 20  # wide characters: an em each


def test_the_map_is_an_image_with_a_title_and_its_words_as_text(silicon):
    points = [MapPoint("LX-2 contact", 1e19 * CM3, 300.0, "info")]
    root = ET.fromstring(map_svg(silicon, points, title="Si: a test map", ident="m-7"))
    assert root.get("role") == "img" and root.get("aria-labelledby") == "m-7-title"
    title = root.find(f"{SVG}title")
    assert title.get("id") == "m-7-title" and title.text == "Si: a test map"
    words = {t.text for t in root.iter(f"{SVG}text")}
    assert {"extrinsic", "temperature (K)", "P donor density (cm⁻³)", "10¹⁶"} <= words
    assert "1  LX-2 contact (info)" in words
    (lines,) = [g for g in root.findall(f"{SVG}g") if g.get("fill") == "none"]
    assert len(lines) >= 2
    for path in lines:
        assert path.find(f"{SVG}title").text  # every boundary line is named


RENDER = """
import sys
from checker.engine.run import check_paths
from checker.report.html_report import render_html
text = render_html(check_paths(sys.argv[1:]), 1)
print(__import__("hashlib").sha256(text.encode()).hexdigest())
print("matplotlib" in sys.modules)
"""


def test_the_html_report_draws_the_same_bytes_without_matplotlib():
    runs = [
        subprocess.run(
            [sys.executable, "-c", RENDER, *FILES],
            cwd=ROOT,
            capture_output=True,
            text=True,
            check=True,
            env={**os.environ, "PYTHONHASHSEED": seed},
        ).stdout.split()
        for seed in ("1", "2")
    ]
    assert runs[0] == runs[1]  # same input, same bytes, whatever the hash seed
    assert runs[0][1] == "False"


MEASURE = """<script>
const boxes = [];
for (const t of document.querySelectorAll("text.number, text.region-name, text.key")) {
  const r = t.getBoundingClientRect();
  boxes.push([t.closest("svg").parentNode.id, t.getAttribute("class"), t.textContent,
              r.left, r.top, r.right, r.bottom]);
}
document.getElementById("boxes").textContent = JSON.stringify(boxes);
</script>"""


def test_a_browser_draws_the_labels_apart(tmp_path):
    """Chromium lays the report out with its own fonts; in each map the boxes it gives
    the numbers and region names do not overlap, nor do those of the list's entries."""
    browser = next(
        (shutil.which(n) for n in ("chromium", "chromium-browser") if shutil.which(n)), None
    )
    if browser is None:
        pytest.skip("no Chromium here: .ci/run installs Debian's chromium package")
    from checker.engine.run import check_paths
    from checker.report.html_report import render_html

    text = render_html(check_paths(FILES), 1)
    page = tmp_path / "measure.html"
    page.write_text(
        text.replace("</body>", '<pre id="boxes"></pre>' + MEASURE + "</body>"), encoding="utf-8"
    )
    flags = ["--headless", "--no-sandbox", "--disable-gpu", "--window-size=1200,1600"]
    dom = subprocess.run(
        [browser, *flags, "--dump-dom", page.as_uri()], capture_output=True, text=True, timeout=120
    ).stdout
    found = re.search(r'<pre id="boxes">(.*?)</pre>', dom, flags=re.S)
    assert found and found.group(1), "the page was not measured"
    boxes = json.loads(html.unescape(found.group(1)))
    assert len({b[0] for b in boxes}) >= 4
    # per map: the numbers and region names apart, and the list's entries apart
    for (_, css), group in itertools.groupby(sorted(boxes), key=lambda b: (b[0], b[1] == "key")):
        rects = [tuple(b[3:]) for b in group]
        # a pixel's rounding of slack: boxes may touch, not cover
        shrunk = [(a + 0.5, b + 0.5, c - 0.5, d - 0.5) for a, b, c, d in rects]
        assert not any(_overlap(a, b) for a, b in itertools.combinations(shrunk, 2)), css
