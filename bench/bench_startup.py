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
``--split``: instead, where the time of one `check` of the many-calculation file goes, in
this process (warm: imports and the user cache done), best of the rounds per phase.
Usage: python bench/bench_startup.py [--rounds 7] [--calculations 1000] [--split]
"""

from __future__ import annotations

import argparse
import contextlib
import functools
import io
import os
import sys
import tempfile
import time
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
    parser.add_argument("--split", action="store_true", help="the phases of one check")
    args = parser.parse_args()
    if args.split:
        split(args.rounds, args.calculations)
        return
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


# (module, class or None, attribute, phase): each phase timed where the command calls it;
# "check_points" holds the solve and the rules, its rest is what is left after them
_PHASES = (
    ("checker.engine.run", None, "read_input", "read"),
    ("checker.engine.regime.state_values", None, "solve_all", "solve (state_values.solve_all)"),
    ("checker.engine.regime.points", None, "evaluate", "rules (evaluate)"),
    ("checker.engine.formulas.check", None, "analyse_all", "stated formulas"),
    ("checker.engine.formulas.check", None, "evaluate_all", "stated formulas"),
    ("checker.engine.regime.trade_summary", "PointSummaries", "__init__", "summaries"),
    ("checker.engine.regime.trade_summary", "PointSummaries", "__getitem__", "summaries"),
    ("checker.engine.regime.points", None, "one_finding_per_stated_number", "one finding a number"),
    ("checker.engine.regime.points", None, "corrected_set", "corrected set"),
    ("checker.engine.run", None, "check_points", "check_points"),
    ("checker.engine.run", None, "apply_waivers", "waivers"),
    ("checker.report.check_report", None, "render_console", "console report"),
)


def split(rounds: int, count: int) -> None:
    """Print the best time of each phase of `check` on ``count`` calculations, in-process."""
    import importlib

    with tempfile.TemporaryDirectory() as tmp:
        os.environ["REGIMECHECK_CACHE"] = str(Path(tmp) / "cache")
        many, _ = write_inputs(Path(tmp), count)
        from checker import cli

        spent: dict[str, float] = {}

        def timed(function, phase):
            @functools.wraps(function)
            def wrapper(*args, **kwargs):
                start = time.perf_counter()
                try:
                    return function(*args, **kwargs)
                finally:
                    spent[phase] = spent.get(phase, 0.0) + time.perf_counter() - start

            return wrapper

        for module, owner, name, phase in _PHASES:
            target = importlib.import_module(module)
            target = getattr(target, owner) if owner else target
            setattr(target, name, timed(getattr(target, name), phase))
        best: dict[str, float] = {}
        for _ in range(rounds + 1):  # the first fills the cache
            spent.clear()
            start = time.perf_counter()
            with contextlib.redirect_stdout(io.StringIO()), contextlib.suppress(SystemExit):
                cli.main(["check", str(many)])
            spent["whole check"] = time.perf_counter() - start
            for phase, seconds in spent.items():
                best[phase] = min(best.get(phase, seconds), seconds)
    inner = ("solve (state_values.solve_all)", "rules (evaluate)")
    rest = best["check_points"] - sum(best[p] for p in inner)
    print(f"{'phase of check, ' + str(count) + ' calculations':<44} {'best ms':>8}")
    for phase in (*dict.fromkeys(p for *_, p in _PHASES), "whole check"):
        print(f"{phase:<44} {best[phase] * 1e3:8.1f}")
    print(f"{'check_points less solve and rules':<44} {rest * 1e3:8.1f}")


if __name__ == "__main__":
    main()
