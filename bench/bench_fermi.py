"""Cost of the Fermi–Dirac kernels per element, as ratios measured in the same run.

Every order of ``fermi_dirac`` and ``inverse_fermi_dirac_half`` is timed in interleaved
rounds (bench/interleaved.py) beside ``np.exp(x, out=buffer)`` on the same array, and
beside the compiled library fdint where it is importable (benches only, never a
dependency).  fdint computes the unnormalized integral (Gamma(j+1) times ours): one
multiply apart, the same cost.  Targets (issue 16): every order <= 1.0x fdint and
<= 10x np.exp(out=); the inverse <= 2x fdint's ifd1h, flat per element from 1e5 to 1e7.
eta ~ U[-40, 80]; the inverse is fed u = F_1/2(eta) of those points.
Prints tables; asserts nothing.
Rows are tagged with the thread count (``--workers 1 2``: fermi.WORKERS; fdint and
np.exp run on one thread).
Usage: python bench/bench_fermi.py [--sizes 1e5 1e6 1e7] [--rounds 7] [--orders 0.5 1]
                                   [--workers 1 2] [--no-inverse]
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from interleaved import exp_anchor, fdint, interleaved, ratios  # noqa: E402

from checker.physics import fermi  # noqa: E402
from checker.physics.fermi import fermi_dirac, inverse_fermi_dirac_half  # noqa: E402

ORDERS = [-1.5, -1, -0.5, 0, 0.5, 1, 1.5, 2, 2.5, 3, 3.5]


def fdint_kernel(module, j: float):
    """fdint's function for order j (fdNh is order N/2; fdmNh is order -N/2), or None."""
    twice = round(2 * j)
    name = f"fd{twice}h" if twice >= 0 else f"fdm{-twice}h"
    return getattr(module, name, None)


def order_rows(eta: np.ndarray, rounds: int, orders: list[float], tag: str) -> list[str]:
    lib = fdint()
    rows = []
    for j in orders:
        buffer = np.empty_like(eta)
        cases = {"exp": exp_anchor(eta), "ours": lambda j=j: fermi_dirac(j, eta)}
        theirs = fdint_kernel(lib, j) if lib is not None else None
        if theirs is not None:
            cases["fdint"] = lambda f=theirs: f(eta, buffer)
        timings = interleaved(cases, rounds)
        r = ratios(timings, "exp")
        vs = ratios(timings, "fdint")["ours"] if "fdint" in timings else None
        rows.append(
            row(f"F_{j:g}{tag}", eta.size, timings["ours"].best, r["ours"], r.get("fdint"), vs)
        )
    return rows


def inverse_row(eta: np.ndarray, rounds: int, tag: str) -> str:
    u = np.asarray(fermi_dirac(0.5, eta))
    lib = fdint()
    cases = {"exp": exp_anchor(u), "ours": lambda: inverse_fermi_dirac_half(u)}
    if lib is not None:
        unnormalized = u * (np.sqrt(np.pi) / 2.0)  # fdint's F_1/2 is Gamma(3/2) times ours
        buffer = np.empty_like(u)
        cases["fdint"] = lambda: lib.ifd1h(unnormalized, buffer)
    timings = interleaved(cases, rounds)
    r = ratios(timings, "exp")
    vs = ratios(timings, "fdint")["ours"] if "fdint" in timings else None
    return row(f"F_1/2 inv{tag}", u.size, timings["ours"].best, r["ours"], r.get("fdint"), vs)


def row(name, n, best, ours_exp, fdint_exp, ours_fdint) -> str:
    def fmt(triple):
        return "-" if triple is None else f"{triple[0]:.2f} ({triple[1]:.2f}-{triple[2]:.2f})"

    return (
        f"{name:<16} {n:>9d} {best / n * 1e9:>8.2f} {fmt(ours_exp):>20} "
        f"{fmt(fdint_exp):>20} {fmt(ours_fdint):>20}"
    )


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--sizes", nargs="+", type=float, default=[1e5, 1e6, 1e7])
    parser.add_argument("--rounds", type=int, default=7)
    parser.add_argument("--orders", nargs="*", type=float, default=ORDERS)
    parser.add_argument("--no-inverse", action="store_true")
    parser.add_argument(
        "--workers", nargs="+", type=int, default=[1, 2], help="thread counts to compare"
    )
    args = parser.parse_args()
    rng = np.random.default_rng(7)
    print("eta ~ U[-40, 80]; ratios: median of per-round ratios (lowest-highest)")
    print("fdint: " + ("installed" if fdint() is not None else "not importable: column empty"))
    print(
        f"{'kernel':<16} {'points':>9} {'ns/elem':>8} {'ours / exp(out=)':>20} "
        f"{'fdint / exp(out=)':>20} {'ours / fdint':>20}"
    )
    for size in args.sizes:
        n = int(size)
        eta = rng.uniform(-40.0, 80.0, n)
        rounds = args.rounds if n <= 1_000_000 else max(3, args.rounds // 2)
        for workers in args.workers:
            fermi.WORKERS = workers
            tag = f" {workers}t"
            for line in order_rows(eta, rounds, args.orders, tag):
                print(line, flush=True)
            if not args.no_inverse:
                print(inverse_row(eta, rounds, tag), flush=True)


if __name__ == "__main__":
    main()
