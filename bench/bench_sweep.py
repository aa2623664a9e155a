"""A sweep checked by the installed command, per grid point, against the solve of the same grid.

A generated silicon grid (temperature x donor density, the textbook shortcuts declared)
is checked by `regimecheck check` (bench/installed_command.py: the console script beside
this interpreter; any exit code other than 0 or 1 stops the bench).  Timed in interleaved
rounds (bench/interleaved.py) beside the anchor, ``solve_equilibrium`` of the very same
grid points in this process (all worker threads, as the sweep solves); a one-point check
of the same calculation (its formula analysed, as the sweep's is) gives the command's
start-up, and the row "sweep less start-up" (each round's sweep less its start-up) the
grid's own cost.  The headline is the median per-round ratio to the solve, with its
spread.  Last, the peak resident memory of the command on a 2000 x 2000 grid (4e6
points), measured on that child alone (os.wait4), before the rounds (a child's peak
includes this process's memory at the fork).  ``--split``: where a chunk's time goes, in
this process (the grid's rules run chunk by chunk as `check` runs them, the stages timed
by wrapping the functions that do them; a stage's time includes the stages it calls,
e.g. "solve_points" the solve).
Prints tables; asserts nothing.
"""

import argparse
import collections
import os
import subprocess
import sys
import tempfile
import time
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
# the grid's calculation at one point: its start-up includes what a file costs once
# whatever its points (reading it, analysing its formula)
POINT = """name: bench one point
material: Si
temperature: 300 K
doping: {donors: {P: 1e16 cm-3}}
assumes: [non-degenerate, full-ionization, einstein-relation, single-carrier, extrinsic]
formulas:
  - D_n = mu_n*k*T/q
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


def chunk_split(path):
    """(seconds per chunk of each stage, chunks) of ruling the grid in ``path``, as
    check_sweep rules it, after one warm-up pass."""
    from checker.engine.regime import evaluate, rulebook, state_values, sweep
    from checker.engine.regime.points import check_points
    from checker.inputs.calculation_file import read_calculation_file

    (calc,) = read_calculation_file(path).calculations
    rules = rulebook.load_rules()
    grid_points = sweep.grid(calc)
    T, donors, acceptors, _ = grid_points
    (first,), _ = check_points([sweep.point(calc, T, donors, acceptors, 0)], rules)
    ruled, reads = sweep.grid_rules(calc, rules, first.embodied, grid_points, open_only=True)
    spent = collections.Counter()

    def timed(module, name, stage):
        function = getattr(module, name)

        def wrapper(*args, **kwargs):
            start = time.perf_counter()
            try:
                return function(*args, **kwargs)
            finally:
                spent[stage] += time.perf_counter() - start

        return function, wrapper

    def rule_cells(*args, **kwargs):  # a generator: timed as the list of its outcomes
        start = time.perf_counter()
        out = list(evaluate.rule_cells(*args, **kwargs))
        spent["rules"] += time.perf_counter() - start
        return out

    stages = [
        (state_values.equilibrium, "solve", "solve (each chunk's, and reference solves)"),
        (state_values.carriers, "carrier_transport", "transport (carriers)"),
        (state_values, "_band_shape_values", "band shapes"),
        (state_values.LazyValues, "__missing__", "computed on first read (in their stage)"),
        (state_values.equilibrium, "_ionized_group", "ionized dopant densities"),
        (state_values, "solve_points", "solve_points (solve, transport, band shapes)"),
        (state_values, "fill_inputs", "inputs (fill_inputs, derive_corrected)"),
        (state_values, "solve_sweep", "solve_sweep (all of the above)"),
    ]
    kept = [(module, name, timed(module, name, stage)) for module, name, stage in stages]
    sweep_globals = sweep.rule_grid.__globals__
    try:
        for module, name, (_, wrapper) in kept:
            setattr(module, name, wrapper)
        sweep_globals["solve_sweep"] = state_values.solve_sweep
        sweep_globals["rule_cells"] = rule_cells
        sweep.rule_grid(calc, ruled, first.embodied, grid_points, None, reads)  # warm-up
        spent.clear()
        start = time.perf_counter()
        sweep.rule_grid(calc, ruled, first.embodied, grid_points, None, reads)
        spent["rule_grid (a chunk in all)"] = time.perf_counter() - start
    finally:
        for module, name, (function, _) in kept:
            setattr(module, name, function)
        sweep_globals["solve_sweep"] = state_values.solve_sweep
        sweep_globals["rule_cells"] = evaluate.rule_cells
    chunks = -(-T.size // sweep.CHUNK)
    return {stage: seconds / chunks for stage, seconds in spent.items()}, chunks


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--size", type=int, default=1000, help="grid points per axis")
    parser.add_argument("--rounds", type=int, default=3)
    parser.add_argument("--memory-size", type=int, default=2000, help="0: skip the memory row")
    parser.add_argument("--split", action="store_true", help="where a chunk's time goes")
    args = parser.parse_args()
    n = args.size
    points = n * n
    si = load_material("Si")
    T, nd = grid_points(n)
    with tempfile.TemporaryDirectory() as tmp:
        path, one = grid_file(tmp, n), Path(tmp) / "point.yaml"
        one.write_text(POINT, encoding="utf-8")
        # the peak first: a child's peak resident memory (os.wait4) counts what it shared of
        # this process at the fork, which after the rounds holds the grid's solved state
        # (~190 MB with the 1e6-point anchor) and would be read as the sweep's
        peak = peak_memory_mb(grid_file(tmp, args.memory_size)) if args.memory_size else None
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
        if peak is not None:
            m = args.memory_size
            print(f"peak resident memory, check of a {m} x {m} sweep: {peak:.0f} MB")
        if args.split:
            from checker.engine.regime.sweep import CHUNK

            split, chunks = chunk_split(path)
            solve = split["solve (each chunk's, and reference solves)"]
            print(f"\nper chunk of {CHUNK} points ({chunks} chunks), ms and x the chunk's solve")
            for stage, seconds in sorted(split.items(), key=lambda item: -item[1]):
                print(f"{stage:48s} {seconds * 1e3:8.1f} {seconds / solve:8.2f}")


if __name__ == "__main__":
    main()
