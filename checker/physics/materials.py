"""Material parameter models (pure numpy; SI units inside).

A :class:`Material` bundles the temperature and doping models the solver and
the transport functions need.  Each model is a small callable object whose
parameters are SI numbers; the data files that fill them (with their
sources) live in ``checker/data/materials`` and are read by the inputs layer.

Units: energies J, densities m^-3, mobilities m^2/(V s), velocities m/s,
fields V/m, temperatures K, masses in units of the free electron mass m0.
"""

from __future__ import annotations

from typing import Any, Protocol, TypeAlias

import numpy as np

from ..errors import InputError, MissingParameterError, UnknownDopantError
from ..records import FrozenRecord, field
from .arrays import ArrayIn, FloatArray, FloatOrArray, softplus
from .band_shapes import BandShape, bands_for, mass_from_effective_density
from .bands import Band
from .constants import BOLTZMANN, ELECTRON_MASS, ELEMENTARY_CHARGE, PLANCK, VACUUM_PERMITTIVITY

T_REF = 300.0


class MobilityModel(Protocol):
    """A low-field mobility model: mu(N_ionized in m^-3, T in K) in m^2/(V s), broadcasting."""

    def __call__(self, N: ArrayIn, T: ArrayIn) -> FloatArray: ...

    @property
    def provenance(self) -> Provenance: ...  # where its parameters come from


class Provenance(FrozenRecord):
    """Where a parameter comes from and where it may be used."""

    source: str
    valid_T: tuple[float, float] = (0.0, np.inf)  # K
    valid_N: tuple[float, float] = (0.0, np.inf)  # m^-3 (doping models)
    note: str = ""


class VarshniGap(FrozenRecord):
    """Band gap E_g(T) = E_g0 - alpha T^2 / (T + beta).

    Units: E_g0 in J, alpha in J/K, beta in K; T in K -> J.
    Validity: the fitted range in ``provenance.valid_T``.

    References
    ----------
    Y. P. Varshni, Physica 34, 149 (1967); parameters per material file.
    """

    Eg0: float
    alpha: float
    beta: float
    provenance: Provenance

    def __call__(self, T: ArrayIn) -> FloatArray:
        T = np.asarray(T, dtype=float)
        gap: FloatArray = self.Eg0 - self.alpha * T * T / (T + self.beta)
        return gap


class PowerLawDOS(FrozenRecord):
    """Effective density of states N(T) = N_300 (T/300 K)^exponent (parabolic: 3/2).

    Units: N_300 in m^-3; T in K -> m^-3.

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (2007), ch. 1.
    """

    N300: float
    exponent: float
    provenance: Provenance

    def __call__(self, T: ArrayIn) -> FloatArray:
        return self.N300 * (np.asarray(T, dtype=float) / T_REF) ** self.exponent


class MassPolynomialDOS(FrozenRecord):
    """Effective density of states with a temperature-dependent DOS mass:
    N(T) = 2 (2 pi m0 k T / h^2)^(3/2) D(T),  D(T) = (m_d(T)/m0)^(3/2) = sum_k a_k T^k.

    ``coefficients`` a_0, a_1, ... (T in K); beyond ``T_fit`` the mass is held at its
    value there (the cubic fits are not made for extrapolation).  Units: m^-3.

    References
    ----------
    R. Couderc, M. Amara and M. Lemiti, J. Appl. Phys. 115, 093705 (2014) (Si, fits
    to 500 K, after M. A. Green, J. Appl. Phys. 67, 2944 (1990)).
    """

    coefficients: tuple[float, ...]
    T_fit: float
    provenance: Provenance

    def __call__(self, T: ArrayIn) -> FloatArray:
        T = np.asarray(T, dtype=float)
        # Horner from the highest power, as numpy.polynomial's polyval (which a check
        # would import for this one call)
        mass_term = np.polyval(self.coefficients[::-1], np.minimum(T, self.T_fit))
        density: FloatArray = (
            2.0 * (2 * np.pi * ELECTRON_MASS * BOLTZMANN * T / PLANCK**2) ** 1.5 * mass_term
        )
        return density


class AltermattLowering(FrozenRecord):
    """Ionization energy lowered by doping: E(N) = E_0 / (1 + (N/N_ref)^c).

    Units: N and N_ref in m^-3; returns the factor E(N)/E_0 (dimensionless).
    Validity: Si:P, As, B from isolated impurities to beyond the Mott density.

    References
    ----------
    P. P. Altermatt, A. Schenk, B. Schmithüsen and G. Heiser, J. Appl. Phys. 100,
    113715 (2006), Table I; part I (Si:P): J. Appl. Phys. 100, 113714 (2006).
    """

    N_ref: float
    c: float

    def __call__(self, N: ArrayIn) -> FloatArray:
        return 1.0 / (1.0 + (np.asarray(N, dtype=float) / self.N_ref) ** self.c)


class PearsonBardeenLowering(FrozenRecord):
    """Ionization energy lowered by doping: E(N) = max(E_0 - alpha N^(1/3), 0).

    ``alpha`` in J m; returns the factor E(N)/E_0 (dimensionless).  Validity: below
    and around the Mott density (the electrostatic screening picture).

    References
    ----------
    G. L. Pearson and J. Bardeen, Phys. Rev. 75, 865 (1949).
    """

    alpha: float
    E0: float

    def __call__(self, N: ArrayIn) -> FloatArray:
        factor: FloatArray = np.maximum(
            1.0 - self.alpha * np.cbrt(np.asarray(N, dtype=float)) / self.E0, 0.0
        )
        return factor


Lowering: TypeAlias = AltermattLowering | PearsonBardeenLowering  # N -> E(N)/E_0


class BoundShare(FrozenRecord):
    """Share of dopants that can bind a carrier: b(N) = 1 / (1 + (N/N_b)^d).

    The rest (1 - b) sit in the band tail merged with the band and are always
    ionized, so the ionized fraction rises smoothly to 1 through the Mott
    transition instead of jumping there.  Units: m^-3.

    References
    ----------
    Altermatt et al., J. Appl. Phys. 100, 113715 (2006), eq. (3) and Table I.
    """

    N_b: float
    d: float

    def log_shares(self, N: ArrayIn) -> tuple[FloatArray, FloatArray]:
        """(ln b, ln(1 - b)) without cancellation."""
        x = self.d * (np.log(np.maximum(np.asarray(N, dtype=float), 1e-300)) - np.log(self.N_b))
        soft = softplus(x)
        return -soft, x - soft


class DopantLevel(FrozenRecord):
    """One bound level of a species: ionization energy from its band edge (J),
    ground-state degeneracy, and the share of the species' atoms on it (e.g. the
    hexagonal and cubic lattice sites of 4H-SiC)."""

    energy: float
    degeneracy: float
    share: float = 1.0


class Dopant(FrozenRecord):
    """An impurity species: donor or acceptor with its bound level(s).

    ``energy`` is the (first) level's isolated ionization energy from the nearest band
    edge (J); ``degeneracy`` its ground-state degeneracy factor (2 for donors, 4 for
    acceptors in cubic semiconductors).  ``levels`` lists every level with its share
    (one level at ``energy`` when empty).  ``lowering`` (a callable N -> E(N)/E_0)
    lowers every level with the same-type dopant density; ``bound_share`` (b(N))
    is the share that can bind a carrier at all.  ``mott_density`` (m^-3) is where
    the impurity band merges with the band (reported as the metallic regime).
    """

    name: str
    kind: str  # "donor" | "acceptor"
    energy: float
    degeneracy: float
    mott_density: float
    mott_estimated: bool
    provenance: Provenance
    levels: tuple[DopantLevel, ...] = ()
    lowering: Lowering | None = None
    bound_share: BoundShare | None = None

    def bound_levels(self) -> tuple[DopantLevel, ...]:
        return self.levels or (DopantLevel(self.energy, self.degeneracy, 1.0),)

    def share_model(self) -> BoundShare:
        """b(N).  Without published values: with a published level lowering, the shape
        Altermatt et al. (2006) fitted together with theirs for Si:P, B and As (d = 2.3,
        N_b = 1.6 times the Mott density), carried over to this species' Mott density;
        without one, the share alone carries the whole crossover, so it is half at the
        Mott density and falls steeply above it (d = 6: 1.5 % bindable at twice the Mott
        density) -- shallow donors in GaAs, InP or InAs do not freeze out above it
        (an assumption: common practice (no source))."""
        if self.bound_share is not None:
            return self.bound_share
        if self.lowering is not None:
            return BoundShare(1.6 * self.mott_density, 2.3)
        return BoundShare(self.mott_density, 6.0)

    def lowering_factor(self, same_type_total: ArrayIn) -> FloatArray:
        """E(N)/E_0: the published lowering where the material file gives one, else 1
        (the band-tail share alone then carries the crossover to full ionization)."""
        if self.lowering is None:
            return np.ones_like(np.asarray(same_type_total, dtype=float))
        return self.lowering(same_type_total)


def edwards_sienko_mott_density(energy: ArrayIn, eps_r: float) -> FloatArray:
    """Mott critical density from the hydrogenic radius of a bound carrier.

    Formula: n_c = (0.26 / a)^3 with a = q^2 / (8 pi eps0 eps_r E_ion), the
    radius of a hydrogenic level whose binding energy is E_ion (J).  Units: m^-3.
    Validity: order-of-magnitude estimate (the criterion scatters by +-20 % in
    n_c^(1/3) across systems); used only where no measured value is tabulated.

    References
    ----------
    P. P. Edwards and M. J. Sienko, Phys. Rev. B 17, 2575 (1978).
    """
    radius = ELEMENTARY_CHARGE**2 / (
        8 * np.pi * VACUUM_PERMITTIVITY * eps_r * np.asarray(energy, dtype=float)
    )
    return (0.26 / radius) ** 3


class Masetti(FrozenRecord):
    """Masetti doping-dependent mobility (one published parameter set).

    Formula (electrons, eq. 1; holes, eq. 4 with mu_min2 = 0 and P_c > 0):
      mu = mu_min1 exp(-P_c/N) + (mu_max(T/300)^gamma - mu_min2)/(1 + (N/C_r)^alpha)
           - mu_1/(1 + (C_s/N)^beta)
    with mu_min2 = mu_min1 when P_c = 0.  N: total ionized impurity density.
    Units: mobilities m^2/(V s), densities m^-3.  Validity: 300 K data, N up
    to ~1e21 cm^-3; the T scaling of mu_max (gamma) is common usage, not
    part of the paper.

    References
    ----------
    G. Masetti, M. Severi and S. Solmi, IEEE Trans. Electron Devices 30, 764 (1983).
    """

    mu_min1: float
    mu_max: float
    C_r: float
    alpha: float
    mu_1: float
    C_s: float
    beta: float
    P_c: float
    gamma: float
    provenance: Provenance

    def __call__(self, N: ArrayIn, T: ArrayIn) -> FloatArray:
        N = np.asarray(np.maximum(N, 1.0), dtype=float)  # 1 m^-3 floor: N -> 0 limit
        T = np.asarray(T, dtype=float)
        mu_max = self.mu_max * (T / T_REF) ** self.gamma
        first: FloatOrArray
        if self.P_c > 0:
            first, mu_min2 = self.mu_min1 * np.exp(-self.P_c / N), 0.0
        else:
            first, mu_min2 = self.mu_min1, self.mu_min1
        return (
            first
            + (mu_max - mu_min2) / (1 + (N / self.C_r) ** self.alpha)
            - self.mu_1 / (1 + (self.C_s / N) ** self.beta)
        )


class Arora(FrozenRecord):
    """Arora doping- and temperature-dependent mobility of silicon.

    Formula: mu = A_min Tn^a_min + A_0 T^a_0 / (1 + (N / (N_ref Tn^a_N))^(alpha Tn^a_alpha)),
    Tn = T/300 K, with A_0 given for T in kelvin (as published).
    Units: m^2/(V s), m^-3.  Validity: 250-500 K, N <= ~1e20 cm^-3 (+-13 %).

    References
    ----------
    N. D. Arora, J. R. Hauser and D. J. Roulston, IEEE Trans. Electron Devices
    29, 292 (1982).
    """

    A_min: float
    a_min: float
    A_0: float
    a_0: float
    N_ref: float
    a_N: float
    alpha: float
    a_alpha: float
    provenance: Provenance

    def __call__(self, N: ArrayIn, T: ArrayIn) -> FloatArray:
        N = np.asarray(N, dtype=float)
        T = np.asarray(T, dtype=float)
        Tn = T / T_REF
        expo = self.alpha * Tn**self.a_alpha
        return self.A_min * Tn**self.a_min + self.A_0 * T**self.a_0 / (
            1 + (N / (self.N_ref * Tn**self.a_N)) ** expo
        )


class ResistivityStandardMobility(FrozenRecord):
    """Conductivity mobility per dopant atom from the silicon resistivity standard:
    mu(N) = 1 / (q N rho(N)) at 23 degC, with rho(N) the dopant-density-to-resistivity
    conversion of ASTM F723 (Thurber et al. 1980) for boron or phosphorus:

      boron:       rho = a/N + b / (N (1 + (c N)^(-e)))                  (F723 eq. 4)
      phosphorus:  rho = (k/N) 10^Z,  Z = P3(y)/Q3(y),  y = log10(N / 1 cm^-3) - 16  (eqs. 5-6)

    ``form`` selects the equation; ``coefficients`` are the standard's (cm-based: a, b
    in Ohm cm cm^-3, c in cm^3; k in Ohm cm cm^-3; C0..C3, D1..D3).  Every dopant atom
    counts as a carrier in this convention (it is a measured conversion, not a model of
    ionization).  N is clamped to the standard's range.  Units: m^-3 -> m^2/(V s).
    Validity: B 1e12-1e21, P 1e12-5e20 cm^-3, at 23 degC (use with a temperature model).

    References
    ----------
    ASTM F723-99, Practice for Conversion Between Resistivity and Dopant Density for
    Boron-Doped, Phosphorus-Doped, and Arsenic-Doped Silicon; W. R. Thurber, R. L.
    Mattis, Y. M. Liu and J. J. Filliben, NBS Special Publication 400-64 (1981).
    """

    form: str  # "boron" | "phosphorus"
    coefficients: tuple[float, ...]
    N_range: tuple[float, float]  # m^-3
    provenance: Provenance
    every_dopant = True  # conductivity convention: sigma = q N mu at 23 degC

    def resistivity_cm(self, N_cm3: FloatArray) -> FloatArray:
        """The standard's resistivity (Ohm cm) at N (cm^-3)."""
        if self.form == "boron":
            a, b, c, e = self.coefficients
            return a / N_cm3 + b / (N_cm3 * (1.0 + (c * N_cm3) ** (-e)))
        k, c0, c1, c2, c3, d1, d2, d3 = self.coefficients
        y = np.log10(N_cm3) - 16.0
        z = (c0 + y * (c1 + y * (c2 + y * c3))) / (1.0 + y * (d1 + y * (d2 + y * d3)))
        return k / N_cm3 * 10.0**z

    def __call__(self, N: ArrayIn, T: ArrayIn | None = None) -> FloatArray:
        N_cm3 = np.clip(np.asarray(N, dtype=float), *self.N_range) * 1e-6
        rho_ohm_m = self.resistivity_cm(N_cm3) * 1e-2
        mobility: FloatArray = 1.0 / (ELEMENTARY_CHARGE * N_cm3 * 1e6 * rho_ohm_m)
        return mobility


class TemperatureRatio(FrozenRecord):
    """A mobility known at one temperature carried to others by another model's ratio:
    mu(N, T) = base(N, T_0) * shape(N, T) / shape(N, T_0).

    Used to give the 23 degC resistivity standard (and Masetti's 300 K fits) the
    doping-dependent temperature behaviour of Arora et al. (1982).  Units: SI.

    References
    ----------
    N. D. Arora, J. R. Hauser and D. J. Roulston, IEEE Trans. Electron Devices 29, 292
    (1982) (the temperature dependence; stated accuracy +-13 % over 250-500 K).
    """

    base: MobilityModel
    shape: MobilityModel
    T0: float
    provenance: Provenance

    @property
    def every_dopant(self) -> bool:
        return getattr(self.base, "every_dopant", False)

    def __call__(self, N: ArrayIn, T: ArrayIn) -> FloatArray:
        T = np.asarray(T, dtype=float)
        # T0 as an array of T's rank and size 1: the terms at T0 take N's shape alone
        # (evaluated once per doping where T is a column of a temperature x doping grid),
        # through the same array loops as a full array (a numpy scalar's power differs)
        T0 = np.full((1,) * T.ndim, self.T0)
        return self.base(N, T0) * self.shape(N, T) / self.shape(N, T0)


class CaugheyThomas(FrozenRecord):
    """Caughey–Thomas mobility with power-law temperature terms.

    Formula: mu = mu_min + (mu_max (T/300)^(-theta1) - mu_min)
                  / (1 + (N / (N_ref (T/300)^theta2))^lam).
    (theta1 = theta2 = 0 gives the original 300 K form.)
    Units: m^2/(V s), m^-3.

    References
    ----------
    D. M. Caughey and R. E. Thomas, Proc. IEEE 55, 2192 (1967); temperature
    terms as in M. Sotoodeh, A. H. Khalid and A. A. Rezazadeh, J. Appl. Phys.
    87, 2890 (2000).  Parameters per material file.
    """

    mu_max: float
    mu_min: float
    N_ref: float
    lam: float
    theta1: float
    theta2: float
    provenance: Provenance

    def __call__(self, N: ArrayIn, T: ArrayIn) -> FloatArray:
        N = np.asarray(N, dtype=float)
        Tn = np.asarray(T, dtype=float) / T_REF
        mu_max = self.mu_max * Tn ** (-self.theta1)
        return self.mu_min + (mu_max - self.mu_min) / (
            1 + (N / (self.N_ref * Tn**self.theta2)) ** self.lam
        )


class Levinshtein(FrozenRecord):
    """GaN doping- and temperature-dependent mobility (Mnatsakanov/Levinshtein).

    Formula: mu = mu_max / (1/(B(N) (T/300)^beta) + (T/300)^alpha),
             B(N) = (mu_min + mu_max (N_ref/N)^gamma) / (mu_max - mu_min).
    Units: m^2/(V s), m^-3.  Validity: 300-1000 K, N 1e16-1e20 cm^-3.

    References
    ----------
    T. T. Mnatsakanov, M. E. Levinshtein et al., Solid-State Electron. 47, 111 (2003).
    """

    mu_max: float
    mu_min: float
    N_ref: float
    alpha: float
    beta: float
    gamma: float
    provenance: Provenance

    def __call__(self, N: ArrayIn, T: ArrayIn) -> FloatArray:
        N = np.asarray(np.maximum(N, 1.0), dtype=float)  # 1 m^-3 floor: N -> 0 limit
        Tn = np.asarray(T, dtype=float) / T_REF
        B = (self.mu_min + self.mu_max * (self.N_ref / N) ** self.gamma) / (
            self.mu_max - self.mu_min
        )
        return self.mu_max / (1.0 / (B * Tn**self.beta) + Tn**self.alpha)


class SaturationVelocity(FrozenRecord):
    """Saturation velocity v_sat(T) = v_300 / ((1 - A) + A T/300).

    Units: m/s.  (A = 0 gives a constant.)

    References
    ----------
    R. Quay, C. Moglestue, V. Palankovski and S. Selberherr, Mater. Sci.
    Semicond. Process. 3, 149 (2000).
    """

    v300: float
    A: float
    provenance: Provenance

    def __call__(self, T: ArrayIn) -> FloatArray:
        return self.v300 / ((1 - self.A) + self.A * np.asarray(T, dtype=float) / T_REF)


class PowerLawVelocity(FrozenRecord):
    """Saturation velocity v_m(T) = v_300 (T/300 K)^power.

    Units: m/s.  Validity: the fitted range in ``provenance.valid_T``.

    References
    ----------
    C. Canali et al., IEEE Trans. Electron Devices 22, 1045 (1975): Si electrons
    1.53e9 T^-0.87 cm/s, holes 1.62e8 T^-0.52 cm/s (77-430 K).
    """

    v300: float
    power: float
    provenance: Provenance

    def __call__(self, T: ArrayIn) -> FloatArray:
        return self.v300 * (np.asarray(T, dtype=float) / T_REF) ** self.power


class PowerLawExponent(FrozenRecord):
    """A dimensionless model parameter b(T) = b_ref T^k (T in K; k = 0: constant).

    Used for the Caughey–Thomas field exponent beta (Canali: 2.57e-2 T^0.66
    for electrons, 0.46 T^0.17 for holes in silicon).

    References
    ----------
    C. Canali et al., IEEE Trans. Electron Devices 22, 1045 (1975).
    """

    ref: float
    power: float
    provenance: Provenance

    def __call__(self, T: ArrayIn) -> FloatArray:
        return self.ref * np.asarray(T, dtype=float) ** self.power


class SlotboomNarrowing(FrozenRecord):
    """Apparent band-gap narrowing dE_g = V1 (ln(N/N0) + sqrt(ln(N/N0)^2 + C)).

    Units: V1 in J, N0 and N in m^-3 -> J.

    References
    ----------
    J. W. Slotboom and H. C. de Graaff, Solid-State Electron. 19, 857 (1976);
    parameters D. B. M. Klaassen, J. W. Slotboom and H. C. de Graaff,
    Solid-State Electron. 35, 125 (1992).
    """

    V1: float
    N0: float
    C: float
    provenance: Provenance

    def __call__(self, N_donor: ArrayIn, N_acceptor: ArrayIn) -> FloatArray:
        N: FloatArray = np.maximum(
            np.asarray(N_donor, dtype=float) + np.asarray(N_acceptor, dtype=float), 1.0
        )
        x = np.log(N / self.N0)
        narrowing: FloatArray = self.V1 * (x + np.sqrt(x * x + self.C))
        return narrowing


class CubeRootNarrowing(FrozenRecord):
    """Band-gap narrowing dE_g = a_n N_D^(1/3) + a_p N_A^(1/3) (per doping type).

    Units: a_n, a_p in J m (J per m^-1), densities m^-3 -> J.

    References
    ----------
    S. C. Jain, J. M. McGregor and D. J. Roulston, J. Appl. Phys. 68, 3747 (1990).
    """

    a_n: float
    a_p: float
    provenance: Provenance

    def __call__(self, N_donor: ArrayIn, N_acceptor: ArrayIn) -> FloatArray:
        narrowing: FloatArray = self.a_n * np.cbrt(
            np.asarray(N_donor, dtype=float)
        ) + self.a_p * np.cbrt(np.asarray(N_acceptor, dtype=float))
        return narrowing


class CarrierTransport(FrozenRecord):
    """Low-field and high-field transport models of one carrier type."""

    mobility: dict[str, MobilityModel]  # model name -> callable(N_ionized, T) -> m^2/(V s)
    default_model: str
    dopant_models: dict[str, str] = field(default_factory=dict)  # species -> model name
    vsat: SaturationVelocity | PowerLawVelocity | None = None
    beta: PowerLawExponent | None = None
    thermal_mass: float | None = None  # m0 units (conductivity mass)
    minority_model: str | None = None  # model for this carrier where it is the minority

    def model_name(
        self, model: str | None = None, species: str | None = None, minority: bool = False
    ) -> str:
        if model:
            return model
        if minority and self.minority_model:
            return self.minority_model
        return self.dopant_models.get(species or "", self.default_model)

    def counts_every_dopant(self, model: str | None = None, species: str | None = None) -> bool:
        """True where the model's mobility is conductivity per dopant atom (sigma = q N mu
        at its reference temperature) rather than per free carrier."""
        return bool(
            getattr(self.mobility.get(self.model_name(model, species)), "every_dopant", False)
        )

    def low_field(
        self,
        N_ionized: ArrayIn,
        T: ArrayIn,
        model: str | None = None,
        species: str | None = None,
        minority: bool = False,
    ) -> FloatArray:
        name = self.model_name(model, species, minority)
        try:
            return self.mobility[name](N_ionized, T)
        except KeyError:
            raise MissingParameterError(
                f"mobility model {name!r} is not defined; available: "
                + ", ".join(sorted(self.mobility))
            ) from None


class MobilityRange(FrozenRecord):
    """The range of mobilities typically measured in a material (a channel's 2D gas),
    low and high in m^2/(V s) at ``T`` (K), with its source.  A plausibility range for
    stated values, not a model."""

    low: float
    high: float
    T: float
    source: str | None = None


class Material(FrozenRecord):
    """All parameters of one semiconductor (see the module docstring for units).

    ``dimensionality`` is 3 for a bulk crystal and 2 for a sheet or a 2D channel
    (graphene, the electron gas at a heterojunction or an inversion layer);
    ``band_shapes`` the band description per carrier ("electron", "hole"; parabolic
    with the mass of N_c / N_v where absent)."""

    name: str
    long_name: str
    band_gap: VarshniGap | None
    Nc: PowerLawDOS | MassPolynomialDOS | None
    Nv: PowerLawDOS | MassPolynomialDOS | None
    eps_r: float | None
    dopants: dict[str, Dopant]
    electron: CarrierTransport | None
    hole: CarrierTransport | None
    narrowing: SlotboomNarrowing | CubeRootNarrowing | None = None
    sources: dict[str, str | None] = field(default_factory=dict)
    # published spread of n_i at 300 K (low, high) in m^-3, where modern values disagree
    ni_published: tuple[float, float] | None = None
    # measured Hall factor ranges: band -> (low, high, (T_low, T_high))
    hall_factors: dict[str, tuple[float, float, tuple[float, float]]] = field(default_factory=dict)
    dimensionality: int = 3
    band_shapes: dict[str, BandShape] = field(default_factory=dict)
    typical_mobility: dict[str, MobilityRange] = field(default_factory=dict)

    def band_shape(self, carrier: str) -> BandShape:
        """The carrier's band description; a bulk band without one is parabolic with
        one valley (its mass then follows from N_c or N_v).  A linear (zero-gap) band
        serves both carriers: the holes are the lower cone of the same band."""
        if carrier not in ("electron", "hole"):
            raise InputError(f"a band belongs to 'electron' or 'hole', got {carrier!r}")
        shape = self.band_shapes.get(carrier)
        if shape is None:
            other = self.band_shapes.get("hole" if carrier == "electron" else "electron")
            shape = other if other is not None and other.model == "linear" else BandShape()
        return shape

    def dos_mass(self, carrier: str) -> float | None:
        """Density-of-states mass of one valley over m_0: the stated one, else the mass
        that reproduces N_c (electrons) or N_v (holes) at 300 K (exactly at every T where
        N is a T^(3/2) power law); None for a linear band."""
        shape = self.band_shape(carrier)
        if shape.model == "linear":
            return None
        if shape.dos_mass is not None:
            return shape.dos_mass
        effective = self.Nc if carrier == "electron" else self.Nv
        if self.dimensionality != 3:
            raise MissingParameterError(
                f"material {self.name!r} describes no {carrier} band (bands.{carrier}); "
                "it is needed for this carrier's density of states. Add it to the "
                "material definition."
            )
        if effective is None:
            raise MissingParameterError(
                f"material {self.name!r} has neither bands.{carrier}.dos_mass nor "
                "density_of_states; one of them is needed for the band's density of states. "
                "Add it to the material definition."
            )
        return mass_from_effective_density(float(effective(T_REF)), T_REF, shape.valley_degeneracy)

    def bands(
        self, carrier: str, dimension: int | None = None, subband_energies: ArrayIn | None = None
    ) -> tuple[Band, ...]:
        """The physics bands of a carrier (``physics.bands``) for a dimensionality.

        ``dimension``: 3 (bulk), 2 (a sheet or well: one subband at 0, or a ladder at
        ``subband_energies`` in J) or 1; default the material's own dimensionality.  A
        bulk material gives 2D and 1D bands of its own (isotropic) mass, the usual
        picture of a quantum well or wire of a direct-gap crystal; a 2D material has no
        bulk bands.

        References
        ----------
        T. Ando, A. B. Fowler and F. Stern, Rev. Mod. Phys. 54, 437 (1982), sec. III.
        """
        dimension = self.dimensionality if dimension is None else dimension
        if dimension > self.dimensionality:
            raise InputError(
                f"material {self.name!r} is a {self.dimensionality}D material; it has no "
                f"{dimension}D bands (choose a bulk material for a 3D calculation)"
            )
        return bands_for(
            self.band_shape(carrier), self.dos_mass(carrier), dimension, subband_energies
        )

    def need(self, attribute: str, purpose: str) -> Any:
        """Return a parameter or raise a clear error naming what needs it."""
        value = getattr(self, attribute)
        if value is None:
            raise MissingParameterError(
                f"material {self.name!r} has no {attribute!r}; it is needed for {purpose}. "
                f"Add it to the material definition."
            )
        return value

    def dopant(self, species: str) -> Dopant:
        try:
            return self.dopants[species]
        except KeyError:
            known = ", ".join(sorted(self.dopants)) or "none"
            raise UnknownDopantError(
                f"material {self.name!r} has no dopant {species!r}; known: {known}"
            ) from None


__all__ = [
    "AltermattLowering",
    "Arora",
    "BoundShare",
    "CarrierTransport",
    "CaugheyThomas",
    "CubeRootNarrowing",
    "Dopant",
    "DopantLevel",
    "PearsonBardeenLowering",
    "Levinshtein",
    "Masetti",
    "MassPolynomialDOS",
    "Material",
    "MobilityRange",
    "PowerLawDOS",
    "PowerLawExponent",
    "PowerLawVelocity",
    "Provenance",
    "ResistivityStandardMobility",
    "SaturationVelocity",
    "SlotboomNarrowing",
    "TemperatureRatio",
    "VarshniGap",
    "edwards_sienko_mott_density",
]
