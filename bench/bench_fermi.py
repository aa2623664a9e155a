"""Cost of fermi_dirac per element, as a ratio to np.exp on the same array in the same run.

Target (issue 2): <= 25x np.exp.  Prints a table; asserts nothing.  The two
are timed alternately, so machine noise hits both; the table gives the ratio
of the best times and the median of the per-round ratios.
Usage: python bench/bench_fermi.py [--sizes 1e6 1e7] [--repeat 15]
"""

import argparse
import time

import numpy as np

from checker import fermi_dirac

ORDERS = [-1.5, -1, -0.5, 0, 0.5, 1, 1.5, 2, 2.5, 3, 3.5]


def timed(fn):
    start = time.perf_counter()
    fn()
    return time.perf_counter() - start


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--sizes", nargs="+", type=float, default=[1e6, 1e7])
    parser.add_argument("--repeat", type=int, default=15)
    args = parser.parse_args()
    rng = np.random.default_rng(7)
    print("eta uniform in [-20, 40] (every approximation region is used)")
    print(
        f"{'points':>9} {'order':>6} {'F ns/elem':>10} {'exp ns/elem':>12} "
        f"{'ratio(best)':>12} {'ratio(median)':>14}"
    )
    for size in args.sizes:
        n = int(size)
        eta = rng.uniform(-20.0, 40.0, n)
        repeat = args.repeat if n <= 1_000_000 else max(3, args.repeat // 3)
        for j in ORDERS:
            fermi_dirac(j, eta[:1000])  # warm the tables
            t_fd, t_exp = [], []
            for _ in range(repeat):
                t_fd.append(timed(lambda: fermi_dirac(j, eta)))
                t_exp.append(timed(lambda: np.exp(eta)))
            ratios = np.array(t_fd) / np.array(t_exp)
            print(
                f"{n:>9d} {j:>6} {min(t_fd) / n * 1e9:>10.1f} {min(t_exp) / n * 1e9:>12.2f} "
                f"{min(t_fd) / min(t_exp):>12.1f} {np.median(ratios):>14.1f}"
            )


if __name__ == "__main__":
    main()
