"""Isotropic band descriptions: parabolic, Kane non-parabolic and linear (Dirac) bands.

A band is described by its dispersion through k^2(E), the squared wavevector at
kinetic energy E above its edge, and by its valley and spin degeneracy.  For an
isotropic band in d dimensions everything the energy-window engine needs follows
from k^2(E) (spin degeneracy g_s, valley degeneracy g_v, V_d the volume of the
unit d-ball: V_0 = 1, V_1 = 2, V_2 = pi, V_3 = 4 pi / 3):

    states below E, per m^d        N(E) = g_s g_v V_d k^d / (2 pi)^d
    density of states, J^-1 m^-d   D(E) = dN/dE
    modes per spin, m^-(d-1)       M(E) = g_v V_(d-1) k^(d-1) / (2 pi)^(d-1)

M(E) counts the transverse modes of a conductor of unit cross-section (1D: one
per valley, 2D: per metre of width, 3D: per square metre) at energy E, without
spin; the conductance prefactor carries the spin (g_s q^2/h).

SI units: energies in J measured from the band's own edge (a subband bottom,
or the Dirac point), wavevectors in m^-1, the effective mass as a ratio to the
free-electron mass m_0, the Kane coefficient alpha in J^-1, velocities in m/s.

References
----------
M. Lundstrom and C. Jeong, Near-Equilibrium Transport (World Scientific, 2012),
ch. 2 (density of states and number of modes from the dispersion, any dimension).
E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957) (non-parabolic dispersion).
A. H. Castro Neto et al., Rev. Mod. Phys. 81, 109 (2009) (graphene, E = +-hbar v_F |k|).
"""

from __future__ import annotations

import math
import numbers
from typing import TypeAlias, TypeGuard

import numpy as np

from ..errors import InputError
from ..records import FrozenRecord
from .arrays import ArrayIn, FloatArray
from .constants import ELECTRON_MASS, HBAR

# volume of the unit ball in 0..3 dimensions
_BALL = {0: 1.0, 1: 2.0, 2: math.pi, 3: 4.0 * math.pi / 3.0}


def _is_real(value: object) -> bool:
    return isinstance(value, numbers.Real) and not isinstance(value, bool) and math.isfinite(value)


def _positive(name: str, value: float) -> None:
    if not (_is_real(value) and value > 0):
        raise InputError(f"{name} must be a finite positive number, got {value!r}")


def _check_common(band: Band, dimensions: tuple[int, ...]) -> None:
    if band.dimension not in dimensions:
        raise InputError(
            f"{type(band).__name__} needs dimension in {dimensions}, got {band.dimension!r}"
        )
    _positive("valley_degeneracy", band.valley_degeneracy)
    _positive("spin_degeneracy", band.spin_degeneracy)
    if not _is_real(band.edge):
        raise InputError(f"edge must be a finite energy in J, got {band.edge!r}")


class ParabolicBand(FrozenRecord):
    """E = hbar^2 k^2 / (2 m* m_0): k^2 = (2 m* m_0 / hbar^2) E.

    ``mass`` is the density-of-states mass of one valley over m_0; ``edge`` the
    energy (J) of the band edge or subband bottom above the reference energy of
    eta.  Validity: near a band minimum (E << the band gap).

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2.
    """

    dimension: int
    mass: float
    valley_degeneracy: float = 1.0
    spin_degeneracy: float = 2.0
    edge: float = 0.0

    power = 1  # k^2 = c E^power

    def __post_init__(self) -> None:
        _check_common(self, (1, 2, 3))
        _positive("mass", self.mass)

    @property
    def k_squared_coefficient(self) -> float:
        """c in k^2 = c E (m^-2 J^-1)."""
        return 2.0 * self.mass * ELECTRON_MASS / HBAR**2

    def k_squared(self, energy: ArrayIn) -> FloatArray:
        """k^2(E) in m^-2 for E in J (E >= 0)."""
        return self.k_squared_coefficient * np.asarray(energy, dtype=float)

    def k_squared_slope(self, energy: ArrayIn) -> FloatArray:
        """d(k^2)/dE in m^-2 J^-1."""
        return np.full_like(np.asarray(energy, dtype=float), self.k_squared_coefficient)


class KaneBand(FrozenRecord):
    """Kane non-parabolic band E (1 + alpha E) = hbar^2 k^2 / (2 m* m_0).

    ``alpha`` in J^-1 (alpha in eV^-1 divided by the joules per eV); alpha = 0
    is the parabolic band.  Usual 3D estimate alpha ~ (1 - m*)^2 / E_g.
    Dimensions 3 and 2 (a quantum well's in-plane dispersion), 1 also allowed.
    Validity: the two-band k.p model near the Gamma minimum of a direct gap.

    References
    ----------
    E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957); I. Vurgaftman, J. R. Meyer and
    L. R. Ram-Mohan, J. Appl. Phys. 89, 5815 (2001) (parameters of III-V compounds).
    """

    dimension: int
    mass: float
    alpha: float
    valley_degeneracy: float = 1.0
    spin_degeneracy: float = 2.0
    edge: float = 0.0

    power = None  # not a power law: quadrature

    def __post_init__(self) -> None:
        _check_common(self, (1, 2, 3))
        _positive("mass", self.mass)
        if not (_is_real(self.alpha) and self.alpha >= 0):
            raise InputError(f"alpha must be a finite number >= 0 (J^-1), got {self.alpha!r}")

    def k_squared(self, energy: ArrayIn) -> FloatArray:
        """k^2(E) = (2 m* m_0 / hbar^2) E (1 + alpha E) in m^-2."""
        e = np.asarray(energy, dtype=float)
        return 2.0 * self.mass * ELECTRON_MASS / HBAR**2 * e * (1.0 + self.alpha * e)

    def k_squared_slope(self, energy: ArrayIn) -> FloatArray:
        """d(k^2)/dE = (2 m* m_0 / hbar^2) (1 + 2 alpha E) in m^-2 J^-1."""
        e = np.asarray(energy, dtype=float)
        return 2.0 * self.mass * ELECTRON_MASS / HBAR**2 * (1.0 + 2.0 * self.alpha * e)


class DiracBand(FrozenRecord):
    """Linear zero-gap 2D band E = +-hbar v_F |k| (graphene: g_v = 2, g_s = 2).

    One description serves both cones: the engine's densities are those of the
    upper cone (electrons) at eta = (E_F - E_D)/kT; the holes of the lower cone
    are the same functions at -eta.  ``fermi_velocity`` in m/s; ``edge`` is the
    Dirac point E_D.  Validity: |E - E_D| well below the band width (graphene:
    up to ~1 eV).

    References
    ----------
    A. H. Castro Neto et al., Rev. Mod. Phys. 81, 109 (2009); T. Fang et al.,
    Appl. Phys. Lett. 91, 092109 (2007) (carrier statistics of graphene).
    """

    fermi_velocity: float
    valley_degeneracy: float = 2.0
    spin_degeneracy: float = 2.0
    edge: float = 0.0

    dimension = 2
    power = 2

    def __post_init__(self) -> None:
        _check_common(self, (2,))
        _positive("fermi_velocity", self.fermi_velocity)

    @property
    def k_squared_coefficient(self) -> float:
        """c in k^2 = c E^2 (m^-2 J^-2)."""
        return 1.0 / (HBAR * self.fermi_velocity) ** 2

    def k_squared(self, energy: ArrayIn) -> FloatArray:
        """k^2(E) = E^2 / (hbar v_F)^2 in m^-2."""
        e = np.asarray(energy, dtype=float)
        k2: FloatArray = self.k_squared_coefficient * e * e
        return k2

    def k_squared_slope(self, energy: ArrayIn) -> FloatArray:
        """d(k^2)/dE = 2 E / (hbar v_F)^2 in m^-2 J^-1."""
        return 2.0 * self.k_squared_coefficient * np.asarray(energy, dtype=float)


Band: TypeAlias = ParabolicBand | KaneBand | DiracBand
PowerLawBand: TypeAlias = ParabolicBand | DiracBand  # k^2 = c E^power


def is_power_law(band: Band) -> TypeGuard[PowerLawBand]:
    """True for bands with k^2 = c E^power (closed Fermi–Dirac forms exist)."""
    return band.power is not None


def parabolic_subbands(
    dimension: int, mass: float, energies: ArrayIn, valley_degeneracy: float = 1.0
) -> tuple[ParabolicBand, ...]:
    """A ladder of parabolic subbands of one mass: one ParabolicBand per energy (J).

    ``energies`` are the subband bottoms above the reference energy of eta
    (e.g. the lowest subband at 0).  Use several ladders (a tuple of bands) for
    subbands of different masses or valley degeneracies (Si(100): 2 and 4 valleys).

    References
    ----------
    T. Ando, A. B. Fowler and F. Stern, Rev. Mod. Phys. 54, 437 (1982), sec. III.
    """
    return tuple(
        ParabolicBand(dimension, mass, valley_degeneracy, edge=float(e))
        for e in np.atleast_1d(np.asarray(energies, dtype=float))
    )


def _k_power(k2: FloatArray, twice: int) -> FloatArray:
    """(k^2)^(twice/2) for an integer ``twice``; sqrt and products instead of a general power."""
    if twice == 0:
        return np.ones_like(k2)
    if twice == 2:
        return k2
    root = np.sqrt(k2)
    if twice == 1:
        return root
    if twice == 3:
        root *= k2
        return root
    if twice == -1:
        return np.divide(1.0, root, out=root)
    powered: FloatArray = k2 ** (twice / 2.0)
    return powered


def _state_factor(band: Band) -> float:
    d = band.dimension
    return band.spin_degeneracy * band.valley_degeneracy * _BALL[d] / (2.0 * math.pi) ** d


def _mode_factor(band: Band) -> float:
    d = band.dimension
    return band.valley_degeneracy * _BALL[d - 1] / (2.0 * math.pi) ** (d - 1)


def states_below(band: Band, energy: ArrayIn) -> FloatArray:
    """N(E) = g_s g_v V_d k(E)^d / (2 pi)^d: states per m^d with kinetic energy below E.

    Units: E in J (from the band edge) -> m^-d.  0 for E <= 0.

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2.
    """
    k2 = band.k_squared(np.maximum(energy, 0.0))
    return _state_factor(band) * _k_power(k2, band.dimension)


def density_of_states(band: Band, energy: ArrayIn) -> FloatArray:
    """D(E) = dN/dE = g_s g_v V_d (d/2) k^(d-2) (dk^2/dE) / (2 pi)^d in J^-1 m^-d.

    3D parabolic: g_v (m*)^(3/2) sqrt(2E) / (pi^2 hbar^3); 2D: g_v m*/(pi hbar^2);
    graphene: 2|E|/(pi hbar^2 v_F^2).  Valid for E > 0 (1D diverges as E^-1/2).

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2.
    """
    e = np.asarray(energy, dtype=float)
    k2 = band.k_squared(e)
    d = band.dimension
    return _state_factor(band) * (d / 2.0) * _k_power(k2, d - 2) * band.k_squared_slope(e)


def mode_density(band: Band, energy: ArrayIn) -> FloatArray:
    """M(E) = g_v V_(d-1) k^(d-1) / (2 pi)^(d-1): modes per spin, per unit cross-section.

    Units: 1D dimensionless (g_v per subband), 2D m^-1 (g_v k/pi), 3D m^-2
    (g_v k^2/(4 pi)).  Graphene: 2|E|/(pi hbar v_F).  E in J from the edge, E >= 0.

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2 (M = (h/4) <v_x^+> D).
    """
    k2 = band.k_squared(np.maximum(energy, 0.0))
    return _mode_factor(band) * _k_power(k2, band.dimension - 1)


def _kane_mode_area_factor(y: FloatArray) -> FloatArray:
    """g(y) = (3/2) ∫_0^1 sqrt(u (1 + y u)) du: 1 at y = 0 (series below y = 0.01)."""
    series = 1.0 + y * (3.0 / 10.0 + y * (-3.0 / 56.0 + y * (1.0 / 48.0 - y * 15.0 / 1408.0)))
    big = np.maximum(y, 1e-2)
    root = np.sqrt(big + big * big)
    closed = 1.5 * ((2.0 * big + 1.0) * root - np.arcsinh(np.sqrt(big))) / (4.0 * big**1.5)
    return np.where(y < 1e-2, series, closed)


def modes_below(band: Band, energy: ArrayIn) -> FloatArray:
    """M_c(E) = ∫_0^E M(E') dE': the modes per spin below E, times energy (J m^-(d-1)).

    The carriers' flux in +x is (2 g_s/h) ∫ M f dE = (2 g_s/h) ∫ M_c (-df/dE) dE
    (M = (h/4) v_x^+ D per spin), so <v_x^+> = that flux over n.
    Power-law bands (M = A E^a): A E^(a+1)/(a+1).  Kane bands (c = 2 m* m_0/hbar^2):
    3D g_v c (E^2/2 + alpha E^3/3)/(4 pi); 2D (g_v/pi) sqrt(c) (2/3) E^(3/2) g(alpha E)
    with g(y) = 3 [(2y + 1) sqrt(y + y^2) - asinh(sqrt y)] / (8 y^(3/2)) (a binomial
    series below y = 0.01, truncation < 1e-12); 1D g_v E.  E in J from the edge; 0 for
    E <= 0.

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2 (M = (h/4) <v_x^+> D);
    E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957).
    """
    e = np.maximum(np.asarray(energy, dtype=float), 0.0)
    d, factor = band.dimension, _mode_factor(band)
    if not isinstance(band, KaneBand):
        a = band.power * (d - 1) / 2.0
        scale = factor * band.k_squared_coefficient ** ((d - 1) / 2.0) / (a + 1.0)
        power_law: FloatArray = scale * e ** (a + 1.0)
        return power_law
    c = 2.0 * band.mass * ELECTRON_MASS / HBAR**2
    if d == 3:
        cubic: FloatArray = factor * c * e * e * (0.5 + band.alpha * e / 3.0)
        return cubic
    if d == 2:
        area: FloatArray = _kane_mode_area_factor(band.alpha * e) * e**1.5
        return factor * math.sqrt(c) * (2.0 / 3.0) * area
    linear: FloatArray = factor * e
    return linear


def mean_free_path_exponent(band: Band, time_exponent: float) -> float:
    """r of lambda(E) ∝ E^r for a relaxation time tau ∝ E^s (power-law bands).

    lambda = c_d v tau (c_3 = 4/3, c_2 = pi/2, c_1 = 2) and v ∝ E^(1 - p/2) for
    k^2 ∝ E^p, so r = s + 1 - p/2: s + 1/2 for parabolic bands (acoustic phonons
    s = -1/2 give r = 0), s for linear bands.  The Hall factor of
    ``physics.hall`` takes s, not r.  Kane bands have no single exponent (InputError).

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 6 (lambda(E) and tau(E)).
    """
    if band.power is None:
        raise InputError(
            "a Kane band has no power-law mean free path for tau ∝ E^s; "
            "give lambda(E) = lambda_0 (E/kT)^r directly"
        )
    return time_exponent + 1.0 - band.power / 2.0
