"""The solved state of one operating point in trade units: the ``state`` object of the
JSON reports (``check`` and ``state`` commands) and of the Python API.

One function for both, over the one table of fields
(:mod:`checker.quantity_registry.summary_fields`), so that a quantity has one name
everywhere (the points above a Mott density are ``above_mott_density``).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from typing import Any

import numpy as np

from ...errors import MissingParameterError
from ...physics import carriers, transport
from ...physics.arrays import ArrayIn
from ...physics.carriers import regime_label
from ...physics.equilibrium import State
from ...quantity_registry.display_units import DISPLAY_UNITS
from ...quantity_registry.summary_fields import JSON_FIELDS, FieldValue
from .taken import Taken


def trade_summary(
    values: Mapping[str, ArrayIn], index: int | tuple[int, ...] = ()
) -> dict[str, FieldValue]:
    """Trade-unit numbers of point ``index`` of ``values`` (registered quantity names, SI).
    Where the values carry the solve's ``residual`` (the ``state`` command), the band
    densities of states and the residual are added."""

    def get(name: str) -> Any:
        return np.asarray(values[name])[index]

    return _summary(get, "residual" in values)


def _summary(get: Callable[[str], Any], full: bool) -> dict[str, FieldValue]:
    return {f.key: f.value(get) for f in JSON_FIELDS if full or not f.state_only}


# fields that are one physics function of their ``reads`` in order, given in a unit: their
# column is one call over all points (a scalar call per point cost ~4 µs), the same
# elementwise arithmetic, so the same numbers (tests/test_point_summaries.py)
_COLUMN_PHYSICS: dict[str, tuple[Callable[..., Any], str]] = {
    f"v_{x}_at_field_cm_per_s": (transport.drift_velocity, "cm/s") for x in ("n", "p")
}


class PointSummaries:
    """:func:`trade_summary` of each point of one-dimensional ``values``, each quantity
    read out as Python numbers once for all points (a check of many calculations asked
    numpy for some twenty scalars per point), and the fields of :data:`_COLUMN_PHYSICS`
    computed for all points in one call."""

    def __init__(self, values: Mapping[str, ArrayIn]):
        # each quantity as a list of Python numbers, made on its first read
        self._columns = Taken(values, lambda array: np.asarray(array).tolist())
        fields = [f for f in JSON_FIELDS if "residual" in values or not f.state_only]
        # (key, the field's column where computed for all points, else None, its reader)
        self._plan: list[tuple[str, list[FieldValue] | None, Any]] = []
        for f in fields:
            physics = _COLUMN_PHYSICS.get(f.key)
            if physics is None or not all(name in values for name in f.reads):
                # (a quantity the values lack: the field's own reader says None)
                self._plan.append((f.key, None, f.value))
                continue
            function, unit = physics
            numbers = function(*(np.asarray(values[name], dtype=float) for name in f.reads))
            numbers = np.asarray(numbers, dtype=float) * DISPLAY_UNITS[unit]
            whole = [v if math.isfinite(v) else None for v in numbers.tolist()]
            self._plan.append((f.key, whole, f.value))

    def __getitem__(self, index: int) -> dict[str, FieldValue]:
        columns = self._columns

        def get(name: str) -> Any:
            return columns[name][index]

        return {
            key: whole[index] if whole is not None else reader(get)
            for key, whole, reader in self._plan
        }


def state_values(state: State) -> dict[str, ArrayIn]:
    """The quantities :func:`trade_summary` reads, from a physics ``State``: a bulk
    crystal with no structure and no stated numbers, so the mobility used is the
    model's and there is no field."""
    return {
        **_state_solve(state),
        **_bulk_transport(state),
    }


def _bulk_transport(state: State) -> dict[str, ArrayIn]:
    """Transport at the State from the material's models (3D); nothing where the material
    lacks mobility data (the summary then shows no transport rows)."""
    try:
        flow = carriers.carrier_transport(state, 3)
    except MissingParameterError:
        return {}
    out: dict[str, ArrayIn] = {
        "dim": np.full_like(state.T, 3.0),
        "field": np.full_like(state.T, np.nan),
        "sigma": flow["sigma"],
        "rho": flow["rho"],
    }
    for x in ("n", "p"):
        out[f"mu_{x}"] = out[f"used_mu_{x}"] = flow[f"mu_{x}"]
        out[f"lambda_{x}"] = flow[f"mfp_{x}"]
        out[f"vsat_{x}"] = flow[f"vsat_{x}"]
        out[f"beta_{x}"] = flow[f"beta_{x}"]
    return out


def _state_solve(state: State) -> dict[str, ArrayIn]:
    # with band-gap narrowing on, the State's n_i is the effective one (n_ie)
    undoped = np.exp(-state.narrowing / (2 * state.kT))
    return {
        "regime": regime_label(state),
        "T": state.T,
        "kT": state.kT,
        "eta_n": state.eta_n,
        "eta_p": state.eta_p,
        "dens_n": state.n,
        "dens_p": state.p,
        "f_n": state.donor_fraction,
        "f_p": state.acceptor_fraction,
        "ni": state.ni * undoped,
        "nie": state.ni,
        "bgn_on": (np.asarray(state.narrowing) > 0).astype(float),
        "Eg": state.Eg,
        "Nband_n": state.Nc,
        "Nband_p": state.Nv,
        "residual": state.residual,
        # the State keeps one flag: some species (of either type) above its Mott density
        "metal_n": state.metallic,
        "metal_p": state.metallic,
    }
