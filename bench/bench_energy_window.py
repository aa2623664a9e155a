"""Cost of the energy-window engine per point, beside the parabolic F_j fast path.

Prints a table (best of --repeat runs, so the first run's table loading is not counted):
ns/point and the ratio to fermi_dirac(1/2, eta)
on the same points.  eta uniform in [-40, 60], T = 300 K.  Asserts nothing.
Usage: python bench/bench_energy_window.py [--points 1e6] [--repeat 3]
"""

import argparse
import time

import numpy as np
import scipy.constants as sc

from checker.physics import bands as bd
from checker.physics import energy_window as ew
from checker.physics.fermi import fermi_dirac

T = 300.0
KANE = bd.KaneBand(3, 0.023, 2.7 / sc.e)  # InAs-like
PARABOLIC = bd.ParabolicBand(3, 0.023)
DIRAC = bd.DiracBand(1.0e6)
WELL = bd.parabolic_subbands(2, 0.067, [0.0, 0.06 * sc.e])


def cases(eta):
    density = ew.carrier_density(KANE, eta, T)
    sheet = ew.carrier_density(WELL, eta, T)
    return [
        ("F_1/2(eta), fermi.py", lambda: fermi_dirac(0.5, eta)),
        ("n parabolic 3D, closed form", lambda: ew.carrier_density(PARABOLIC, eta, T)),
        (
            "n parabolic 3D, quadrature",
            lambda: ew.carrier_density(PARABOLIC, eta, T, method="quadrature"),
        ),
        ("n Kane 3D (97 nodes)", lambda: ew.carrier_density(KANE, eta, T)),
        ("D/mu ratio Kane 3D (n and dn/deta)", lambda: ew.generalized_einstein_ratio(KANE, eta, T)),
        ("n - p graphene, closed form", lambda: ew.dirac_net_density(DIRAC, eta, T)),
        (
            "sigma graphene r=1, closed form",
            lambda: ew.diffusive_conductivity(DIRAC, eta, T, 2e-8, 1.0),
        ),
        (
            "sigma Kane 3D r=1, quadrature",
            lambda: ew.diffusive_conductivity(KANE, eta, T, 2e-8, 1.0),
        ),
        (
            "G Kane 3D, L = 2 lambda0 (129 nodes)",
            lambda: ew.conductance(KANE, eta, T, 4e-8, 2e-8, 1.0),
        ),
        ("eta from n_s, 2 subbands (Newton)", lambda: ew.eta_from_density(WELL, sheet, T)),
        ("eta from n, Kane 3D (Newton)", lambda: ew.eta_from_density(KANE, density, T)),
    ]


def best(fn, repeat):
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return min(times)


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--points", type=float, default=1e6)
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    n = int(args.points)
    eta = np.random.default_rng(11).uniform(-40.0, 60.0, n)
    print(f"{n} points, eta uniform in [-40, 60], T = {T:g} K, {ew.WORKERS} worker thread(s)")
    print(f"{'computation':<40} {'ns/point':>10} {'x F_1/2':>9}")
    reference = None
    for label, fn in cases(eta):
        seconds = best(fn, args.repeat)
        reference = reference or seconds
        print(f"{label:<40} {seconds / n * 1e9:>10.1f} {seconds / reference:>9.1f}")


if __name__ == "__main__":
    main()
