"""1e6 random silicon operating points solved in one call.

Target (issue 2): <= 0.6 s on the 2-core machine.  Prints a table; asserts nothing.
The last row solves InAs (Kane conduction band: the quadrature path) on points of the
same kind, for comparison with the parabolic closed-form path.
Points: T uniform in [50, 1000] K; P and B densities log-uniform in
[1e12, 1e20] cm^-3 each (so compensated, freeze-out, intrinsic and
near-degenerate points are all present).
"""

import argparse
import time

import numpy as np

from checker import load_material, solve_equilibrium
from checker.physics import equilibrium


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--points", type=float, default=1e6)
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()
    n = int(args.points)
    rng = np.random.default_rng(11)
    T = rng.uniform(50.0, 1000.0, n)
    nd = 10 ** rng.uniform(12, 20, n) * 1e6
    na = 10 ** rng.uniform(12, 20, n) * 1e6
    si = load_material("Si")
    solve_equilibrium(si, T[:1000], {"P": nd[:1000]}, {"B": na[:1000]})  # warm-up
    print(f"{'what':<44} {'median s':>9} {'best s':>8}")
    for workers in sorted({1, equilibrium.WORKERS}):
        equilibrium.WORKERS = workers
        solve_times, full_times, worst, iters = [], [], 0.0, 0
        for _ in range(args.repeat):
            start = time.perf_counter()
            state = solve_equilibrium(si, T, {"P": nd}, {"B": na})
            solve_times.append(time.perf_counter() - start)
            _ = (state.n, state.p, state.donors_ionized, state.acceptors_ionized, state.ni)
            full_times.append(time.perf_counter() - start)
            worst = max(worst, float(state.residual.max()))
            iters = max(iters, state.iterations)
        label = f"{n:.0e} points, eta solve, {workers} thread(s)"
        print(f"{label:<44} {np.median(solve_times):>9.3f} {min(solve_times):>8.3f}")
        label = f"{n:.0e} points, + n, p, N+, n_i, {workers} thread(s)"
        print(f"{label:<44} {np.median(full_times):>9.3f} {min(full_times):>8.3f}")
    print(f"max neutrality residual {worst:.1e}; max Newton iterations {iters}")
    _kane_rows(rng, n)


def _kane_rows(rng, n):
    """InAs (Kane conduction band, quadrature) on the same kind of points, 2 threads."""
    T = rng.uniform(50.0, 1000.0, n)
    nd = 10 ** rng.uniform(12, 20, n) * 1e6
    na = 10 ** rng.uniform(12, 20, n) * 1e6
    inas = load_material("InAs")
    start = time.perf_counter()
    state = solve_equilibrium(inas, T, {"S": nd}, {"Zn": na})
    took = time.perf_counter() - start
    label = f"{n:.0e} points, InAs Kane eta solve"
    print(f"{label:<44} {took:>9.3f} {took:>8.3f}  ({took / n * 1e9:.0f} ns/point)")
    print(
        f"InAs: max neutrality residual {float(state.residual.max()):.1e}; "
        f"max Newton iterations {state.iterations}"
    )


if __name__ == "__main__":
    main()
