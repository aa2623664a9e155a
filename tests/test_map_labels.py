"""What the regime map shows of its points and regions, read back from the drawn
matplotlib artists and the renderer's bounding boxes (the geometry the reader sees):
coincident calculations share one marker in the colour of the worst finding, drawn
on top; every marker is numbered and no number covers another, a marker or a region
name; region names do not cover each other and sit inside their region."""

import itertools

import numpy as np
import pytest
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.colors import to_hex

from checker import load_material
from checker.engine.regime.regime_map import MapPoint, regime_grid
from checker.physics.carriers import REGIMES
from checker.report.map_parts import KEY_MOST, SEVERITY_COLOURS
from checker.report.plots import KEY_TAG, MARKER_TAG, NUMBER_TAG, REGION_TAG, draw_map

CM3 = 1e6  # cm^-3 in m^-3
# three calculations at one point (worst: error), two elsewhere (invented devices)
COINCIDENT = [
    MapPoint("LX-1 resistor, nominal", 1e16 * CM3, 300.0, None),
    MapPoint("LX-1 resistor, hot", 1e16 * CM3, 300.0, "error"),
    MapPoint("LX-1 resistor, cold", 1e16 * CM3, 300.0, "warning"),
    MapPoint("LX-2 contact", 1e19 * CM3, 300.0, "info"),
    MapPoint("LX-3 well", 1e15 * CM3, 400.0, "warning"),
]


def crowded_points(count: int = 40) -> list[MapPoint]:
    """``count`` invented dies scattered over one decade of doping near 300 K."""
    rng = np.random.default_rng(7)
    return [
        MapPoint(
            f"LX-{i} die {i}",
            10 ** rng.uniform(15.5, 16.5) * CM3,
            float(rng.uniform(280, 330)),
            ("warning", None, "error")[i % 3],
        )
        for i in range(count)
    ]


@pytest.fixture(scope="module")
def silicon():
    return regime_grid(load_material("Si"), "P", size=(60, 60))


def _drawn(fig):
    """(figure, axes, renderer) after a full draw, as the file will show it."""
    canvas = FigureCanvasAgg(fig)
    canvas.draw()
    return fig.axes[0], canvas.get_renderer()


def _tagged(artists, tag):
    return [a for a in artists if str(a.get_label()).startswith(tag)]


def _boxes(texts, renderer):
    return [t.get_window_extent(renderer) for t in texts]


def _apart(boxes):
    return all(not a.overlaps(b) for a, b in itertools.combinations(boxes, 2))


def test_coincident_points_share_one_marker_in_the_worst_colour(silicon):
    here = COINCIDENT
    ax, renderer = _drawn(draw_map(silicon, here))
    markers = _tagged(ax.lines, MARKER_TAG)
    assert len(markers) == 3  # one per distinct point
    by_number = {m.get_label().removeprefix(MARKER_TAG): m for m in markers}
    assert to_hex(by_number["1"].get_markerfacecolor()) == SEVERITY_COLOURS["error"]
    assert to_hex(by_number["2"].get_markerfacecolor()) == SEVERITY_COLOURS["info"]
    # worst last and on top: drawing order and z-order both rise with severity
    ranks = {None: 0, "info": 1, "warning": 2, "error": 3}
    colours = {v: k for k, v in SEVERITY_COLOURS.items()}
    drawn = [ranks[colours[to_hex(m.get_markerfacecolor())]] for m in markers]
    assert drawn == sorted(drawn)
    assert [m.get_zorder() for m in markers] == sorted(m.get_zorder() for m in markers)
    numbers = {t.get_text() for t in _tagged(ax.texts, NUMBER_TAG)}
    assert numbers == {"1 (×3)", "2", "3"}
    # the list under the map: every calculation once, by its marker's number
    key = [t.get_text() for t in _tagged(ax.figure.texts, KEY_TAG)]
    assert len(key) == len(here)
    assert sum(line.startswith("1  LX-1 resistor") for line in key) == 3
    assert "1  LX-1 resistor, hot (error)" in key


def test_numbers_of_forty_crowded_points_cover_nothing(silicon):
    crowd = crowded_points()
    ax, renderer = _drawn(draw_map(silicon, crowd))
    numbers = _boxes(_tagged(ax.texts, NUMBER_TAG), renderer)
    regions = _boxes(_tagged(ax.texts, REGION_TAG), renderer)
    assert len(numbers) >= 10 and _apart(numbers)
    assert not any(n.overlaps(r) for n in numbers for r in regions)
    frame = ax.get_window_extent(renderer)
    assert all(frame.contains(b.x0, b.y0) and frame.contains(b.x1, b.y1) for b in numbers)
    # no number lies on a marker's centre (the markers stay visible)
    centres = [ax.transData.transform(m.get_xydata()[0]) for m in _tagged(ax.lines, MARKER_TAG)]
    assert not any(b.contains(*c) for b in numbers for c in centres)
    key = _tagged(ax.figure.texts, KEY_TAG)
    assert len(key) == 40 and _apart(_boxes(key, renderer))


def test_a_long_list_is_cut_and_counted(silicon):
    many = [MapPoint(f"LX-{i}", 1e15 * CM3 * (1 + i), 300.0, None) for i in range(KEY_MOST + 5)]
    fig = draw_map(silicon, many)
    key = [t.get_text() for t in _tagged(fig.texts, KEY_TAG)]
    assert len(key) == KEY_MOST + 1 and key[-1] == "… and 5 more calculations"


@pytest.mark.parametrize(
    "material, species", [("Si", "P"), ("Si", "B"), ("GaAs", "Si"), ("GaN", "Mg"), ("Ge", "Sb")]
)
def test_region_names_are_apart_and_inside_their_regions(material, species):
    grid = regime_grid(load_material(material), species, size=(90, 90))
    ax, renderer = _drawn(draw_map(grid, size=(7.4, 4.4)))
    names = _tagged(ax.texts, REGION_TAG)
    assert len(names) >= 2
    assert _apart(_boxes(names, renderer))
    for text in names:
        x, y = text.get_position()
        i = int(np.argmin(abs(np.log(grid.doping * 1e-6) - np.log(x))))
        j = int(np.argmin(abs(grid.T - y)))
        assert REGIMES[grid.codes[j, i]] == text.get_label().removeprefix(REGION_TAG)
