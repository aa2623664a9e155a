"""Cost of the Fermi–Dirac kernels per element, as ratios measured in the same run.

Every order of ``fermi_dirac`` and ``inverse_fermi_dirac_half`` is timed in interleaved
rounds (bench/interleaved.py) beside ``np.exp(x, out=buffer)`` on the same array, and
beside the compiled library fdint where it is importable (benches only, never a
dependency).  fdint computes the unnormalized integral (Gamma(j+1) times ours): one
multiply apart, the same cost.  Targets (issue 16): every order <= 1.0x fdint and
<= 10x np.exp(out=); the inverse <= 2x fdint's ifd1h, flat per element from 1e5 to 1e7.
eta ~ U[-40, 80]; the inverse is fed u = F_1/2(eta) of those points.
Each kernel gets four rows (ours, np.exp(out=), fdint writing into a buffer, fdint
returning a new array), the ratio column taken to fdint into a buffer where it is
importable (else to np.exp), so "ours" reads ours / fdint and "exp(out=)" reads
exp / fdint: ours / exp is the quotient of the two.  Ours always returns a new array,
so "fdint new array" is the like-for-like row: at 1e7 points a fresh 80 MB result costs
about 1 ns an element (the kernel zeroing its pages), which fdint into a buffer skips.
Rows are tagged with the size and thread count (``--workers 1 2``: fermi.WORKERS; fdint
and np.exp run on one thread).
``--split``: where one 64k block of each half-integer order in ``--orders`` spends its
time (labels, the radix argsort, gather, each region's formula on its grouped slice,
scatter), each step timed alone on warm data, in ns per element of the block, beside the
whole block; the steps alone sum to less than the block, which runs them on colder
caches.
Prints tables; asserts nothing.
Usage: python bench/bench_fermi.py [--sizes 1e5 1e6 1e7] [--rounds 7] [--orders 0.5 1]
                                   [--workers 1 2] [--no-inverse] [--split]
"""

from __future__ import annotations

import argparse
import sys
import time
from collections.abc import Callable
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from interleaved import exp_anchor, fdint, interleaved, ratio_table  # noqa: E402

from checker.physics import fermi  # noqa: E402
from checker.physics.fermi import fermi_dirac, inverse_fermi_dirac_half  # noqa: E402

ORDERS = [-1.5, -1, -0.5, 0, 0.5, 1, 1.5, 2, 2.5, 3, 3.5]


def fdint_kernel(module, j: float):
    """fdint's function for order j (fdNh is order N/2; fdmNh is order -N/2), or None."""
    twice = round(2 * j)
    name = f"fd{twice}h" if twice >= 0 else f"fdm{-twice}h"
    return getattr(module, name, None)


def kernel_table(
    name: str,
    ours: Callable[[], object],
    theirs: tuple[Callable[[], object], Callable[[], object]] | None,
    x,
    rounds: int,
) -> list[str]:
    """The ratio table of ours, np.exp(out=) and fdint (into a buffer, and returning a
    new array: ``theirs``) on x, to fdint into a buffer where it is importable (else to
    np.exp); the anchor row is named after the anchor alone, so every kernel's table has
    the same header."""
    anchor = "fdint" if theirs is not None else "exp(out=)"
    cases = {f"{name} ours": ours, f"{name} exp(out=)": exp_anchor(x)}
    if theirs is not None:
        cases[anchor], cases[f"{name} fdint new array"] = theirs
    else:
        cases[anchor] = cases.pop(f"{name} exp(out=)")
    return ratio_table(interleaved(cases, rounds), anchor, per=x.size).splitlines()


def order_rows(eta: np.ndarray, rounds: int, orders: list[float], tag: str) -> list[str]:
    lib = fdint()
    rows = []
    buffer = np.empty_like(eta)
    for j in orders:
        kernel = fdint_kernel(lib, j) if lib is not None else None
        theirs = None
        if kernel is not None:
            theirs = (lambda f=kernel: f(eta, buffer)), (lambda f=kernel: f(eta))
        rows += kernel_table(f"F_{j:g}{tag}", lambda j=j: fermi_dirac(j, eta), theirs, eta, rounds)
    return rows


def inverse_rows(eta: np.ndarray, rounds: int, tag: str) -> list[str]:
    u = np.asarray(fermi_dirac(0.5, eta))
    lib = fdint()
    theirs = None
    if lib is not None:
        unnormalized = u * (np.sqrt(np.pi) / 2.0)  # fdint's F_1/2 is Gamma(3/2) times ours
        buffer = np.empty_like(u)
        theirs = (lambda: lib.ifd1h(unnormalized, buffer)), (lambda: lib.ifd1h(unnormalized))
    return kernel_table(f"F_1/2 inv{tag}", lambda: inverse_fermi_dirac_half(u), theirs, u, rounds)


def per_element(call: Callable[[], object], size: int, repeats: int = 30) -> float:
    """Best of five batches of ``repeats`` calls, in ns per element of ``size``."""
    best = float("inf")
    for _ in range(5):
        start = time.perf_counter()
        for _ in range(repeats):
            call()
        best = min(best, (time.perf_counter() - start) / repeats)
    return best / size * 1e9


def block_split(j: float, eta: np.ndarray) -> list[str]:
    """Where one block of F_j (half-integer j) spends its time, step by step."""
    evaluator = fermi._evaluator(str(fermi._order(j)))
    block = eta[: fermi._CHUNK]
    n = block.size
    labels, counts = evaluator.regions(block)
    order = np.argsort(labels, kind="stable")
    grouped = np.take(block, order)
    result = np.empty_like(block)
    target = np.empty_like(block)

    def scatter() -> None:
        target[order] = result

    steps = {
        f"labels ({len(evaluator.label_edges)} edges)": lambda: evaluator.regions(block),
        "argsort (stable radix, uint8)": lambda: np.argsort(labels, kind="stable"),
        "gather (take, mode=clip)": lambda: np.take(block, order, out=result, mode="clip"),
    }
    lows = [-np.inf, *evaluator.edges]
    stop = 0
    for k in np.flatnonzero(counts):
        first, stop = stop, stop + int(counts[k])
        piece, out = grouped[first:stop], result[first:stop]
        high = evaluator.edges[k] if k < len(evaluator.edges) else np.inf
        name = f"region [{lows[k]:g}, {high:g}) {counts[k] / n:.1%} of points"
        steps[name] = lambda k=int(k), piece=piece, out=out: evaluator.region(k, piece, False, out)
    steps["scatter (target[order] = result)"] = scatter
    # the whole block first: its work arrays set glibc's mmap threshold, so argsort's
    # fresh 512 KiB result comes from the heap (as in the kernel), not fresh pages
    whole = per_element(lambda: fermi._grouped(evaluator, block, [(evaluator, False)]), n)
    times = {name: per_element(call, n) for name, call in steps.items()}
    rows = [f"F_{j:g}, one block of {n} points: ns per element of the block"]
    rows += [f"  {name:<44} {value:6.2f}" for name, value in times.items()]
    rows.append(f"  {'the steps alone, summed':<44} {sum(times.values()):6.2f}")
    rows.append(f"  {'the whole block (fermi._grouped)':<44} {whole:6.2f}")
    return rows


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--sizes", nargs="+", type=float, default=[1e5, 1e6, 1e7])
    parser.add_argument("--rounds", type=int, default=7)
    parser.add_argument("--orders", nargs="*", type=float, default=ORDERS)
    parser.add_argument("--no-inverse", action="store_true")
    parser.add_argument("--split", action="store_true", help="time the steps of one block")
    parser.add_argument(
        "--workers", nargs="+", type=int, default=[1, 2], help="thread counts to compare"
    )
    args = parser.parse_args()
    rng = np.random.default_rng(7)
    lib = fdint()
    if args.split:
        fermi.WORKERS = 1
        eta = rng.uniform(-40.0, 80.0, fermi._CHUNK)
        for j in args.orders:
            if fermi._order(j).denominator == 2:
                print("\n".join(block_split(j, eta)), flush=True)
        return
    print("eta ~ U[-40, 80]; ratios: median of per-round ratios (spread: lowest-highest)")
    print("fdint: " + ("installed; ratios to fdint" if lib else "not importable; ratios to exp"))
    header = ""
    for size in args.sizes:
        n = int(size)
        eta = rng.uniform(-40.0, 80.0, n)
        rounds = args.rounds if n <= 1_000_000 else max(3, args.rounds // 2)
        for workers in args.workers:
            fermi.WORKERS = workers
            tag = f" {n:.0e} {workers}t"
            rows = order_rows(eta, rounds, args.orders, tag)
            if not args.no_inverse:
                rows += inverse_rows(eta, rounds, tag)
            for line in rows:
                if line != header:  # each kernel's table repeats the header: print it once
                    print(line, flush=True)
                    header = header or line


if __name__ == "__main__":
    main()
