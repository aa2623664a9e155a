"""Cost of fermi_dirac per element, as a ratio to np.exp on the same array in the same run.

Target (issue 2): <= 25x np.exp.  Prints a table; asserts nothing.
Usage: python bench/bench_fermi.py [--sizes 1e6 1e7]
"""
import argparse
import time

import numpy as np

from checker import fermi_dirac

ORDERS = [-1.5, -1, -0.5, 0, 0.5, 1, 1.5, 2, 2.5, 3, 3.5]


def best_of(fn, repeat):
    best = float("inf")
    for _ in range(repeat):
        start = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - start)
    return best


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--sizes", nargs="+", type=float, default=[1e6, 1e7])
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()
    rng = np.random.default_rng(7)
    print("eta uniform in [-20, 40] (covers every approximation region)")
    print(f"{'points':>9} {'order':>6} {'ns/elem':>9} {'exp ns/elem':>12} {'ratio':>7}")
    for size in args.sizes:
        n = int(size)
        eta = rng.uniform(-20.0, 40.0, n)
        repeat = args.repeat if n <= 1_000_000 else max(2, args.repeat // 2)
        for j in ORDERS:
            fermi_dirac(j, eta[:1000])  # warm the tables
            t_fd = best_of(lambda: fermi_dirac(j, eta), repeat)
            t_exp = best_of(lambda: np.exp(eta), repeat)
            print(f"{n:>9d} {j:>6} {t_fd / n * 1e9:>9.1f} {t_exp / n * 1e9:>12.2f} "
                  f"{t_fd / t_exp:>7.1f}")


if __name__ == "__main__":
    main()
