"""The solved state of one operating point in trade units: the ``state`` object of the
JSON reports (``check`` and ``state`` commands) and of the Python API.

One function for both, over the one table of fields
(:mod:`checker.quantity_registry.summary_fields`), so that a quantity has one name
everywhere (the points above a Mott density are ``above_mott_density``).
"""

from __future__ import annotations

import numpy as np

from ...physics.carriers import regime_label
from ...quantity_registry.summary_fields import JSON_FIELDS


def trade_summary(values, index=()) -> dict:
    """Trade-unit numbers of point ``index`` of ``values`` (registered quantity names, SI).
    Where the values carry the solve's ``residual`` (the ``state`` command), the band
    densities of states and the residual are added."""

    def get(name):
        return np.asarray(values[name])[index]

    full = "residual" in values
    return {f.key: f.value(get) for f in JSON_FIELDS if full or not f.state_only}


def state_values(state) -> dict:
    """The quantities :func:`trade_summary` reads, from a physics ``State``."""
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
        "ni": state.ni,
        "Eg": state.Eg,
        "Nband_n": state.Nc,
        "Nband_p": state.Nv,
        "residual": state.residual,
        # the State keeps one flag: some species (of either type) above its Mott density
        "metal_n": state.metallic,
        "metal_p": state.metallic,
    }
