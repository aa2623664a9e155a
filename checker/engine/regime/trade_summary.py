"""The solved state of one operating point in trade units: the ``state`` object of the
JSON reports (``check`` and ``state`` commands) and of the Python API.

One function for both, so that a quantity has one name everywhere (the points above
a Mott density are ``above_mott_density``).
"""

from __future__ import annotations

import numpy as np

from ...physics.carriers import regime_label
from ...physics.constants import EV

PER_CM3 = 1e-6  # m^-3 -> cm^-3


def trade_summary(values, index=()) -> dict:
    """Trade-unit numbers of point ``index`` of ``values`` (quantity names of
    :mod:`checker.engine.vocabulary`, SI).  Where the values carry the solve's
    ``residual`` (the ``state`` command), the band densities of states and the
    residual are added."""

    def pick(name):
        return float(np.asarray(values[name])[index])

    kT = pick("kT")
    summary = {
        "regime": str(np.asarray(values["regime"])[index]),
        "temperature_K": pick("T"),
        "EF_minus_EC_eV": pick("eta_n") * kT / EV,
        "EF_minus_EV_eV": -pick("eta_p") * kT / EV,
        "eta_n": pick("eta_n"),
        "eta_p": pick("eta_p"),
        "n_cm3": pick("dens_n") * PER_CM3,
        "p_cm3": pick("dens_p") * PER_CM3,
        "donors_ionized_fraction": pick("f_n"),
        "acceptors_ionized_fraction": pick("f_p"),
        "ni_cm3": pick("ni") * PER_CM3,
        "band_gap_eV": pick("Eg") / EV,
        "above_mott_density": bool(pick("metal_n") > 0 or pick("metal_p") > 0),
    }
    if "residual" in values:
        summary.update(
            {
                "Nc_cm3": pick("Nband_n") * PER_CM3,
                "Nv_cm3": pick("Nband_p") * PER_CM3,
                "neutrality_residual": pick("residual"),
            }
        )
    return summary


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
