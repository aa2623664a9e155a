"""A material's description of one band, turned into the physics bands of ``bands.py``.

A material file says how each carrier's band is shaped (parabolic, Kane non-parabolic
or linear zero-gap), its density-of-states mass per valley and its valley degeneracy;
:func:`bands_for` builds the :mod:`checker.physics.bands` objects for a dimensionality
(3D bulk, a 2D ladder of subbands, a 1D ladder).  Pure numpy, SI inside: masses over
m_0, the Kane coefficient in J^-1, velocities in m/s, energies in J.

References
----------
E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957) (non-parabolic dispersion);
T. Ando, A. B. Fowler and F. Stern, Rev. Mod. Phys. 54, 437 (1982) (subbands of 2D
electron gases); A. H. Castro Neto et al., Rev. Mod. Phys. 81, 109 (2009) (graphene).
"""

from __future__ import annotations

import math
from typing import Literal

import numpy as np

from ..errors import InputError
from ..records import FrozenRecord
from .arrays import ArrayIn
from .bands import Band, DiracBand, KaneBand, parabolic_subbands
from .constants import BOLTZMANN, ELECTRON_MASS, HBAR

BandModel = Literal["parabolic", "kane", "linear"]
BAND_MODELS: tuple[BandModel, ...] = ("parabolic", "kane", "linear")


class BandShape(FrozenRecord):
    """How a material describes one carrier's band (no temperature dependence).

    ``model``: "parabolic", "kane" (E(1 + alpha E) = hbar^2 k^2/2m*) or "linear"
    (E = +-hbar v_F |k|, zero gap, 2D only).  ``dos_mass``: density-of-states mass of
    one valley over m_0 (None: taken from the material's N_c or N_v).
    ``nonparabolicity``: alpha in J^-1 (Kane only).  ``fermi_velocity`` in m/s
    (linear only).  ``source``: where the values come from.
    """

    model: BandModel = "parabolic"
    dos_mass: float | None = None
    valley_degeneracy: float = 1.0
    nonparabolicity: float = 0.0
    fermi_velocity: float | None = None
    source: str | None = None


def mass_from_effective_density(density: float, T: float, valley_degeneracy: float) -> float:
    """Density-of-states mass of one valley (over m_0) that gives the 3D effective density.

    Formula: N = 2 g_v (m m_0 k T / (2 pi hbar^2))^(3/2), solved for m:
    m = (2 pi hbar^2 / (m_0 k T)) (N / (2 g_v))^(2/3).  Units: N in m^-3, T in K.
    Validity: a parabolic band (N proportional to T^(3/2)); for an N that is not a
    power law of one mass this is the mass at T.

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (2007), ch. 1.
    """
    thermal = 2.0 * math.pi * HBAR**2 / (ELECTRON_MASS * BOLTZMANN * T)
    return thermal * float(np.cbrt(density / (2.0 * valley_degeneracy)) ** 2)


def _edges(dimension: int, subband_energies: ArrayIn | None) -> tuple[float, ...]:
    """Subband bottoms (J): one at 0 by default; none allowed for a bulk band."""
    if subband_energies is None:
        return (0.0,)
    if dimension == 3:
        raise InputError("a bulk (3D) band has no subbands; give subband energies for 2D or 1D")
    edges = np.atleast_1d(np.asarray(subband_energies, dtype=float))
    if edges.ndim != 1 or edges.size == 0 or not np.all(np.isfinite(edges)):
        raise InputError(
            "subband energies must be a non-empty list of finite energies (J), "
            f"got {subband_energies!r}"
        )
    return tuple(float(e) for e in edges)


def bands_for(
    shape: BandShape,
    mass: float | None,
    dimension: int,
    subband_energies: ArrayIn | None = None,
) -> tuple[Band, ...]:
    """The physics bands of ``shape`` in ``dimension`` (3, 2 or 1), one per subband.

    ``mass`` is the density-of-states mass of one valley over m_0 (ignored for a linear
    band).  ``subband_energies`` (J, above the reference energy of eta) give a ladder of
    subbands of the same mass and valley degeneracy (2D, 1D); default one subband at 0.
    A linear band is 2D only and has no ladder (its edge is the Dirac point).

    References
    ----------
    T. Ando, A. B. Fowler and F. Stern, Rev. Mod. Phys. 54, 437 (1982), sec. III.
    """
    if dimension not in (1, 2, 3):
        raise InputError(f"a band has dimension 3, 2 or 1, got {dimension!r}")
    g_v = shape.valley_degeneracy
    if shape.model == "linear":
        if dimension != 2 or subband_energies is not None:
            raise InputError(
                "a linear zero-gap band is two-dimensional and has no subband ladder; "
                "ask for dimension 2 without subband energies"
            )
        assert shape.fermi_velocity is not None  # the reader requires it
        return (DiracBand(shape.fermi_velocity, g_v),)
    if mass is None:
        raise InputError("a parabolic or Kane band needs its density-of-states mass")
    edges = _edges(dimension, subband_energies)
    if shape.model == "kane":
        alpha = shape.nonparabolicity
        return tuple(KaneBand(dimension, mass, alpha, g_v, edge=e) for e in edges)
    return parabolic_subbands(dimension, mass, edges, g_v)


__all__ = ["BAND_MODELS", "BandModel", "BandShape", "bands_for", "mass_from_effective_density"]
