"""Python API: solve operating points by material name, in SI units.

Densities are m^-3 and temperatures K (multiply cm^-3 values by ``PER_CM3``).
"""
from __future__ import annotations

import numpy as np

from .inputs.material_catalog import builtin_names, missing_parameters, resolve_material
from .physics import equilibrium, transport
from .physics.constants import BOLTZMANN, ELEMENTARY_CHARGE, EV
from .physics.materials import Material

PER_CM3 = 1e6           # cm^-3 -> m^-3
CM2_PER_VS = 1e-4       # cm^2/(V s) -> m^2/(V s)


def load_material(material) -> Material:
    """A built-in material by name ("Si", "GaAs", ...), a Material, or a user mapping."""
    return resolve_material(material)


def builtin_materials() -> list[str]:
    return builtin_names()


def solve_equilibrium(material, temperature, donors=None, acceptors=None,
                      band_gap_narrowing=False) -> equilibrium.State:
    """Solve charge neutrality with Fermi–Dirac statistics at every point.

    ``temperature`` in K; ``donors`` / ``acceptors`` map species names to
    densities in m^-3; arrays broadcast together.  Returns a
    :class:`checker.physics.equilibrium.State` (eta_n, eta_p, n, p, ionized
    densities, n_i, E_g, N_c, N_v, metallic flags, residual).
    """
    return equilibrium.solve(load_material(material), temperature, donors, acceptors,
                             band_gap_narrowing=band_gap_narrowing)


def carrier_transport(state: equilibrium.State, dimension=3, mobility_model=None):
    """Mobilities, diffusion coefficients, conductivity and mean free paths at a State.

    Mobility comes from the material's model at the total dopant density
    N_D + N_A, the variable the published fits (Masetti, Arora,
    Caughey–Thomas tables) were made against; the dominant donor species
    selects the electron parameter set where the material has one per dopant.
    Returns a dict of SI arrays.
    """
    material = state.material
    electron = material.need("electron", "mobility (conductivity, Einstein relation)")
    hole = material.need("hole", "mobility (conductivity, Einstein relation)")
    impurities = state.donors_total + state.acceptors_total
    donor_species = max(state.donors, key=lambda k: float(np.max(state.donors[k])), default=None)
    mu_n = electron.low_field(impurities, state.T, mobility_model, donor_species)
    acceptor_species = max(state.acceptors, key=lambda k: float(np.max(state.acceptors[k])),
                           default=None)
    mu_p = hole.low_field(impurities, state.T, mobility_model, acceptor_species)
    d_n = transport.diffusion_coefficient(mu_n, state.T, state.eta_n, dimension)
    d_p = transport.diffusion_coefficient(mu_p, state.T, state.eta_p, dimension)
    result = {
        "mu_n": mu_n, "mu_p": mu_p, "D_n": d_n, "D_p": d_p,
        "sigma": transport.conductivity(state.n, state.p, mu_n, mu_p),
        "rho": transport.resistivity(state.n, state.p, mu_n, mu_p),
        "kT_over_q": BOLTZMANN * state.T / ELEMENTARY_CHARGE,
    }
    if electron.thermal_mass and hole.thermal_mass:
        v_n = transport.unidirectional_thermal_velocity(state.T, electron.thermal_mass, state.eta_n,
                                                        dimension)
        v_p = transport.unidirectional_thermal_velocity(state.T, hole.thermal_mass, state.eta_p,
                                                        dimension)
        result.update(v_n=v_n, v_p=v_p,
                      mfp_n=transport.backscattering_mean_free_path(d_n, v_n),
                      mfp_p=transport.backscattering_mean_free_path(d_p, v_p))
    return result


def regime_label(state: equilibrium.State, degenerate_eta=-3.0):
    """A short regime name per point: metallic, degenerate, intrinsic,
    incomplete ionization, extrinsic (checked in that order of precedence).

    Thresholds: eta > -3 counts as degenerate (the 3kT rule, common practice
    (no source)); intrinsic where n_i exceeds the net doping; incomplete
    ionization (freeze-out at low T, deep levels at any T) where under 90 % of
    the majority dopant is ionized (common practice (no source)).
    """
    net = np.abs(state.donors_total - state.acceptors_total)
    majority_fraction = np.where(state.donors_total >= state.acceptors_total,
                                 state.donor_fraction, state.acceptor_fraction)
    labels = np.full(np.shape(state.T), "extrinsic", dtype=object)
    labels[majority_fraction < 0.9] = "incomplete ionization"
    labels[state.ni > net] = "intrinsic"
    labels[(state.eta_n > degenerate_eta) | (state.eta_p > degenerate_eta)] = "degenerate"
    labels[state.metallic] = "metallic"
    return labels


def state_summary(state: equilibrium.State, index=()):
    """Trade-unit numbers of one point of a State (for reports and the CLI)."""
    pick = lambda a: float(np.asarray(a)[index])
    return {
        "material": state.material.name,
        "temperature_K": pick(state.T),
        "band_gap_eV": pick(state.Eg) / EV,
        "EF_minus_EC_eV": pick(state.ef_minus_ec_eV),
        "EF_minus_EV_eV": pick(state.ef_minus_ev_eV),
        "eta_n": pick(state.eta_n),
        "eta_p": pick(state.eta_p),
        "n_cm3": pick(state.n) / PER_CM3,
        "p_cm3": pick(state.p) / PER_CM3,
        "ni_cm3": pick(state.ni) / PER_CM3,
        "Nc_cm3": pick(state.Nc) / PER_CM3,
        "Nv_cm3": pick(state.Nv) / PER_CM3,
        "donors_ionized_fraction": pick(state.donor_fraction),
        "acceptors_ionized_fraction": pick(state.acceptor_fraction),
        "metallic": bool(np.asarray(state.metallic)[index]),
        "regime": str(regime_label(state)[index]) if np.ndim(state.T) else str(regime_label(state)),
        "neutrality_residual": pick(state.residual),
    }


__all__ = ["CM2_PER_VS", "PER_CM3", "builtin_materials", "carrier_transport", "load_material",
           "missing_parameters", "regime_label", "solve_equilibrium", "state_summary"]
