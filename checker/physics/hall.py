"""Hall scattering factor and the carrier density a Hall measurement reports.

A Hall measurement gives R_H; the "Hall density" 1/(q|R_H|) equals the carrier
density only when the Hall scattering factor r_H = <tau^2>/<tau>^2 is one.
"""

from __future__ import annotations

from math import gamma

import numpy as np

from .arrays import ArrayIn, FloatArray, FloatOrArray
from .constants import ELEMENTARY_CHARGE
from .fermi import log_fermi_dirac

# exponent r of tau ∝ E^r for the usual limiting mechanisms
SCATTERING_EXPONENTS = {"acoustic": -0.5, "ionized-impurity": 1.5, "neutral-impurity": 0.0}


def _log_moment(eta: FloatArray, s: float, dimension: int) -> FloatOrArray:
    """ln of ∫ x^(d/2+s) (-df/dx) dx = ln Γ(d/2+1+s) + ln F_(d/2-1+s)(eta) (normalized F)."""
    a = dimension / 2.0 + s
    moment: FloatOrArray = np.log(gamma(a + 1.0)) + log_fermi_dirac(a - 1.0, eta)
    return moment


def hall_factor(eta: ArrayIn, r: float, dimension: int = 3) -> FloatOrArray:
    """Hall scattering factor r_H = <tau^2>/<tau>^2 for tau ∝ E^r, Fermi–Dirac statistics.

    Formula (parabolic band, energy-dependent relaxation time, weight
    x^(d/2) (-df/dx) with x = E/kT):

        r_H = Γ(d/2+1+2r) Γ(d/2+1) F_(d/2-1+2r)(η) F_(d/2-1)(η)
              / [Γ(d/2+1+r)² F_(d/2-1+r)(η)²]

    with normalized Fermi–Dirac integrals F_j.  Non-degenerate 3D limits:
    3π/8 = 1.178 (acoustic phonons, r = -1/2), 315π/512 = 1.933 (ionized
    impurities, r = 3/2), 1 (r = 0); it tends to 1 as η grows (degenerate).

    Units: dimensionless.  ``eta`` array-like (broadcasts), ``r`` a number with
    the needed orders d/2-1+r and d/2-1+2r in -3/2 … 7/2 (half-integer steps).
    Validity: single parabolic band, elastic scattering with one power law,
    low magnetic field.

    References
    ----------
    M. Lundstrom, Fundamentals of Carrier Transport, 2nd ed. (Cambridge, 2000), ch. 4
    (Hall factor as <tau^2>/<tau>^2 with Fermi–Dirac integrals).
    J. S. Blakemore, Semiconductor Statistics (Pergamon, 1962) (limits 3π/8, 315π/512).
    """
    eta = np.asarray(eta, dtype=float)
    logs = (
        _log_moment(eta, 2 * r, dimension)
        + _log_moment(eta, 0.0, dimension)
        - 2.0 * _log_moment(eta, r, dimension)
    )
    return np.exp(logs)


def hall_density(
    n: ArrayIn, p: ArrayIn, mu_n: ArrayIn, mu_p: ArrayIn, rH_n: FloatOrArray, rH_p: FloatOrArray
) -> FloatArray:
    """Density a Hall measurement reports, 1/(q|R_H|), for electrons and holes together.

    Formula (low field, two carrier types):
        R_H = (r_H,p p μ_p² − r_H,n n μ_n²) / (q (n μ_n + p μ_p)²),  n_H = 1/(q |R_H|).
    Single carrier: n_H = n / r_H.  Units: densities in m^-3 (any consistent
    unit), mobilities in any one unit; returns the unit of n.

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007),
    ch. 1 (Hall effect, mixed conduction).
    """
    n, p, mu_n, mu_p = (np.asarray(v, dtype=float) for v in (n, p, mu_n, mu_p))
    numerator = rH_p * p * mu_p**2 - rH_n * n * mu_n**2
    with np.errstate(invalid="ignore"):  # no carriers: R_H unknown (NaN)
        coefficient = numerator / (ELEMENTARY_CHARGE * (n * mu_n + p * mu_p) ** 2)
    with np.errstate(divide="ignore"):
        density: FloatArray = 1.0 / (ELEMENTARY_CHARGE * np.abs(coefficient))
    return density
