"""Array types shared by the physics functions (for the type checker; no runtime cost), and
``distinct``, the sorted distinct values of an array.

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


def distinct(values: npt.ArrayLike, axis: int | None = None) -> npt.NDArray[np.generic]:
    """The sorted distinct values (rows, with ``axis=0``) of ``values``, as ``np.unique``.

    Asking np.unique for an index array keeps it from importing numpy.ma (about 14 ms of
    a cold start with numpy 2.4, where the plain call checks for a masked array)."""
    unique: npt.NDArray[np.generic] = np.unique(values, return_index=True, axis=axis)[0]
    return unique
