"""A sweep checked by the installed command, per grid point, against the solve of the same grid.

A generated silicon grid (temperature x donor density, the textbook shortcuts declared)
is checked by `regimecheck check` (bench/installed_command.py: the console script beside
this interpreter; any exit code other than 0 or 1 stops the bench).  Timed in interleaved
rounds (bench/interleaved.py) beside the anchor, ``solve_equilibrium`` of the very same
grid points in this process (all worker threads, as the sweep solves); a one-point check
gives the command's start-up, and the row "sweep less start-up" (each round's sweep less
its start-up) the grid's own cost.  The headline
is the median per-round ratio to the solve, with its spread.  Last, the peak resident
memory of the command on a 2000 x 2000 grid (4e6 points), measured on that child alone
(os.wait4).  Prints tables; asserts nothing.
"""

import argparse
import os
import subprocess
import sys
import tempfile
from pathlib import Path

import installed_command
import interleaved
import numpy as np
from installed_command import CHECKED

from checker import load_material, solve_equilibrium

T_RANGE = (200.0, 500.0)  # K, as in GRID
N_RANGE = (1e14, 1e20)  # cm^-3, as in GRID (log spacing, the default of a density axis)
GRID = """name: bench sweep {n} x {n}
material: Si
temperature: {{from: 200 K, to: 500 K, steps: {n}}}
doping:
  donors: {{P: {{from: 1e14 cm-3, to: 1e20 cm-3, steps: {n}}}}}
assumes: [non-degenerate, full-ionization, einstein-relation, single-carrier, extrinsic]
formulas:
  - D_n = mu_n*k*T/q
"""
POINT = """name: bench one point
material: Si
temperature: 300 K
doping: {donors: {P: 1e16 cm-3}}
assumes: [non-degenerate, full-ionization, einstein-relation, single-carrier, extrinsic]
"""


def grid_file(folder, n):
    path = Path(folder) / f"grid{n}.yaml"
    path.write_text(GRID.format(n=n), encoding="utf-8")
    return path


def grid_points(n):
    """The grid's points as the sweep builds them (temperature slowest; log doping axis)."""
    T = np.linspace(*T_RANGE, n)
    nd = np.geomspace(*N_RANGE, n) * 1e6
    return np.repeat(T, n), np.tile(nd, n)


def peak_memory_mb(path):
    """Peak resident memory (MB) of one `regimecheck check` of ``path``, that child alone."""
    proc = subprocess.Popen(
        [installed_command.command(), "check", str(path)],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
    )
    _, status, usage = os.wait4(proc.pid, 0)
    code = os.waitstatus_to_exitcode(status)
    if code not in CHECKED:
        error = proc.stderr.read().decode(errors="replace").strip().splitlines()[-5:]
        sys.exit(f"bench: `regimecheck check {path}` exited with {code}:\n" + "\n".join(error))
    proc.stderr.close()
    return usage.ru_maxrss / 1024  # Linux: kB


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--size", type=int, default=1000, help="grid points per axis")
    parser.add_argument("--rounds", type=int, default=3)
    parser.add_argument("--memory-size", type=int, default=2000, help="0: skip the memory row")
    args = parser.parse_args()
    n = args.size
    points = n * n
    si = load_material("Si")
    T, nd = grid_points(n)
    with tempfile.TemporaryDirectory() as tmp:
        path, one = grid_file(tmp, n), Path(tmp) / "point.yaml"
        one.write_text(POINT, encoding="utf-8")
        cases = {
            "solve of the grid": lambda: solve_equilibrium(si, T, {"P": nd}),
            "check, one point (start-up)": lambda: installed_command.run(["check", one], CHECKED),
            f"check, {n} x {n} sweep": lambda: installed_command.run(["check", path], CHECKED),
        }
        timings = interleaved.interleaved(cases, rounds=args.rounds)
        # the grid's own cost: each round's sweep less that round's start-up
        solve, start, sweep = (timings[name] for name in cases)
        net = tuple(s - u for s, u in zip(sweep.seconds, start.seconds, strict=True))
        timings["sweep less start-up"] = interleaved.Timing("sweep less start-up", net)
        print(f"sweep of {points:.0e} points, {args.rounds} interleaved rounds")
        print(interleaved.ratio_table(timings, solve.name, per=points, unit="us/point"))
        if args.memory_size:
            m = args.memory_size
            peak = peak_memory_mb(grid_file(tmp, m))
            print(f"peak resident memory, check of a {m} x {m} sweep: {peak:.0f} MB")


if __name__ == "__main__":
    main()
