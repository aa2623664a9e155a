"""Normalized Fermi–Dirac integrals F_j(eta) and the inverse of F_{1/2}.

F_j(eta) = 1/Gamma(j+1) * Integral_0^inf x^j / (1 + exp(x - eta)) dx
         = -Li_{j+1}(-exp(eta))                     (all real j)

This is the "script-F" normalization: n = N_c F_{1/2}(eta) with
eta = (E_F - E_C)/kT, dF_j/deta = F_{j-1}, and F_j(eta) -> exp(eta) as
eta -> -inf for every j.  (Fukushima 2015, Antia 1993 and others tabulate the
unnormalized integral, which is Gamma(j+1) times this one.)

Method
------
* j = -1, 0: closed forms (logistic, softplus).
* j = 1, 2, 3: the exact reflection F_j(eta) = poly_j(eta) -/+ F_j(-eta), so only
  eta <= 0 is approximated.
* half-integer j: piecewise polynomial fits generated in multiple precision
  by tools/generate_fd_tables.py: a series in z = exp(eta) below eta = -2,
  Chebyshev-derived polynomials on intervals up to eta = 50, and the
  Sommerfeld asymptotic series above (remainder O(exp(-eta)) < 1e-21 there).
  Relative error about 1e-15 at worst in float64 (measured by the tests against mpmath).

References
----------
J. S. Blakemore, Solid-State Electron. 25, 1067 (1982) (normalization, limits).
NIST DLMF §25.12(iii) (definition and polylogarithm relation).
T. Fukushima, Appl. Math. Comput. 259, 708 (2015) (piecewise approximation).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from fractions import Fraction
from functools import cache
from typing import Any

import numpy as np
import numpy.typing as npt

from ..errors import ConvergenceError, InputError
from . import _fd_tables
from .arrays import ArrayIn, FloatArray, FloatOrArray

SUPPORTED_ORDERS = tuple(Fraction(k, 2) for k in range(-3, 8))
_CHUNK = 1 << 16  # elements per block: keeps the temporaries in cache
_PI2 = np.pi**2


def _order(j: Any) -> Fraction:
    try:
        frac = Fraction(j).limit_denominator(2)
    except (TypeError, ValueError):
        raise InputError(f"Fermi–Dirac order {j!r} is not a number") from None
    if frac not in SUPPORTED_ORDERS or abs(float(frac) - float(j)) > 1e-12:
        raise InputError(
            f"Fermi–Dirac order {j!r} is not supported; use one of "
            + ", ".join(str(o) for o in SUPPORTED_ORDERS)
        )
    return frac


def _horner(coeffs: Sequence[float], t: FloatArray, out: FloatArray | None = None) -> FloatArray:
    acc = np.multiply(t, coeffs[-1], out=out)
    acc += coeffs[-2]
    for c in coeffs[-3::-1]:
        acc *= t
        acc += c
    return acc


ETA_DEEP = -38.0  # below this F_j = e^eta to double precision (next term e^(2 eta)/2^(j+1))


class _Piecewise:
    """Evaluator for one order from its generated table.

    Regions: 0 deep tail (F = e^eta), 1 series in e^eta, 2.. fitted pieces,
    last the Sommerfeld series (half-integer orders only).
    """

    def __init__(self, key: str) -> None:
        # the generated table is plain literals: name the types of its entries here
        table: dict[str, Any] = _fd_tables.TABLES[key]
        self.low: list[float] = table["low"]
        self.pieces: list[tuple[float, float, list[float]]] = [
            ((a + b) / 2, 2.0 / (b - a), c) for a, b, c in table["pieces"]
        ]
        edges = [ETA_DEEP, _fd_tables.ETA_LOW] + [b for _, b, _ in table["pieces"]]
        self.edges: FloatArray = np.array(edges, dtype=np.float64)
        self.asym: list[float] = table["asym"]
        self.gamma: float = table["gamma"]
        self.power = Fraction(key) + 1  # j + 1
        self.last = len(self.edges) if self.asym else len(self.edges) - 1
        # All edges lie on a half-unit grid, so the region of each eta is a table
        # look-up on floor(2 eta) instead of a binary search (3x cheaper).
        if not np.allclose(self.edges * 2, np.round(self.edges * 2)):
            raise ValueError("Fermi-Dirac table edges must lie on a half-unit grid")
        grid = np.arange(2 * self.edges[0] - 1, 2 * self.edges[-1] + 1) / 2.0
        self.grid_start = grid[0]
        self.lookup: npt.NDArray[np.uint8] = np.minimum(
            np.searchsorted(self.edges, grid, side="right"), self.last
        ).astype(np.uint8)

    def regions(self, eta: FloatArray) -> npt.NDArray[np.uint8]:
        cell = np.subtract(eta, self.grid_start)
        cell *= 2.0
        # fmax/fmin drop NaN, which so lands in region 0, whose formulas pass NaN on
        np.fmax(cell, 0.0, out=cell)
        np.fmin(cell, len(self.lookup) - 1, out=cell)
        labels: npt.NDArray[np.uint8] = self.lookup[cell.astype(np.intp)]
        return labels

    def region(self, k: int, eta: FloatArray, log: bool, out: FloatArray) -> None:
        """Write F_j (or ln F_j) of region k at eta into ``out`` (same length)."""
        if k == 0:
            if log:
                np.copyto(out, eta)
            else:
                np.exp(eta, out=out)
        elif k == 1:
            z = np.exp(eta)
            _horner(self.low, z, out)
            if log:
                np.log(out, out=out)
                out += eta
            else:
                out *= z
        elif k == len(self.edges):
            self._asymptotic(eta, log, out)
        else:
            mid, inv_half, coeffs = self.pieces[k - 2]
            t = np.subtract(eta, mid)
            t *= inv_half
            _horner(coeffs, t, out)
            if log:
                np.log(out, out=out)

    def _asymptotic(self, eta: FloatArray, log: bool, out: FloatArray) -> None:
        inv2 = eta * eta
        np.divide(1.0, inv2, out=inv2)
        series = _horner(self.asym, inv2, out)
        whole = int(self.power - Fraction(1, 2))  # eta^(j+1) = eta^whole * sqrt(eta)
        lead = np.sqrt(eta)
        if whole < 0:
            np.divide(1.0, lead, out=lead)
        for _ in range(max(whole, 0)):
            lead *= eta
        if log:
            np.log(series, out=series)
            series += np.log(lead)
            series -= np.log(self.gamma)
        else:
            series *= lead
            series /= self.gamma

    def evaluate(self, eta: FloatArray, log: bool = False) -> FloatArray:
        return _grouped(self, eta, [(self, log)])[0]


def _grouped(
    classifier: _Piecewise, eta: FloatArray, jobs: Sequence[tuple[_Piecewise, bool]]
) -> list[FloatArray]:
    """Evaluate several (evaluator, log) jobs on eta, grouping points by region.

    The evaluators must share the classifier's edges.  Work proceeds in
    cache-sized blocks; within a block points are sorted by region (a stable
    radix sort of uint8 labels) so each region is one contiguous slice.
    """
    outs = [np.empty_like(eta) for _ in jobs]
    n_regions = classifier.last + 1
    scratch = [np.empty(min(eta.size, _CHUNK)) for _ in jobs]
    for start in range(0, eta.size, _CHUNK):
        block = eta[start : start + _CHUNK]
        targets = [out[start : start + _CHUNK] for out in outs]
        region = classifier.regions(block)
        counts = np.bincount(region, minlength=n_regions)
        busy = np.flatnonzero(counts)
        if busy.size == 2 and busy[1] == 1:
            busy = busy[1:]  # only deep and series points: the series formula serves both
        if busy.size == 1:
            only = int(busy[0])
            for target, (ev, log) in zip(targets, jobs):
                ev.region(only, block, log, target)
            continue
        order = np.argsort(region, kind="stable")
        grouped = block[order]
        results = [buffer[: block.size] for buffer in scratch]
        stop = 0
        for k in busy:
            first, stop = stop, stop + counts[k]
            piece = grouped[first:stop]
            for res, (ev, log) in zip(results, jobs):
                ev.region(int(k), piece, log, res[first:stop])
        for target, res in zip(targets, results):
            target[order] = res
    return outs


@cache
def _evaluator(key: str) -> _Piecewise:
    return _Piecewise(key)


def _softplus(eta: FloatArray) -> FloatArray:
    """ln(1 + e^eta) without overflow or loss of relative accuracy."""
    pos = eta > 0
    return np.where(pos, eta, 0.0) + np.log1p(np.exp(-np.abs(eta)))


def _logistic(eta: FloatArray) -> FloatArray:
    e = np.exp(-np.abs(eta))
    return np.where(eta >= 0, 1.0 / (1.0 + e), e / (1.0 + e))


# F_j(eta) = poly(eta) + sign * F_j(-eta), exact for integer j >= 1
_REFLECTION: dict[int, tuple[Callable[[FloatArray], FloatArray], float]] = {
    1: (lambda x: 0.5 * x * x + _PI2 / 6.0, -1.0),
    2: (lambda x: x * (x * x + _PI2) / 6.0, +1.0),
    3: (lambda x: x * x * (x * x / 24.0 + _PI2 / 12.0) + 7.0 * _PI2 * _PI2 / 360.0, -1.0),
}


def _integer_order(j: int, eta: FloatArray) -> FloatArray:
    out = np.empty_like(eta)
    for start in range(0, eta.size, _CHUNK):  # blocks keep the temporaries in cache
        block = eta[start : start + _CHUNK]
        out[start : start + _CHUNK] = _integer_order_block(j, block)
    return out


def _integer_order_block(j: int, eta: FloatArray) -> FloatArray:
    if j == -1:
        return _logistic(eta)
    if j == 0:
        return _softplus(eta)
    poly, sign = _REFLECTION[j]
    magnitude = np.abs(eta)
    base = _evaluator(str(j)).evaluate(-magnitude)  # F_j(-|eta|), tabulated
    reflected = poly(magnitude)
    if sign > 0:
        reflected += base
    else:
        reflected -= base
    np.copyto(base, reflected, where=eta > 0)
    return base


def fermi_dirac(j: float | Fraction, eta: ArrayIn) -> FloatOrArray:
    """Normalized Fermi–Dirac integral F_j(eta), vectorized.

    Formula: F_j(eta) = -Li_{j+1}(-e^eta) = 1/Gamma(j+1) Int_0^inf x^j/(1+e^(x-eta)) dx.
    Units: eta = (E_F - E_C)/kT is dimensionless; so is the result.
    Orders: j in {-3/2, -1, -1/2, 0, 1/2, 1, 3/2, 2, 5/2, 3, 7/2}.
    Validity: all real eta; relative error <= 1e-13 (measured <= 1.6e-15) against
    mpmath; no overflow for |eta| <= 1e4; underflows to 0 below eta ~ -745.

    References
    ----------
    Blakemore, Solid-State Electron. 25, 1067 (1982); NIST DLMF §25.12(iii);
    Fukushima, Appl. Math. Comput. 259, 708 (2015).
    """
    order = _order(j)
    arr = np.asarray(eta, dtype=np.float64)
    flat = np.ascontiguousarray(arr).ravel()
    if order.denominator == 1:
        result = _integer_order(int(order), flat)
    else:
        result = _evaluator(str(order)).evaluate(flat)
    result = result.reshape(arr.shape)
    return result if arr.ndim else float(result)


def log_fermi_dirac(j: float | Fraction, eta: ArrayIn) -> FloatOrArray:
    """ln F_j(eta) without underflow (for eta down to -1e300), vectorized.

    Formula: ln F_j(eta); for eta < -2 it is evaluated as eta + ln(F_j/e^eta).
    Units: dimensionless.  Orders: as for :func:`fermi_dirac`.
    Used by the equilibrium solver, whose densities span e^-10000 .. e^+50.

    References
    ----------
    As for :func:`fermi_dirac`.
    """
    order = _order(j)
    arr = np.asarray(eta, dtype=np.float64)
    flat = np.ascontiguousarray(arr).ravel()
    if order.denominator == 1 and int(order) == -1:
        result = -_softplus(-flat)
    elif order.denominator == 1 and int(order) == 0:
        # for eta < -30, ln(1+z) = z(1 - z/2 ...) -> eta + ln(1 - z/2)
        small = flat < -30.0
        result = np.where(
            small,
            flat + np.log1p(-0.5 * np.exp(np.minimum(flat, 0.0))),
            np.log(_softplus(np.where(small, 0.0, flat))),
        )
    elif order.denominator == 1:
        # eta <= 0 from the table in log form; eta > 0 via the exact reflection
        negative = _evaluator(str(order)).evaluate(np.minimum(flat, 0.0), log=True)
        positive = np.log(_integer_order(int(order), np.maximum(flat, 0.0)))
        result = np.where(flat <= 0, negative, positive)
    else:
        result = _evaluator(str(order)).evaluate(flat, log=True)
    result = result.reshape(arr.shape)
    return result if arr.ndim else float(result)


def log_fermi_dirac_half_pair(eta: ArrayIn) -> tuple[FloatArray, FloatArray]:
    """(ln F_{1/2}(eta), ln F_{-1/2}(eta)) in one pass (flat float arrays).

    The two orders share their interval edges, so points are classified and
    grouped once.  Used by the equilibrium solver for n and dn/deta.

    References
    ----------
    As for :func:`fermi_dirac`.
    """
    half, minus_half = _evaluator("1/2"), _evaluator("-1/2")
    flat = np.ascontiguousarray(eta, dtype=np.float64).ravel()
    if not np.array_equal(half.edges, minus_half.edges):  # tables regenerated differently
        return half.evaluate(flat, log=True), minus_half.evaluate(flat, log=True)
    a, b = _grouped(half, flat, [(half, True), (minus_half, True)])
    return a, b


def _initial_inverse_half(log_u: FloatArray) -> FloatArray:
    """Starting guess for eta with F_{1/2}(eta) = u (from ln u)."""
    u = np.exp(np.minimum(log_u, 700.0))
    # non-degenerate side: eta ~ ln u + u/sqrt(8) (first Joyce–Dixon term)
    low = log_u + u / np.sqrt(8.0)
    # degenerate side: invert (4/(3 sqrt(pi))) eta^1.5 (1 + pi^2/(8 eta^2))
    x = np.cbrt((0.75 * np.sqrt(np.pi) * u) ** 2)
    high = np.sqrt(np.maximum(x * x - _PI2 / 6.0, 0.25))
    guess: FloatArray = np.where(log_u < np.log(3.0), low, high)
    return guess


def inverse_fermi_dirac_half(u: ArrayIn) -> FloatOrArray:
    """eta such that F_{1/2}(eta) = u (normalized integral), vectorized.

    Formula: solves ln F_{1/2}(eta) = ln u by Newton's method on the log, with
    d ln F_{1/2}/d eta = F_{-1/2}/F_{1/2}, from a Joyce–Dixon / Sommerfeld
    starting guess.  Units: dimensionless.  Validity: any finite u > 0
    (tested for 1e-300 <= u <= 1e8 to |d eta| <= 1e-12); u <= 0 raises.

    References
    ----------
    W. B. Joyce and R. W. Dixon, Appl. Phys. Lett. 31, 354 (1977) (starting
    guess); Blakemore, Solid-State Electron. 25, 1067 (1982).
    """
    arr = np.asarray(u, dtype=np.float64)
    if not np.all(np.isfinite(arr)) or np.any(arr <= 0):
        raise InputError(
            "inverse_fermi_dirac_half needs finite values u > 0 (F_1/2 is positive for every eta)"
        )
    flat = np.ascontiguousarray(arr).ravel()
    log_u = np.log(flat)
    eta = _initial_inverse_half(log_u)
    active = np.arange(flat.size)
    for _ in range(40):
        e = eta[active]
        log_f = log_fermi_dirac(0.5, e)
        slope = np.exp(log_fermi_dirac(-0.5, e) - log_f)
        step = (log_f - log_u[active]) / slope
        eta[active] = e - step
        # rounding in ln F (~4e-16) sets the floor of |step|; 1e-14 is far inside 1e-12
        done = np.abs(step) <= 1e-14 * np.maximum(1.0, np.abs(e))
        active = active[~done]
        if active.size == 0:
            break
    else:
        raise ConvergenceError("inverse_fermi_dirac_half did not converge")
    eta = eta.reshape(arr.shape)
    return eta if arr.ndim else float(eta)
