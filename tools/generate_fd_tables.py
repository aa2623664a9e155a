"""Generate the coefficient tables behind ``checker.physics.fermi``.

Run once (needs mpmath; ~2 minutes on 2 cores); writes ``checker/physics/_fd_tables.py``
(then ``ruff format`` it, as the repository's checks require).  The tables
are piecewise polynomial fits of the normalized Fermi–Dirac integral
F_j(eta) = -Li_{j+1}(-e^eta) computed in multiple precision:

* eta < ETA_LOW: F_j = z * P(z), z = e^eta, P a Chebyshev-economized series;
* ETA_LOW <= eta < cut: Chebyshev interpolants on intervals, stored as
  monomials in the local variable t = (eta - centre) / half_width;
* eta >= cut (half-integer j): F_j = eta^(j+1) * H(s), s = 1/eta^2, H a Chebyshev
  interpolant of F_j(eta)/eta^(j+1) on [0, 1/cut^2] (40 nodes, truncated where the
  dropped coefficients sum below TARGET), stored as monomials in s; H(0) = 1/Gamma(j+2)
  and its Taylor coefficients are the Sommerfeld series' (Blakemore 1982), which is
  asymptotic, not convergent, for half-integer j: a fit on the whole interval
  needs far fewer terms than the series at its best (F_1/2 from eta = 20: degree 11,
  where the series' best truncation still errs by 3.6e-12).  The exact expansion's
  exponentially small term cos(pi j) F_j(-eta) vanishes for half-integer j, so H is
  smooth up to s = 0.  The cut is the lowest of HIGH_CUTS whose fit needs at most
  HIGH_MAX_DEGREE; its float64 evaluation (as the kernel does it) is checked against
  mpmath from the cut to eta = 1e5.

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
EDGE_CANDIDATES = [-2, -1, 0, 1, 2, 3, 4.5, 6.5, 9.5, 14, 20, 25, 29, 40, 50]
# half-integer orders: F_j = eta^(j+1) H(1/eta^2) from the lowest of these cuts where H
# needs at most HIGH_MAX_DEGREE (cost: one pass of two numpy calls per degree)
HIGH_CUTS = [14, 20, 25, 29, 40, 50]
HIGH_MAX_DEGREE = 10  # measured: 10 beats 14 (F_1/2 from 25 instead of 20) by ~3 %
HIGH_CHECK_TOP = 1e5  # the float64 check runs from the cut to here


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
    mono_z = monomials_on(mono_t, 0, z0)  # t = 2 z / z0 - 1
    zs = np.linspace(1e-9, float(z0), 97)
    approx = horner64([float(c) for c in mono_z], zs)
    worst = max(float(abs(v / g(mp.mpf(float(z))) - 1)) for z, v in zip(zs, approx))
    print(f"j={float(j):5.1f} low region degree {degree} float64 err {worst:.2e}", file=sys.stderr)
    if worst > 2e-15:
        raise RuntimeError("low region rounding too large")
    return mono_z


def monomials_on(mono_t, a, b):
    """Ascending monomials in x of sum c_k t^k, t = (2 x - a - b) / (b - a)."""
    scale, shift = 2 / (mp.mpf(b) - a), -(mp.mpf(a) + b) / (mp.mpf(b) - a)
    mono_x = [mp.mpf(0)] * len(mono_t)
    for k, c in enumerate(mono_t):
        for i in range(k + 1):
            mono_x[i] += c * mp.binomial(k, i) * scale**i * shift ** (k - i)
    return mono_x


def high_fit(j, cut):
    """(degree, monomials in s) of H(s) = F_j(eta)/eta^(j+1), s = 1/eta^2 in [0, 1/cut^2],
    or (None, None) beyond HIGH_MAX_DEGREE."""
    top = 1 / mp.mpf(cut) ** 2

    def h(s):
        eta = 1 / mp.sqrt(s)
        return fd_exact(j, eta) / eta ** (j + 1)

    cheb, fmin = chebyshev_coefficients(h, 0, top, n=40)
    for degree in range(2, HIGH_MAX_DEGREE + 1):
        if mp.fsum(abs(c) for c in cheb[degree + 1 :]) < TARGET * fmin:
            return degree, monomials_on(chebyshev_to_monomial(cheb[: degree + 1]), 0, top)
    return None, None


def high_float64(j, coeffs, eta):
    """F_j from the high fit in float64 as checker.physics.fermi evaluates it."""
    s = 1.0 / (eta * eta)
    whole = int(j + 1 - mp.mpf(1) / 2)  # eta^(j+1) = eta^whole sqrt(eta)
    lead = np.sqrt(eta)
    if whole < 0:
        lead = 1.0 / lead
    for _ in range(max(whole, 0)):
        lead = lead * eta
    return horner64(coeffs, s) * lead


def check_high(j, cut, coeffs):
    """Worst relative float64 error of the high fit against mpmath, cut <= eta <= 1e5."""
    eta = np.concatenate(
        [np.linspace(cut, 2 * cut, 161), np.geomspace(2 * cut, HIGH_CHECK_TOP, 120)]
    )
    approx = high_float64(j, coeffs, eta)
    return max(float(abs(v / fd_exact(j, x) - 1)) for x, v in zip(eta, approx))


def build_high(j, text):
    """(cut, monomials in s) of the lowest cut in HIGH_CUTS the high fit serves."""
    for cut in HIGH_CUTS:
        degree, mono = high_fit(j, cut)
        if degree is None:
            continue
        coeffs = [float(c) for c in mono]
        worst = check_high(j, cut, coeffs)
        print(
            f"j={text:5s} [{cut:6.2f}, inf) degree {degree:2d} in 1/eta^2 float64 err {worst:.2e}",
            file=sys.stderr,
        )
        if worst < 1.5e-15:
            return float(cut), coeffs
    raise RuntimeError(f"no high fit for j={text}")


def build_order(text):
    j = j_value(text)
    half_integer = "/" in text
    top, high = build_high(j, text) if half_integer else (0.0, [])
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
    return text, [float(c) for c in low], pieces, high


def main(out: Path) -> None:
    lines = [
        '"""Generated by tools/generate_fd_tables.py; do not edit by hand.',
        "",
        "Piecewise coefficients of the normalized Fermi-Dirac integral (see the",
        'generator for the scheme and its accuracy check)."""',
        "",
        f"ETA_LOW = {ETA_LOW!r}",
        "TABLES = {",
    ]
    from multiprocessing import Pool

    with Pool(2) as pool:
        built = pool.map(build_order, ORDERS)
    ends = {text: [b for _, b, _ in pieces] for text, _, pieces, _ in built}
    if ends["1/2"] != ends["-1/2"]:  # log_fermi_dirac_half_pair groups points once for both
        raise RuntimeError("F_1/2 and F_-1/2 no longer share their edges")
    for text, low, pieces, high in built:
        lines.append(f"    {text!r}: {{")
        lines.append(f"        'low': {low!r},")
        lines.append("        'pieces': [")
        for a, b, mono in pieces:
            lines.append(f"            ({a!r}, {b!r}, {mono!r}),")
        lines.append("        ],")
        lines.append(f"        'high': {high!r},")
        lines.append("    },")
    lines.append("}")
    out.write_text("\n".join(lines) + "\n")


if __name__ == "__main__":
    main(Path(__file__).resolve().parents[1] / "checker" / "physics" / "_fd_tables.py")
