"""Regime map timings: a 200 x 200 map solved and drawn (target <= 3 s), in-process and as
the `regimecheck map` command; prints a table, asserts nothing."""

import subprocess
import sys
import tempfile
import time
from pathlib import Path


def main():
    from checker import load_material
    from checker.engine.regime.regime_map import regime_grid
    from checker.report.plots import draw_map, render

    print(f"{'what':<44} {'seconds':>8} {'target':>7}")
    material = load_material("Si")
    start = time.perf_counter()
    grid = regime_grid(material, "P", size=(200, 200))
    solved = time.perf_counter()
    svg = render(draw_map(grid), "svg")
    drawn = time.perf_counter()
    render(draw_map(grid), "png")
    png = time.perf_counter()
    print(f"{'solve 200 x 200 grid':<44} {solved - start:8.2f}")
    print(f"{'draw it as SVG (first figure, imports)':<44} {drawn - solved:8.2f}")
    print(f"{'draw it as PNG':<44} {png - drawn:8.2f}")
    print(f"{'grid + SVG':<44} {drawn - start:8.2f} {'3':>7}")
    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "map.svg"
        t = time.perf_counter()
        subprocess.run(
            [
                sys.executable,
                "-m",
                "checker",
                "map",
                "--material",
                "Si",
                "--dopant",
                "P",
                "--resolution",
                "200",
                "--output",
                str(out),
            ],
            stdout=subprocess.DEVNULL,
            stderr=subprocess.DEVNULL,
        )
        print(f"{'regimecheck map (whole process)':<44} {time.perf_counter() - t:8.2f} {'3':>7}")
    print(f"SVG size: {len(svg) / 1024:.0f} KiB")


if __name__ == "__main__":
    main()
