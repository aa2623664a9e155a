"""Python API: solve operating points by material name, in SI units.

Densities are m^-3 and temperatures K (multiply cm^-3 values by ``PER_CM3``).
"""

from __future__ import annotations

from .inputs.material_catalog import builtin_names, missing_parameters, resolve_material
from .physics import carriers, equilibrium
from .physics.materials import Material

PER_CM3 = 1e6  # cm^-3 -> m^-3
CM2_PER_VS = 1e-4  # cm^2/(V s) -> m^2/(V s)


def load_material(material) -> Material:
    """A built-in material by name ("Si", "GaAs", ...), a Material, or a user mapping."""
    return resolve_material(material)


def builtin_materials() -> list[str]:
    return builtin_names()


def solve_equilibrium(
    material, temperature, donors=None, acceptors=None, band_gap_narrowing=False
) -> equilibrium.State:
    """Solve charge neutrality with Fermi–Dirac statistics at every point.

    ``temperature`` in K; ``donors`` / ``acceptors`` map species names to
    densities in m^-3; arrays broadcast together.  Returns a
    :class:`checker.physics.equilibrium.State` (eta_n, eta_p, n, p, ionized
    densities, n_i, E_g, N_c, N_v, metallic flags, residual).
    """
    return equilibrium.solve(
        load_material(material),
        temperature,
        donors,
        acceptors,
        band_gap_narrowing=band_gap_narrowing,
    )


def carrier_transport(state: equilibrium.State, dimension=3, mobility_model=None):
    """Mobilities, diffusion coefficients, conductivity and mean free paths at a
    State (SI arrays); see :func:`checker.physics.carriers.carrier_transport`."""
    return carriers.carrier_transport(state, dimension, mobility_model)


regime_label = carriers.regime_label


def check_paths(paths, config=None):
    """Check calculation files, memos, tables (or directories of them); returns a
    RunResult with one report per calculation (state summary, findings) and the input
    errors.  ``config``: a TOML settings file; by default the [tool.regimecheck] table
    of the first pyproject.toml from the working directory upward, as the command does."""
    from .engine.run import check_paths as run
    from .inputs.config import load_config

    return run([str(p) for p in paths], config=load_config(config))


def state_summary(state: equilibrium.State, index=()):
    """Trade-unit numbers of one point of a State (for reports and the CLI): the
    ``state`` object of the JSON reports, with the band densities of states and the
    neutrality residual."""
    from .engine.regime.trade_summary import state_values, trade_summary

    return {"material": state.material.name, **trade_summary(state_values(state), index)}


__all__ = [
    "CM2_PER_VS",
    "PER_CM3",
    "builtin_materials",
    "carrier_transport",
    "check_paths",
    "load_material",
    "missing_parameters",
    "regime_label",
    "solve_equilibrium",
    "state_summary",
]
