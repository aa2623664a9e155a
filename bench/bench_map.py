"""Regime map cost, as ratios measured in the same interleaved rounds
(bench/interleaved.py): the installed `regimecheck map` command (a 200 x 200 map of Si:P
written as SVG) against `python -c "import numpy, yaml"`, in-process the drawing of
the solved grid (matplotlib SVG and PNG, the HTML report's own SVG) against the solve
of that grid (the HTML report against the console report is a row of
bench/bench_startup.py).  ``--resolution`` sets the points per axis.  Prints tables;
stops with exit code 1 where the command fails.
Usage: python bench/bench_map.py [--resolution 200] [--rounds 5]
"""

import argparse
import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
import installed_command  # noqa: E402
from bench_check import FLOOR_NAME, floor  # noqa: E402
from interleaved import interleaved, ratio_table  # noqa: E402


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--resolution", type=int, default=200, help="points per axis")
    parser.add_argument("--rounds", type=int, default=5)
    args = parser.parse_args()
    _maps(args)


def _maps(args):
    size = args.resolution

    from checker import load_material
    from checker.engine.regime.regime_map import regime_grid
    from checker.report.map_svg import map_svg
    from checker.report.plots import draw_map, render

    material = load_material("Si")
    grid = regime_grid(material, "P", size=(size, size))
    solve = f"solve {size} x {size} grid"
    drawing = {
        solve: lambda: regime_grid(material, "P", size=(size, size)),
        "draw it as SVG": lambda: render(draw_map(grid), "svg"),
        "draw it as PNG": lambda: render(draw_map(grid), "png"),
        "write it as inline SVG (HTML report)": lambda: map_svg(grid),
    }
    print(ratio_table(interleaved(drawing, args.rounds), solve, unit="us/map"))
    print()
    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "map.svg"
        command = ["map", "--material", "Si", "--dopant", "P", "--resolution", size]
        whole = {
            FLOOR_NAME: floor(),
            "regimecheck map (whole process)": lambda: installed_command.run(
                [*command, "--output", out]
            ),
        }
        print(ratio_table(interleaved(whole, args.rounds), FLOOR_NAME, unit="us/run"))
        print(f"SVG size: {out.stat().st_size / 1024:.0f} KiB")


if __name__ == "__main__":
    main()
