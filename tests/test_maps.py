"""Regime map, eta(T) curve and the HTML review report (issue: regime map and HTML)."""

import io
import shutil
import subprocess
import sys
import xml.etree.ElementTree as ET

import numpy as np
import pytest

from checker import load_material, solve_equilibrium
from checker.engine.regime.regime_map import regime_grid
from checker.engine.run import check_paths
from checker.physics.carriers import REGIMES, regime_label
from checker.report import DISCLAIMER
from checker.report.html_report import render_html
from checker.report.map_parts import COLOURS
from checker.report.plots import draw_map

XHTML = "{http://www.w3.org/1999/xhtml}"


@pytest.fixture(scope="module")
def silicon_grid():
    return regime_grid(load_material("Si"), "P", size=(48, 36))


def test_grid_regions_agree_with_single_point_solves(silicon_grid):
    """Each grid cell's regime is the solver's regime for that point, solved alone."""
    rng = np.random.default_rng(3)
    rows = rng.integers(0, silicon_grid.T.size, 40)
    cols = rng.integers(0, silicon_grid.doping.size, 40)
    T = silicon_grid.T[rows]
    state = solve_equilibrium("Si", T, {"P": silicon_grid.doping[cols]})
    expected = regime_label(state)
    drawn = [REGIMES[c] for c in silicon_grid.codes[rows, cols]]
    assert list(expected) == drawn
    assert set(drawn) >= {"extrinsic", "incomplete ionization"}


def test_drawn_colour_is_the_regime_colour(silicon_grid):
    """Sample the rendered map at cells whose neighbours share their regime."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.colors import to_rgb

    fig = draw_map(silicon_grid)
    canvas = FigureCanvasAgg(fig)
    canvas.draw()
    pixels = np.asarray(canvas.buffer_rgba())[..., :3] / 255.0
    height = pixels.shape[0]
    ax = fig.axes[0]
    codes = silicon_grid.codes
    checked = 0
    for j in range(2, codes.shape[0] - 2, 5):
        for i in range(2, codes.shape[1] - 2, 5):
            block = codes[j - 2 : j + 3, i - 2 : i + 3]
            if not np.all(block == codes[j, i]):
                continue
            x, y = ax.transData.transform((silicon_grid.doping[i] * 1e-6, silicon_grid.T[j]))
            colour = pixels[int(round(height - y)), int(round(x))]
            # region labels are drawn on top in a few cells: allow dark text pixels to miss
            if np.allclose(colour, to_rgb(COLOURS[REGIMES[codes[j, i]]]), atol=0.02):
                checked += 1
            else:
                assert colour.mean() < 0.5, (REGIMES[codes[j, i]], colour)
    assert checked >= 20


def test_map_and_curve_commands(tmp_path):
    out = tmp_path / "map.svg"
    done = subprocess.run(
        [
            sys.executable,
            "-m",
            "checker.cli",
            "map",
            "examples/lm6_bias_memo.md",
            "--material",
            "Si",
            "--dopant",
            "P",
            "--resolution",
            "40",
            "--output",
            str(out),
        ],
        capture_output=True,
        text=True,
    )
    assert done.returncode == 0, done.stderr
    svg = ET.fromstring(out.read_text(encoding="utf-8"))
    assert svg.tag.endswith("svg")
    curve = tmp_path / "eta.png"
    done = subprocess.run(
        [
            sys.executable,
            "-m",
            "checker.cli",
            "curve",
            "--material",
            "GaAs",
            "--doping",
            "Si=1e18cm-3",
            "--output",
            str(curve),
        ],
        capture_output=True,
        text=True,
    )
    assert done.returncode == 0 and curve.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    bad = subprocess.run(
        [
            sys.executable,
            "-m",
            "checker.cli",
            "curve",
            "--material",
            "GaAs",
            "--doping",
            "Si=1e18cm-3",
            "--output",
            str(tmp_path / "x.gif"),
        ],
        capture_output=True,
        text=True,
    )
    assert bad.returncode == 2 and ".png or .svg" in bad.stderr


FILES = [
    "examples/lk7_contact_cap.yaml",
    "examples/lm6_bias_memo.md",
    "examples/lw3_corner_sweep.yaml",
    "examples/lt9_wafer_lots.csv",
]


@pytest.fixture(scope="module")
def html_report():
    result = check_paths(FILES)
    return result, render_html(result, 1)


def test_html_is_well_formed_and_complete(html_report):
    result, text = html_report
    assert text.startswith("<!DOCTYPE html>")
    root = ET.fromstring(text[text.index("<html") :])  # parses as XML too
    assert root.find(f"{XHTML}head/{XHTML}title").text == "regimecheck review"
    assert "<script" not in text.lower()  # nothing to run
    for reference in ('src="http', 'href="http', "url(http", "@import"):
        assert reference not in text  # nothing to fetch
    body = "".join(root.itertext())
    for report in result.reports:
        for f in report.findings:
            assert f.rule in body and f.message in body
    sections = root.findall(f".//{XHTML}section")
    assert len(sections) == len(result.reports)
    maths = root.findall(".//{http://www.w3.org/1998/Math/MathML}math")
    assert len(maths) == sum(len(r.formulas) for r in result.reports)
    assert len(root.findall(".//{http://www.w3.org/2000/svg}svg")) == len(result.reports)
    assert text.count(DISCLAIMER) == 1


def _browser():
    for name in ("chromium", "chromium-browser", "google-chrome"):
        if shutil.which(name):
            return shutil.which(name)
    return None


def test_headless_browser_renders_the_report(tmp_path, html_report):
    browser = _browser()
    if browser is None:
        pytest.skip(
            "no Chromium here: .ci/run installs Debian's chromium package, and it "
            "could not be installed on this machine"
        )
    page = tmp_path / "review.html"
    page.write_text(html_report[1], encoding="utf-8")
    flags = ["--headless", "--no-sandbox", "--disable-gpu", "--hide-scrollbars"]
    shot = tmp_path / "shot.png"
    subprocess.run(
        [browser, *flags, f"--screenshot={shot}", "--window-size=1200,1600", page.as_uri()],
        capture_output=True,
        timeout=120,
    )
    dom = subprocess.run(
        [browser, *flags, "--dump-dom", page.as_uri()], capture_output=True, text=True, timeout=120
    ).stdout
    assert "<title>regimecheck review</title>" in dom
    from matplotlib.image import imread

    image = imread(io.BytesIO(shot.read_bytes()), format="png")
    assert image.shape[0] > 500 and image[..., :3].std() > 0.05  # not blank


def test_large_runs_share_one_map_per_material_and_dopant(tmp_path):
    docs = [
        f"name: point {i}\nmaterial: Si\ntemperature: {250 + i} K\n"
        f"doping:\n  donors: {{P: {10 ** (14 + i / 10):.3e} cm-3}}\n"
        for i in range(45)
    ]
    path = tmp_path / "many.yaml"
    path.write_text("---\n".join(docs))
    result = check_paths([str(path)])
    text = render_html(result, 0)
    root = ET.fromstring(text[text.index("<html") :])
    assert len(root.findall(".//{http://www.w3.org/2000/svg}svg")) == 1
    links = [a for a in root.iter(f"{XHTML}a") if a.get("href") == "#map-0"]
    assert len(links) == 44
