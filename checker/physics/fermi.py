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
* every tabulated j below eta = -8: the first five terms of the exact series
  F_j = sum_k (-1)^k z^(k+1)/(k+1)^(j+1), z = exp(eta) (remainder < 1.1e-17 relative).
* half-integer j: piecewise polynomial fits generated in multiple precision
  by tools/generate_fd_tables.py: a series in z = exp(eta) for -8 <= eta < -2,
  Chebyshev-derived polynomials on intervals up to a cut (eta = 20 to 29 by order), and
  above it F_j = eta^(j+1) H(1/eta^2), H fitted on [0, 1/cut^2] (degree 8 for j = 1/2
  from eta = 25).  H's Taylor series at 0 is the Sommerfeld series, asymptotic and not
  convergent for half-integer j (its best truncation still errs by 3.6e-12 at eta = 20
  for j = 1/2); the exact expansion's exponentially small term cos(pi j) F_j(-eta)
  vanishes for half-integer j, so H is smooth up to s = 0 and a fit on the whole
  interval needs few terms.  The generator checks each fit in float64, as evaluated
  here, against mpmath (the high one from the cut to eta = 1e5).
  Relative error about 1e-15 at worst in float64 (measured by the tests against mpmath).
* Evaluation: in blocks of 65,536 points, each labelled by region (a sum of edge
  comparisons), sorted by label (radix sort of uint8) so each region's formula runs on one
  contiguous slice; blocks of large arrays run on WORKERS threads.  A block's temporaries
  live in work arrays kept per thread from call to call (fresh 512 KiB arrays cost a page
  fault per 4 KiB); no result is ever a view of one.
* Inverse of F_1/2: a quintic Hermite table of eta - ln u in ln u (see
  inverse_fermi_dirac_half).

References
----------
J. S. Blakemore, Solid-State Electron. 25, 1067 (1982) (normalization, limits).
NIST DLMF §25.12(iii) (definition and polylogarithm relation).
T. Fukushima, Appl. Math. Comput. 259, 708 (2015) (piecewise approximation).
"""

from __future__ import annotations

import _thread
import os
from collections.abc import Callable, Sequence
from fractions import Fraction
from functools import cache
from typing import Any

import numpy as np
import numpy.typing as npt

from ..errors import ConvergenceError, InputError
from . import _fd_tables, _threads
from .arrays import ArrayIn, FloatArray, FloatOrArray, softplus

SUPPORTED_ORDERS = tuple(Fraction(k, 2) for k in range(-3, 8))
_CHUNK = 1 << 16  # elements per block: keeps the temporaries in cache
_TASK = 1 << 17  # elements per thread task (two blocks)
WORKERS = min(2, os.cpu_count() or 1)  # threads for large arrays (1: no threads)
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


# Work arrays reused from call to call, one set per thread: a block's temporaries are
# 64k doubles (512 KiB), which the C allocator serves by mmap or returns to the system on
# free, so fresh ones cost a page fault every 4 KiB (measured: 40-80 % of a 1e5-point
# call); at most a few MiB per thread stay allocated.
_WORK: dict[tuple[int, str], npt.NDArray[Any]] = {}


def _work(name: str, size: int, dtype: type = np.float64) -> npt.NDArray[Any]:
    """This thread's work array ``name`` of ``size`` elements (contents undefined)."""
    key = (_thread.get_ident(), name)
    buffer = _WORK.get(key)
    if buffer is None or buffer.size < size:
        if not _WORK:
            # numpy.argsort and numpy.flatnonzero still return fresh 512 KiB arrays per
            # block.  glibc serves those from the heap (no page faults) only once a freed
            # mmap'd block has raised its mmap threshold, which arrays over 32 MiB never
            # do: free one of 1 MiB now (measured at 1e7 points: F_1/2 24 -> 17-20 ns).
            np.ones(1 << 17)
        elif buffer is None and len({ident for ident, _ in _WORK}) >= _KEPT_THREADS:
            _forget_ended_threads()
        buffer = _WORK[key] = np.empty(max(size, _CHUNK), dtype=dtype)
    return buffer[:size]


_KEPT_THREADS = 4  # the main thread and a pool's workers; beyond, look for ended threads


def _forget_ended_threads() -> None:
    """Drop the work arrays of threads that have ended (~7 MiB each): an API user's
    short-lived threads must not leave theirs behind."""
    import threading  # loaded by then: other threads have run kernels

    alive = {thread.ident for thread in threading.enumerate()}
    for key in [key for key in _WORK if key[0] not in alive]:
        del _WORK[key]


def _horner(coeffs: Sequence[float], t: FloatArray, out: FloatArray | None = None) -> FloatArray:
    acc = np.multiply(t, coeffs[-1], out=out)
    acc += coeffs[-2]
    for c in coeffs[-3::-1]:
        acc *= t
        acc += c
    return acc


# Below ETA_SERIES, F_j = z (1 - z/2^(j+1) + z^2/3^(j+1) - z^3/4^(j+1) + z^4/5^(j+1)),
# z = e^eta, to double precision: the series F_j/z = sum_k (-z)^k/(k+1)^(j+1) alternates
# with decreasing terms there (ratio <= sqrt(2) z for j >= -3/2), so the remainder is below
# the first omitted term z^5 6^-(j+1) <= e^-40 sqrt(6) = 1.1e-17 (DLMF §25.12(ii), s = j+1).
ETA_SERIES = -8.0
_SERIES_TERMS = 5

# A second label for the points above eta = 50 (the region above the last edge goes on to
# infinity and holds half of eta ~ U[-40, 80]): numpy's radix argsort counts each label
# by an increment in memory, and runs of one label stall on that store (measured on a
# 64k block with half the points in one label: 2.8-3.0 ns an element, 1.6 when split).
_LABEL_SPLIT = 50.0


class _Piecewise:
    """Evaluator for one order from its generated table.

    Regions: 0 the short exact series in e^eta (below ETA_SERIES, the deep tail included),
    1 the fitted series in e^eta, 2.. fitted pieces, last eta^(j+1) times the fitted
    polynomial in 1/eta^2 (half-integer orders only).
    """

    def __init__(self, key: str) -> None:
        # the generated table is plain literals: name the types of its entries here
        table: dict[str, Any] = _fd_tables.TABLES[key]
        self.power = Fraction(key) + 1  # j + 1
        self.short: list[float] = [
            (-1) ** k / (k + 1) ** float(self.power) for k in range(_SERIES_TERMS)
        ]
        self.low: list[float] = table["low"]
        self.pieces: list[tuple[float, float, list[float]]] = [
            ((a + b) / 2, 2.0 / (b - a), c) for a, b, c in table["pieces"]
        ]
        edges = [ETA_SERIES, _fd_tables.ETA_LOW] + [b for _, b, _ in table["pieces"]]
        self.edges: FloatArray = np.array(edges, dtype=np.float64)
        self.high: list[float] = table["high"]
        self.last = len(self.edges) if self.high else len(self.edges) - 1
        # the labels' edges: the formulas' and, for half-integer orders, _LABEL_SPLIT,
        # which splits the last region's label in two (one formula for both)
        self.label_edges = [float(e) for e in self.edges[: self.last]]
        if self.high:
            assert _LABEL_SPLIT > self.edges[-1]
            self.label_edges.append(_LABEL_SPLIT)

    def regions(self, eta: FloatArray) -> tuple[npt.NDArray[np.uint8], npt.NDArray[np.intp]]:
        """Region label of each point and the number of points in each region.

        The label is the count of label edges at or below eta (a sum of comparisons:
        four times cheaper than a table look-up or a binary search); NaN compares false
        and so lands in region 0, whose formula passes NaN on.  Labels past the last
        region's index belong to it: sorted, they follow its own."""
        labels: npt.NDArray[np.uint8] = np.zeros(eta.shape, dtype=np.uint8)
        at_least: list[int] = [eta.size]  # points with label k or above
        for edge in self.label_edges:
            above = np.greater_equal(eta, edge)
            at_least.append(int(np.count_nonzero(above)))
            labels += above.view(np.uint8)
        del at_least[self.last + 1 :]  # points in region k or above
        at_least.append(0)
        counts: npt.NDArray[np.intp] = np.subtract(at_least[:-1], at_least[1:], dtype=np.intp)
        return labels, counts

    def region(self, k: int, eta: FloatArray, log: bool, out: FloatArray) -> None:
        """Write F_j (or ln F_j) of region k at eta into ``out`` (same length); without
        ``log`` ``out`` may be eta itself (every formula reads eta into a work array
        before it writes ``out``)."""
        if k <= 1:
            z = np.exp(eta, out=_work("variable", eta.size))
            _horner(self.short if k == 0 else self.low, z, out)
            if log:
                np.log(out, out=out)
                out += eta
            else:
                out *= z
        elif k == len(self.edges):
            self._high(eta, log, out)
        else:
            mid, inv_half, coeffs = self.pieces[k - 2]
            t = np.subtract(eta, mid, out=_work("variable", eta.size))
            t *= inv_half
            _horner(coeffs, t, out)
            if log:
                np.log(out, out=out)

    def _high(self, eta: FloatArray, log: bool, out: FloatArray) -> None:
        """eta^(j+1) H(1/eta^2), H fitted from the table's last edge up (1/Gamma(j+2) in
        its coefficients); the generator checks these very operations against mpmath.
        eta is read before ``out`` is written, so ``out`` may be eta itself."""
        lead = _work("lead", eta.size)
        if log:  # ln eta^(j+1) = (j+1) ln eta: no square root
            np.log(eta, out=lead)
            lead *= float(self.power)
        else:
            np.sqrt(eta, out=lead)  # eta^(j+1) = eta^whole * sqrt(eta)
            whole = int(self.power - Fraction(1, 2))
            if whole < 0:
                np.divide(1.0, lead, out=lead)
            for _ in range(max(whole, 0)):
                lead *= eta
        with np.errstate(over="ignore"):  # eta^2 = inf above 1.3e154: 1/eta^2 = 0, H(0)
            inv2 = np.multiply(eta, eta, out=_work("variable", eta.size))
        np.divide(1.0, inv2, out=inv2)
        series = _horner(self.high, inv2, out)
        if log:
            np.log(series, out=series)
            series += lead
        else:
            series *= lead

    def evaluate(self, eta: FloatArray, log: bool = False, threads: bool = False) -> FloatArray:
        return _grouped(self, eta, [(self, log)], threads)[0]


def _blockwise(size: int, work: Callable[[slice], None], threads: bool) -> None:
    """Call ``work`` on cache-sized slices covering range(size).

    With ``threads`` (and only from the main thread: a caller that runs its own pool,
    like the equilibrium solver, gets no nested pool) slices of large arrays are spread
    over WORKERS threads; numpy releases the GIL inside ufuncs, sorts and gathers.
    """

    def task(first: int) -> None:
        for start in range(first, min(first + _TASK, size), _CHUNK):
            work(slice(start, min(start + _CHUNK, first + _TASK, size)))

    starts = range(0, size, _TASK)
    if threads and len(starts) > 1 and WORKERS > 1 and _threads.on_main_thread():
        list(_threads.pool(WORKERS).map(task, starts))
    else:
        for first in starts:
            task(first)


def _grouped(
    classifier: _Piecewise,
    eta: FloatArray,
    jobs: Sequence[tuple[_Piecewise, bool]],
    threads: bool = False,
) -> list[FloatArray]:
    """Evaluate several (evaluator, log) jobs on eta, grouping points by region.

    The evaluators must share the classifier's edges.  Work proceeds in
    cache-sized blocks; within a block points are sorted by region (a stable
    radix sort of uint8 labels) so each region is one contiguous slice.
    """
    outs = [np.empty_like(eta) for _ in jobs]

    def work(rows: slice) -> None:
        block = eta[rows]
        targets = [out[rows] for out in outs]
        region, counts = classifier.regions(block)
        busy = np.flatnonzero(counts)
        if busy.size == 2 and busy[1] == 1:
            busy = busy[1:]  # only points below ETA_LOW: the fitted series serves both
        if busy.size == 1:
            only = int(busy[0])
            for target, (ev, log) in zip(targets, jobs):
                ev.region(only, block, log, target)
            return
        order = np.argsort(region, kind="stable")
        # every index is in range: mode="clip" skips the bounds check (half the cost)
        grouped = np.take(block, order, out=_work("grouped", block.size), mode="clip")
        results = [_work(f"result {i}", block.size) for i in range(len(jobs))]
        if len(jobs) == 1 and not jobs[0][1]:
            results = [grouped]  # in place: one buffer less in cache (see _Piecewise.region)
        stop = 0
        for k in busy:
            first, stop = stop, stop + counts[k]
            piece = grouped[first:stop]
            for res, (ev, log) in zip(results, jobs):
                ev.region(int(k), piece, log, res[first:stop])
        for target, res in zip(targets, results):
            target[order] = res

    _blockwise(eta.size, work, threads)
    return outs


@cache
def _evaluator(key: str) -> _Piecewise:
    return _Piecewise(key)


# F_j(eta) = poly_j(eta) + sign_j * F_j(-eta), exact for integer j >= 1 (Blakemore 1982)
_REFLECTION_SIGN = {1: -1.0, 2: +1.0, 3: -1.0}


def _reflection_polynomial(j: int, x: FloatArray) -> FloatArray:
    """poly_j(x) = x^2/2 + pi^2/6, x (x^2 + pi^2)/6, x^4/24 + pi^2 x^2/12 + 7 pi^4/360 for
    j = 1, 2, 3, in a work array (x may be overwritten); the operations and their order
    are those of the written formulas, except that /6 and /24 are products with the
    rounded reciprocals (a division pass costs ~2.5 multiplications; <= 1 ulp more)."""
    square: FloatArray
    if j == 1:
        square = np.multiply(x, 0.5, out=_work("square", x.size))
        square *= x
        square += _PI2 / 6.0
        return square
    square = np.multiply(x, x, out=_work("square", x.size))
    if j == 2:
        square += _PI2
        square *= x
        square *= 1.0 / 6.0
        return square
    np.multiply(square, 1.0 / 24.0, out=x)
    x += _PI2 / 12.0
    square *= x
    square += 7.0 * _PI2 * _PI2 / 360.0
    return square


def _integer_order(j: int, eta: FloatArray, threads: bool = False) -> FloatArray:
    out = np.empty_like(eta)

    def work(rows: slice) -> None:
        _integer_order_block(j, eta[rows], out[rows])

    _blockwise(eta.size, work, threads)
    return out


def _integer_order_block(j: int, eta: FloatArray, out: FloatArray) -> None:
    """Write F_j(eta), integer j, into ``out`` (same length as eta)."""
    if j <= 0:
        # e^-|eta| once; F_0 = max(eta, 0) + ln(1 + e^-|eta|) and F_-1 = e^-|eta|/(1 +
        # e^-|eta|) below 0, 1/(1 + e^-|eta|) from 0 (arrays.softplus's arithmetic), in
        # work arrays
        tail = np.abs(eta, out=_work("tail", eta.size))
        np.negative(tail, out=tail)
        np.exp(tail, out=tail)
        if j == 0:
            np.log1p(tail, out=tail)
            np.maximum(eta, 0.0, out=out)
            out += tail
        else:
            np.maximum(tail, eta >= 0, out=out)  # the numerator: 1 where eta >= 0 (tail <= 1)
            tail += 1.0
            out /= tail
        return
    # F_j(-|eta|) from the table: the short series in e^-|eta| serves |eta| > 8 (and the
    # deep tail) on the whole block; the points with |eta| <= 8 are patched from the
    # fitted series and, for |eta| <= 2, the fitted piece on [ETA_LOW, 0]
    table = _evaluator(str(j))
    base = np.abs(eta, out=out)
    near = np.flatnonzero(base <= -ETA_SERIES)
    np.negative(base, out=base)
    fitted = np.take(base, near, out=_work("fitted", near.size), mode="clip")
    table.region(0, base, False, base)
    if near.size:
        closest = np.flatnonzero(fitted >= _fd_tables.ETA_LOW)
        middle = np.take(fitted, closest, out=_work("middle", closest.size), mode="clip")
        table.region(1, fitted, False, fitted)
        table.region(2, middle, False, middle)  # the one fitted piece, [ETA_LOW, 0]
        fitted[closest] = middle
        base[near] = fitted
    # eta > 0: F_j(eta) = poly(eta) + sign * F_j(-eta), sign exactly +-1; poly(0) stands
    # in for eta <= 0 (finite, then zeroed) so no power of a huge |eta| overflows.  Masks
    # enter as factors 0 and 1: masked copies and np.where cost several times more.
    positive = eta > 0
    reflected = _reflection_polynomial(j, np.maximum(eta, 0.0, out=_work("reflected", eta.size)))
    reflected *= positive
    if _REFLECTION_SIGN[j] < 0:
        # -F_j(-eta) where eta > 0: the sign of 0.0 - eta (+0.0 for eta = +-0.0)
        side = np.subtract(0.0, eta, out=_work("side", eta.size))
        np.copysign(base, side, out=base)
    base += reflected


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
        result = _integer_order(int(order), flat, threads=True)
    else:
        result = _evaluator(str(order)).evaluate(flat, threads=True)
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
        result = -softplus(-flat)
    elif order.denominator == 1 and int(order) == 0:
        # for eta < -30, ln(1+z) = z(1 - z/2 ...) -> eta + ln(1 - z/2)
        small = flat < -30.0
        result = np.where(
            small,
            flat + np.log1p(-0.5 * np.exp(np.minimum(flat, 0.0))),
            np.log(softplus(np.where(small, 0.0, flat))),
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


# The inverse: a quintic Hermite table of eta(ln u), uniform in s = ln u, from the roots
# and their first two derivatives at the nodes.  Its interpolation error, about
# h^6/46080 |d^6 eta/ds^6| with h = 1/64, is below 4e-15 max(1, |eta|) (measured by the
# tests against mpmath roots), so no correction step is needed.
_INV_S_LOW = -38.0  # below: eta - ln u ~ u/2^(3/2) < 1.1e-17, under half an ulp of 38
_INV_S_HIGH = 14.0  # table top, eta ~ 9.6e3; above, Newton from the Sommerfeld guess
_INV_CELLS_PER_UNIT = 64


def _newton_inverse_half(log_u: FloatArray) -> FloatArray:
    """eta with ln F_{1/2}(eta) = log_u by Newton's method on the log (any finite log_u)."""
    eta = _initial_inverse_half(log_u)
    active = np.arange(log_u.size)
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
            return eta
    raise ConvergenceError("inverse_fermi_dirac_half did not converge")


@cache
def _inverse_table() -> list[FloatArray]:
    """Coefficients c0..c5 per cell: eta - s = c0 + t (c1 + ... t c5), t in [0, 1].

    Quintic Hermite interpolation of g(s) = eta(s) - s, s = ln u (g -> 0 as s -> -inf,
    so the first cell also serves every s below the table), from the roots at the nodes
    and d eta/ds = r = F_{1/2}/F_{-1/2}, d^2 eta/ds^2 = r dr/d eta = r (1 - F_{1/2}
    F_{-3/2}/F_{-1/2}^2) there (dF_j/d eta = F_{j-1}); 3,329 nodes, built once.
    """
    count = round((_INV_S_HIGH - _INV_S_LOW) * _INV_CELLS_PER_UNIT)
    nodes = _INV_S_LOW + np.arange(count + 1) / _INV_CELLS_PER_UNIT
    eta = _newton_inverse_half(nodes)
    half, minus_half, minus_3half = (_evaluator(j).evaluate(eta) for j in ("1/2", "-1/2", "-3/2"))
    ratio = half / minus_half
    h = 1.0 / _INV_CELLS_PER_UNIT
    d = (ratio - 1.0) * h  # first and second derivatives of g in the cell variable t
    a = ratio * (1.0 - half * minus_3half / minus_half**2) * h * h
    g = eta - nodes
    rise = np.diff(g)
    d0, d1, a0, a1 = d[:-1], d[1:], a[:-1], a[1:]
    return [
        g[:-1],
        d0,
        0.5 * a0,
        10.0 * rise - 6.0 * d0 - 4.0 * d1 - 1.5 * a0 + 0.5 * a1,
        -15.0 * rise + 8.0 * d0 + 7.0 * d1 + 1.5 * a0 - a1,
        6.0 * rise - 3.0 * (d0 + d1) - 0.5 * (a0 - a1),
    ]


def _inverse_block(log_u: FloatArray, eta: FloatArray) -> None:
    """Write the roots for ``log_u`` = ln u into ``eta``: the table's in range and below
    it (there g(-38) ~ 1e-17 is below half an ulp of eta); Newton from scratch above it."""
    coeffs = _inverse_table()
    cells = coeffs[0].size
    x = np.subtract(log_u, _INV_S_LOW, out=_work("position", log_u.size))
    x *= _INV_CELLS_PER_UNIT
    np.clip(x, 0.0, cells, out=x)  # points above the table are replaced below
    cell = _work("cell", log_u.size, np.intp)
    np.copyto(cell, x, casting="unsafe")  # truncation: the floor of x >= 0
    np.minimum(cell, cells - 1, out=cell)
    x -= cell  # t in [0, 1]
    np.take(coeffs[-1], cell, out=eta, mode="clip")  # cells in range: no bounds check
    scratch = _work("coefficient", log_u.size)
    for c in coeffs[-2::-1]:
        eta *= x
        eta += np.take(c, cell, out=scratch, mode="clip")
    eta += log_u
    if np.count_nonzero(log_u > _INV_S_HIGH):
        above = np.flatnonzero(log_u > _INV_S_HIGH)
        eta[above] = _newton_inverse_half(log_u[above])


def inverse_fermi_dirac_half(u: ArrayIn) -> FloatOrArray:
    """eta such that F_{1/2}(eta) = u (normalized integral), vectorized.

    Formula: for -38 <= ln u <= 14 a quintic Hermite table of eta(ln u) (nodes 1/64
    apart; the roots there by Newton's method on ln F_{1/2} with d ln F_{1/2}/d eta =
    F_{-1/2}/F_{1/2}, the derivatives from F_{1/2}, F_{-1/2}, F_{-3/2}); eta = ln u
    below (F_{1/2} = e^eta to double precision there); above, Newton on the log from a
    Joyce–Dixon / Sommerfeld starting guess.  Units: dimensionless.
    Validity: any finite u > 0; |d eta| <= 1e-13 max(1, |eta|) against mpmath roots
    (measured <= 4e-15; tested for 1e-300 <= u <= 1e8); u <= 0 raises.

    References
    ----------
    W. B. Joyce and R. W. Dixon, Appl. Phys. Lett. 31, 354 (1977) (starting
    guess); Blakemore, Solid-State Electron. 25, 1067 (1982).
    """
    arr = np.asarray(u, dtype=np.float64)
    flat = np.ascontiguousarray(arr).ravel()
    roots = np.empty_like(flat)

    def work(rows: slice) -> None:
        block = flat[rows]
        # two reductions per block, while it is in cache; NaN fails both comparisons
        if not (np.min(block) > 0.0 and np.max(block) < np.inf):
            raise InputError(
                "inverse_fermi_dirac_half needs finite values u > 0"
                " (F_1/2 is positive for every eta)"
            )
        _inverse_block(np.log(block, out=_work("log u", block.size)), roots[rows])

    _blockwise(flat.size, work, threads=True)
    result = roots.reshape(arr.shape)
    return result if arr.ndim else float(result)


def inverse_fermi_dirac_half_of_log(log_u: FloatArray) -> FloatArray:
    """eta such that ln F_{1/2}(eta) = ``log_u`` (any finite values, a flat array; NaN gives
    NaN), by the method of :func:`inverse_fermi_dirac_half`, for a caller that works in
    logarithms (the equilibrium solver's start): no exp and log round trip, no overflow.

    References
    ----------
    As for :func:`inverse_fermi_dirac_half`.
    """
    flat = np.ascontiguousarray(log_u, dtype=np.float64).ravel()
    roots = np.empty_like(flat)

    def work(rows: slice) -> None:
        _inverse_block(flat[rows], roots[rows])

    _blockwise(flat.size, work, threads=True)
    return roots
