"""Regime map timings: a 200 x 200 map solved and drawn (target <= 3 s), in-process and as
the installed `regimecheck map` command; prints a table; stops with exit code 1 where the
command fails.  ``--resolution`` sets another grid size (the target is for 200)."""

import argparse
import tempfile
import time
from pathlib import Path

import installed_command


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--resolution", type=int, default=200, help="points per axis")
    size = parser.parse_args().resolution
    target = "3" if size == 200 else ""

    from checker import load_material
    from checker.engine.regime.regime_map import regime_grid
    from checker.report.plots import draw_map, render

    print(f"{'what':<44} {'seconds':>8} {'target':>7}")
    material = load_material("Si")
    start = time.perf_counter()
    grid = regime_grid(material, "P", size=(size, size))
    solved = time.perf_counter()
    svg = render(draw_map(grid), "svg")
    drawn = time.perf_counter()
    render(draw_map(grid), "png")
    png = time.perf_counter()
    print(f"{f'solve {size} x {size} grid':<44} {solved - start:8.2f}")
    print(f"{'draw it as SVG (first figure, imports)':<44} {drawn - solved:8.2f}")
    print(f"{'draw it as PNG':<44} {png - drawn:8.2f}")
    print(f"{'grid + SVG':<44} {drawn - start:8.2f} {target:>7}")
    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "map.svg"
        t = time.perf_counter()
        installed_command.run(
            ["map", "--material", "Si", "--dopant", "P", "--resolution", size, "--output", out]
        )
        print(f"{'regimecheck map (whole process)':<44} {time.perf_counter() - t:8.2f} {target:>7}")
    print(f"SVG size: {len(svg) / 1024:.0f} KiB")


if __name__ == "__main__":
    main()
