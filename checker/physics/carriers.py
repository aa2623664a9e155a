"""Quantities derived from a solved equilibrium: mobilities, diffusion
coefficients, conductivity, mean free paths, the regime label, the
temperature where intrinsic conduction sets in, and the fitted ranges of the
models used.  Vectorized; SI units.
"""

from __future__ import annotations

from collections.abc import Callable, Collection

import numpy as np
import numpy.typing as npt

from .. import records
from . import transport
from .arrays import ArrayIn, FloatArray, FloatOrArray, IndexArray, distinct_points
from .constants import BOLTZMANN, ELEMENTARY_CHARGE
from .equilibrium import State
from .fermi import log_fermi_dirac
from .materials import (
    CarrierTransport,
    MassPolynomialDOS,
    Material,
    PowerLawDOS,
    Provenance,
    VarshniGap,
)

# the fitted temperature and doping ranges of the models a check relies on, and the models
# setting each edge (see model_ranges)
Ranges = tuple[tuple[float, float], tuple[float, float], dict[str, list[str]]]
# (one point of each distinct row, the row of every point), as arrays.distinct_points
Rows = tuple[IndexArray, IndexArray]


def _dominant(species: dict[str, FloatArray]) -> str | None:
    return max(species, key=lambda k: float(np.max(species[k])), default=None)


def carrier_transport(
    state: State,
    dimension: int = 3,
    mobility_model: str | None = None,
    velocities: bool = True,
    reference: ReferenceSolves | None = None,
    temperatures: Rows | None = None,
    dopings: Rows | None = None,
    only: Collection[str] | None = None,
) -> dict[str, FloatOrArray]:
    """Mobilities, diffusion coefficients, conductivity and mean free paths at a State.

    Mobility comes from the material's model at the total dopant density
    N_D + N_A, the variable the published fits (Masetti, Arora,
    Caughey–Thomas tables) were made against; the dominant donor species
    selects the electron parameter set where the material has one per dopant.
    ``mu0_*`` is the same model at N = 0 (the lattice-limited mobility);
    ``vsat_*`` and ``beta_*`` the saturation velocity and Caughey–Thomas
    exponent (NaN where the material has none).  D uses the generalized
    Einstein relation, lambda = 2D/<v_x^+> with Fermi–Dirac statistics; a
    Kane conduction band (``state.electron_band``, in the calculation's dimensionality) sets
    both for the electrons.  ``velocities`` False: D, <v_x+> and lambda (their F_j ratios
    and window averages) are left NaN, for a caller that reads none of them;
    ``reference``: solves at a reference temperature kept from earlier calls (a sweep's).
    ``temperatures``, ``dopings``: the points' distinct temperatures and doping rows
    (:data:`Rows`) where the caller knows them (a sweep's grid; default: found here):
    what depends on T alone is evaluated once per temperature, and where the points are
    most of the temperature x doping combinations the mobilities on that grid (each
    model's T and N terms once per row), every value as point by point.  ``only``: of
    mu0_x, vsat_x, beta_x, sigma and rho the ones to compute (None: all; the others are
    NaN numbers), for a caller that reads few of them (a sweep's chunk).
    Returns a dict of SI arrays.

    References
    ----------
    Masetti et al., IEEE TED 30, 764 (1983); Arora et al., IEEE TED 29, 292
    (1982); Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 6.
    """
    material = state.material
    impurities = state.donors_total + state.acceptors_total
    shape, size = np.shape(state.T), int(np.size(state.T))
    T_flat = np.ravel(state.T)
    if temperatures is None:
        temperatures = distinct_points([T_flat], size)
    T_first, T_back = temperatures
    T_rows = T_flat[T_first]

    def per_temperature(function: Callable[[FloatArray], FloatArray]) -> FloatArray:
        """A function of T alone at every point, evaluated once per temperature."""
        out: FloatArray = np.broadcast_to(function(T_rows), T_rows.shape)[T_back].reshape(shape)
        return out

    grid = _Outer.of(T_rows, T_back, impurities, dopings, shape)

    def wanted(name: str) -> bool:
        return only is None or name in only

    # a carrier is the minority where the other outnumbers it twice over (not in
    # intrinsic material, where the minority-carrier fits for doped layers do not apply)
    minority_n, minority_p = state.n < 0.5 * state.p, state.p < 0.5 * state.n
    result: dict[str, FloatOrArray] = {"kT_over_q": BOLTZMANN * state.T / ELEMENTARY_CHARGE}
    conduction: dict[str, FloatArray] = {}
    # the solves at a reference temperature, shared by the two carriers
    if reference is None:
        reference = ReferenceSolves()
    for x, band, eta, _dens, species, majority in (
        ("n", "electron", state.eta_n, state.n, state.donors, ~minority_n),
        ("p", "hole", state.eta_p, state.p, state.acceptors, ~minority_p),
    ):
        model: CarrierTransport = material.need(band, "mobility (conductivity, Einstein relation)")
        main = _dominant(species)
        if grid is None:
            mu = model.low_field(impurities, state.T, mobility_model, main)
        else:
            mu = grid.spread(model.low_field(grid.N, grid.T, mobility_model, main))
        if model.minority_model and not mobility_model and not np.all(majority):
            minority = (
                model.low_field(impurities, state.T, minority=True)
                if grid is None
                else grid.spread(model.low_field(grid.N, grid.T, minority=True))
            )
            mu = np.where(majority, mu, minority)
        every = _every_dopant_factor(state, model, mobility_model, main, x, reference, dopings)
        conduction[x] = np.where(majority, every, 1.0)
        # a Kane conduction band (bulk) sets the electrons' Einstein ratio and velocity
        # a Kane conduction band in the calculation's dimensionality (a bulk crystal
        # written as a 2D layer keeps its non-parabolic dispersion in the plane)
        kane = (
            records.replace(state.electron_band, dimension=dimension)
            if x == "n" and state.electron_band is not None
            else None
        )
        d = (
            transport.diffusion_coefficient(mu, state.T, eta, dimension, kane)
            if velocities
            else np.full_like(mu, np.nan)
        )
        result[f"mu_{x}"] = mu
        result[f"cond_{x}"] = conduction[x]
        # the lattice limit: the highest of the material's published fits at N = 0
        # a function of T alone: evaluated once per distinct temperature (a sweep over
        # doping repeats each one)
        zero = np.zeros_like(T_rows)
        result[f"mu0_{x}"] = np.nan
        if wanted(f"mu0_{x}"):
            result[f"mu0_{x}"] = per_temperature(
                lambda T: (
                    model.low_field(zero, T, mobility_model, main)  # noqa: B023
                    if mobility_model
                    else np.max([fit(zero, T) for fit in model.mobility.values()], axis=0)
                )  # noqa: B023
            )
        result[f"D_{x}"] = d
        for name, law in (("vsat", model.vsat), ("beta", model.beta)):
            result[f"{name}_{x}"] = np.nan
            if wanted(f"{name}_{x}"):
                result[f"{name}_{x}"] = per_temperature(law) if law else np.full_like(mu, np.nan)
        if not velocities:
            result[f"v_{x}"] = result[f"mfp_{x}"] = np.nan
        elif model.thermal_mass:
            v = transport.unidirectional_thermal_velocity(
                state.T, model.thermal_mass, eta, dimension, kane
            )
            result[f"v_{x}"] = v
            # lambda from the window-weighted velocity: D = <<v_x+>> lambda/2 at any eta
            window = transport.window_velocity(state.T, model.thermal_mass, eta, dimension, kane)
            result[f"mfp_{x}"] = transport.backscattering_mean_free_path(d, window)
        else:
            result[f"v_{x}"] = result[f"mfp_{x}"] = np.full_like(mu, np.nan)
    result["sigma"] = result["rho"] = np.nan
    if wanted("sigma") or wanted("rho"):
        result["sigma"] = transport.conductivity(
            state.n * conduction["n"], state.p * conduction["p"], result["mu_n"], result["mu_p"]
        )
        with np.errstate(divide="ignore"):  # no carriers (n, p underflow to 0): rho = inf
            result["rho"] = 1.0 / result["sigma"]
    return result


def einstein_ratio(state: State, carrier: str, dimension: int = 3) -> FloatArray:
    """Generalized Einstein ratio (D/mu)/(kT/q) of a parabolic band at the solved Fermi
    level of ``carrier`` ("n" or "p").

    Formula: F_{d/2-1}(eta)/F_{d/2-2}(eta) in d dimensions, as transport.einstein_ratio.  In
    3D the numerator F_1/2 is the state's own ln F_1/2(eta) (n = N_c F_1/2: the solve keeps
    its neutrality check's, at the same eta), so only ln F_-1/2 is evaluated: the same
    arithmetic, the same numbers, half the Fermi-Dirac work.  Units: none.  Validity: a
    parabolic band (a Kane conduction band: see energy_window.generalized_einstein_ratio;
    here its electrons take transport.einstein_ratio, the parabolic value).

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 3 (generalized Einstein
    relation); J. S. Blakemore, Semiconductor Statistics (1962) (F_j).
    """
    eta = state.eta_n if carrier == "n" else state.eta_p
    if dimension != 3 or (carrier == "n" and state.electron_band is not None):
        return np.asarray(transport.einstein_ratio(eta, dimension))
    log_half = state.log_electron_factor if carrier == "n" else state.log_hole_factor
    ratio: FloatArray = np.exp(log_half - log_fermi_dirac(-0.5, eta))
    return ratio


def _every_dopant_factor(
    state: State,
    model: CarrierTransport,
    mobility_model: str | None,
    species: str | None,
    carrier: str,
    reference: ReferenceSolves,
    dopings: Rows | None = None,
) -> FloatArray:
    """1/f(T_0) for a mobility given per dopant atom (sigma = q N mu at T_0, as the
    silicon resistivity standard is): the free carriers at T_0 are then credited with
    the conduction of every dopant, so incomplete ionization is not counted twice,
    while freeze-out relative to T_0 still lowers the conductivity.  1 otherwise.
    ``reference``: the solves at T_0 done so far (filled here)."""
    if not model.counts_every_dopant(mobility_model, species):
        return np.ones_like(state.T)
    fit = model.mobility[model.model_name(mobility_model, species)]
    T0 = float(getattr(fit, "T0", 296.15))
    fraction = reference.ionized_fraction(state, T0, 0 if carrier == "n" else 1, dopings)
    return 1.0 / np.maximum(fraction, 1e-300)


class ReferenceSolves:
    """Ionized fractions of dopings solved at a reference temperature, kept across calls:
    each distinct doping is solved once, however many points or calls repeat it (a sweep
    over temperature repeats every doping in every chunk).  The solve is pointwise, so a
    kept fraction is what solving the point again would give."""

    # bounds on what is kept (a 4e6-point donor x acceptor grid repeats no row, and would
    # otherwise keep ~0.7 GB): sets of a chunk's rows, rows per key (~170 B each)
    _KEPT_SETS = 4
    _KEPT_ROWS = 1 << 18

    def __init__(self) -> None:
        # (T0, material, species, narrowing) -> doping row -> (donor, acceptor fraction)
        self._rows: dict[tuple[object, ...], dict[tuple[float, ...], tuple[float, float]]] = {}
        # (that key, the rows' bytes) -> both fractions of each row, in the rows' order:
        # the chunks of a grid whose temperature runs slowest hold the same rows
        self._sets: dict[tuple[object, ...], FloatArray] = {}

    def ionized_fraction(
        self, state: State, T0: float, kind: int, dopings: Rows | None = None
    ) -> FloatArray:
        """The donor (``kind`` 0) or acceptor (1) ionized fraction at T0 of each point's
        doping (the state's own band-gap narrowing option; ``dopings``: the points' doping
        rows where the caller knows them, as carrier_transport)."""
        shape = np.shape(state.T)
        donors, acceptors = (
            {s: np.broadcast_to(d, shape).ravel() for s, d in g.items()}
            for g in (state.donors, state.acceptors)
        )
        columns = [*donors.values(), *acceptors.values()]
        first, back = dopings or distinct_points(columns, int(np.prod(shape)))
        picked = [column[first] for column in columns]
        narrowing = bool(np.any(state.narrowing > 0))
        key = (T0, id(state.material), tuple(donors), tuple(acceptors), narrowing)
        rows_key = (*key, first.size, b"".join(column.tobytes() for column in picked))
        both = self._sets.get(rows_key)
        if both is None:
            if len(self._sets) >= self._KEPT_SETS:  # chunks of new rows: keep the latest
                del self._sets[next(iter(self._sets))]
            both = self._sets[rows_key] = self._fractions(
                state, T0, key, donors, acceptors, first, picked
            )
        out: FloatArray = both[kind][back].reshape(shape)
        return out

    def _fractions(
        self,
        state: State,
        T0: float,
        key: tuple[object, ...],
        donors: dict[str, FloatArray],
        acceptors: dict[str, FloatArray],
        first: IndexArray,
        picked: list[FloatArray],
    ) -> FloatArray:
        """(donor, acceptor) ionized fraction at T0 of each distinct row (``first``: a point
        of each; ``picked``: the columns there), each row solved once per key."""
        from .equilibrium import solve

        # each distinct row as a tuple of Python floats (one tolist per column, not a
        # numpy scalar per value)
        rows = list(zip(*(column.tolist() for column in picked))) or [()] * first.size
        known = self._rows.setdefault(key, {})
        missing = [k for k, row in enumerate(rows) if row not in known]
        if len(known) + len(missing) > self._KEPT_ROWS:
            # a grid of ever new rows (donors x acceptors) reuses none: start afresh
            known.clear()
            missing = list(range(len(rows)))
        if missing:
            at = first[missing]
            solved = solve(
                state.material,
                np.full(at.size, T0),
                {s: d[at] for s, d in donors.items()},
                {s: d[at] for s, d in acceptors.items()},
                band_gap_narrowing=bool(key[-1]),
            )
            pairs = zip(solved.donor_fraction.tolist(), solved.acceptor_fraction.tolist())
            for k, pair in zip(missing, pairs):
                known[rows[k]] = pair
        both: FloatArray = np.array([known[row] for row in rows], dtype=float).reshape(-1, 2).T
        return both


class _Outer:
    """Points that are most of the combinations of their distinct temperatures and doping
    rows (a sweep's grid): a function of (N, T) is evaluated on that temperature x doping
    grid, T a column and N a row, so that its terms in T alone or N alone are computed
    once per temperature or doping, then spread back to the points.  Each point's value
    is the one its own evaluation gives (elementwise arithmetic on the same numbers)."""

    # the grid is used where it has at most this many cells per point
    WIDEST = 2

    def __init__(
        self,
        T: FloatArray,
        N: FloatArray,
        T_back: IndexArray,
        N_back: IndexArray,
        shape: tuple[int, ...],
    ) -> None:
        self.T, self.N = T[:, None], N[None, :]
        self.shape = shape
        self.cell = T_back * N.size + N_back  # each point's cell of the grid, row-major

    @classmethod
    def of(
        cls,
        T_rows: FloatArray,
        T_back: IndexArray,
        impurities: FloatArray,
        dopings: Rows | None,
        shape: tuple[int, ...],
    ) -> _Outer | None:
        size = int(np.prod(shape))
        if dopings is None or np.shape(impurities) != shape:
            return None
        first, back = dopings
        if T_rows.size * first.size > cls.WIDEST * size:
            return None
        return cls(T_rows, np.ravel(impurities)[first], T_back, back, shape)

    def spread(self, values: FloatArray) -> FloatArray:
        """The grid's values at the points."""
        table = np.ascontiguousarray(np.broadcast_to(values, (self.T.size, self.N.size)))
        out: FloatArray = np.take(table, self.cell).reshape(self.shape)
        return out


# regime names, indexed by the codes of regime_code (precedence rises with the code)
REGIMES = ("extrinsic", "incomplete ionization", "intrinsic", "degenerate", "metallic")
DEGENERATE_ETA = -3.0  # the 3kT rule
IONIZED_FRACTION = 0.9  # below it: incomplete ionization


def regime_code(state: State, degenerate_eta: float = DEGENERATE_ETA) -> npt.NDArray[np.int8]:
    """The regime of each point as an index into REGIMES: metallic, degenerate,
    intrinsic, incomplete ionization, extrinsic (checked in that order of precedence).

    Thresholds: eta > -3 counts as degenerate (the 3kT rule, common practice
    (no source)); intrinsic where n_i exceeds the net doping; incomplete
    ionization (freeze-out at low T, deep levels at any T) where under 90 % of
    the majority dopant is ionized (common practice (no source)); metallic above
    the dopant's Mott density.  Units: none; arrays broadcast like the state.

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), ch. 1
    (non-degeneracy, freeze-out, intrinsic regime).
    N. F. Mott, Metal-Insulator Transitions (Taylor & Francis, 1990) (impurity band above
    the critical density; densities per dopant in the material files).
    """
    net = np.abs(state.donors_total - state.acceptors_total)
    majority_fraction = np.where(
        state.donors_total >= state.acceptors_total, state.donor_fraction, state.acceptor_fraction
    )
    codes = np.zeros(np.shape(state.T), dtype=np.int8)
    codes[majority_fraction < IONIZED_FRACTION] = 1
    codes[(state.ni > net) | (net <= 0)] = 2  # undoped: intrinsic even where n_i underflows
    codes[(state.eta_n > degenerate_eta) | (state.eta_p > degenerate_eta)] = 3
    codes[np.broadcast_to(state.metallic, codes.shape)] = 4
    return codes


def regime_label(state: State, degenerate_eta: float = DEGENERATE_ETA) -> npt.NDArray[np.object_]:
    """A short regime name per point (see :func:`regime_code`)."""
    return np.asarray(REGIMES, dtype=object)[regime_code(state, degenerate_eta)]


def intrinsic_onset_temperature(
    material: Material, net_density: ArrayIn, fraction: float = 0.1, T_max: float = 3000.0
) -> FloatArray:
    """Lowest temperature where n_i(T) reaches ``fraction`` of the net doping (K).

    Formula: n_i(T) = sqrt(N_c N_v) exp(-E_g(T)/2kT) (Boltzmann; n_i << N_c
    wherever the onset lies), solved for n_i(T) = fraction * |N_D - N_A| by
    bisection in ln T on [1 K, T_max] (60 halvings: relative error < 1e-15).
    Units: densities m^-3.  Returns inf where the onset lies above T_max and
    NaN where the net doping is zero (intrinsic at every temperature).
    Validity: the material's gap and density-of-states fits.

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (2007),
    ch. 1 (n_i and the intrinsic temperature).
    """
    with np.errstate(divide="ignore"):  # zero net doping: intrinsic at every T
        target = np.log(fraction * np.asarray(net_density, dtype=float))
    lo = np.zeros_like(target)
    hi = np.full_like(target, np.log(T_max))

    # a material without these parameters gets the clear error, not a call of None
    purpose = "the intrinsic-onset temperature"
    gap: VarshniGap = material.need("band_gap", purpose)
    Nc: PowerLawDOS | MassPolynomialDOS = material.need("Nc", purpose)
    Nv: PowerLawDOS | MassPolynomialDOS = material.need("Nv", purpose)

    def ln_ni(ln_T: FloatArray) -> FloatArray:
        T = np.exp(ln_T)
        ln: FloatArray = 0.5 * np.log(Nc(T) * Nv(T)) - 0.5 * gap(T) / (BOLTZMANN * T)
        return ln

    for _ in range(60):
        mid = 0.5 * (lo + hi)
        below = ln_ni(mid) < target
        lo = np.where(below, mid, lo)
        hi = np.where(below, hi, mid)
    onset = np.exp(hi)
    onset = np.where(ln_ni(np.full_like(target, np.log(T_max))) < target, np.inf, onset)
    return np.where(np.isfinite(target), onset, np.nan)


def model_ranges(
    material: Material,
    donor_species: str | None,
    acceptor_species: str | None,
    mobility_model: str | None = None,
) -> Ranges:
    """Fitted temperature and doping ranges of the models a check relies on.

    Returns ((T_low, T_high), (N_low, N_high), binding): the intersection over
    the band gap, the density of states and the electron and hole mobility
    models selected for the given dominant species (SI units), and for each
    edge ("T_low", "T_high", "N_low", "N_high") the names of the models that set it.
    """
    parts: list[tuple[str, Provenance, bool]] = []
    if material.band_gap:
        parts.append(("band gap", material.band_gap.provenance, False))
    if material.Nc:
        parts.append(("density of states", material.Nc.provenance, False))
    for band, model, species in (
        ("electron", material.electron, donor_species),
        ("hole", material.hole, acceptor_species),
    ):
        if model is None:
            continue
        name = model.model_name(mobility_model, species)
        fit = model.mobility.get(name)
        if fit is not None:
            parts.append((f"{band} mobility ({name})", fit.provenance, True))
    T_low = max((p.valid_T[0] for _, p, _ in parts), default=0.0)
    T_high = min((p.valid_T[1] for _, p, _ in parts), default=np.inf)
    N_low = max((p.valid_N[0] for _, p, doping in parts if doping), default=0.0)
    N_high = min((p.valid_N[1] for _, p, doping in parts if doping), default=np.inf)
    binding = {
        "T_low": [n for n, p, _ in parts if p.valid_T[0] == T_low],
        "T_high": [n for n, p, _ in parts if p.valid_T[1] == T_high],
        "N_low": [n for n, p, doping in parts if doping and p.valid_N[0] == N_low],
        "N_high": [n for n, p, doping in parts if doping and p.valid_N[1] == N_high],
    }
    return (T_low, T_high), (N_low, N_high), binding
