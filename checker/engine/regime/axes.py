"""Typed views of a swept input.

:class:`checker.inputs.calculation_file.Axis` keeps its key and values untyped
(``object``); the sweep and the regime map read them through these two functions, which
say what they are (no conversion, no runtime cost).
"""

from __future__ import annotations

from typing import TYPE_CHECKING, TypeAlias, cast

from ...physics.arrays import FloatArray

if TYPE_CHECKING:
    from ...inputs.calculation_file import Axis

# "T" for the temperature, or (group, species) of a density, e.g. ("donors", "P")
AxisKey: TypeAlias = str | tuple[str, str]


def axis_key(axis: Axis) -> AxisKey:
    return cast(AxisKey, axis.key)


def axis_values(axis: Axis) -> FloatArray:
    """The swept values (SI), in the order of the grid."""
    return cast(FloatArray, axis.values)
