"""Array types shared by the physics functions (for the type checker; no runtime cost),
``distinct``, the sorted distinct values of an array, and ``distinct_points``, the distinct
combinations of several columns' values, and ``softplus`` and ``log_add``, ln(1 + e^x)
and ln(e^a + e^b) without overflow.

Physics functions take anything numpy turns into a float array (a number, a list, an
array of any shape; arguments broadcast) and return float64 arrays, or a float where the
function returns a scalar for a scalar argument.
"""

from __future__ import annotations

from typing import TypeAlias

import numpy as np
import numpy.typing as npt

ArrayIn: TypeAlias = npt.ArrayLike
FloatArray: TypeAlias = npt.NDArray[np.float64]
BoolArray: TypeAlias = npt.NDArray[np.bool_]
IndexArray: TypeAlias = npt.NDArray[np.intp]
FloatOrArray: TypeAlias = float | FloatArray


def softplus(x: npt.ArrayLike) -> FloatArray:
    """ln(1 + e^x) = max(x, 0) + ln(1 + e^-|x|), without overflow or loss of relative
    accuracy; the value np.logaddexp(0, x) gives, in whole-array passes (about 3x faster
    than that ufunc's scalar loop)."""
    out: FloatArray = np.asarray(np.abs(x), dtype=np.float64)
    np.negative(out, out=out)
    np.exp(out, out=out)
    np.log1p(out, out=out)
    out += np.maximum(x, 0.0)
    return out


def log_add(a: npt.ArrayLike, b: npt.ArrayLike) -> FloatArray:
    """ln(e^a + e^b) = max(a, b) + ln(1 + e^-|a - b|): np.logaddexp's value (to rounding;
    where a and b lie more than 700 apart, the larger plus at most 1e-304) in vectorized
    passes, about 3x faster than its scalar loop; -inf where both are."""
    with np.errstate(invalid="ignore"):
        gap: FloatArray = np.asarray(
            np.subtract(a, b), dtype=np.float64
        )  # 0-d for scalars: out= needs arrays
    np.abs(gap, out=gap)
    np.negative(gap, out=gap)
    np.fmin(gap, 0.0, out=gap)  # both -inf: nan -> 0, and the max below keeps -inf
    # e^-700 adds nothing to 1 + e^-|d| or to the max; beyond, exp takes its slow path
    np.maximum(gap, -700.0, out=gap)
    np.exp(gap, out=gap)
    np.log1p(gap, out=gap)
    gap += np.maximum(a, b)
    return gap


def distinct(values: npt.ArrayLike) -> npt.NDArray[np.generic]:
    """The sorted distinct values of ``values``, as ``np.unique``.

    Asking np.unique for an index array keeps it from importing numpy.ma (about 14 ms of
    a cold start with numpy 2.4, where the plain call checks for a masked array)."""
    unique: npt.NDArray[np.generic] = np.unique(values, return_index=True)[0]
    return unique


def distinct_points(columns: list[FloatArray], size: int) -> tuple[IndexArray, IndexArray]:
    """(one point of each distinct combination of the columns' values, the combination of
    every point): a row's values are column[first], a point's row is back; rows come in
    lexicographic order of the columns, as ``np.unique(np.stack(columns, 1), axis=0)``.
    Each column is numbered by its own distinct values and the numbers combined (a 1-D
    np.unique per column, an order of magnitude faster than np.unique over rows, and with
    index arrays asked for, so numpy.ma stays unimported); no column: one row."""
    if len(columns) == 1:
        _, first, back = np.unique(columns[0], return_index=True, return_inverse=True)
        return first, back.ravel()
    key = np.zeros(size, dtype=np.intp)
    for column in columns:
        values, code = np.unique(column, return_inverse=True)
        # renumbered at each step, so the combined key stays below size * len(values)
        key = np.unique(key * len(values) + code.ravel(), return_inverse=True)[1].ravel()
    _, first, back = np.unique(key, return_index=True, return_inverse=True)
    return first, back.ravel()
