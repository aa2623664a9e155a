"""A sweep of 1,000 temperatures x 1,000 dopings checked in one run (issue target <= 5 s).

Whole-process wall time and peak memory of `regimecheck check` on a generated
1,000 x 1,000 silicon grid with the textbook shortcuts declared, beside a 100 x 100
grid; prints a table; stops with exit code 1 where the installed command exits with a
code other than 0 or 1 (an error is not timed).
"""

import argparse
import resource
import statistics
import tempfile
import time
from pathlib import Path

import installed_command
from installed_command import CHECKED

GRID = """name: bench sweep {n} x {n}
material: Si
temperature: {{from: 200 K, to: 500 K, steps: {n}}}
doping:
  donors: {{P: {{from: 1e14 cm-3, to: 1e20 cm-3, steps: {n}}}}}
assumes: [non-degenerate, full-ionization, einstein-relation, single-carrier, extrinsic]
formulas:
  - D_n = mu_n*k*T/q
"""


def run(path):
    start = time.perf_counter()
    installed_command.run(["check", path], CHECKED)
    return time.perf_counter() - start


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--runs", type=int, default=3)
    args = parser.parse_args()
    print(f"{'grid':<20} {'points':>10} {'median s':>9} {'best s':>8} {'peak MB':>8} {'target':>7}")
    with tempfile.TemporaryDirectory() as tmp:
        for n, target in ((100, ""), (1000, "5")):
            path = Path(tmp) / f"grid{n}.yaml"
            path.write_text(GRID.format(n=n), encoding="utf-8")
            before = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
            times = [run(path) for _ in range(args.runs)]
            peak = max(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss, before) / 1024
            print(
                f"{f'{n} x {n}':<20} {n * n:>10} {statistics.median(times):9.2f} "
                f"{min(times):8.2f} {peak:8.0f} {target:>7}"
            )


if __name__ == "__main__":
    main()
