"""Solve every calculation and lay out the named quantities rules read.

Calculations that share a material, dopant species, dimensionality and
options are solved together in one vectorized call; the results are placed in
one array per quantity name (the registry's, :mod:`checker.quantity_registry.registry`),
indexed by calculation.  A group that fails (e.g. a custom material lacking a parameter)
is retried one calculation at a time so that only the bad ones are lost.
"""

from __future__ import annotations

import functools
import itertools
from collections.abc import Callable, Collection, Mapping, Sequence
from typing import TYPE_CHECKING, Any, TypeAlias

import numpy as np
import numpy.typing as npt

from ... import records
from ...errors import MissingParameterError, RegimecheckError
from ...physics import carriers, energy_window, equilibrium, fermi, hall, transport
from ...physics.arrays import ArrayIn, BoolArray, FloatArray, distinct
from ...physics.constants import BOLTZMANN, ELEMENTARY_CHARGE
from ...physics.equilibrium import State
from ...physics.materials import Material
from ...quantity_registry.registry import QUANTITIES, Source, value_names
from ...vocabulary_words import Carrier
from . import conductor_values, sheet_values

if TYPE_CHECKING:
    from ...inputs.calculation_file import Calculation

# quantity name -> one array over the points (cells): float64, or an object array of
# words for the text-valued quantities (the regime, the models that bound a range)
Values: TypeAlias = dict[str, npt.NDArray[Any]]
# a name of REPLACEABLE -> the cells where a rule put the replacement in
Replaced: TypeAlias = dict[str, BoolArray]
# dopant species -> density per point (m^-3)
Densities: TypeAlias = dict[str, FloatArray]

# the stated numbers laid out as given (conductivity and resistivity then complete each other)
_STATED = tuple(
    name for q in QUANTITIES if q.source is Source.STATED and q.in_rules for _, name in q.carriers()
)
# a number stated for one carrier says the calculation uses that carrier (the band's
# density of states does not)
_CARRIER_SPECIFIC = ("stated_dens", "stated_mu", "stated_D", "stated_v", "stated_ns")


def _dominant(species: Mapping[str, float]) -> str | None:
    return max(species, key=species.__getitem__, default=None)


def _group_key(calc: Calculation) -> tuple[object, ...]:
    return (
        id(calc.material),
        tuple(sorted(calc.donors)),
        tuple(sorted(calc.acceptors)),
        _dominant(calc.donors),
        _dominant(calc.acceptors),
        calc.band_gap_narrowing,
        int(calc.structure.get("dim", 3)),
        sheet_values.is_sheet(calc),
        calc.subband_energies,
    )


def _unknown(count: int, solved: Collection[str] = (), writable: bool = True) -> Values:
    """Every quantity over ``count`` points, unknown (NaN, or empty text) until solved;
    the names in ``solved`` (given their values next) are left out.  Not ``writable``:
    read-only views of one value each (a sweep's chunk only replaces whole arrays, and
    ~100 unknown quantities would otherwise each fill 256 kB per chunk)."""
    fill = _filled if writable else _constant
    values: Values = {name: fill(count, np.nan) for name in value_names() - set(solved)}
    for q in QUANTITIES:
        if q.name in solved:
            continue
        if q.source is Source.CONSTANT:
            values[q.name] = fill(count, q.value)
        elif q.source is Source.TEXT:
            values[q.name] = fill(count, "", object)
    return values


def one_value(array: Any) -> Any:
    """One element of a 1-D array that repeats it (a read-only view of stride 0, as
    :func:`_constant` makes), else the array: elementwise arithmetic on it broadcasts to
    the values the whole array gives, computed once."""
    if isinstance(array, np.ndarray) and array.ndim == 1 and array.size > 1:
        if array.strides == (0,):
            return array[:1]
    return array


@functools.lru_cache(maxsize=2)
def _unknown_views(count: int) -> Values:
    """:func:`_unknown` as read-only views, made once per chunk size (every chunk of a
    sweep but its last has one size; a view holds one value, not ``count``)."""
    return _unknown(count, writable=False)


def _filled(count: int, value: object, dtype: type = float) -> npt.NDArray[Any]:
    return np.full(count, value, dtype=dtype)


def _constant(count: int, value: object, dtype: type = float) -> npt.NDArray[Any]:
    """``value`` at ``count`` points without the memory: a read-only view of one element."""
    return np.broadcast_to(np.array(value, dtype=dtype), (count,))


def solve_sweep(
    calc: Calculation,
    T: FloatArray,
    donors: Densities,
    acceptors: Densities,
    reads: Collection[str] | None = None,
    reference: carriers.ReferenceSolves | None = None,
    rows: tuple[carriers.Rows, carriers.Rows] | None = None,
) -> tuple[Values, str | None]:
    """Every quantity over the points of a sweep of ``calc`` (arrays of one length).
    ``reads``: the names the sweep's rules read (evaluate.sweep_rules); then the words
    only reports and messages read (the regime, the models past their range) and the
    intrinsic-onset temperature, the Hall factors and the carriers' velocities and mean
    free paths where no rule reads them are left unknown, and what a rule reads only
    where its gate holds (the transport and what follows from it, the parabolic bands'
    Einstein ratios, the narrowing and the narrowed solve's densities) is computed on
    first read (:class:`LazyValues`).  None: every quantity, at once.  ``reference``: the
    solves at the resistivity standard's reference temperature kept across a sweep's
    chunks (carriers.ReferenceSolves; None: solved afresh).  ``rows``: the points'
    distinct temperatures and doping rows (carriers.Rows), where the sweep's grid gives
    them (None: found where needed)."""
    count = len(T)
    put, skipped = solve_points(
        calc, T, donors, acceptors, reads=reads, reference=reference, rows=rows
    )
    # the solve's own arrays are kept as they are; a copy only where an array would be
    # shared (a caller's input, or one array under two names) or is not yet one per point
    values = LazyValues(count, {_memory(a) for a in (T, *donors.values(), *acceptors.values())})
    values.update((name, view) for name, view in _unknown_views(count).items() if name not in put)
    for name, array in put.items():
        if isinstance(array, Deferred):
            values.defer((name,), array)
        else:
            values.place(name, array)
    fill_inputs([calc], values, count=count, reads=reads)
    return values, skipped


class Deferred:
    """Quantities computed together on their first read (:class:`LazyValues`):
    ``compute(values)`` gives them by name, reading what it needs from ``values``;
    ``placed``: they are laid out as solve_sweep lays out the solve's arrays (else taken
    as they are)."""

    __slots__ = ("compute", "placed")

    def __init__(self, compute: Callable[[Values], Mapping[str, ArrayIn]], placed: bool = False):
        self.compute, self.placed = compute, placed


class LazyValues(dict[str, npt.NDArray[Any]]):
    """A sweep chunk's quantities (solve_sweep with ``reads``): a quantity some rule may
    read, but only where its gate holds (the transport where no rule reads a mobility
    unless a stated number is given; the minority carrier's Einstein ratio), is
    computed when first looked up, never where no chunk's rules read it.  What is looked
    up is what computing it at once would have given (the same functions of the same
    arrays); a name given a value directly is never computed again."""

    def __init__(self, count: int, shared: set[int] | None = None) -> None:
        super().__init__()
        self.count = count
        self._shared = set() if shared is None else shared  # buffers already under a name
        self._pending: dict[str, Deferred] = {}

    def defer(self, names: Collection[str], deferred: Deferred) -> None:
        """``names`` are computed by ``deferred`` on first read."""
        for name in names:
            self.pop(name, None)
            self._pending[name] = deferred

    def pending(self, name: str) -> bool:
        return name in self._pending

    def place(self, name: str, array: ArrayIn) -> None:
        """``array`` under ``name`` over the chunk: one value as a read-only view; a point
        array of the chunk's own as it is, else a copy (no two names share a buffer)."""
        count = self.count
        if not np.ndim(array):
            self[name] = _constant(count, array)
        elif (
            isinstance(array, np.ndarray)
            and array.shape == (count,)
            and array.flags.writeable
            and _memory(array) not in self._shared
        ):
            self[name] = array
            self._shared.add(_memory(array))
        else:
            self[name] = np.broadcast_to(array, (count,)).copy()

    def __missing__(self, name: str) -> npt.NDArray[Any]:
        deferred = self._pending.get(name)
        if deferred is None:
            raise KeyError(name)
        for key, array in deferred.compute(self).items():
            if self._pending.get(key) is not deferred:
                continue
            del self._pending[key]
            if key in self:  # given a value directly meanwhile: kept
                continue
            if deferred.placed:
                self.place(key, array)
            else:
                self[key] = np.asarray(array)
        # a name the computation did not give (a quantity it writes only in some chunks)
        # is unknown, as an undeferred one would be, not computed again on its next read
        for key in [key for key, later in self._pending.items() if later is deferred]:
            del self._pending[key]
            if key not in self:
                self[key] = _constant(self.count, np.nan)
        return dict.__getitem__(self, name)


def _derived(
    into: Callable[[Values], None], fixed: Mapping[str, npt.NDArray[Any]]
) -> Callable[[Values], dict[str, ArrayIn]]:
    """A Deferred's compute from a function that writes quantities into ``values``: what
    it writes on a layer over ``values``, which it reads through but for the ``fixed``
    arrays (the values of those names when the function was deferred)."""

    def compute(values: Values) -> dict[str, ArrayIn]:
        layer = _Layer(values)
        layer.update(fixed)
        into(layer)
        return {name: array for name, array in layer.items() if name not in fixed}

    return compute


class _Layer(dict[str, npt.NDArray[Any]]):
    """Writes kept here, reads of anything else passed to ``base``."""

    def __init__(self, base: Values) -> None:
        super().__init__()
        self._base = base

    def __missing__(self, name: str) -> npt.NDArray[Any]:
        return self._base[name]


def _memory(array: object) -> int:
    """Identity of the buffer an array views (views of one buffer share it)."""
    while isinstance(array, np.ndarray) and array.base is not None:
        array = array.base
    return id(array)


def solve_all(
    calculations: Sequence[Calculation],
) -> tuple[Values, dict[int, str], dict[int, str]]:
    """Return (values, errors, notes): values maps every quantity name to an array
    over the calculations (NaN where unknown); errors maps a calculation index to
    the message of a solve that could not be done; notes maps an index to what
    was skipped (e.g. transport checks for a material without mobility data)."""
    values = _unknown(len(calculations))
    errors: dict[int, str] = {}
    notes: dict[int, str] = {}
    groups: dict[tuple[object, ...], list[int]] = {}
    for index, calc in enumerate(calculations):
        groups.setdefault(_group_key(calc), []).append(index)
    # the bulk points solved, by material: their onset temperatures are found after the
    # groups, in one bisection per material (elementwise, so the same numbers)
    bulk: dict[int, tuple[Material, list[int]]] = {}

    def solved(members: list[int]) -> None:
        first = calculations[members[0]]
        if not sheet_values.is_sheet(first):
            bulk.setdefault(id(first.material), (first.material, []))[1].extend(members)

    for members in groups.values():
        try:
            skipped = _solve_group(calculations, members, values)
        except RegimecheckError:
            for index in members:
                try:
                    skipped = _solve_group(calculations, [index], values)
                except RegimecheckError as exc:
                    errors[index] = str(exc)
                    continue
                solved([index])
                if skipped:
                    notes[index] = skipped
            continue
        solved(members)
        if skipped:
            notes.update({index: skipped for index in members})
    for material, members in bulk.values():
        _place_onsets(material, members, values, errors)
    fill_inputs(calculations, values)
    return values, errors, notes


def _place_onsets(
    material: Material, members: list[int], values: Values, errors: dict[int, str]
) -> None:
    """T_onset at the solved bulk points ``members`` of one material; where it cannot be
    found the point is lost as a failed solve is (its values unknown, the error kept)."""
    try:
        values["T_onset"][members] = _onset(material, values["Nnet"][members])
        return
    except RegimecheckError:
        pass
    unknown = _unknown(1)
    for index in members:
        try:
            values["T_onset"][index] = _onset(material, values["Nnet"][[index]])[0]
        except RegimecheckError as exc:
            errors[index] = str(exc)
            for name, array in values.items():
                array[index] = unknown[name][0]


def _solve_group(
    calculations: Sequence[Calculation], members: list[int], values: Values
) -> str | None:
    calcs = [calculations[i] for i in members]
    T = np.array([c.temperature for c in calcs])
    donors = {s: np.array([c.donors[s] for c in calcs]) for s in calcs[0].donors}
    acceptors = {s: np.array([c.acceptors[s] for c in calcs]) for s in calcs[0].acceptors}
    sheet = sheet_values.sheet_inputs(calcs) if sheet_values.is_sheet(calcs[0]) else None
    put, skipped = solve_points(calcs[0], T, donors, acceptors, sheet, calcs, onset=False)
    # (the index array made once for ~150 quantities; a number or an array of the
    # group's points is broadcast by the assignment itself)
    at = np.array(members, dtype=np.intp)
    for name, array in put.items():
        values[name][at] = array
    return skipped


def _onset(material: Material, net: FloatArray) -> FloatArray:
    """Intrinsic-onset temperature per point, solved once per distinct net doping (a
    sweep over temperature repeats each doping many times)."""
    distinct, back = np.unique(net, return_inverse=True)
    return carriers.intrinsic_onset_temperature(material, distinct)[back.reshape(net.shape)]


def solve_points(
    first: Calculation,
    T: FloatArray,
    donors: Densities,
    acceptors: Densities,
    sheet: dict[str, FloatArray] | None = None,
    calcs: Sequence[Calculation] | None = None,
    reads: Collection[str] | None = None,
    reference: carriers.ReferenceSolves | None = None,
    rows: tuple[carriers.Rows, carriers.Rows] | None = None,
    onset: bool = True,
) -> tuple[dict[str, Any], str | None]:
    """Solve points sharing ``first``'s material, species, dimensionality and options at
    the temperatures ``T`` and the densities (arrays, m^-3); return (quantities, note).
    A sheet (2D gas, graphene) takes the sheet solve, its Fermi level fixed by ``sheet``
    (sheet_values.sheet_inputs; default: ``first``'s own stated numbers).  ``calcs``: the
    calculation of each point (default: ``first`` for all); what only some calculations
    read (bulk modes, the solve with narrowing) is computed at their points alone;
    ``reads``, ``reference``, ``rows``: see :func:`solve_sweep`; with ``reads`` (a sweep's
    chunk) some quantities are given as a :class:`Deferred`, computed where first read.
    ``onset`` False: T_onset is left to the caller (solve_all finds it per material)."""

    def where(reads: Callable[[Calculation], bool]) -> BoolArray:
        if calcs is None:
            return np.full(T.shape, reads(first))
        return np.array([reads(c) for c in calcs], dtype=bool)

    if sheet_values.is_sheet(first):
        if sheet is None:
            sheet = sheet_values.sheet_inputs([first])
        solved, note = sheet_values.solve_sheet_points(first, T, sheet)
        solved.update(conductor_values.band_values(first, T, solved, sheet=True))
        return solved, note
    material, dim = first.material, int(first.structure.get("dim", 3))
    state = equilibrium.solve(
        material,
        T,
        donors,
        acceptors,
        band_gap_narrowing=first.band_gap_narrowing,
        temperatures=rows[0] if rows is not None else None,
        dopings=rows[1] if rows is not None else None,
    )
    if rows is not None and not first.band_gap_narrowing:
        _per_temperature(state, rows[0])
    velocities = reads is None or not _VELOCITY.isdisjoint(reads)

    def transport() -> tuple[dict[str, Any], str | None]:
        try:
            return carriers.carrier_transport(
                state,
                dim,
                velocities=velocities,
                reference=reference,
                temperatures=rows[0] if rows else None,
                dopings=rows[1] if rows else None,
                only=None if reads is None else _LATTICE.intersection(reads),
            ), None
        except MissingParameterError as exc:
            # statistics checks still run; mobility-based ones see NaN and stay silent
            missing: dict[str, Any] = {key: np.full_like(T, np.nan) for key in _FLOW_NAN}
            missing["cond_n"] = missing["cond_p"] = np.ones_like(T)
            return missing, f"transport checks skipped: {exc}"

    # a sweep's chunk whose rules may read no mobility (the gates decide, chunk by chunk):
    # the transport is computed on first read (LazyValues), where no parameter it needs
    # is missing (else the note that says so is given now, as for every other chunk)
    skipped = None
    if reads is not None and _BAND_POWERS.isdisjoint(reads) and _transport_given(material):
        later = Deferred(lambda _: _flow_values(transport()[0]), placed=True)
        flow: dict[str, Any] = dict.fromkeys(_FLOW, later)
    else:
        flow, skipped = transport()
    (T_lo, T_hi), (N_lo, N_hi), binding = carriers.model_ranges(
        material, _dominant(first.donors), _dominant(first.acceptors)
    )
    net = np.abs(state.donors_total - state.acceptors_total)

    @functools.cache
    def narrowing() -> FloatArray:
        """The material's band-gap narrowing at each point's doping (J)."""
        if material.narrowing is None:
            return np.full_like(T, np.nan)
        gap_change: FloatArray = material.narrowing(state.donors_total, state.acceptors_total)
        return gap_change

    # n_i is the intrinsic density of the undoped crystal; with narrowing on the solve's
    # is the effective one, n_ie
    ni = state.ni * np.exp(-narrowing() / (2 * state.kT)) if first.band_gap_narrowing else state.ni
    # a sweep's chunk solved without narrowing: the narrowing and the densities of the
    # solve with it where a rule reads them (their gates need stated densities or n_i)
    lazy = reads is not None and not first.band_gap_narrowing

    def narrowed_densities(_: object = None) -> dict[str, FloatArray]:
        wanted = where(_reads_narrowed_densities)
        return _narrowed_densities(first, T, donors, acceptors, state, narrowing(), wanted)

    # a quantity with one value for every point is given as that number (solve_sweep: a
    # read-only view; solve_all: the same value at each calculation)
    put: dict[str, Any] = {
        "T": T,
        "kT": state.kT,
        # (carrier_transport's kT_over_q, the same arithmetic: not deferred with it)
        "kT_q": state.kT / ELEMENTARY_CHARGE,
        "Eg": state.Eg,
        "ni": ni,
        "nie": state.ni,
        "Nnet": net,
        "Ntot": state.donors_total + state.acceptors_total,
        "dEg_bgn": Deferred(lambda _: {"dEg_bgn": narrowing()}, placed=True)
        if lazy
        else narrowing(),
        "bgn_on": float(first.band_gap_narrowing),
        "T_lo": T_lo,
        "T_hi": T_hi,
        "N_lo": N_lo,
        "N_hi": N_hi,
        "dim": float(dim),
    }
    if reads is None or not {"ni_lo", "ni_hi"}.isdisjoint(reads):
        put["ni_lo"], put["ni_hi"] = _ni_spread(material, T, ni)
    if reads is None:  # words for reports and messages (a sweep's chunk shows none)
        put["regime"] = carriers.regime_label(state)
        # which models set the edge a point leaves (for the model-validity messages)
        put["T_models"] = _models_beyond(T, T_lo, T_hi, binding)
        put["N_models"] = np.full(T.shape, ", ".join(binding["N_high"]), dtype=object)
    if onset and (reads is None or "T_onset" in reads):
        put["T_onset"] = _onset(material, net)
    for x, eta, dens, nband, own, other, ionized, fraction, species in (
        (
            "n",
            state.eta_n,
            state.n,
            state.Nc,
            state.donors_total,
            state.acceptors_total,
            state.donors_ionized_total,
            "donor_fraction",
            first.donors,
        ),
        (
            "p",
            state.eta_p,
            state.p,
            state.Nv,
            state.acceptors_total,
            state.donors_total,
            state.acceptors_ionized_total,
            "acceptor_fraction",
            first.acceptors,
        ),
    ):
        mott = min((material.dopant(s).mott_density for s in species), default=np.inf)
        dominant = _dominant(species)
        main = material.dopant(dominant) if dominant is not None else None
        put.update(
            {
                f"eta_{x}": eta,
                f"dens_{x}": dens,
                f"Nband_{x}": nband,
                f"N_{x}": own,
                f"Ncomp_{x}": other,
                f"Nion_{x}": ionized,
                # (a property that sums the ionized densities again: where read)
                f"f_{x}": getattr(state, fraction)
                if reads is None or f"f_{x}" in reads
                else np.nan,
                f"mott_{x}": mott,
                f"metal_{x}": (own >= mott).astype(float)
                if reads is None or f"metal_{x}" in reads
                else np.nan,
                f"mu_{x}": flow[f"mu_{x}"],
                f"mu0_{x}": flow[f"mu0_{x}"],
                f"cond_{x}": flow[f"cond_{x}"],
                f"vsat_{x}": flow[f"vsat_{x}"],
                f"beta_{x}": flow[f"beta_{x}"],
                f"vth_{x}": flow[f"v_{x}"],
                f"lambda_model_{x}": flow[f"mfp_{x}"],
                f"Eion_{x}": main.energy if main else np.nan,
                f"gdeg_{x}": main.degeneracy if main else np.nan,
            }
        )
    if lazy:
        put["dens_bgn_n"] = put["dens_bgn_p"] = Deferred(narrowed_densities, placed=True)
    else:
        put.update(narrowed_densities())
    # electrons count as the majority on a tie (intrinsic material: n = p to rounding)
    majority_n = (state.n >= state.p * (1 - 1e-9)).astype(float)
    put["maj_n"], put["maj_p"] = majority_n, 1.0 - majority_n
    for x in Carrier:
        if reads is not None and _HALL.isdisjoint(reads):
            break  # the measured Hall factors are read by _hall alone
        low, high, (t_low, t_high) = material.hall_factors.get(x.singular, (np.nan, np.nan, (0, 0)))
        inside = (T >= t_low) & (T <= t_high)
        put[f"rH_lo_{x}"] = np.where(inside, low, np.nan)
        put[f"rH_hi_{x}"] = np.where(inside, high, np.nan)
    put.update(_band_shape_values(state, dim, reads))
    if reads is not None:
        # other names of the solve's arrays that no rule of the sweep reads: left unknown
        # instead of copied
        for name in _ALIASES.difference(reads):
            put.pop(name, None)
    if reads is None or not _BAND_POWERS.isdisjoint(reads):
        modes_at = where(conductor_values.has_cross_section)
        put.update(conductor_values.band_values(first, T, put, sheet=False, modes_at=modes_at))
    return put, skipped


def _per_temperature(state: State, temperatures: carriers.Rows) -> None:
    """The state's quantities of T alone -- kT, E_g, N_c, N_v, n_i -- evaluated once per
    distinct temperature of its points (``temperatures``: carriers.Rows, a sweep chunk's
    from the grid) and given to the state before it derives them point by point (its
    cached properties): the same elementwise arithmetic on the same temperatures, so the
    same numbers.  Only for a solve without band-gap narrowing, whose E_g is the
    material's gap at every point (the narrowing subtracted is 0)."""
    first, back = temperatures
    material = state.material
    T = np.ravel(state.T)[first]
    kT = BOLTZMANN * T
    Eg = material.need("band_gap", "the band gap")(T)
    Nc = material.need("Nc", "the electron density")(T)
    Nv = material.need("Nv", "the hole density")(T)
    ni = np.sqrt(Nc * Nv) * np.exp(-0.5 * Eg / kT)
    shape = np.shape(state.T)
    for name, rows in (("kT", kT), ("Eg", Eg), ("Nc", Nc), ("Nv", Nv), ("ni", ni)):
        if name not in state.__dict__:  # (not derived yet)
            state.__dict__[name] = np.take(np.broadcast_to(rows, T.shape), back).reshape(shape)


def _models_beyond(
    T: FloatArray, T_lo: float, T_hi: float, binding: dict[str, list[str]]
) -> npt.NDArray[np.object_]:
    """Per point, the models whose fitted temperature range the point leaves ("" inside)."""
    names = np.full(T.shape, "", dtype=object)
    names[T > T_hi] = ", ".join(binding["T_high"])
    names[T < T_lo] = ", ".join(binding["T_low"])  # the low edge first where ranges cross
    return names


def _band_shape_values(
    state: State, dim: int, reads: Collection[str] | None = None
) -> dict[str, FloatArray]:
    """What a parabolic band would make of the bulk solve (BAND01): the Fermi level of
    n = N_c F_1/2(eta) at the solved density, the density at the solved Fermi level, and
    alpha kT; and each band's own Einstein ratio n/(dn/deta) (a Kane conduction band's
    from the energy window, in the calculation's dimensionality).  A parabolic band gives
    the solve's own values (alpha kT = 0); so does a Kane band outside 3D, where the bulk
    solve's density is not the layer's (BAND01 compares bulk densities).  ``reads``: the
    names a sweep's rules read (None: all); a Kane band's parabolic level and density are
    computed only where read (else they stay the solve's own, which the sweep drops)."""
    band = state.electron_band
    out: dict[str, Any] = {}
    for x, eta, dens in (("n", state.eta_n, state.n), ("p", state.eta_p, state.p)):
        out[f"eta_par_{x}"], out[f"dens_par_{x}"] = eta, dens
        out[f"beta_kane_{x}"] = np.zeros_like(state.T)
        if x == "n" and band is not None:
            continue  # a Kane band's ratio is the energy window's (below)
        if reads is not None and band is None:
            # a sweep's chunk: each carrier's ratio where a rule reads it (LazyValues; a
            # rule of the minority carrier mostly stops before its indicator)
            out[f"einstein_{x}"] = Deferred(_einstein_ratio(state, x, dim), placed=True)
        else:
            out[f"einstein_{x}"] = carriers.einstein_ratio(state, x, dim)
    if band is not None:
        in_plane = records.replace(band, dimension=dim)
        ratio = energy_window.generalized_einstein_ratio(in_plane, state.eta_n, state.T)
        out["einstein_n"] = np.asarray(ratio)
    if band is not None and dim == 3 and (reads is None or not _PARABOLIC.isdisjoint(reads)):
        # a density that underflows (a cold, undoped crystal) is deep in the Boltzmann
        # regime, where the Kane and the parabolic band give the same Fermi level
        u = state.n / state.Nc
        tiny = ~(np.isfinite(u) & (u > 1e-300))
        out["eta_par_n"] = np.where(
            tiny,
            state.eta_n,
            np.asarray(fermi.inverse_fermi_dirac_half(np.where(tiny, 1.0, u))),
        )
        out["dens_par_n"] = state.Nc * np.asarray(fermi.fermi_dirac(0.5, state.eta_n))
        out["beta_kane_n"] = band.alpha * state.kT
    return out


def _einstein_ratio(state: State, x: str, dim: int) -> Callable[[Values], dict[str, ArrayIn]]:
    """A Deferred's compute of carrier ``x``'s parabolic Einstein ratio at the solve."""
    return lambda _: {f"einstein_{x}": carriers.einstein_ratio(state, x, dim)}


# narrowing that changes n_i^2 by less than this factor is not worth a second solve
_NARROWING_NEGLIGIBLE = 1.01


def _narrowed_densities(
    first: Calculation,
    T: FloatArray,
    donors: Densities,
    acceptors: Densities,
    state: State,
    narrowing: FloatArray,
    wanted: BoolArray,
) -> dict[str, FloatArray]:
    """dens_bgn_x: the carrier densities of a solve with the material's band-gap narrowing
    where the calculation solves without it, the narrowing matters and the calculation
    reads them (``wanted``: the corrected calculation takes the minority density from it
    where DOPE01 rejects the undoped n_i); the solve's own densities elsewhere."""
    out = {"dens_bgn_n": state.n.copy(), "dens_bgn_p": state.p.copy()}
    if first.band_gap_narrowing or first.material.narrowing is None or not wanted.any():
        return out
    with np.errstate(all="ignore"):
        matters = (np.exp(narrowing / state.kT) > _NARROWING_NEGLIGIBLE) & wanted
    if not matters.any():
        return out
    pick = np.flatnonzero(matters)
    narrowed = equilibrium.solve(
        first.material,
        T[pick],
        {s: np.broadcast_to(d, T.shape)[pick] for s, d in donors.items()},
        {s: np.broadcast_to(d, T.shape)[pick] for s, d in acceptors.items()},
        band_gap_narrowing=True,
    )
    out["dens_bgn_n"][pick] = narrowed.n
    out["dens_bgn_p"][pick] = narrowed.p
    return out


def _reads_narrowed_densities(calc: Calculation) -> bool:
    """The rules read dens_bgn_x only beside a stated n_i or carrier density (DOPE01 and
    VAL01 gate on them): elsewhere the second solve would reach no finding."""
    return any(name in calc.stated for name in ("stated_ni", "stated_dens_n", "stated_dens_p"))


def _ni_spread(material: Material, T: FloatArray, ni: FloatArray) -> tuple[FloatArray, FloatArray]:
    """The material's published 300 K spread of n_i carried to T by the model's own
    temperature dependence (the model value itself where none is tabulated)."""
    if material.ni_published is None:
        # no tabulated spread: the model value +-5 % (common practice (no source))
        return ni / 1.05, ni * 1.05
    at_300 = _ni_at_300(material)
    low, high = material.ni_published
    scale = ni / at_300
    return np.minimum(ni, low * scale), np.maximum(ni, high * scale)


# material id -> (the material, its model n_i at 300 K): one solve per material, not one
# per call (a sweep calls once per chunk); the material is kept so its id stays its own
_NI_300: dict[int, tuple[Material, float]] = {}


def _ni_at_300(material: Material) -> float:
    kept = _NI_300.get(id(material))
    if kept is None or kept[0] is not material:
        kept = _NI_300[id(material)] = (material, float(equilibrium.solve(material, 300.0).ni))
    return kept[1]


def fill_inputs(
    calculations: Sequence[Calculation],
    values: Values,
    count: int | None = None,
    reads: Collection[str] | None = None,
) -> None:
    """Structure and stated numbers, and what depends on them (vectorized after the fill),
    written into ``values``.  ``count``: the points of a sweep, which all share the single
    calculation given; ``reads``: see :func:`solve_sweep`."""
    size = len(calculations) if count is None else count
    # a sweep's chunk: quantities with one value for the chunk are worked on as one element
    # each until derive_corrected, then given back as read-only views over the chunk
    compact = count is not None and count > 1
    # name -> (a one-value view, the element worked on in its place)
    whole: dict[str, tuple[npt.NDArray[Any], npt.NDArray[Any]]] = {}
    if compact:
        for name, array in values.items():
            one = one_value(array)
            if one is not array:
                values[name] = one
                whole[name] = (array, one)

    def column(getter: Callable[[Calculation], float]) -> FloatArray:
        if count is not None:  # a sweep: one value for the whole chunk
            return np.full(1, getter(calculations[0]), dtype=float)
        return (
            np.array([getter(c) for c in calculations], dtype=float)
            if calculations
            else np.zeros(0)
        )

    # the keys some calculation gives (points): a column none gives is NaN throughout, not
    # read calculation by calculation (most stated numbers are absent from most)
    given_structure = set().union(*(c.structure for c in calculations)) if count is None else None
    given_stated = set().union(*(c.stated for c in calculations)) if count is None else None

    def structure(name: str) -> FloatArray:
        if given_structure is not None and name not in given_structure:
            return np.full(size, np.nan)
        return column(lambda c: c.structure.get(name, np.nan))

    def stated(name: str) -> FloatArray:
        if given_stated is not None and name not in given_stated:
            return np.full(size, np.nan)
        return column(lambda c: c.stated.get(name, np.nan))

    for name in ("L", "thickness", "width"):
        values[name] = structure(name)
    # the mobilities typically measured in the material's channels, and at what temperature
    # (the material's alone: read once per material)
    by_material = column if count is not None else _per_material(calculations)
    values["mu_typ_T"] = by_material(lambda c: _typical_mobility(c, "T"))
    for carrier, end in itertools.product(Carrier, ("low", "high")):
        values[f"mu_typ_{end[:2]}_{carrier}"] = by_material(
            functools.partial(_typical_mobility, field=end, carrier=carrier)
        )
    area = structure("A")
    values["A"] = np.where(np.isfinite(area), area, values["thickness"] * values["width"])
    field = structure("field")
    values["field"] = np.where(
        np.isfinite(field),
        field,
        structure("voltage") / values["L"],
    )
    # a stated mode count (LAND01's bound where given; conductor_values)
    values["modes_given"] = structure("modes_given")
    for name in _STATED:
        values[name] = stated(name)
    sigma, rho = values["stated_sigma"], values["stated_rho"]
    values["stated_sigma"] = np.where(np.isfinite(sigma), sigma, 1.0 / rho)
    values["stated_rho"] = np.where(np.isfinite(rho), rho, 1.0 / sigma)
    ec, ev = stated("stated_ef_minus_ec"), stated("stated_ef_minus_ev")
    kT, Eg = values["kT"], values["Eg"]
    if compact and not (np.isfinite(ec).any() or np.isfinite(ev).any()):
        kT, Eg = kT[:1], Eg[:1]  # no stated Fermi level: NaN at every point, computed once
    values["stated_eta_n"] = np.where(np.isfinite(ec), ec, ev - Eg) / kT
    values["stated_eta_p"] = -np.where(np.isfinite(ev), ev, ec + Eg) / kT
    specific: dict[str, BoolArray] = {}
    for x in ("n", "p"):
        values[f"stated_ef_{x}"] = values[f"stated_eta_{x}"] * kT
        # (a sweep's chunk: the stated numbers are one element each, and so is this)
        specific[x] = np.zeros(1 if compact else size, dtype=bool)
        for stem in _CARRIER_SPECIFIC:
            specific[x] |= np.isfinite(values[f"{stem}_{x}"])
    none = ~(specific["n"] | specific["p"])
    for x in ("n", "p"):
        values[f"in_use_{x}"] = (specific[x] | (none & (values[f"maj_{x}"] > 0))).astype(float)
    # the bulk solve's Einstein ratio (the sheet solve gives its own from the energy window;
    # a ratio computed on first read is a parabolic band's own, where the bulk ratio
    # below is the same function of the same eta: nothing to fill)
    deferred = isinstance(values, LazyValues) and values.pending("einstein_n")
    ratio_unknown = np.zeros(1, dtype=bool) if deferred else ~np.isfinite(values["einstein_n"])
    for x in Carrier:
        if not ratio_unknown.any():
            break
        bulk_ratio = _bulk_einstein_ratio(values[f"eta_{x}"], values["dim"], ratio_unknown)
        values[f"einstein_{x}"] = np.where(ratio_unknown, bulk_ratio, values[f"einstein_{x}"])
    for name in ("linear", "subbands"):
        values[name] = np.nan_to_num(values[name], nan=0.0)
    # tau ∝ E^r: the Hall factor's and the Landauer value's lambda(E)
    values["hall_r"] = column(lambda c: c.hall_exponent)
    if compact:
        for name, array in values.items():
            if np.shape(array) == (1,):
                view, one = whole.get(name, (array, None))
                # the view it came from where it is still that element
                values[name] = view if one is array else np.broadcast_to(array, (size,))
    if isinstance(values, LazyValues) and values.pending("mu_n") and not _reads_paths(reads):
        # the transport is computed on first read: so is what follows from it, from the
        # densities of the solve (as now, whatever a rule replaces before)
        solved = {name: values[name] for name in ("dens_n", "dens_p")}
        later = _derived(lambda v: derive_corrected(v, {}, reads), solved)
        values.defer(_CORRECTED, Deferred(later))
        values.defer(("sigma_model",), Deferred(_derived(_sigma_model, solved)))
    else:
        derive_corrected(values, {}, reads)
        _sigma_model(values)
    if reads is None or not _HALL.isdisjoint(reads):
        _hall(values, values["hall_r"])


def _per_material(
    calculations: Sequence[Calculation],
) -> Callable[[Callable[[Calculation], float]], FloatArray]:
    """column(getter) over ``calculations`` for a getter that reads only the calculation's
    material: called once per material, the numbers placed by one index array."""
    row_of: dict[int, int] = {}  # material id -> its row
    representatives: list[Calculation] = []  # the first calculation of each material
    rows = np.empty(len(calculations), dtype=np.intp)
    for i, calc in enumerate(calculations):
        row = row_of.get(id(calc.material))
        if row is None:
            row = row_of[id(calc.material)] = len(representatives)
            representatives.append(calc)
        rows[i] = row

    def column(getter: Callable[[Calculation], float]) -> FloatArray:
        return np.array([getter(c) for c in representatives], dtype=float)[rows]

    return column


def _sigma_model(values: Values) -> None:
    """The model conductivity of the solved densities and model mobilities (S/m)."""
    values["sigma_model"] = ELEMENTARY_CHARGE * (
        values["dens_n"] * values["cond_n"] * values["mu_n"]
        + values["dens_p"] * values["cond_p"] * values["mu_p"]
    )


# what reads the carriers' D, <v_x+> and lambda: the mean free paths, the bulk modes (their
# valleys' velocity factor) and the conductances built on them
_VELOCITY = frozenset(
    f"{stem}_{x}" for stem in ("vth", "lambda_model", "lambda", "modes_a") for x in Carrier
) | {"modes", "G_ballistic", "G_energy", "G_landauer"}
# what carrier_transport gives only where asked and solve_points puts (its sigma and rho
# solve_points does not read: derive_corrected gives those of the corrected calculation)
_LATTICE = frozenset(f"{stem}_{x}" for stem in ("mu0", "vsat", "beta") for x in Carrier)
# carrier_transport's keys -> the names solve_points puts them under
_FLOW = {
    f"{key}_{x}": f"{name}_{x}"
    for key, name in (
        ("mu", "mu"),
        ("mu0", "mu0"),
        ("cond", "cond"),
        ("vsat", "vsat"),
        ("beta", "beta"),
        ("v", "vth"),
        ("mfp", "lambda_model"),
    )
    for x in Carrier
}
# what a material that lacks a carrier's transport gives in its place (with cond_x 1)
_FLOW_NAN = tuple(key for key in _FLOW if not key.startswith("cond"))


def _flow_values(flow: Mapping[str, ArrayIn]) -> dict[str, ArrayIn]:
    """carrier_transport's values under the names solve_points puts them."""
    return {name: flow[key] for key, name in _FLOW.items()}


def _transport_given(material: Material) -> bool:
    """Whether carrier_transport finds every parameter it asks for (a model for each
    carrier, and each mobility model it may name), so that it cannot raise
    MissingParameterError."""
    for band in ("electron", "hole"):
        model = getattr(material, band)
        if model is None:
            return False
        named = {model.default_model, *model.dopant_models.values()}
        if model.minority_model:
            named.add(model.minority_model)
        if not named <= model.mobility.keys():
            return False
    return True


# quantities a bulk solve may give as another quantity's array (the parabolic band's
# Fermi level and density, n_i without narrowing)
_PARABOLIC = frozenset({"eta_par_n", "dens_par_n"})
_ALIASES = frozenset({"nie"} | {f"{stem}_{x}" for stem in ("eta_par", "dens_par") for x in Carrier})
# what _hall gives (a sweep whose rules read none of it skips the Hall factors' F_j moments)
_HALL = frozenset({"rH_n", "rH_p", "n_hall", "n_hall_lo", "n_hall_hi"})


def _typical_mobility(calc: Calculation, field: str, carrier: Carrier | None = None) -> float:
    """``field`` (low, high: m^2/(V s); T: K) of the mobility range typically measured in
    the calculation's material (for ``carrier``; T: of any carrier); NaN where none."""
    spans = calc.material.typical_mobility
    span = spans.get(carrier.singular) if carrier else next(iter(spans.values()), None)
    return float(getattr(span, field)) if span is not None else np.nan


# what a rule's replaces: may set in the corrected calculation (see derive_corrected)
REPLACEABLE = ("used_mu_n", "used_mu_p", "used_rho", "dens_n", "dens_p")


# what conductor_values gives, and what derive_corrected gives besides the mobilities,
# sigma and rho (a sweep's chunk computes them only where a rule reads them)
_CONDUCTANCE = frozenset({"modes", "G_ballistic", "G_energy", "G_landauer"})
# what reads the bands' k^2 power and the bulk modes (band_values): the conductances
_BAND_POWERS = _CONDUCTANCE | {f"{stem}_{x}" for stem in ("kpower", "modes_a") for x in Carrier}
_MEAN_FREE_PATHS = frozenset(f"lambda_{x}" for x in Carrier)
_SHEET_CONDUCTANCE = frozenset({"sigma_s", "Rs"})
# what derive_corrected writes where no rule reads a mean free path or a conductance
_CORRECTED = ("used_mu_n", "used_mu_p", "sigma", "rho", "used_rho", "sigma_s", "Rs")


def _reads_paths(reads: Collection[str] | None) -> bool:
    """Whether derive_corrected gives the mean free paths (where a conductance or a mean
    free path is read; ``reads`` None: all is)."""
    return reads is None or not (_CONDUCTANCE | _MEAN_FREE_PATHS).isdisjoint(reads)


def derive_corrected(
    values: Values, replaced: Replaced, reads: Collection[str] | None = None
) -> None:
    """The quantities of the corrected calculation that follow from the mobility, the
    resistivity and the densities it uses, written into ``values``.

    A stated mobility or resistivity is used unless a rule rejected it: ``replaced`` maps
    a name of REPLACEABLE to a boolean array of the cells where a rule's ``replaces:``
    put the model's value in (evaluate.rule_cells applies it, then calls this again), so
    everything downstream -- mean free path, σ, ρ, R, D -- follows one chain.
    ``reads``: see :func:`solve_sweep` (the mean free paths, a sheet's conductance and the
    conductances of conductor_values only where read; None: all)."""
    if isinstance(values, LazyValues) and values.pending("mu_n") and not _reads_paths(reads):
        # a sweep's chunk whose transport is still to be computed (a rule replaced a
        # density, which reads no mobility): what follows is computed where first read,
        # with the replacements made (as fill_inputs defers it)
        made = dict(replaced)
        densities = {name: values[name] for name in ("dens_n", "dens_p")}
        later = _derived(lambda v: derive_corrected(v, made, reads), densities)
        values.defer(_CORRECTED, Deferred(later))
        return
    conductances = reads is None or not _CONDUCTANCE.isdisjoint(reads)
    paths = _reads_paths(reads)

    def kept(name: str) -> BoolArray | bool:
        return ~replaced[name] if name in replaced else True

    for x in Carrier:
        stated, model = values[f"stated_mu_{x}"], values[f"mu_{x}"]
        used = np.where(np.isfinite(stated) & kept(f"used_mu_{x}"), stated, model)
        values[f"used_mu_{x}"] = used
    _symmetric_cones(values)
    for x in Carrier:
        if not paths:
            break
        used = values[f"used_mu_{x}"]
        # the mean free path scales with the mobility used; a sheet without a mobility
        # model: lambda = 2D/<v_x+>, D = mu (kT/q) (D/mu ratio)
        values[f"lambda_{x}"] = np.where(
            np.isfinite(values[f"lambda_model_{x}"]),
            values[f"lambda_model_{x}"] * used / values[f"mu_{x}"],
            2.0 * used * values["kT_q"] * values[f"einstein_{x}"] / values[f"vth_{x}"],
        )
    values["sigma"] = ELEMENTARY_CHARGE * (
        values["dens_n"] * values["cond_n"] * values["used_mu_n"]
        + values["dens_p"] * values["cond_p"] * values["used_mu_p"]
    )
    with np.errstate(divide="ignore"):  # no carriers (n, p underflow to 0): rho = inf
        values["rho"] = 1.0 / values["sigma"]
    stated_rho = values["stated_rho"]
    values["used_rho"] = np.where(
        np.isfinite(stated_rho) & kept("used_rho"), stated_rho, values["rho"]
    )
    # a sheet: sheet conductance of the carriers it holds (an absent carrier adds nothing)
    sheets = [values[f"ns_{x}"] for x in Carrier]
    if all(one_value(a) is not a and np.isnan(a[0]) for a in sheets):
        # a sweep's bulk chunk (one-value views): no sheet density anywhere, so none
        count = sheets[0].size
        values["sigma_s"], values["Rs"] = _constant(count, np.nan), _constant(count, np.nan)
    elif reads is None or not _SHEET_CONDUCTANCE.isdisjoint(reads):
        values["sigma_s"] = ELEMENTARY_CHARGE * conductor_values.carrier_sum(
            [values[f"ns_{x}"] * values[f"used_mu_{x}"] for x in Carrier]
        )
        values["Rs"] = 1.0 / values["sigma_s"]
    # modes, ballistic limit and the energy-resolved Landauer conductance at the mobility
    # used (lambda(E) = lambda_0 (E/kT)^r, lambda_0 from sigma)
    if conductances:
        conductor_values.conductor_values(values)


def _symmetric_cones(values: Values) -> None:
    """A zero-gap sheet: a carrier without a mobility of its own takes the other's (the
    two cones are mirror images; electron-hole symmetric transport, common practice (no
    source))."""
    linear = values["linear"] > 0
    if not linear.any():
        return
    mu_n, mu_p = values["used_mu_n"], values["used_mu_p"]
    values["used_mu_n"] = np.where(linear & ~np.isfinite(mu_n), mu_p, mu_n)
    values["used_mu_p"] = np.where(linear & ~np.isfinite(mu_p), mu_n, mu_p)


def _bulk_einstein_ratio(eta: FloatArray, dims: FloatArray, at: BoolArray) -> FloatArray:
    """(D/mu)/(kT/q) of the parabolic bulk solve at the points ``at`` (F_j ratio of each
    point's dimensionality; NaN elsewhere)."""
    out = np.full_like(eta, np.nan)
    dims = np.broadcast_to(dims, eta.shape)
    for dim in distinct(dims[np.isfinite(dims) & at]):
        pick = (dims == dim) & np.isfinite(eta) & at
        if pick.any():
            out[pick] = transport.einstein_ratio(eta[pick], int(dim))
    return out


def _hall(values: Values, exponents: FloatArray) -> None:
    """Hall factors for each calculation's scattering exponent, and the Hall density."""
    dims = values["dim"]
    for x in ("n", "p"):
        factor = np.full(len(exponents), np.nan)
        for r in distinct(exponents):
            for dim in distinct(dims[np.isfinite(dims)]):
                pick = (exponents == r) & (dims == dim)
                factor[pick] = hall.hall_factor(values[f"eta_{x}"][pick], float(r), int(dim))
        values[f"rH_{x}"] = factor
    values["n_hall"] = hall.hall_density(
        values["dens_n"],
        values["dens_p"],
        values["mu_n"],
        values["mu_p"],
        values["rH_n"],
        values["rH_p"],
    )
    # measured Hall factors (where the material tabulates them, for non-degenerate
    # carriers) span the expected density; elsewhere the model value +-5 %
    # (common practice (no source))
    bounds = []
    for end, spread in (("lo", 1 / 1.05), ("hi", 1.05)):
        factors = []
        for x in ("n", "p"):
            measured = values[f"rH_{end}_{x}"]
            use = np.isfinite(measured) & (values[f"eta_{x}"] < -1.0)
            factors.append(np.where(use, measured, values[f"rH_{x}"] * spread))
        bounds.append(
            hall.hall_density(
                values["dens_n"], values["dens_p"], values["mu_n"], values["mu_p"], *factors
            )
        )
    values["n_hall_lo"] = np.minimum(*bounds)
    values["n_hall_hi"] = np.maximum(*bounds)
