"""Transport: generalized Einstein relation, mobility, conductivity, thermal
velocity and backscattering mean free path.

The relations written in engine/formulas/relation_table.py (Einstein ratio,
Caughey–Thomas velocity and mobility, conductivity, the short-conductor resistance
``_relations.conductor_resistance``) are computed by the generated ``_relations``
module: one implementation for the physics layer and the rules.

All functions are vectorized and use SI units: mobility m^2/(V s), diffusion
coefficient m^2/s, density m^-3, conductivity S/m, resistivity ohm m, length m,
velocity m/s, field V/m, temperature K.
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError
from . import _relations, energy_window
from .arrays import ArrayIn, FloatOrArray
from .bands import Band, KaneBand, ParabolicBand
from .constants import BOLTZMANN, ELECTRON_MASS, ELEMENTARY_CHARGE
from .fermi import log_fermi_dirac

# dimensionality -> (order j of the density integral) ; D/mu uses F_j / F_{j-1}
_DENSITY_ORDER = {3: 0.5, 2: 0.0, 1: -0.5}


def _dimension(dimension: object) -> int:
    if dimension not in _DENSITY_ORDER:
        raise InputError(f"dimensionality must be 3, 2 or 1, got {dimension!r}")
    return int(dimension)


def einstein_ratio(eta: ArrayIn, dimension: int = 3) -> FloatOrArray:
    """Generalized Einstein ratio (D/mu)/(kT/q) for a parabolic band.

    Formula: F_j(eta)/F_{j-1}(eta) with j = 1/2 (3D), 0 (2D), -1/2 (1D).
    Units: dimensionless.  Limits: 1 for eta -> -inf (Einstein relation);
    eta/(j+1) for eta >> 1 (3D: (2/3)(E_F - E_C)/kT).
    Validity: parabolic band, single subband in 2D/1D.

    References
    ----------
    P. T. Landsberg, Eur. J. Phys. 2, 213 (1981); M. Lundstrom, Fundamentals
    of Carrier Transport, 2nd ed. (2000), ch. 3.
    """
    return _relations.einstein_ratio(_dimension(dimension), eta)


def diffusion_coefficient(
    mobility: ArrayIn, T: ArrayIn, eta: ArrayIn, dimension: int = 3, band: Band | None = None
) -> FloatOrArray:
    """D = mu (kT/q) F_j/F_{j-1}: the diffusion coefficient (m^2/s).

    Units: mobility m^2/(V s), T in K.  Reduces to D = mu kT/q when non-degenerate.
    ``band`` (e.g. a Kane band): D = mu (kT/q) n/(dn/deta) of that band instead
    (``energy_window.generalized_einstein_ratio``); None: the parabolic closed form.

    References
    ----------
    Lundstrom, Fundamentals of Carrier Transport (2000), ch. 3; P. T. Landsberg,
    Eur. J. Phys. 2, 213 (1981) (D/mu = n/(q dn/dE_F) for any band).
    """
    ratio = (
        einstein_ratio(eta, dimension)
        if band is None
        else energy_window.generalized_einstein_ratio(band, eta, T)
    )
    diffusion: FloatOrArray = (
        np.asarray(mobility, dtype=float)
        * BOLTZMANN
        * np.asarray(T, dtype=float)
        / ELEMENTARY_CHARGE
        * ratio
    )
    return diffusion


def field_dependent_mobility(
    mu_low: ArrayIn, field: ArrayIn, v_sat: ArrayIn, beta: ArrayIn
) -> FloatOrArray:
    """Caughey–Thomas field dependence mu(E) = mu0 / (1 + (mu0 E / v_sat)^beta)^(1/beta).

    Units: mu0 m^2/(V s), E V/m, v_sat m/s.  Validity: monotone saturation
    (no negative differential mobility, e.g. GaAs above ~3 kV/cm).

    References
    ----------
    D. M. Caughey and R. E. Thomas, Proc. IEEE 55, 2192 (1967); C. Canali et
    al., IEEE Trans. Electron Devices 22, 1045 (1975).
    """
    magnitude = np.abs(np.asarray(field, dtype=float))
    return _relations.field_mobility(np.asarray(mu_low, dtype=float), magnitude, v_sat, beta)


def drift_velocity(mu_low: ArrayIn, field: ArrayIn, v_sat: ArrayIn, beta: ArrayIn) -> FloatOrArray:
    """|v| = mu(E) |E| (m/s) with the Caughey–Thomas mobility.

    References
    ----------
    Caughey & Thomas, Proc. IEEE 55, 2192 (1967).
    """
    magnitude = np.abs(np.asarray(field, dtype=float))
    return _relations.field_velocity(np.asarray(mu_low, dtype=float), magnitude, v_sat, beta)


def conductivity(n: ArrayIn, p: ArrayIn, mu_n: ArrayIn, mu_p: ArrayIn) -> FloatOrArray:
    """sigma = q (n mu_n + p mu_p) in S/m (two-carrier drift conductivity).

    References
    ----------
    Sze & Ng, Physics of Semiconductor Devices, 3rd ed. (2007), ch. 1.
    """
    return _relations.two_carrier_conductivity(
        np.asarray(n), np.asarray(p), mu_n, mu_p, ELEMENTARY_CHARGE
    )


# <v_x+> of a Maxwellian is sqrt(2kT/(pi m*)) in every dimensionality: the x-velocity
# distribution is the same Gaussian (sqrt(pi kT/(2 m*)) is the 2D mean *speed*, not <v_x+>)
_THERMAL_PREFACTOR = 2.0 / np.pi


def unidirectional_thermal_velocity(
    T: ArrayIn,
    mass: ArrayIn,
    eta: ArrayIn | None = None,
    dimension: int = 3,
    band: KaneBand | ParabolicBand | None = None,
) -> FloatOrArray:
    """Mean velocity of the carriers moving in +x, <v_x^+> (m/s).

    Formula: non-degenerate sqrt(2kT/(pi m*)) in 3D, 2D and 1D alike; with Fermi–Dirac
    statistics multiplied by F_1/F_1/2 (3D), F_1/2/F_0 (2D) or F_0/F_-1/2 (1D).
    Degenerate 3D limit: (3/8) v_F.  ``mass`` in units of m0 (a conductivity effective
    mass).  Validity: parabolic band.  ``band`` (e.g. a Kane band) with ``eta``: the
    non-degenerate value above times <v_x^+>/<v_x^+>_0 of that band
    (``energy_window.forward_velocity`` over its own non-degenerate parabolic value).

    References
    ----------
    M. Lundstrom and C. Jeong, Near-Equilibrium Transport (World Scientific,
    2012), ch. 2 and 6.
    """
    dim = _dimension(dimension)
    T = np.asarray(T, dtype=float)
    base = np.sqrt(_THERMAL_PREFACTOR * BOLTZMANN * T / (np.asarray(mass) * ELECTRON_MASS))
    if eta is None:
        return base
    if band is not None:
        own = np.sqrt(_THERMAL_PREFACTOR * BOLTZMANN * T / (band.mass * ELECTRON_MASS))
        factor: FloatOrArray = energy_window.forward_velocity(band, eta, T) / own
        return base * factor
    j = _DENSITY_ORDER[dim]
    upper = j + 0.5
    return base * np.exp(log_fermi_dirac(upper, eta) - log_fermi_dirac(j, eta))


def window_velocity(
    T: ArrayIn,
    mass: ArrayIn,
    eta: ArrayIn,
    dimension: int = 3,
    band: KaneBand | ParabolicBand | None = None,
) -> FloatOrArray:
    """<<v_x^+>>: the velocity of the carriers moving in +x weighted by the transport window
    -df/dE (m/s), the one that ties a backscattering mean free path lambda to D:
    D = <<v_x^+>> lambda/2 for any degeneracy (with <v_x^+> of the occupied states that holds
    only in the Boltzmann regime).

    Formula: sqrt(2kT/(pi m*)) F_(j-1/2)(eta)/F_(j-1)(eta), j = d/2 - 1 the density order:
    F_0/F_-1/2 (3D), F_-1/2/F_-1 (2D), F_-1/F_-3/2 (1D).  Limits: sqrt(2kT/(pi m*)) (non-
    degenerate, = <v_x^+>); v_F/2 (degenerate 3D), 2 v_F/pi (2D), v_F (1D).  ``mass`` in m0
    (a conductivity mass); ``band`` (e.g. a Kane band): the non-degenerate value times that
    band's window velocity (``sheet_statistics.unidirectional_velocity``) over its own
    non-degenerate parabolic value.  Validity: elastic scattering, near equilibrium.

    References
    ----------
    M. Lundstrom and C. Jeong, Near-Equilibrium Transport (World Scientific, 2012), ch. 6
    (D, mu and lambda_0 of a constant mean free path: D = (v_T lambda_0/2) F_0/F_-1/2 in 3D).
    """
    from .sheet_statistics import unidirectional_velocity  # the window form of any band

    dim = _dimension(dimension)
    T = np.asarray(T, dtype=float)
    base = np.sqrt(_THERMAL_PREFACTOR * BOLTZMANN * T / (np.asarray(mass) * ELECTRON_MASS))
    if band is not None:
        own = np.sqrt(_THERMAL_PREFACTOR * BOLTZMANN * T / (band.mass * ELECTRON_MASS))
        factor: FloatOrArray = unidirectional_velocity(band, eta, T) / own
        return base * factor
    j = _DENSITY_ORDER[dim]
    return base * np.exp(log_fermi_dirac(j - 0.5, eta) - log_fermi_dirac(j - 1.0, eta))


def backscattering_mean_free_path(diffusion: ArrayIn, thermal_velocity: ArrayIn) -> FloatOrArray:
    """lambda = 2 D / <<v_x^+>> (m): the mean free path for backscattering.

    Use the Fermi–Dirac D and the window velocity (:func:`window_velocity`) when
    degenerate: lambda is then the constant mean free path whose Landauer conductance
    (2q^2/h) <M> lambda/(lambda + L) gives the diffusive sigma for L >> lambda.

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 6; C. Jeong et
    al., J. Appl. Phys. 107, 023707 (2010).
    """
    path: FloatOrArray = (
        2.0 * np.asarray(diffusion, dtype=float) / np.asarray(thermal_velocity, dtype=float)
    )
    return path
