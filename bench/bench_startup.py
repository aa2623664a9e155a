"""Reading, start-up and report cost of the installed `regimecheck`, as ratios measured
in the same run (interleaved rounds, bench/interleaved.py).

Anchors and targets (issue 16):
- cold `check` of one example (no formulas) / `python -c "import numpy, yaml"` <= 1.3
- `check` of 1,000 calculations in one file / the same import floor           <= 4
- a walk of 1,000 one-calculation files / the 1,000 in one file (per calculation) <= 1.2
- `check examples/ --format html` / the console report of the same files       <= 2
- the cold check with an empty user cache (first run after an install) / the floor: shown

The rules, built-in materials and formula matches are kept in the user cache after the
first run (checker/user_cache.py); every row but the last runs with it warm (a cache folder
of the bench's own: another version's run would replace the formula matches kept in the
user's).  The package's bytecode is written first, as pip writes it at install.

Every run of the command must exit 0 or 1 (bench/installed_command.py), else the bench
stops.  Prints a table of median per-round ratios with their spread, and the ratio of the
best times; asserts nothing.
Usage: python bench/bench_startup.py [--rounds 7] [--calculations 1000]
"""

from __future__ import annotations

import argparse
import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from bench_check import (  # noqa: E402
    FLOOR_NAME,
    ONE,
    ROOT,
    command,
    compile_package,
    floor,
    write_inputs,
)
from interleaved import interleaved, ratios  # noqa: E402

EXAMPLES = ROOT / "examples"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--rounds", type=int, default=7)
    parser.add_argument("--calculations", type=int, default=1000)
    args = parser.parse_args()
    compile_package()
    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "report.html"
        many, files = write_inputs(Path(tmp), args.calculations)
        cases = {
            FLOOR_NAME: floor(),
            f"check {ONE.name}": command("check", ONE),
            f"check {args.calculations} in one file": command("check", many),
            f"check a walk of {args.calculations} files": command("check", files),
            "check examples/ (console)": command("check", EXAMPLES),
            "check examples/ --format html": command(
                "check", EXAMPLES, "--format", "html", "--output", out
            ),
            f"check {ONE.name}, empty cache": command("check", ONE, cold=True),
        }
        timings = interleaved(cases, args.rounds)
    names = list(cases)
    to_floor = ratios(timings, names[0])
    rows = [
        (names[1], to_floor[names[1]], names[0], "1.3"),
        (names[2], to_floor[names[2]], names[0], "4"),
        (names[3], ratios(timings, names[2])[names[3]], names[2], "1.2"),
        (names[5], ratios(timings, names[4])[names[5]], names[4], "2"),
        (names[6], to_floor[names[6]], names[0], "-"),
    ]
    # 'best÷best': the quickest run of each, divided; beside the median of the per-round
    # ratios it shows how far other load on the machine moved the ratio (the floor, an
    # import, slows more under load than a check does)
    print(
        f"{'case':<36} {'best s':>7} {'ratio':>6} {'spread':>11} {'best÷best':>9}  "
        f"{'to':<30} {'target':>6}"
    )
    for name, (median, low, high), anchor, target in rows:
        best = timings[name].best
        spread = f"{low:.2f}-{high:.2f}"
        of_best = best / timings[anchor].best
        print(
            f"{name:<36} {best:7.3f} {median:6.2f} {spread:>11} {of_best:9.2f}  "
            f"{anchor:<30} {target:>6}"
        )
    print(f"{names[0]:<36} {timings[names[0]].best:7.3f}  (the floor)")
    print(f"{names[4]:<36} {timings[names[4]].best:7.3f}  (console report)")


if __name__ == "__main__":
    main()
