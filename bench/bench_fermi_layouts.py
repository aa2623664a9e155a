"""Would fewer, wider regions grouped by masks beat the sorted kernel?  A timing probe.

Issue 16 proposes, for the F_j kernels, a few wide regions with one rational each, the
points of each found by a boolean mask (np.flatnonzero, take, put) instead of the
evaluator's radix sort over ~10 narrow polynomial regions.  This probe times such
layouts at the rational degrees double precision needs, beside the current kernel,
np.exp(out=) and fdint (where installed; benches only), in interleaved rounds
(bench/interleaved.py), eta ~ U[-40, 80] as in bench_fermi.py, one thread.

The degrees come from ``--degrees``: least-squares rational fits (Sanathanan–Koerner
iteration, Chebyshev basis, 40 digits) of F_1/2 against mpmath on each interval, max
relative error on 400 points (a minimax fit would gain a little).  Measured:
F_1/2(eta)/e^eta as a rational in z = e^eta on [0, 1] (all of eta <= 0): (5,5) 3e-15,
(6,6) 5e-18; F_1/2 on [0, 50]: (14,14) 8e-15, (16,16) 3e-16; on [0, 10]: (10,10) 1e-14,
(12,12) 5e-17; on [10, 50]: (8,8) 3e-14, (10,10) 2e-17; above 50 the Sommerfeld series
(11 terms).  The wide middle is what costs: F_j is singular at eta = +-i pi, so no
single rational is short there (in the variable ln(1 + e^eta), (12,12) still 2e-14).

The layouts' coefficients are placeholders of those degrees (values bounded on the
interval, NOT F_j): the probe times the evaluation layout, it computes no integral.
Measured on the shared 2-core machine, best round, ns per element at 1e5 / 1e6 / 1e7:
the sorted kernel as it was then 14.1 / 13.8 / 16.0; three masks 12.5 / 13.4 / 16.6;
four 12.3 / 13.6 / 17.7; five 12.8 / 14.2 / 23.7; fdint 9.6 / 9.8 / 9.9.  A mask layout
gains ~10 % at 1e5, ties at 1e6 and loses at 1e7, and none comes near fdint (1.3x at
best), so the kernel was not rebuilt that way.  The sorted kernel has since lost one edge
(two for j = 5/2, 7/2: one fit in 1/eta^2 above eta = 20-29, which moved values by up to
~8 ulp, each toward mpmath) and half its gather cost (bench_fermi.py --split shows a block
step by step).  Prints tables; asserts nothing.
Usage: python bench/bench_fermi_layouts.py [--sizes 1e5 1e6 1e7] [--rounds 7]
       python bench/bench_fermi_layouts.py --degrees   (mpmath; about two minutes)
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Callable
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from interleaved import exp_anchor, fdint, interleaved, ratio_table  # noqa: E402

from checker.physics import fermi  # noqa: E402
from checker.physics.fermi import fermi_dirac  # noqa: E402

INF = float("inf")
# (low, high, kind, degree): "series" e^eta times a polynomial in e^eta; "z" e^eta times
# a (d,d) rational in e^eta; "t" a (d,d) rational in the interval's own variable;
# "sommerfeld" eta^(3/2) times a polynomial in 1/eta^2
Layout = list[tuple[float, float, str, int]]
LAYOUTS: dict[str, Layout] = {
    "3 masks: z(6,6) | (16,16) | S11": [
        (-INF, 0, "z", 6),
        (0, 50, "t", 16),
        (50, INF, "sommerfeld", 11),
    ],
    "4 masks: z(6,6)|(12,12)|(10,10)|S11": [
        (-INF, 0, "z", 6),
        (0, 10, "t", 12),
        (10, 50, "t", 10),
        (50, INF, "sommerfeld", 11),
    ],
    "5 masks: z5|z(6,6)|(12,12)|(10,10)|S11": [
        (-INF, -8, "series", 4),
        (-8, 0, "z", 6),
        (0, 10, "t", 12),
        (10, 50, "t", 10),
        (50, INF, "sommerfeld", 11),
    ],
}


def placeholder(degree: int, rng: np.random.Generator) -> np.ndarray:
    """Ascending coefficients of the given degree, bounded on [-1, 1] (timing only)."""
    coeffs = rng.uniform(0.1, 0.2, degree + 1) * 0.5 ** np.arange(degree + 1)
    coeffs[0] = 1.0
    return coeffs


def horner(coeffs: np.ndarray, t: np.ndarray, out: np.ndarray) -> np.ndarray:
    np.multiply(t, coeffs[-1], out=out)
    out += coeffs[-2]
    for c in coeffs[-3::-1]:
        out *= t
        out += c
    return out


def masked(layout: Layout, chunk: int = 1 << 16) -> Callable[[np.ndarray], np.ndarray]:
    """An evaluator of the layout: per block, each region's points found by a mask
    (flatnonzero), gathered, evaluated, put back; no sort."""
    rng = np.random.default_rng(3)
    parts = [(placeholder(d, rng), placeholder(d, rng)) for _, _, _, d in layout]

    def evaluate(eta: np.ndarray) -> np.ndarray:
        out = np.empty_like(eta)
        below, above = np.empty(chunk, bool), np.empty(chunk, bool)
        for start in range(0, eta.size, chunk):
            block, target = eta[start : start + chunk], out[start : start + chunk]
            inside, upper = below[: block.size], above[: block.size]
            for (low, high, kind, _), (p, q) in zip(layout, parts, strict=True):
                np.less(block, high, out=inside)
                if low > -INF:
                    inside &= np.greater_equal(block, low, out=upper)
                rows = np.flatnonzero(inside)
                if rows.size:
                    target[rows] = region(kind, low, high, p, q, np.take(block, rows))
        return out

    return evaluate


def region(kind: str, low: float, high: float, p, q, x: np.ndarray) -> np.ndarray:
    """One region's formula on its gathered points x (overwritten)."""
    result = np.empty_like(x)
    if kind in ("series", "z"):
        np.exp(x, out=x)
        horner(p, x, result)
        if kind == "z":
            result /= horner(q, x, np.empty_like(x))
        result *= x
    elif kind == "t":
        x -= (low + high) / 2
        x *= 2 / (high - low)
        horner(p, x, result)
        result /= horner(q, x, np.empty_like(x))
    else:
        inverse_square = np.divide(1.0, x * x)
        horner(p, inverse_square, result)
        root = np.sqrt(x)
        root *= x
        result *= root
    return result


def timing_tables(sizes: list[float], rounds: int) -> None:
    fermi.WORKERS = 1
    lib = fdint()
    for size in sizes:
        eta = np.random.default_rng(7).uniform(-40.0, 80.0, int(size))
        buffer = np.empty_like(eta)
        cases: dict[str, Callable[[], object]] = {
            "F_1/2 current (sort, 10 regions)": lambda: fermi_dirac(0.5, eta)
        }
        for name, layout in LAYOUTS.items():
            evaluate = masked(layout)
            cases[name] = lambda f=evaluate: f(eta)
        cases["exp(out=)"] = exp_anchor(eta)
        anchor = "exp(out=)"
        if lib is not None:
            anchor = "fdint fd1h into a buffer"
            cases[anchor] = lambda: lib.fd1h(eta, buffer)
            cases["fdint fd1h new array"] = lambda: lib.fd1h(eta)
        print(f"# eta ~ U[-40, 80], {size:.0e} points, 1 thread")
        n_rounds = rounds if size <= 1e6 else max(3, rounds // 2)
        print(ratio_table(interleaved(cases, n_rounds), anchor, per=eta.size), flush=True)


def degree_table() -> None:
    """Max relative error of least-squares rationals of F_1/2 on the layouts' intervals."""
    import mpmath as mp

    mp.mp.dps = 40
    order = mp.mpf(1) / 2

    def fd(eta):
        return -mp.re(mp.polylog(order + 1, -mp.exp(eta)))

    def over_z(z):  # F_1/2(eta)/e^eta as a function of z = e^eta (1 at z = 0)
        return fd(mp.log(z)) / z if z > 0 else mp.mpf(1)

    def chebyshev(n, t):
        values = [mp.mpf(1), t]
        while len(values) <= n:
            values.append(2 * t * values[-1] - values[-2])
        return values[: n + 1]

    def fit_error(f, a, b, n):
        a, b = mp.mpf(a), mp.mpf(b)
        count = 3 * n + 30
        ts = [mp.cos(mp.pi * (k + mp.mpf(1) / 2) / count) for k in range(count)]
        fs = [f((a + b) / 2 + (b - a) / 2 * t) for t in ts]
        denominators = [mp.mpf(1)] * count
        for _ in range(8):  # Sanathanan–Koerner: reweight by the last denominator
            matrix, rhs = mp.matrix(count, 2 * n + 1), mp.matrix(count, 1)
            for i, (t, value) in enumerate(zip(ts, fs, strict=True)):
                weight, basis = 1 / (value * denominators[i]), chebyshev(n, t)
                for k in range(n + 1):
                    matrix[i, k] = basis[k] * weight
                for k in range(1, n + 1):
                    matrix[i, n + k] = -value * basis[k] * weight
                rhs[i] = value * weight
            c, _ = mp.qr_solve(matrix, rhs)
            p = [c[k] for k in range(n + 1)]
            q = [mp.mpf(1)] + [c[n + k] for k in range(1, n + 1)]
            denominators = [mp.fsum(x * y for x, y in zip(q, chebyshev(n, t))) for t in ts]
        worst = mp.mpf(0)
        for k in range(400):
            t = -1 + 2 * mp.mpf(k) / 399
            basis = chebyshev(n, t)
            value = mp.fsum(x * y for x, y in zip(p, basis)) / mp.fsum(
                x * y for x, y in zip(q, basis)
            )
            worst = max(worst, abs(value / f((a + b) / 2 + (b - a) / 2 * t) - 1))
        return worst

    cases = [("F/e^eta in z = e^eta", over_z, 0, 1, [5, 6, 8])]
    cases += [(f"F on eta in [{a}, {b}]", fd, a, b, ns) for a, b, ns in LIMITS]
    for name, f, a, b, types in cases:
        for n in types:
            print(
                f"{name:<26} type ({n},{n}): max relative error {mp.nstr(fit_error(f, a, b, n), 3)}"
            )


LIMITS = [(0, 50, [14, 16]), (0, 10, [8, 10, 12]), (10, 50, [8, 10])]


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--sizes", nargs="+", type=float, default=[1e5, 1e6, 1e7])
    parser.add_argument("--rounds", type=int, default=7)
    parser.add_argument("--degrees", action="store_true", help="measure the fits (mpmath)")
    args = parser.parse_args()
    if args.degrees:
        degree_table()
    else:
        timing_tables(args.sizes, args.rounds)


if __name__ == "__main__":
    main()
