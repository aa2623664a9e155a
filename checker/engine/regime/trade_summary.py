"""The solved state of one operating point in trade units: the ``state`` object of the
JSON reports (``check`` and ``state`` commands) and of the Python API.

One function for both, over the one table of fields
(:mod:`checker.quantity_registry.summary_fields`), so that a quantity has one name
everywhere (the points above a Mott density are ``above_mott_density``).
"""

from __future__ import annotations

from collections.abc import Mapping
from itertools import repeat
from typing import Any

import numpy as np

from ...errors import MissingParameterError
from ...physics import carriers
from ...physics.arrays import ArrayIn
from ...physics.carriers import regime_label
from ...physics.equilibrium import State
from ...quantity_registry.summary_fields import JSON_FIELDS, Columns, FieldValue, SummaryField
from .taken import Taken


def trade_summary(
    values: Mapping[str, ArrayIn], index: int | tuple[int, ...] = ()
) -> dict[str, FieldValue]:
    """Trade-unit numbers of point ``index`` of ``values`` (registered quantity names, SI):
    each field's column over that point alone.  Where the values carry the solve's
    ``residual`` (the ``state`` command), the band densities of states and the residual
    are added."""

    chosen = np.asarray(values["T"])[index]
    if chosen.size != 1:
        raise ValueError(
            f"index {index!r} selects {chosen.size} points of the values; give the index of one"
        )

    def get(name: str) -> Any:
        return np.reshape(np.asarray(values[name])[index], 1)

    return _summaries(_fields(values), get, 1)[0]


def _fields(values: Mapping[str, ArrayIn]) -> list[SummaryField]:
    return [f for f in JSON_FIELDS if "residual" in values or not f.state_only]


def _summaries(fields: list[SummaryField], get: Columns, size: int) -> list[dict[str, FieldValue]]:
    """One summary per point: each field's column, then the points' rows."""
    columns = [f.values(get) or repeat(None, size) for f in fields]
    keys = [f.key for f in fields]
    return [dict(zip(keys, row)) for row in zip(*columns)]


class PointSummaries:
    """:func:`trade_summary` of each point of one-dimensional ``values``: each field
    computed for all points at once (its column: a check of many calculations read some
    twenty quantities per point as scalars), each quantity converted once."""

    def __init__(self, values: Mapping[str, ArrayIn]):
        columns = Taken(values, np.asarray)
        size = len(columns["T"])
        self._rows = _summaries(_fields(values), columns.__getitem__, size)

    def __getitem__(self, index: int) -> dict[str, FieldValue]:
        return self._rows[index]


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
