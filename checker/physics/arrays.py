"""Array types shared by the physics functions (for the type checker; no runtime cost).

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
