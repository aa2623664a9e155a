"""The neutrality solve per operating point: threads, and a compiled-kernel Newton sketch.

Points: silicon, T uniform in [50, 1000] K, P and B densities log-uniform in
[1e12, 1e20] cm^-3 each (compensated, freeze-out, intrinsic and near-degenerate points
all present).  Cases, timed in interleaved rounds (bench/interleaved.py), each a whole
``solve_equilibrium`` call including its independent neutrality check:

* the solve with 1 thread (the anchor) and with every worker thread;
* the same points split over as many forked processes, one thread each: what the machine
  gives two workers at that moment (no shared interpreter lock), so "threads / processes"
  separates the lock's cost from other sessions' load on a shared machine;
* where the compiled Fermi–Dirac library fdint is importable, a Newton sketch: the same
  neutrality in logs with one isolated level per dopant (no lowering, no band tail, no
  safeguard), F_1/2 and F_-1/2 from fdint, N_c, N_v, E_g and the solver's start
  precomputed outside the timing; the floor a compiled kernel sets for this problem,
  not a solver we could ship.

The headline is the median per-round ratio with its spread; microseconds per point are
shown beside it (absolute times drift by up to 1.5x on a shared machine).  The last rows
give the worst neutrality residual and Newton iteration count, residual evaluations per
point on four materials and a sweep-like grid (the solve's cost is about proportional
to them), then InAs (Kane conduction band: the quadrature path) beside Si on a quarter
of the points, interleaved.  Prints tables; asserts nothing.
"""

import argparse
import os

import interleaved
import numpy as np

from checker import load_material, solve_equilibrium
from checker.physics import equilibrium
from checker.physics.constants import BOLTZMANN


def points(n, seed=11):
    rng = np.random.default_rng(seed)
    T = rng.uniform(50.0, 1000.0, n)
    nd = 10 ** rng.uniform(12, 20, n) * 1e6
    na = 10 ** rng.uniform(12, 20, n) * 1e6
    return T, nd, na


def solve_with(workers, material, T, nd, na):
    def run():
        equilibrium.WORKERS = workers
        return solve_equilibrium(material, T, {"P": nd}, {"B": na})

    return run


def solve_in_processes(workers, material, T, nd, na):
    """The points split over ``workers`` forked processes, each solving its share on one
    thread (nothing is sent back: the time is the solve's)."""

    def run():
        equilibrium.WORKERS = 1
        share = -(-T.size // workers)
        children = []
        for first in range(0, T.size, share):
            pid = os.fork()
            if pid == 0:
                part = slice(first, first + share)
                solve_equilibrium(material, T[part], {"P": nd[part]}, {"B": na[part]})
                os._exit(0)
            children.append(pid)
        for pid in children:
            os.waitpid(pid, 0)

    return run


def fdint_sketch(fdint, material, T, nd, na):
    """Newton on ln(n + N_A^-) - ln(p + N_D^+) with fdint kernels (see the docstring)."""
    kT = BOLTZMANN * T
    ln_nc = np.log(material.need("Nc", "the sketch")(T))
    ln_nv = np.log(material.need("Nv", "the sketch")(T))
    eg = material.need("band_gap", "the sketch")(T) / kT
    donor, acceptor = material.dopant("P"), material.dopant("B")
    off_d = donor.energy / kT + np.log(donor.degeneracy)
    off_a = acceptor.energy / kT + np.log(acceptor.degeneracy)
    # the solver's own start (Boltzmann, one level per dopant, every dopant bindable: b = 1),
    # made outside the timing
    one = np.ones_like(T)
    start = equilibrium._initial_guess(
        ln_nc, ln_nv, eg, nd, na, off_d, off_a, np.exp(0.5 * (ln_nc + ln_nv - eg)), one, one
    )

    # fdint's fd1h is the unnormalized integral: F_1/2 = 2/sqrt(pi) fd1h, dF_1/2 = fdm1h/sqrt(pi)
    nc, nv = np.exp(ln_nc) / np.sqrt(np.pi), np.exp(ln_nv) / np.sqrt(np.pi)
    rows = np.array([start, nc, nv, eg, nd, na, off_d, off_a])

    def run():
        eta = np.empty(n_points := start.size)
        index = np.arange(n_points)
        work = rows.copy()
        for _ in range(100):
            x, nc, nv, eg, nd, na, off_d, off_a = work
            xp = -x - eg
            n, dn = 2.0 * nc * fdint.fd1h(x), nc * fdint.fdm1h(x)
            p, dp = 2.0 * nv * fdint.fd1h(xp), nv * fdint.fdm1h(xp)
            ud = 1.0 / (1.0 + np.exp(x + off_d))  # ionized donor share
            ua = 1.0 / (1.0 + np.exp(xp + off_a))
            nd_ion, na_ion = nd * ud, na * ua
            left, right = n + na_ion, p + nd_ion
            slope = (dn + na_ion * (1.0 - ua)) / left + (dp + nd_ion * (1.0 - ud)) / right
            f = np.log(left / right)
            x -= f / slope
            done = np.abs(f) <= 1e-12
            eta[index[done]] = x[done]
            if done.all():
                break
            keep = ~done
            index, work = index[keep], work[:, keep]
        return eta

    return run


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--points", type=float, default=1e6)
    parser.add_argument("--rounds", type=int, default=5)
    args = parser.parse_args()
    n = int(args.points)
    T, nd, na = points(n)
    si = load_material("Si")
    workers = equilibrium.WORKERS
    cases = {"solve, 1 thread": solve_with(1, si, T, nd, na)}
    if workers > 1:
        cases[f"solve, {workers} threads"] = solve_with(workers, si, T, nd, na)
        if hasattr(os, "fork"):
            cases[f"solve, {workers} processes"] = solve_in_processes(workers, si, T, nd, na)
    fdint = interleaved.fdint()
    if fdint is not None:
        cases["fdint Newton sketch"] = fdint_sketch(fdint, si, T, nd, na)
    timings = interleaved.interleaved(cases, rounds=args.rounds)
    equilibrium.WORKERS = workers
    print(f"neutrality solve, silicon, {n:.0e} points, {args.rounds} interleaved rounds")
    print(interleaved.ratio_table(timings, "solve, 1 thread", per=n, unit="us/point"))
    processes = f"solve, {workers} processes"
    if processes in timings:
        print()
        print(interleaved.ratio_table(timings, processes, per=n, unit="us/point"))
    if fdint is None:
        print("fdint not importable: no compiled-kernel sketch")
    else:
        print()
        print(interleaved.ratio_table(timings, "fdint Newton sketch", per=n, unit="us/point"))
    state = solve_equilibrium(si, T, {"P": nd}, {"B": na})
    print(
        f"max neutrality residual {float(state.residual.max()):.1e}; "
        f"max Newton iterations {state.iterations}"
    )
    print()
    _evaluation_rows(min(n, 100_000))
    print()
    _kane_row(max(n // 4, 1), max(args.rounds // 2, 1))


def evaluations_per_point(material, T, donors, acceptors):
    """Residual evaluations per point of one solve (each one F_1/2 pair on eta and eta_p),
    counted by wrapping the residual; the last Newton step and the check are not counted."""
    counted = []
    residual = equilibrium._Neutrality.__call__

    def counting(self, eta):
        counted.append(eta.size)
        return residual(self, eta)

    equilibrium._Neutrality.__call__ = counting
    try:
        solve_equilibrium(material, T, donors, acceptors)
    finally:
        equilibrium._Neutrality.__call__ = residual
    return sum(counted) / T.size


def _evaluation_rows(n):
    """Evaluations per point on random points of four materials (one donor, one acceptor)
    and on a grid like a sweep's (Si, P only, 100-600 K x 1e14-1e20 cm^-3)."""
    print(f"residual evaluations per point ({n:.0e} random points; grid 300 x 300)")
    for name, donor, acceptor in (
        ("Si", "P", "B"),
        ("GaN", "Si", "Mg"),
        ("Ge", "P", "B"),
        ("InAs", "S", "Zn"),
    ):
        T, nd, na = points(n, seed=5)
        per_point = evaluations_per_point(load_material(name), T, {donor: nd}, {acceptor: na})
        print(f"  {name:<5} {donor}/{acceptor}  {per_point:.2f}")
    T, nd = np.meshgrid(np.linspace(100.0, 600.0, 300), np.logspace(20, 26, 300))
    grid = evaluations_per_point(load_material("Si"), T.ravel(), {"P": nd.ravel()}, {})
    print(f"  Si grid, P only  {grid:.2f}")


def _kane_row(n, rounds):
    """InAs (Kane conduction band, the quadrature path) beside Si (parabolic, closed F_1/2)
    on points of the same kind, all threads, interleaved: the ratio is the Kane path's."""
    T, nd, na = points(n, seed=12)
    si, inas = load_material("Si"), load_material("InAs")
    timings = interleaved.interleaved(
        {
            "Si (parabolic)": lambda: solve_equilibrium(si, T, {"P": nd}, {"B": na}),
            "InAs (Kane band)": lambda: solve_equilibrium(inas, T, {"S": nd}, {"Zn": na}),
        },
        rounds=rounds,
    )
    print(f"Kane conduction band, {n:.0e} points, all threads")
    print(interleaved.ratio_table(timings, "Si (parabolic)", per=n, unit="us/point"))


if __name__ == "__main__":
    main()
