"""Generate the coefficient tables behind ``checker.physics.fermi``.

Run once (needs mpmath); writes ``checker/physics/_fd_tables.py``.  The tables
are piecewise polynomial fits of the normalized Fermi–Dirac integral
F_j(eta) = -Li_{j+1}(-e^eta) computed in multiple precision:

* eta < ETA_LOW: F_j = z * P(z), z = e^eta, P a Chebyshev-economized series;
* ETA_LOW <= eta < eta_asym: Chebyshev interpolants on intervals, stored as
  monomials in the local variable t = (eta - centre) / half_width;
* eta >= eta_asym (half-integer j): the Sommerfeld series in 1/eta^2, cut where the
  first omitted term is below 1e-19 at eta_asym.  The series diverges for half-integer j
  (its best truncation's error falls only exponentially in eta: 3.6e-12 for
  j = 1/2 at eta = 20), so the cut
  cannot move far below 50; its error there is the truncation, about the first omitted
  term (tests/test_fermi_dirac.py checks it against mpmath).

The approach follows the piecewise approximation idea of T. Fukushima,
Appl. Math. Comput. 259, 708 (2015), with our own fits.  Every table entry
is checked against mpmath in float64 arithmetic before it is written.
"""

from __future__ import annotations

import sys
from pathlib import Path

import mpmath as mp
import numpy as np

mp.mp.dps = 34
ORDERS = ["-3/2", "-1/2", "1/2", "3/2", "5/2", "7/2", "1", "2", "3"]
ETA_LOW = -2.0
TARGET = 4e-17  # approximation error budget, relative, before rounding
MAX_DEGREE = 20
ETA_ASYM = 50.0  # half-integer orders switch to the Sommerfeld series here
EDGE_CANDIDATES = [-2, -1, 0, 1, 2, 3, 4.5, 6.5, 9.5, 14, 20, 29, 40, 50]


def j_value(text: str) -> mp.mpf:
    num, _, den = text.partition("/")
    return mp.mpf(num) / (mp.mpf(den) if den else 1)


def fd_exact(j: mp.mpf, eta) -> mp.mpf:
    eta = mp.mpf(eta)
    return -mp.re(mp.polylog(j + 1, -mp.exp(eta)))


def chebyshev_coefficients(f, a, b, n=29):
    """Chebyshev coefficients of the degree n-1 interpolant of f on [a, b]."""
    nodes = [mp.cos(mp.pi * (k + mp.mpf(1) / 2) / n) for k in range(n)]
    mid, half = (mp.mpf(a) + b) / 2, (mp.mpf(b) - a) / 2
    vals = [f(mid + half * t) for t in nodes]
    cheb = []
    for m in range(n):
        s = mp.fsum(vals[k] * mp.cos(m * mp.pi * (k + mp.mpf(1) / 2) / n) for k in range(n))
        cheb.append(s * (1 if m == 0 else 2) / n)
    return cheb, min(abs(v) for v in vals)


def chebyshev_to_monomial(cheb):
    """Monomial coefficients (ascending) of sum c_m T_m(t)."""
    mono = [mp.mpf(0)] * len(cheb)
    t_prev, t_cur = [mp.mpf(1)], [mp.mpf(0), mp.mpf(1)]
    for m, c in enumerate(cheb):
        basis = t_prev if m == 0 else t_cur
        for i, b in enumerate(basis):
            mono[i] += c * b
        if m >= 1:
            nxt = [mp.mpf(0)] + [2 * x for x in t_cur]
            for i, x in enumerate(t_prev):
                nxt[i] -= x
            t_prev, t_cur = t_cur, nxt
    return mono


def truncated_fit(f, a, b):
    """Shortest Chebyshev truncation whose dropped tail is below TARGET (relative)."""
    cheb, fmin = chebyshev_coefficients(f, a, b)
    for degree in range(4, MAX_DEGREE + 1):
        tail = mp.fsum(abs(c) for c in cheb[degree + 1 :])
        if tail < TARGET * fmin:
            return degree, chebyshev_to_monomial(cheb[: degree + 1])
    return None, None


def horner64(coeffs, t):
    acc = np.full_like(t, coeffs[-1])
    for c in coeffs[-2::-1]:
        acc = acc * t + c
    return acc


def check_interval(j, a, b, coeffs):
    ts = np.linspace(-1, 1, 121)
    mid, half = (a + b) / 2, (b - a) / 2
    approx = horner64([float(c) for c in coeffs], ts)
    worst = 0.0
    for t, v in zip(ts, approx):
        exact = fd_exact(j, mp.mpf(mid) + mp.mpf(half) * mp.mpf(float(t)))
        worst = max(worst, float(abs((v - exact) / exact)))
    return worst


def fit_interval(j, a, b):
    return truncated_fit(lambda x: fd_exact(j, x), a, b)


def fit_low(j):
    """F_j(eta)/z as a polynomial in z = e^eta on (0, e^ETA_LOW]."""
    z0 = mp.exp(ETA_LOW)
    g = lambda x: fd_exact(j, mp.log(x)) / x if x > 0 else mp.mpf(1)
    degree, mono_t = truncated_fit(g, 0, z0)
    if degree is None:
        raise RuntimeError(f"low region fit failed for j={j}")
    # t = 2 z / z0 - 1  ->  monomials in z
    mono_z = [mp.mpf(0)] * len(mono_t)
    for k, c in enumerate(mono_t):
        for i in range(k + 1):
            mono_z[i] += c * mp.binomial(k, i) * (2 / z0) ** i * (-1) ** (k - i)
    zs = np.linspace(1e-9, float(z0), 97)
    approx = horner64([float(c) for c in mono_z], zs)
    worst = max(float(abs(v / g(mp.mpf(float(z))) - 1)) for z, v in zip(zs, approx))
    print(f"j={float(j):5.1f} low region degree {degree} float64 err {worst:.2e}", file=sys.stderr)
    if worst > 2e-15:
        raise RuntimeError("low region rounding too large")
    return mono_z


def sommerfeld(j, eta_min):
    """Coefficients b_k of F_j = eta^(j+1)/Gamma(j+2) * sum b_k eta^(-2k)."""
    coeffs = [mp.mpf(1)]
    k = 1
    while True:
        dirichlet_eta = (1 - mp.mpf(2) ** (1 - 2 * k)) * mp.zeta(2 * k)
        b = 2 * dirichlet_eta * mp.gamma(j + 2) * mp.rgamma(j + 2 - 2 * k)
        coeffs.append(b)
        if abs(b) * mp.mpf(eta_min) ** (-2 * k) < 1e-19:
            return coeffs
        k += 1
        if k > 40:
            raise RuntimeError("Sommerfeld series did not reach the target")


def build_order(text):
    j = j_value(text)
    half_integer = "/" in text
    top = ETA_ASYM if half_integer else 0.0
    low = fit_low(j)
    edges = [e for e in EDGE_CANDIDATES if e <= top]
    pieces = []
    a_idx = 0
    while edges[a_idx] < top:
        # greedily take the widest next interval that still fits
        for b_idx in range(len(edges) - 1, a_idx, -1):
            a, b = edges[a_idx], edges[b_idx]
            degree, mono = fit_interval(j, a, b)
            if degree is not None:
                worst = check_interval(j, a, b, mono)
                if worst < 1.5e-15:
                    break
        else:
            raise RuntimeError(f"no fit for j={text} from {edges[a_idx]}")
        print(
            f"j={text:5s} [{a:6.2f},{b:6.2f}) degree {degree:2d} float64 err {worst:.2e}",
            file=sys.stderr,
        )
        pieces.append((float(a), float(b), [float(c) for c in mono]))
        a_idx = b_idx
    asym = [float(c) for c in sommerfeld(j, ETA_ASYM)] if half_integer else []
    return text, [float(c) for c in low], pieces, asym, float(mp.gamma(j + 2))


def main(out: Path) -> None:
    lines = [
        '"""Generated by tools/generate_fd_tables.py; do not edit by hand.',
        "",
        "Piecewise coefficients of the normalized Fermi-Dirac integral (see the",
        'generator for the scheme and its accuracy check)."""',
        "",
        f"ETA_LOW = {ETA_LOW!r}",
        f"ETA_ASYM = {ETA_ASYM!r}",
        "TABLES = {",
    ]
    from multiprocessing import Pool

    with Pool(2) as pool:
        built = pool.map(build_order, ORDERS)
    for text, low, pieces, asym, gamma in built:
        lines.append(f"    {text!r}: {{")
        lines.append(f"        'low': {low!r},")
        lines.append("        'pieces': [")
        for a, b, mono in pieces:
            lines.append(f"            ({a!r}, {b!r}, {mono!r}),")
        lines.append("        ],")
        lines.append(f"        'asym': {asym!r},")
        lines.append(f"        'gamma': {gamma!r},")
        lines.append("    },")
    lines.append("}")
    out.write_text("\n".join(lines) + "\n")


if __name__ == "__main__":
    main(Path(__file__).resolve().parents[1] / "checker" / "physics" / "_fd_tables.py")
