"""Thermal-equilibrium carrier statistics: charge neutrality with Fermi–Dirac
statistics for both bands, incomplete ionization of every dopant species,
compensation, and the metallic (fully ionized) regime above the Mott density.

Neutrality:   n + sum_k N_A,k^-  =  p + sum_i N_D,i^+
  n = N_c F_1/2(eta_n),  p = N_v F_1/2(eta_p),  eta_n = (E_F - E_C)/kT,
  (a Kane conduction band, E(1 + alpha E) = hbar^2 k^2/2m*: n = N_c F_K(eta_n, alpha kT),
  ``energy_window.kane_density_factor``; parabolic bands keep the closed F_1/2),
  eta_p = (E_V - E_F)/kT = -eta_n - E_g/kT,
  N_D,i^+ = N_D,i / (1 + g_D exp(eta_n + E_D,i/kT))      (E_D,i below E_C)
  N_A,k^- = N_A,k / (1 + g_A exp(eta_p + E_A,k/kT))      (E_A,k above E_V)
A species whose same-type total density reaches its Mott density is taken
as fully ionized (impurity band merged with the band) and the point flagged.

The solve uses the equivalent form n + N_D^0 + max(N_A - N_D, 0) =
p + N_A^0 + max(N_D - N_A, 0) (N^0: neutral impurities), in which no two
large densities cancel, so compensated material keeps full precision.  Its
residual f(eta) = ln(left) - ln(right) is strictly increasing in eta; it is
evaluated entirely in logarithms (densities from e^-10000 to e^50 never under-
or overflow) and solved by safeguarded Newton (bisection whenever a step
leaves the bracket).  Every point either meets |f| <= 1e-12 (relative
neutrality residual; measured, or bounded after a last Newton step of at most
2^-20, see ACCEPT_STEP) or raises ConvergenceError; every block then measures
neutrality afresh in its plain form (<= 1e-10).

References
----------
S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (2007), ch. 1
(ionization statistics, g_D = 2, g_A = 4); J. S. Blakemore, Semiconductor
Statistics (1962); P. P. Edwards and M. J. Sienko, Phys. Rev. B 17, 2575 (1978)
(Mott criterion); W. H. Press et al., Numerical Recipes, 3rd ed. (2007), §9.4
(safeguarded Newton, "rtsafe").
"""

from __future__ import annotations

import functools
import os
from collections.abc import Mapping
from dataclasses import dataclass
from functools import cached_property
from typing import Any, NamedTuple, TypeAlias

import numpy as np
import numpy.typing as npt

from ..errors import ConvergenceError, InputError
from . import _threads, energy_window
from .arrays import ArrayIn, BoolArray, FloatArray, IndexArray, log_add, softplus
from .bands import KaneBand
from .constants import BOLTZMANN, EV
from .fermi import inverse_fermi_dirac_half_of_log, log_fermi_dirac, log_fermi_dirac_half_pair
from .materials import Dopant, Material

MAX_ITERATIONS = 200
TOLERANCE = 1e-12
# a Newton step this small is taken as the last, |f| after it being at most |f''|/2 step^2.
# Each side's ln-sum S = ln sum e^v_i has S'' = (the weighted mean of the v_i'') + (the
# weighted variance of the v_i'); on one side every v_i' lies in [0, 1] (or all in
# [-1, 0]), so the variance is at most 1/4, and each v_i'' lies in [-1/4, 1/4]: ln u(a)''
# = -u q, ln(1 - b + b q(a))'' = u P (u (1 - P) - q) with P its bound share, and ln F_1/2''
# in [-0.143, 0] (minimum at eta = 0.8; tests, mpmath).  So S'' lies in [-1/4, 1/2] and
# |f''| <= 3/4: after a step of 2^-20, |f| <= 3/8 2^-40 ~ 3.4e-13, below TOLERANCE.  A Kane
# band's ln F_K'' has no such bound here: its solves keep 2^-21 under |f''| <= 4 (slopes in
# [-1, 1], so a variance <= 1 and a term's own curvature taken <= 1), 4.5e-13.
ACCEPT_STEP = 2.0**-20
ACCEPT_STEP_KANE = 2.0**-21
BALANCE_TOLERANCE = 1e-10  # relative neutrality error every returned point meets

# one bound level: (ln N_level, occupancy offset E(N)/kT + ln g, ln b, ln(1 - b))
LevelTerm: TypeAlias = tuple[FloatArray, FloatArray, FloatArray, FloatArray]
# a log density and its slope d/d eta (None: a constant)
SlopedTerm: TypeAlias = tuple[FloatArray, FloatArray | None]
# one bound level's terms of the doping alone: (ln N_level, E(N), ln b, ln(1 - b), ln g)
LevelRow: TypeAlias = tuple[FloatArray, FloatArray, FloatArray, FloatArray, np.float64]
# (kT, E_g/kT, ln N_c, ln N_v, n_i) of a block's points (_temperature_terms)
TemperatureTerms: TypeAlias = tuple[FloatArray, FloatArray, FloatArray, FloatArray, FloatArray]
# (one flat index of each distinct value, each point's row), as arrays.distinct_points
Rows: TypeAlias = tuple[IndexArray, IndexArray]


@dataclass
class State:
    """Solved equilibrium at every operating point (SI units, numpy arrays).

    The solve produces eta_n (and its residual); everything else is derived
    from it on first access and cached.  Energies in J,
    densities in m^-3, all arrays of the broadcast input shape.
    """

    material: Material
    T: FloatArray
    donors: dict[str, FloatArray]  # species -> total density
    acceptors: dict[str, FloatArray]
    eta_n: FloatArray
    metallic: BoolArray  # some species above its Mott density
    narrowing: FloatArray  # band-gap narrowing applied (J), split half to each band
    residual: FloatArray  # |1 - (n + N_A^-)/(p + N_D^+)|
    iterations: int = 0
    electron_band: KaneBand | None = None  # None: parabolic conduction band (closed F_1/2)
    # ln N^ion of each bound level at eta_n / eta_p, one row per level (donors' levels in
    # species order, then acceptors'): the solve's neutrality check evaluates them at the
    # returned eta and keeps them (None: derived afresh)
    level_logs: FloatArray | None = None

    @cached_property
    def kT(self) -> FloatArray:
        return BOLTZMANN * self.T

    @cached_property
    def Eg(self) -> FloatArray:
        """Band gap including any narrowing (J)."""
        gap: FloatArray = self.material.need("band_gap", "the band gap")(self.T)
        return gap - self.narrowing

    @cached_property
    def Nc(self) -> FloatArray:
        density: FloatArray = self.material.need("Nc", "the electron density")(self.T)
        return density

    @cached_property
    def Nv(self) -> FloatArray:
        density: FloatArray = self.material.need("Nv", "the hole density")(self.T)
        return density

    @cached_property
    def eta_p(self) -> FloatArray:
        """(E_V - E_F)/kT."""
        return -self.eta_n - self.Eg / self.kT

    @cached_property
    def log_electron_factor(self) -> FloatArray:
        """ln(n/N_c): ln F_1/2(eta_n), or ln F_K(eta_n, alpha kT) for a Kane band (a solve
        keeps its own neutrality check's, evaluated at the same eta)."""
        return log_electron_factor(self.electron_band, self.eta_n, self.T)

    @cached_property
    def log_hole_factor(self) -> FloatArray:
        """ln(p/N_v) = ln F_1/2(eta_p) (a solve keeps its own check's, as above)."""
        return np.asarray(log_fermi_dirac(0.5, self.eta_p))

    @cached_property
    def n(self) -> FloatArray:
        return self.Nc * np.exp(self.log_electron_factor)

    @cached_property
    def p(self) -> FloatArray:
        return self.Nv * np.exp(self.log_hole_factor)

    @cached_property
    def ni(self) -> FloatArray:
        """sqrt(N_c N_v) exp(-E_g/2kT): the intrinsic density in the Boltzmann definition."""
        return np.sqrt(self.Nc * self.Nv) * np.exp(-0.5 * self.Eg / self.kT)

    @cached_property
    def donors_ionized(self) -> dict[str, FloatArray]:
        return _ionized_group(self, self.donors, self.eta_n, self.donors_total, 0)

    @cached_property
    def acceptors_ionized(self) -> dict[str, FloatArray]:
        first = sum(len(self.material.dopant(name).bound_levels()) for name in self.donors)
        return _ionized_group(self, self.acceptors, self.eta_p, self.acceptors_total, first)

    @cached_property
    def donors_total(self) -> FloatArray:
        return _sum(self.donors, self.T)

    @cached_property
    def acceptors_total(self) -> FloatArray:
        return _sum(self.acceptors, self.T)

    @property
    def donors_ionized_total(self) -> FloatArray:
        return _sum(self.donors_ionized, self.T)

    @property
    def acceptors_ionized_total(self) -> FloatArray:
        return _sum(self.acceptors_ionized, self.T)

    @property
    def donor_fraction(self) -> FloatArray:
        """Ionized fraction of all donors (1 where there are none)."""
        return _fraction(self.donors_ionized_total, self.donors_total)

    @property
    def acceptor_fraction(self) -> FloatArray:
        return _fraction(self.acceptors_ionized_total, self.acceptors_total)


def _ionized_group(
    state: State,
    group: Mapping[str, FloatArray],
    eta_band: FloatArray,
    total: FloatArray,
    first: int,
) -> dict[str, FloatArray]:
    """Each species' ionized density (:func:`ionized_density`): from the level logs the
    solve kept (rows ``first`` on, in the group's species order) where it kept them, the
    same numbers (the same level terms at the same eta, reduced as there), else afresh."""
    out = {}
    for name, density in group.items():
        dopant = state.material.dopant(name)
        if state.level_logs is None:
            out[name] = ionized_density(dopant, density, eta_band, state.kT, total)
            continue
        count = len(dopant.bound_levels())
        rows = state.level_logs[first : first + count]
        first += count
        shape = np.shape(state.T)
        parts = [row.reshape(shape) for row in rows]
        out[name] = np.exp(np.logaddexp.reduce(parts) if count > 1 else parts[0])
    return out


def charge_balance_error(state: State) -> FloatArray:
    """Relative neutrality error |(n + N_A^-) - (p + N_D^+)| / max(n + N_A^-, p + N_D^+).

    Evaluated afresh from the solved eta_n with the plain form of neutrality (not the
    solver's rearranged residual), each density in logarithms so that points whose
    densities underflow (wide gaps near 1 K) are still checked.  Units: none.

    References
    ----------
    Sze & Ng (2007) ch. 1 (charge neutrality).
    """
    kT = state.kT

    def terms(group: Mapping[str, FloatArray], total: FloatArray) -> list[LevelTerm]:
        return [
            term
            for name, density in group.items()
            for term in _level_terms(state.material.dopant(name), density, kT, total)
        ]

    eta_p = -state.eta_n - state.Eg / kT  # (afresh too: the state keeps the solve's)
    return _plain_balance_error(  # afresh: not the state's cached band factors
        np.log(state.Nc) + log_electron_factor(state.electron_band, state.eta_n, state.T),
        np.log(state.Nv) + log_fermi_dirac(0.5, eta_p),
        [_log_ionized(term, state.eta_n) for term in terms(state.donors, state.donors_total)],
        [_log_ionized(term, eta_p) for term in terms(state.acceptors, state.acceptors_total)],
    )


def log_electron_factor(band: KaneBand | None, eta: FloatArray, T: FloatArray) -> FloatArray:
    """ln(n/N_c) at eta = (E_F - E_C)/kT: ln F_1/2(eta) for a parabolic band (``band``
    None), ln F_K(eta, alpha kT) for a Kane band at temperatures T (K).

    References
    ----------
    Blakemore (1962) (F_1/2); Kane (1957), see kane_conduction_band.
    """
    if band is None:
        return np.asarray(log_fermi_dirac(0.5, eta))
    factor, _ = energy_window.kane_density_factor(band, eta, T)
    return np.asarray(factor, dtype=float)


def _plain_balance_error(
    ln_n: FloatArray, ln_p: FloatArray, ln_donors: list[FloatArray], ln_acceptors: list[FloatArray]
) -> FloatArray:
    """|(n + N_A^-) - (p + N_D^+)| / max of the two, from the log densities."""
    with np.errstate(invalid="ignore", over="ignore"):
        # pairwise in order, as logaddexp.reduce over the stacked terms, without the stack
        ln_neg = functools.reduce(log_add, ln_acceptors, ln_n)
        ln_pos = functools.reduce(log_add, ln_donors, ln_p)
        top = np.maximum(ln_neg, ln_pos)
        error = np.abs(np.exp(ln_neg - top) - np.exp(ln_pos - top))
    return np.where(np.isfinite(top), error, 0.0)


def kane_conduction_band(material: Material) -> KaneBand | None:
    """The bulk material's Kane conduction band (alpha > 0), else None (parabolic).

    None keeps the closed-form F_1/2 path of the solve; a Kane band sends the
    electron density through ``energy_window.kane_density_factor``.

    References
    ----------
    E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957).
    """
    if material.dimensionality != 3:
        return None
    shape = material.band_shape("electron")
    if shape.model != "kane" or not shape.nonparabolicity > 0:
        return None
    (band,) = material.bands("electron", 3)
    return band if isinstance(band, KaneBand) else None


def _level_terms(
    dopant: Dopant, density: FloatArray, kT: FloatArray, same_type_total: FloatArray
) -> list[LevelTerm]:
    """Per bound level: (ln N_level, occupancy offset E(N)/kT + ln g, ln b, ln(1 - b))."""
    return [_at_kT(row, kT) for row in _level_rows(dopant, density, same_type_total)]


def _level_rows(dopant: Dopant, density: FloatArray, same_type_total: FloatArray) -> list[LevelRow]:
    """What :func:`_level_terms` takes of the doping alone, per bound level: (ln N_level,
    E(N), ln b, ln(1 - b), ln g)."""
    ln_b, ln_free = dopant.share_model().log_shares(same_type_total)
    factor = dopant.lowering_factor(same_type_total)
    ln_density = _log(density)
    return [
        (
            ln_density + np.log(level.share),
            level.energy * factor,
            ln_b,
            ln_free,
            np.log(level.degeneracy),
        )
        for level in dopant.bound_levels()
    ]


def _at_kT(row: LevelRow, kT: FloatArray) -> LevelTerm:
    """A level's term at kT from its row (E(N)/kT + ln g, as _level_terms evaluates it)."""
    ln_n, energy, ln_b, ln_free, ln_g = row
    return ln_n, energy / kT + ln_g, ln_b, ln_free


def log_ionized_density(
    dopant: Dopant,
    density: FloatArray,
    eta_band: FloatArray,
    kT: FloatArray,
    same_type_total: FloatArray,
) -> FloatArray:
    """ln of :func:`ionized_density` without underflow (-inf where the density is 0)."""
    parts = [
        _log_ionized(term, eta_band) for term in _level_terms(dopant, density, kT, same_type_total)
    ]
    return np.logaddexp.reduce(parts) if len(parts) > 1 else parts[0]


def _log_ionized(
    term: LevelTerm, eta_band: FloatArray, out: FloatArray | None = None
) -> FloatArray:
    """ln N^ion of one bound level: ln N + ln(1 - b + b/(1 + g e^(eta_band + E/kT)))
    (into ``out`` if given)."""
    ln_n, offset, ln_b, ln_free = term
    bound = softplus(eta_band + offset)
    np.subtract(ln_b, bound, out=bound)
    logs: FloatArray = np.add(ln_n, log_add(ln_free, bound), out=out)
    return logs


def ionized_density(
    dopant: Dopant,
    density: FloatArray,
    eta_band: FloatArray,
    kT: FloatArray,
    same_type_total: FloatArray,
) -> FloatArray:
    """Ionized density of one species (m^-3), vectorized.

    Formula, summed over the species' bound levels k (share s_k, degeneracy g_k):
      N^+ = N sum_k s_k [1 - b(N) + b(N) / (1 + g_k exp(eta_band + E_k(N)/kT))],
    where eta_band is eta_n for donors and eta_p for acceptors, E_k(N) the level's
    ionization energy lowered with the same-type density N, and b(N) the share of
    dopants that can bind a carrier (1 - b are in the band tail, always ionized).
    With b = 1 and no lowering this is the isolated-impurity form of Sze & Ng.
    Levels are measured from their own band edge, so band-gap narrowing moves them
    with the band.  Units: densities m^-3, kT in J.

    References
    ----------
    Sze & Ng (2007) ch. 1; P. P. Altermatt et al., J. Appl. Phys. 100, 113715 (2006)
    (lowering, band-tail share); G. L. Pearson and J. Bardeen, Phys. Rev. 75, 865 (1949).
    """
    return np.exp(log_ionized_density(dopant, density, eta_band, kT, same_type_total))


def _sum(parts: Mapping[str, FloatArray], like: FloatArray) -> FloatArray:
    """0 + the parts in order, shaped like ``like`` (the first sum 0.0 + part in one pass
    where the part has that shape: the numbers of zeros + part, -0.0 made 0.0 as there)."""
    shape = np.shape(like)
    total: FloatArray | None = None
    for value in parts.values():
        if total is None and np.shape(value) == shape:
            total = np.add(0.0, value)
        else:
            total = (np.zeros(shape) if total is None else total) + value
    return np.zeros(shape) if total is None else total


def _fraction(part: FloatArray, whole: FloatArray) -> FloatArray:
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(whole > 0, part / np.where(whole > 0, whole, 1.0), 1.0)


def _log(x: FloatArray) -> FloatArray:
    with np.errstate(divide="ignore"):
        return np.log(x)


def _check_inputs(
    T: FloatArray, donors: Mapping[str, FloatArray], acceptors: Mapping[str, FloatArray]
) -> None:
    if not np.all(np.isfinite(T)) or np.any(T <= 0):
        bad = T[~(np.isfinite(T) & (T > 0))].ravel()[:3]
        raise InputError(f"temperature must be finite and above 0 K; got {bad.tolist()} K")
    for kind, group in (("donor", donors), ("acceptor", acceptors)):
        for species, value in group.items():
            if not np.all(np.isfinite(value)) or np.any(value < 0):
                bad = value[~(np.isfinite(value) & (value >= 0))].ravel()[:3]
                raise InputError(
                    f"{kind} density of {species} must be finite and >= 0; "
                    f"got {(bad * 1e-6).tolist()} cm^-3"
                )


class _Neutrality:
    """Log-space neutrality residual for the points of one solve.

    Neutrality is rearranged so that no two large densities cancel:
        n + N_D^0 + max(N_A - N_D, 0)  =  p + N_A^0 + max(N_D - N_A, 0)
    with N_D^0, N_A^0 the neutral (occupied) impurities.  The net doping is
    formed once from the inputs, so exactly or nearly compensated material
    keeps full precision in eta (a plain n + N_A^- = p + N_D^+ would lose it).

    Per-point parameters are rows of one 2-D array, so dropping converged
    points is a single compaction; every row is constant over the Newton loop (each
    level's offset, ln(b N), b and 1 - b are formed once per block, not per evaluation).
    """

    BASE_ROWS = 5  # -E_g/kT, ln N_c, ln N_v, ln max(N_D - N_A, 0), ln max(N_A - N_D, 0)
    TERM_ROWS = 5  # per bound level: occupancy offset E/kT + ln g, ln N, ln(b N), b, 1 - b

    def __init__(
        self, params: FloatArray, n_donors: int, n_acceptors: int, kane: KaneBand | None = None
    ) -> None:
        self.params = params  # a Kane solve carries T (K) as its last row
        self.n_donors, self.n_acceptors = n_donors, n_acceptors
        self.kane = kane

    @classmethod
    def build(
        cls,
        ln_nc: FloatArray,
        ln_nv: FloatArray,
        eg_kt: FloatArray,
        ln_net_n: FloatArray,
        ln_net_p: FloatArray,
        donor_terms: list[LevelTerm],
        acceptor_terms: list[LevelTerm],
        kane: tuple[KaneBand, FloatArray] | None = None,
    ) -> _Neutrality:
        """Each term: (ln N_level, occupancy offset, ln b, ln(1 - b)) of one bound level;
        ``kane``: the Kane conduction band and the temperatures (K) of the points."""
        rows = [-eg_kt, ln_nc, ln_nv, ln_net_n, ln_net_p]
        for ln_n, offset, ln_b, ln_free in donor_terms + acceptor_terms:
            rows += [offset, ln_n, ln_n + ln_b, np.exp(ln_b), np.exp(ln_free)]
        if kane is None:
            return cls(np.array(rows), len(donor_terms), len(acceptor_terms))
        return cls(np.array([*rows, kane[1]]), len(donor_terms), len(acceptor_terms), kane[0])

    def subset(self, keep: IndexArray) -> _Neutrality:
        """The residual restricted to the points at integer positions ``keep``."""
        return _Neutrality(
            np.take(self.params, keep, axis=1), self.n_donors, self.n_acceptors, self.kane
        )

    def _level(self, k: int) -> FloatArray:
        row = self.BASE_ROWS + self.TERM_ROWS * k
        return self.params[row : row + self.TERM_ROWS]

    def __call__(self, eta: FloatArray) -> tuple[FloatArray, FloatArray]:
        """Return (f, df/deta) with f = ln(left side) - ln(right side), increasing in eta.

        Slopes are kept as magnitudes: every left-side density grows with eta, every
        right-side one with eta_p = -eta - E_g/kT, so df/deta is the sum of the sides'."""
        neg_eg, ln_nc, ln_nv, ln_net_n, ln_net_p = self.params[: self.BASE_ROWS]
        both = np.empty(2 * eta.size)  # eta, then eta_p: one F_1/2 pass over both
        both[: eta.size] = eta
        eta_p = np.subtract(neg_eg, eta, out=both[eta.size :])
        electrons, holes = self._band_terms(ln_nc, ln_nv, both)
        left: list[SlopedTerm] = [electrons, (ln_net_p, None)]
        right: list[SlopedTerm] = [holes, (ln_net_n, None)]
        # the same balance written plainly, n + N_A^- = p + N_D^+: in freeze-out almost
        # every impurity is neutral and the form above cancels (N^0 ~ N), while this one
        # keeps full resolution; each point takes the form with the steeper slope
        plain_left: list[SlopedTerm] = [electrons]
        plain_right: list[SlopedTerm] = [holes]
        for k in range(self.n_donors):
            neutral, ionized = _impurity_terms(self._level(k), eta)
            left.append(neutral)
            plain_right.append(ionized)
        for k in range(self.n_donors, self.n_donors + self.n_acceptors):
            neutral, ionized = _impurity_terms(self._level(k), eta_p)
            right.append(neutral)
            plain_left.append(ionized)
        f, df = _log_ratio(left, right)
        if self.n_donors + self.n_acceptors:
            plain_f, plain_df = _log_ratio(plain_left, plain_right)
            steeper = plain_df > df
            return _pick(steeper, plain_f, f), _pick(steeper, plain_df, df)
        return f, df

    def _band_terms(
        self, ln_nc: FloatArray, ln_nv: FloatArray, both: FloatArray
    ) -> tuple[SlopedTerm, SlopedTerm]:
        """(ln n, d ln n/d eta) and (ln p, d ln p/d eta_p) at ``both`` = [eta, eta_p]."""
        size = both.size // 2
        if self.kane is None:  # parabolic: both closed F_1/2 in one pass (the fast path)
            logs, logs_minus = log_fermi_dirac_half_pair(both)
            slopes = np.subtract(logs_minus, logs, out=logs_minus)
            np.exp(slopes, out=slopes)  # d ln F_1/2 / d eta = F_-1/2 / F_1/2
            ln_n, ln_p = logs[:size], logs[size:]
            ln_n += ln_nc
            ln_p += ln_nv
            return (ln_n, slopes[:size]), (ln_p, slopes[size:])
        holes, holes_minus = log_fermi_dirac_half_pair(both[size:])
        factor, slope = energy_window.kane_density_factor(self.kane, both[:size], self.params[-1])
        electrons: SlopedTerm = (ln_nc + np.asarray(factor), np.asarray(slope))
        return electrons, (ln_nv + holes, np.exp(holes_minus - holes))


# beyond this |E/kT + eta| a level's occupancy is formed in logarithms (e^-690 is still
# a normal double, and exp's arguments below about -708 take its slow path)
_LINEAR_OCCUPANCY = 690.0


def _impurity_terms(level: FloatArray, eta_band: FloatArray) -> tuple[SlopedTerm, SlopedTerm]:
    """(ln N^0, slope) and (ln N^ion, slope) of one bound level, each slope the magnitude
    of its derivative in ``eta_band`` (eta for a donor, eta_p for an acceptor).

    With a = eta_band + E/kT + ln g, the occupancy u = 1/(1 + e^-a) and its complement
    q = 1 - u = 1/(1 + e^a): N^0 = b N u (d ln N^0/da = q) and N^ion = N (1 - b + b q)
    (d ln N^ion/da = -u b q/(1 - b + b q)), a sum of two positive parts, so neither form
    cancels.  One exponential e^-|a| gives both u and q; beyond |a| = 690 the log form.
    """
    offset, ln_n, ln_bn, bound, free = level
    a = np.add(eta_band, offset)
    e = np.abs(a)
    if e.size and np.max(e) >= _LINEAR_OCCUPANCY:
        return _impurity_terms_in_logs(level, a)
    np.negative(e, out=e)
    np.exp(e, out=e)  # e^-|a|
    neutral = np.log1p(e)
    neutral -= np.minimum(a, 0.0)  # ln(1 + e^-a) = -ln u
    np.subtract(ln_bn, neutral, out=neutral)
    q = np.maximum(e, a < 0)  # e^-max(a, 0), the numerator of 1/(1 + e^a)
    e += 1.0
    q /= e
    bound_ionized = np.multiply(bound, q, out=e)  # b q
    ionized = np.add(bound_ionized, free)  # 1 - b + b q >= q >= e^-690 > 0
    bound_ionized /= ionized  # the share of N^ion that could bind a carrier
    np.log(ionized, out=ionized)
    ionized += ln_n
    slope = np.subtract(1.0, q, out=a)  # u
    slope *= bound_ionized
    return (neutral, q), (ionized, slope)


def _impurity_terms_in_logs(level: FloatArray, a: FloatArray) -> tuple[SlopedTerm, SlopedTerm]:
    """:func:`_impurity_terms` for any a, the sums formed in logarithms (e^-|a| may
    underflow here: q = 1/(1 + e^a) from it directly, not from its logarithm)."""
    offset, ln_n, ln_bn, bound, free = level
    e = np.exp(-np.abs(a))
    q = np.where(a <= 0, 1.0, e)
    q /= 1.0 + e
    soft = softplus(-a)  # ln(1 + e^-a) = -ln u
    neutral = np.subtract(ln_bn, soft)
    soft += a  # ln(1 + e^a) = -ln q
    bound_ionized = np.subtract(np.log(bound), soft, out=soft)  # ln(b q)
    with np.errstate(divide="ignore"):  # 1 - b = 0: no band tail
        ionized = log_add(np.log(free), bound_ionized)
    weight = np.exp(bound_ionized - ionized)
    weight *= 1.0 - q
    ionized += ln_n
    return (neutral, q), (ionized, weight)


def _log_ratio(left: list[SlopedTerm], right: list[SlopedTerm]) -> tuple[FloatArray, FloatArray]:
    """ln(sum of the left terms) - ln(sum of the right ones), and the sum of both sides'
    weighted slope magnitudes (its derivative in eta)."""
    f, df = _logsumexp_with_slope(left)
    right_value, right_slope = _logsumexp_with_slope(right)
    f -= right_value
    df += right_slope
    return f, df


def _logsumexp_with_slope(terms: list[SlopedTerm]) -> tuple[FloatArray, FloatArray]:
    """ln(sum e^a_i) and sum w_i a_i' (w = softmax weights; a_i' None: a constant).

    Terms more than 700 below the largest count as e^-700 (the largest counts 1, so the
    sum does not change; exp's arguments below about -708 take its slow path)."""
    top = np.maximum(terms[0][0], terms[1][0]) if len(terms) > 1 else terms[0][0].copy()
    for value, _ in terms[2:]:
        np.maximum(top, value, out=top)
    total = slope = None
    for value, deriv in terms:
        w = np.subtract(value, top)
        np.maximum(w, -700.0, out=w)
        np.exp(w, out=w)
        if total is None or slope is None:
            assert deriv is not None  # the first term is a band's
            total, slope = w, w * deriv
            continue
        total += w
        if deriv is not None:  # None: a constant term
            w *= deriv
            slope += w
    assert total is not None and slope is not None
    slope /= total
    np.log(total, out=total)
    total += top
    return total, slope


def _initial_guess(
    ln_nc: FloatArray,
    ln_nv: FloatArray,
    eg_kt: FloatArray,
    nd: FloatArray,
    na: FloatArray,
    offset_d: FloatArray,
    offset_a: FloatArray,
    ni: FloatArray,
    bound_d: FloatArray,
    bound_a: FloatArray,
) -> FloatArray:
    """Boltzmann estimate of eta_n with one effective donor and acceptor level (occupancy
    offsets E/kT + ln g).

    Net donors, with a share b of the donors able to bind an electron (the rest in the
    band tail, always ionized) and the acceptors fully ionized:
    n + N_A = N_D (1 - b) + b N_D / (1 + n/phi), phi = (N_c/g) e^(-E_D/kT), i.e.
    n^2 + (phi - N_free) n - phi (N_D - N_A) = 0 with N_free = N_D (1 - b) - N_A, solved
    in its cancellation-free form (for the majority type only), then combined with n_i;
    the p-type case mirrors it.  eta is the exact inverse of F_1/2 of n/N_c.  The share b
    carries the crossover to full ionization at high density (no separate metallic case).
    A second round corrects what the first left out, at its estimate: each band's
    degeneracy factor F_1/2/e^eta (in phi and in n_i^2), the thermal carriers' share of
    the majority levels' occupancy, and the minority species' own neutral share.
    It is only the Newton start: the solve itself uses the full model.
    """

    def majority(
        n_major: FloatArray,
        n_minor: FloatArray,
        ln_phi: FloatArray,
        bound: FloatArray,
        ni: FloatArray,
    ) -> tuple[FloatArray, FloatArray]:
        """(the majority density, the net ionized doping it holds)."""
        net = np.maximum(n_major - n_minor, 0.0)
        phi = np.exp(np.clip(ln_phi, -690.0, 690.0))
        with np.errstate(invalid="ignore", over="ignore", divide="ignore"):
            c = phi - (n_major * (1.0 - bound) - n_minor)
            root = np.sqrt(c * c + 4 * phi * net)
            # the larger root of n^2 + c n - phi net, each form free of cancellation (the
            # first NaN only where c = 0 = net: no net doping, no carriers, fmax's 0)
            frozen = _pick(c >= 0, 2 * phi * net / (np.abs(c) + root), 0.5 * (root - c))
        carriers = np.fmax(frozen, 0.0)
        half = 0.5 * carriers
        return half + np.sqrt(half * half + ni * ni), carriers

    n_type = nd >= na
    major, minor = np.maximum(nd, na), np.minimum(nd, na)
    ln_band = _pick(n_type, ln_nc, ln_nv)
    ln_phi = ln_band - _pick(n_type, offset_d, offset_a)
    bound = _pick(n_type, bound_d, bound_a)
    first, carriers = majority(major, minor, ln_phi, bound, ni)
    ln_first = np.log(np.maximum(first, 1e-300))
    ln_u = ln_first - ln_band
    eta = inverse_fermi_dirac_half_of_log(ln_u)
    # the occupancy sees e^eta = gamma n/N_band with gamma = F_1/2(eta)/e^eta = u e^-eta
    # (< 1; 0.6 % below 1 already at eta = -4), not n/N_band: once more with phi scaled
    # by gamma at the first estimate (no F_1/2 evaluation: eta inverts u)
    ln_gamma = np.where(eta > _NONDEGENERATE_LN_U, ln_u - eta, 0.0)
    nearer = ln_phi + ln_gamma
    # the minority band alike: n p = gamma_n gamma_p n_i^2 (n_i in its Boltzmann form), so
    # near intrinsic, where both bands are a little degenerate (eta ~ -5 at 1000 K in Si),
    # n_i^2 is scaled by both; gamma_p = F_1/2/e^eta at the minority's eta from the first
    # three terms of its series in z = e^eta (z <= 1 clipped: only the start)
    z = np.exp(np.minimum(-eta - eg_kt, 0.0))
    gamma_minority = z / 3.0**1.5 - 2.0**-1.5
    gamma_minority *= z
    gamma_minority += 1.0
    ni_scaled = np.exp(ln_gamma)
    ni_scaled *= gamma_minority
    np.sqrt(ni_scaled, out=ni_scaled)
    ni_scaled *= ni
    with np.errstate(divide="ignore"):
        # the majority's levels see every carrier of their band, n = x + p, where the
        # quadratic has only its own x: phi scaled by x/n at the first estimate (1 but
        # near intrinsic, where the levels' occupancy by the thermal carriers matters)
        nearer += np.log(carriers)
        nearer -= ln_first
        # the minority species, taken as ionized, binds minority carriers p = gamma n_i^2/n
        # alike: a share b r/(1 + r) of it neutral, r = p/(gamma_p phi_minority)
        ln_r = 2.0 * np.log(ni) + ln_gamma - ln_first
        ln_r -= _pick(n_type, ln_nv - offset_a, ln_nc - offset_d)
    r = np.exp(np.clip(ln_r, -690.0, 690.0))
    r /= 1.0 + r
    r *= _pick(n_type, bound_a, bound_d)
    minor = minor * (1.0 - r)
    ln_u = np.log(np.maximum(majority(major, minor, nearer, bound, ni_scaled)[0], 1e-300))
    ln_u -= ln_band
    eta = inverse_fermi_dirac_half_of_log(ln_u)
    return _pick(n_type, eta, -eg_kt - eta)


def _pick(mask: BoolArray, a: FloatArray, b: FloatArray) -> FloatArray:
    """np.where(mask, a, b) for finite a and b (a NaN picked stays NaN), by arithmetic: on
    a random mask np.where or a masked copy costs several times as much (a mispredicted
    branch per element)."""
    picked = np.multiply(a, mask)
    picked += np.multiply(b, ~mask)
    return picked


def _kane_start(eta_parabolic: FloatArray, beta: FloatArray, n_type: BoolArray) -> FloatArray:
    """Newton start for a Kane conduction band from the parabolic one (n-type points).

    The same density needs a lower Fermi level: degenerate, E(1 + alpha E) = E_par
    (the T = 0 limit), solved as E = 2 E_par/(1 + sqrt(1 + 4 alpha E_par)); non-degenerate,
    F_K ~ (1 + 15 beta/4) F_1/2 (first order in beta = alpha kT).  Only the start.
    """
    positive = np.maximum(eta_parabolic, 0.0)
    degenerate = 2.0 * positive / (1.0 + np.sqrt(1.0 + 4.0 * beta * positive))
    start = np.where(eta_parabolic > 0, degenerate, eta_parabolic) - np.log1p(3.75 * beta)
    return np.where(n_type, start, eta_parabolic)


# below this ln u, F_1/2(eta) = e^eta to double precision (the inverse's own table edge)
_NONDEGENERATE_LN_U = -38.0


def _newton(residual: _Neutrality, eta0: FloatArray) -> tuple[FloatArray, FloatArray, int]:
    """Newton with a growing step limit and a bracket kept from the signs of f.

    f is strictly increasing, so every evaluation tightens [lo, hi]; a Newton
    step that leaves the bracket is replaced by bisection (or, while one side
    is still open, by a step of the current limit toward the root).  Working
    arrays are compacted as points converge.  Selections over all points are
    arithmetic (max/min with +-inf, products with 0/1) rather than masked copies, which
    cost several times as much on the random masks of a solve.
    """
    n_points = eta0.size
    out_eta = np.empty(n_points)
    out_f = np.empty(n_points)
    idx = np.arange(n_points)
    work = np.empty((4, n_points))  # rows: x, lo, hi, step limit (compacted together)
    work[0] = eta0
    work[1] = -np.inf
    work[2] = np.inf
    work[3] = 8.0
    accept = ACCEPT_STEP if residual.kane is None else ACCEPT_STEP_KANE
    for iterations in range(1, MAX_ITERATIONS + 1):
        x, lo, hi, limit = work
        f, df = residual(x)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            # x lies inside (lo, hi): it becomes lo where f < 0 and hi where f > 0, as a
            # max / min with x there and -inf / +inf elsewhere (1/0; NaN f changes nothing)
            below, above = f < 0, f > 0
            np.fmax(lo, np.subtract(x, np.divide(~below, below)), out=lo)
            np.fmin(hi, np.add(x, np.divide(~above, above)), out=hi)
            step = np.divide(f, df)
        np.negative(step, out=step)
        bad = ~np.isfinite(step)
        if bad.any():
            step[bad] = np.where(f[bad] > 0, -limit[bad], limit[bad])
        np.clip(step, -limit, limit, out=step)
        size = np.abs(step)
        big = size >= limit  # the step was clipped: the limit grows
        # converged: |f| small, or the step or the bracket has shrunk to rounding size;
        # such a point keeps x (where f was measured), never a fallback move below
        tiny = np.abs(x)
        tiny += 1.0
        tiny *= 4e-16
        done = np.abs(f) <= TOLERANCE
        done |= size <= tiny
        done |= np.subtract(hi, lo) <= tiny
        step *= ~done  # finite: a done point's new x is its x
        new = x + step
        outside = (new <= lo) | (new >= hi)
        outside &= ~done
        # a last Newton step inside the bracket: its point is returned without another
        # evaluation (|f| there <= 3.4e-13, with a Kane band 4.5e-13, see ACCEPT_STEP;
        # the block's plain-form neutrality check measures it)
        last = size <= accept
        last &= ~done
        last &= ~outside
        if outside.any():
            o_lo, o_hi, o_x, o_lim = lo[outside], hi[outside], x[outside], limit[outside]
            closed = np.isfinite(o_lo) & np.isfinite(o_hi)
            with np.errstate(invalid="ignore"):
                middle = 0.5 * (o_lo + o_hi)
            new[outside] = np.where(
                closed, middle, np.where(f[outside] > 0, o_x - o_lim, o_x + o_lim)
            )
        if big.any():
            limit[big] *= 4.0
        done |= last
        finished = np.flatnonzero(done)
        if finished.size:
            out_eta[idx[finished]] = new[finished]
            # f is not measured after a last step: the block's plain balance is its residual
            measured = np.abs(f[finished])
            measured *= ~last[finished]
            out_f[idx[finished]] = measured
            if finished.size == idx.size:
                return out_eta, out_f, iterations
            keep = np.flatnonzero(~done)
            x[:] = new
            idx = idx[keep]
            work = np.take(work, keep, axis=1)
            residual = residual.subset(keep)
        else:
            x[:] = new
    raise ConvergenceError(
        f"Fermi-level solve did not converge at {idx.size} point(s) after "
        f"{MAX_ITERATIONS} iterations"
    )


WORKERS = min(4, os.cpu_count() or 1)
CHUNK = 1 << 15  # points per block on one thread: the solver's temporaries then stay in cache
# points per block on several: each numpy call of a block releases the interpreter lock
# and takes it back, and on a shared VM a hand-off costs tens of microseconds, so longer
# calls pay (1e6 Si points, two threads over one: 1.07x with 32k blocks, 1.28x with 64k,
# 1.17x with 96k; two processes 1.64x in the same run)
THREAD_CHUNK = 1 << 16
MIN_BLOCK = 1 << 12  # smaller blocks cost more in per-call overhead than a thread gains


_POOLS = _threads.POOLS  # one pool per worker count, shared with the F_j kernels


def solve(
    material: Material,
    T: ArrayIn,
    donors: Mapping[str, ArrayIn] | None = None,
    acceptors: Mapping[str, ArrayIn] | None = None,
    band_gap_narrowing: bool = False,
    temperatures: Rows | None = None,
    dopings: Rows | None = None,
) -> State:
    """Solve charge neutrality for E_F at every (T, doping) point (vectorized).

    Formula: see the module docstring.  Units: T in K; ``donors`` and
    ``acceptors`` map a species of ``material`` to densities in m^-3 (arrays
    broadcast with T).  Validity: T in [1, 1500] K and densities in
    [0, 1e28] m^-3 are covered by tests; the material models have their own
    fitted ranges (reported by the rules, not enforced here).
    ``temperatures``: the points' distinct temperatures where the caller knows them (a
    sweep's grid: one flat index of each, and each point's row, as
    arrays.distinct_points gives them); the terms of T alone (kT, E_g/kT, ln N_c, ln N_v,
    n_i: ~40 ns a point, about a sixth of the solve) are then evaluated once per
    temperature and each block takes its points' rows -- the same elementwise arithmetic
    on the same temperatures, so the same numbers.  Not with band-gap narrowing (E_g/kT
    then depends on the doping).  ``dopings``: likewise the points' distinct doping rows
    (every species' density alike); the terms of the doping alone (totals, the levels'
    ln N, lowered energies and bound shares, ln of the net doping, the Mott flags:
    ~40 ns a point) are then evaluated once per row.

    References
    ----------
    Sze & Ng (2007) ch. 1; Edwards & Sienko, Phys. Rev. B 17, 2575 (1978).
    """
    donor_inputs, acceptor_inputs = dict(donors or {}), dict(acceptors or {})
    arrays = np.broadcast_arrays(
        np.asarray(T, dtype=float),
        *[np.asarray(v, dtype=float) for v in donor_inputs.values()],
        *[np.asarray(v, dtype=float) for v in acceptor_inputs.values()],
    )
    shape = arrays[0].shape
    # flat float copies of the broadcast inputs (the solve works on 1-D blocks)
    flat: list[FloatArray] = [a.astype(float).ravel() for a in arrays]
    temps = flat[0]
    n_donor_species = len(donor_inputs)
    donor_flat = dict(zip(donor_inputs, flat[1 : 1 + n_donor_species]))
    acceptor_flat = dict(zip(acceptor_inputs, flat[1 + n_donor_species :]))
    _check_inputs(temps, donor_flat, acceptor_flat)
    species = {name: material.dopant(name) for name in [*donor_flat, *acceptor_flat]}
    for name in donor_flat:
        if species[name].kind != "donor":
            raise InputError(f"{name} is an acceptor in {material.name}; list it under acceptors")
    for name in acceptor_flat:
        if species[name].kind != "acceptor":
            raise InputError(f"{name} is a donor in {material.name}; list it under donors")

    kane = kane_conduction_band(material)
    eta = np.empty_like(temps)
    residual = np.empty_like(temps)
    metallic = np.empty(temps.shape, dtype=bool)
    narrowing = np.empty_like(temps)
    factors = np.empty((3, temps.size))  # ln(n/N_c), ln(p/N_v) and eta_p at the returned eta
    # ln N^ion of each bound level there (State.level_logs)
    levels = sum(len(species[name].bound_levels()) for name in species)
    level_logs = np.empty((levels, temps.size))

    # the terms of T alone at each distinct temperature, and each point's row of them;
    # the state's kT, E_g, N_c, N_v and n_i (as it derives them: no narrowing) gathered
    # with them, by the blocks
    by_row = None
    derived: dict[str, FloatArray] = {}
    if temperatures is not None and not band_gap_narrowing:
        first, rows = temperatures
        if np.shape(rows) != temps.shape:
            raise ValueError("temperatures: one row per point")
        kT, Eg, Nc, Nv = _band_rows(material, temps[first])
        _, eg_kt, ln_nc, ln_nv, ni = _terms_of_bands(kT, Eg, Nc, Nv, 0.0)
        by_row = ((kT, Eg, Nc, Nv, ni, eg_kt, ln_nc, ln_nv), np.asarray(rows))
        derived = {name: np.empty_like(temps) for name in ("kT", "Eg", "Nc", "Nv", "ni", "n", "p")}
    by_doping = None
    if dopings is not None:
        first, rows = dopings
        if np.shape(rows) != temps.shape:
            raise ValueError("dopings: one row per point")
        terms_of_rows = _doping_terms(
            material,
            temps[first],
            {k: v[first] for k, v in donor_flat.items()},
            {k: v[first] for k, v in acceptor_flat.items()},
            band_gap_narrowing,
            species,
        )
        by_doping = (terms_of_rows, np.asarray(rows))
        derived.update((name, np.empty_like(temps)) for name in ("donors_total", "acceptors_total"))

    def block(i: int) -> int:
        part = slice(i, i + size)
        terms: TemperatureTerms | None = None
        if by_row is not None:  # (gathers, on the block's own thread)
            at = by_row[1][part]
            kept = [derived[name][part] for name in ("kT", "Eg", "Nc", "Nv", "ni")]
            for row, into in zip(by_row[0], kept, strict=False):
                row.take(at, mode="clip", out=into)
            eg_kt, ln_nc, ln_nv = (row.take(at, mode="clip") for row in by_row[0][5:])
            terms = (kept[0], eg_kt, ln_nc, ln_nv, kept[4])
        doping = None if by_doping is None else by_doping[0].take(by_doping[1][part])
        iterations = _solve_flat(
            material,
            temps[part],
            {k: v[part] for k, v in donor_flat.items()},
            {k: v[part] for k, v in acceptor_flat.items()},
            band_gap_narrowing,
            species,
            out=(
                eta[part],
                residual[part],
                metallic[part],
                narrowing[part],
                factors[:, part],
                level_logs[:, part],
            ),
            kane=kane,
            temperature_terms=terms,
            doping_terms=doping,
        )
        if by_row is not None:  # n and p as the state derives them, here on this thread
            for name, band, factor in (("n", "Nc", 0), ("p", "Nv", 1)):
                into = derived[name][part]
                np.exp(factors[factor, part], out=into)
                np.multiply(derived[band][part], into, out=into)
        if doping is not None:  # the dopant totals likewise (_sum's numbers)
            derived["donors_total"][part] = doping.nd_total
            derived["acceptors_total"][part] = doping.na_total
        return iterations

    # blocks of at most CHUNK points (THREAD_CHUNK with threads), and at least one per
    # worker once each gets MIN_BLOCK
    most = THREAD_CHUNK if WORKERS > 1 else CHUNK
    blocks = max(-(-temps.size // most), min(WORKERS, temps.size // MIN_BLOCK), 1)
    size = max(-(-temps.size // blocks), 1)
    starts = range(0, temps.size, size)
    if len(starts) > 1 and WORKERS > 1:
        # numpy releases the GIL inside ufuncs, so blocks overlap on both cores
        iterations = max(_threads.pool(WORKERS).map(block, starts))
    else:
        iterations = max(block(i) for i in starts)
    state = State(
        material=material,
        T=temps.reshape(shape),
        donors={k: v.reshape(shape) for k, v in donor_flat.items()},
        acceptors={k: v.reshape(shape) for k, v in acceptor_flat.items()},
        eta_n=eta.reshape(shape),
        metallic=metallic.reshape(shape),
        narrowing=narrowing.reshape(shape),
        residual=residual.reshape(shape),
        iterations=iterations,
        electron_band=kane,
        level_logs=level_logs,
    )
    # each block's check evaluated both band factors at the returned eta: kept, not redone
    state.__dict__["log_electron_factor"] = factors[0].reshape(shape)
    state.__dict__["log_hole_factor"] = factors[1].reshape(shape)
    state.__dict__["eta_p"] = factors[2].reshape(shape)  # (-eta_n - E_g/kT, as the property)
    state.__dict__.update((name, array.reshape(shape)) for name, array in derived.items())
    bad = ~(state.residual <= BALANCE_TOLERANCE)
    if bad.any():
        raise ConvergenceError(
            f"Fermi-level solve: neutrality off by up to "
            f"{np.nanmax(state.residual):.1e} at {int(bad.sum())} point(s)"
        )
    return state


def _dominant_level(
    group: Mapping[str, FloatArray],
    species: Mapping[str, Dopant],
    terms: list[LevelTerm],
    like: FloatArray,
) -> tuple[FloatArray, FloatArray]:
    """For the start, per point, of the group's most abundant species: its first level's
    occupancy offset E/kT + ln g and its bindable share b.  ``terms`` are the group's
    level terms in species order (0 and 1, shaped like ``like``, for an empty group)."""
    offset = np.zeros_like(like)
    bound = np.ones_like(offset)
    best = np.full_like(offset, -1.0)
    first = 0  # index of the species' first level term
    for name, dens in group.items():
        better = dens > best
        _, level_offset, ln_b, _ = terms[first]
        np.copyto(offset, level_offset, where=better)
        np.copyto(bound, np.exp(ln_b), where=better)
        np.maximum(best, dens, out=best)
        first += len(species[name].bound_levels())
    return offset, bound


class DopingTerms(NamedTuple):
    """What the solve of a block needs of the doping alone, per point (or per doping row)."""

    nd_total: FloatArray
    na_total: FloatArray
    narrowing: FloatArray  # J; 0 without the narrowing option
    metallic: BoolArray  # some species at or above its Mott density
    ln_net_n: FloatArray  # ln max(N_D - N_A, 0) (-inf where not > 0)
    ln_net_p: FloatArray  # ln max(N_A - N_D, 0)
    donor_rows: list[LevelRow]  # each bound level's, donors' in species order
    acceptor_rows: list[LevelRow]

    def take(self, at: IndexArray) -> DopingTerms:
        """The terms of the rows ``at`` (one row per point)."""

        def rows(levels: list[LevelRow]) -> list[LevelRow]:
            return [
                (pick(ln_n), pick(energy), pick(ln_b), pick(ln_free), ln_g)
                for ln_n, energy, ln_b, ln_free, ln_g in levels
            ]

        def pick(row: npt.NDArray[Any]) -> npt.NDArray[Any]:
            return row.take(at, mode="clip")

        return DopingTerms(
            pick(self.nd_total),
            pick(self.na_total),
            pick(self.narrowing),
            pick(self.metallic),
            pick(self.ln_net_n),
            pick(self.ln_net_p),
            rows(self.donor_rows),
            rows(self.acceptor_rows),
        )


def _doping_terms(
    material: Material,
    like: FloatArray,
    donors: Mapping[str, FloatArray],
    acceptors: Mapping[str, FloatArray],
    band_gap_narrowing: bool,
    species: Mapping[str, Dopant],
) -> DopingTerms:
    """:class:`DopingTerms` of densities (m^-3) shaped like ``like``."""
    nd_total = sum(donors.values(), np.zeros_like(like))
    na_total = sum(acceptors.values(), np.zeros_like(like))
    narrowing = np.zeros_like(like)
    if band_gap_narrowing:
        model = material.need("narrowing", "the band-gap narrowing option")
        narrowing = np.where(nd_total + na_total > 0, model(nd_total, na_total), 0.0)
        narrowing = np.clip(narrowing, 0.0, None)

    def rows(group: Mapping[str, FloatArray], total: FloatArray) -> list[LevelRow]:
        return [
            row
            for name, density in group.items()
            for row in _level_rows(species[name], density, total)
        ]

    metallic = np.zeros(like.shape, dtype=bool)
    for name in donors:
        metallic |= nd_total >= species[name].mott_density
    for name in acceptors:
        metallic |= na_total >= species[name].mott_density
    net = nd_total - na_total
    ln_net = _log(np.abs(net))
    with np.errstate(divide="ignore"):
        # ln max(N_D - N_A, 0) and ln max(N_A - N_D, 0) from one log, -inf (1/0) on the
        # other side: log(0) takes the slow path of np.log, and np.where a branch a point
        ln_net_n = ln_net - np.divide(net <= 0, net > 0)
        ln_net_p = ln_net - np.divide(net >= 0, net < 0)
    return DopingTerms(
        nd_total,
        na_total,
        narrowing,
        metallic,
        ln_net_n,
        ln_net_p,
        rows(donors, nd_total),
        rows(acceptors, na_total),
    )


def _temperature_terms(
    material: Material, T: FloatArray, narrowing: FloatArray | float
) -> TemperatureTerms:
    """(kT, (E_g - narrowing)/kT, ln N_c, ln N_v, n_i) at temperatures T (K): what the
    solve of a block needs of T alone (and of the narrowing, J)."""
    kT, Eg, Nc, Nv = _band_rows(material, T)
    return _terms_of_bands(kT, Eg, Nc, Nv, narrowing)


def _refuse_closed_gap(Eg: FloatArray, narrowing: FloatArray | float, kT: FloatArray) -> None:
    """An input error naming the first point where the narrowing model closes the gap (a
    model used far beyond its doping range, or a material file's V1 far above the
    published 7-9 meV): no solve could converge there."""
    gap, lowering, thermal = np.broadcast_arrays(Eg, narrowing, kT)
    at = int(np.argmax(gap - lowering <= 0))
    raise InputError(
        f"the band-gap narrowing model gives {lowering.flat[at] / EV:.3g} eV, which closes "
        f"the {gap.flat[at] / EV:.3g} eV band gap at {thermal.flat[at] / BOLTZMANN:.4g} K: check "
        "the material's band_gap_narrowing parameters"
    )


def _band_rows(material: Material, T: FloatArray) -> tuple[FloatArray, ...]:
    """(kT, E_g, N_c, N_v) at temperatures T (K), as the state derives them."""
    kT = BOLTZMANN * T
    Eg = material.need("band_gap", "the equilibrium solve")(T)
    Nc = material.need("Nc", "the equilibrium solve")(T)
    Nv = material.need("Nv", "the equilibrium solve")(T)
    return kT, Eg, Nc, Nv


def _terms_of_bands(
    kT: FloatArray, Eg: FloatArray, Nc: FloatArray, Nv: FloatArray, narrowing: FloatArray | float
) -> TemperatureTerms:
    gap = Eg - narrowing
    if np.ndim(narrowing) and np.any(gap <= 0):
        _refuse_closed_gap(Eg, narrowing, kT)
    eg_kt: FloatArray = gap / kT
    ni: FloatArray = np.sqrt(Nc * Nv) * np.exp(-0.5 * eg_kt)
    ln_nc: FloatArray = np.log(Nc)
    ln_nv: FloatArray = np.log(Nv)
    return kT, eg_kt, ln_nc, ln_nv, ni


def _solve_flat(
    material: Material,
    T: FloatArray,
    donors: Mapping[str, FloatArray],
    acceptors: Mapping[str, FloatArray],
    band_gap_narrowing: bool,
    species: Mapping[str, Dopant],
    out: tuple[FloatArray, FloatArray, BoolArray, FloatArray, FloatArray, FloatArray],
    kane: KaneBand | None = None,
    temperature_terms: TemperatureTerms | None = None,
    doping_terms: DopingTerms | None = None,
) -> int:
    """Solve one block; write eta, residual, metallic flag, narrowing, the band factors
    ln(n/N_c), ln(p/N_v) and eta_p (rows) and each bound level's ln N^ion (rows) into
    ``out``.  ``temperature_terms``, ``doping_terms``: :func:`_temperature_terms` and
    :func:`_doping_terms` at the block's points, where the caller took them per
    temperature (no band-gap narrowing) and per doping."""
    doping = doping_terms or _doping_terms(
        material, T, donors, acceptors, band_gap_narrowing, species
    )
    nd_total, na_total, narrowing, metallic, ln_net_n, ln_net_p, donor_rows, acceptor_rows = doping
    kT, eg_kt, ln_nc, ln_nv, ni = temperature_terms or _temperature_terms(material, T, narrowing)
    # bound levels move with their band edge: band-gap narrowing leaves E_ion alone
    donor_terms = [_at_kT(row, kT) for row in donor_rows]
    acceptor_terms = [_at_kT(row, kT) for row in acceptor_rows]
    residual = _Neutrality.build(
        ln_nc,
        ln_nv,
        eg_kt,
        ln_net_n,
        ln_net_p,
        donor_terms,
        acceptor_terms,
        None if kane is None else (kane, T),
    )
    offset_d, bound_d = _dominant_level(donors, species, donor_terms, T)
    offset_a, bound_a = _dominant_level(acceptors, species, acceptor_terms, T)
    eta0 = _initial_guess(
        ln_nc,
        ln_nv,
        eg_kt,
        nd_total,
        na_total,
        offset_d,
        offset_a,
        ni,
        bound_d,
        bound_a,
    )
    if kane is not None:
        eta0 = _kane_start(eta0, kane.alpha * kT, nd_total >= na_total)
    eta, final_f, iterations = _newton(residual, eta0)
    # the promise is checked, not assumed: neutrality in its plain form, evaluated afresh
    # from eta with the model's own densities (charge_balance_error, per block)
    eta_p = -eta - eg_kt
    if kane is None:
        both = np.asarray(log_fermi_dirac(0.5, np.concatenate([eta, eta_p])))
        ln_f_n, ln_f_p = both[: eta.size], both[eta.size :]
    else:
        ln_f_n = log_electron_factor(kane, eta, T)
        ln_f_p = np.asarray(log_fermi_dirac(0.5, eta_p))
    out_eta, out_residual, out_metallic, out_narrowing, out_factors, out_levels = out
    ionized = [
        _log_ionized(term, eta_band, out=row)
        for (term, eta_band), row in zip(
            [(term, eta) for term in donor_terms] + [(term, eta_p) for term in acceptor_terms],
            out_levels,
        )
    ]
    balance = _plain_balance_error(
        ln_nc + ln_f_n,
        ln_nv + ln_f_p,
        ionized[: len(donor_terms)],
        ionized[len(donor_terms) :],
    )
    out_eta[:] = eta
    out_factors[0], out_factors[1], out_factors[2] = ln_f_n, ln_f_p, eta_p
    np.maximum(np.abs(np.expm1(final_f)), balance, out=out_residual)
    out_metallic[:] = metallic
    out_narrowing[:] = narrowing
    return iterations
