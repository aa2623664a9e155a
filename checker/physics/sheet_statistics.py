"""Statistics of sheets: the Fermi level of a zero-gap sheet from its net density, and the
unidirectional velocity of any band from the energy window, vectorized.

SI units: densities per m^2, temperatures in K, velocities in m/s; eta is the reduced
Fermi level (E_F - E_D)/kT of a linear band or (E_F - E_ref)/kT of parabolic subbands.

References
----------
T. Fang, A. Konar, H. Xing and D. Jena, Appl. Phys. Lett. 91, 092109 (2007) (carrier
statistics of graphene); M. Lundstrom and C. Jeong, Near-Equilibrium Transport (World
Scientific, 2012), ch. 2-6 (modes, lambda = 2D/<v_x+>).
"""

from __future__ import annotations

import numpy as np

from ..errors import ConvergenceError
from . import energy_window
from .arrays import ArrayIn, FloatArray
from .bands import Band
from .constants import BOLTZMANN, ELEMENTARY_CHARGE
from .fermi import fermi_dirac

_LN4 = 2.0 * np.log(2.0)  # slope of F_1(eta) - F_1(-eta) at eta = 0


def dirac_eta_from_net_density(band: Band, net: ArrayIn, T: ArrayIn) -> FloatArray:
    """eta = (E_F - E_D)/kT of a linear zero-gap band holding the net density n - p.

    Formula: solves N_eff [F_1(eta) - F_1(-eta)] = n - p (``energy_window.
    dirac_net_density``), N_eff = (g_s g_v/2 pi)(kT/hbar v_F)^2.  The left side is odd,
    increasing and convex for eta > 0 (slope F_0(eta) + F_0(-eta) >= 2 ln 2), so Newton
    started at the upper bound min(sqrt(2u), u/(2 ln 2)) of |eta| (u = |n - p|/N_eff)
    falls monotonically onto the root.  Units: net in m^-2 (any sign), T in K.
    Validity: any n - p; |d eta| <= 1e-13 (1 + |eta|) at return.

    References
    ----------
    T. Fang et al., Appl. Phys. Lett. 91, 092109 (2007), eq. (1).
    """
    net_arr, T_arr = np.broadcast_arrays(np.asarray(net, float), np.asarray(T, float))
    u = np.abs(net_arr) / energy_window.effective_density(band, T_arr)
    eta = np.minimum(np.sqrt(2.0 * u), u / _LN4)
    for _ in range(100):
        g = fermi_dirac(1, eta) - fermi_dirac(1, -eta) - u
        slope = fermi_dirac(0, eta) + fermi_dirac(0, -eta)
        step = g / slope
        eta = eta - step
        if np.all(np.abs(step) <= 1e-13 * (1.0 + np.abs(eta))):
            signed: FloatArray = np.sign(net_arr) * eta
            return signed
    raise ConvergenceError("the Dirac-point Fermi level did not converge in 100 Newton steps")


def unidirectional_velocity(bands: energy_window.Bands, eta: ArrayIn, T: ArrayIn) -> FloatArray:
    """<v_x+> of the carriers of ``bands`` from the energy window (m/s).

    Formula: with a constant mean free path lambda the diffusive conductivity is
    sigma = (g_s q^2/h) lambda <M> (``energy_window.diffusive_conductivity``) and
    sigma = q n mu, D = mu (kT/q) (D/mu ratio); lambda = 2D/<v_x+> then gives
    <v_x+> = 2 kT (D/mu ratio) sigma_1/(q^2 n), sigma_1 the conductivity per metre of
    lambda.  Limits: sqrt(2kT/(pi m*)) for a non-degenerate parabolic band in 1D, 2D
    and 3D; (2/pi) v_F for a linear 2D band at every eta.  Units: T in K.  NaN where
    the carrier density underflows to 0 (a few kelvin in a wide-gap or undoped crystal).

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2 and 6.
    """
    density = energy_window.carrier_density(bands, eta, T)
    per_metre = energy_window.diffusive_conductivity(bands, eta, T, 1.0)
    ratio = energy_window.generalized_einstein_ratio(bands, eta, T)
    kT = BOLTZMANN * np.asarray(T, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):  # n underflows to 0: unknown (NaN)
        velocity: FloatArray = 2.0 * kT * ratio * per_metre / (ELEMENTARY_CHARGE**2 * density)
    return velocity


__all__ = ["dirac_eta_from_net_density", "unidirectional_velocity"]
