"""The low-dimensional solve: 2D electron and hole gases, zero-gap sheets (graphene) and
1D conductors (nanowires, quantum wires).

A sheet or wire has no dopants in its channel: the stated sheet or line density (or, for
a zero-gap sheet, the net density n - p a gate induces, or the stated Fermi level) fixes
the Fermi level.  The solve lays out the quantities rules read under their registered
names: eta_x (from the lowest subband, or from the Dirac point), the densities (ns_x,
N2D_x per area; nl_x, N1D_x per length), the generalized Einstein ratio, the
unidirectional velocity and the modes from the energy window.  The bulk quantities
(cm^-3, S/cm, ohm*cm, n_i of a crystal) stay unknown, and a wire's sheet quantities too,
so no rule reads a sheet or a wire as an undoped, intrinsic crystal.

Which solve a calculation gets: a 2D material, or ``dimensionality: 2`` with a sheet
density stated, or ``dimensionality: 1`` with a line density stated.  A bulk material
given ``dimensionality: 2`` and doping keeps the bulk solve (its D/mu and lambda then use
the 2D ratios).

The statistics of one 1D subband at E_i: n_l = N_1D F_-1/2(eta - E_i/kT), N_1D = g_v
sqrt(2 m* kT/(pi hbar^2)) (spin included), the 2D one n_s = N_2D ln(1 + e^(eta - E_i/kT)),
N_2D = g_v m* kT/(pi hbar^2) (Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2;
J. H. Davies, The Physics of Low-Dimensional Semiconductors (1998), ch. 3).
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np

from ...errors import MissingParameterError
from ...physics import energy_window, sheet_statistics
from ...physics.arrays import ArrayIn, FloatArray
from ...physics.bands import Band, DiracBand, KaneBand, ParabolicBand
from ...physics.constants import BOLTZMANN, ELECTRON_MASS, ELEMENTARY_CHARGE, HBAR
from ...physics.materials import Material
from ...vocabulary_words import Carrier

if TYPE_CHECKING:
    from ...inputs.calculation_file import Calculation

# the stated numbers that can fix a sheet's or a wire's Fermi level (engine names)
SHEET_INPUTS = (
    "stated_ns_n",
    "stated_ns_p",
    "stated_net_sheet",
    "stated_ef_minus_ec",
    "stated_ef_minus_ev",
    "stated_nl_n",
    "stated_nl_p",
)
WIRE_INPUTS = ("stated_nl_n", "stated_nl_p")
# (as sets: is_sheet asks of every calculation whether it states one of them)
_SHEET_FIXERS, _WIRE_FIXERS = frozenset(SHEET_INPUTS[:3]), frozenset(WIRE_INPUTS)
# per dimensionality: the stem of the density names, its display unit and factor from SI
_DENSITY = {2: ("ns", "cm-2", 1e-4), 1: ("nl", "cm-1", 1e-2)}
_MODES = {2: "modes_w", 1: "modes_1d"}  # modes per width (2D), a count (1D)


def is_wire(calc: Calculation) -> bool:
    """True where the 1D solve applies (a stated line density in a 1D calculation)."""
    stated = not _WIRE_FIXERS.isdisjoint(calc.stated)
    return stated and int(calc.structure.get("dim", 3)) == 1


def is_sheet(calc: Calculation) -> bool:
    """True where the low-dimensional solve applies: a 2D material, a stated sheet density
    in a 2D calculation, or a wire (``is_wire``)."""
    if calc.material.dimensionality == 2 and int(calc.structure.get("dim", 2)) == 2:
        return True
    stated = not _SHEET_FIXERS.isdisjoint(calc.stated)
    return (stated and int(calc.structure.get("dim", 3)) == 2) or is_wire(calc)


def solve_inputs(calc: Calculation) -> set[str]:
    """The stated numbers (engine names) that fixed the Fermi level of a sheet or wire: the
    inputs of its solve, which no rule needs to compare (the others are claims).  Each
    carrier of a gas or wire takes its own density, else the stated Fermi level; a zero-gap
    sheet takes the net density, else the Fermi level, else one carrier's density."""
    if not is_sheet(calc):
        return set()
    stated = set(calc.stated)
    if is_linear(calc.material):
        order = ("stated_net_sheet", "stated_ef_minus_ec", "stated_ns_n", "stated_ns_p")
        return set(next(([name] for name in order if name in stated), []))
    densities = stated & set(SHEET_INPUTS) - {"stated_net_sheet"}
    densities -= {"stated_ef_minus_ec", "stated_ef_minus_ev"}
    return densities or stated & {"stated_ef_minus_ec", "stated_ef_minus_ev"}


def is_linear(material: Material) -> bool:
    """A zero-gap sheet with linear bands (graphene)."""
    return material.band_shape("electron").model == "linear"


def sheet_inputs(calcs: Sequence[Calculation]) -> dict[str, FloatArray]:
    """The stated numbers that fix each calculation's Fermi level (SI, NaN: not stated)."""
    return {
        name: np.array([c.stated.get(name, np.nan) for c in calcs], dtype=float)
        for name in SHEET_INPUTS
    }


def solve_sheet_points(
    first: Calculation, T: FloatArray, given: dict[str, FloatArray]
) -> tuple[dict[str, ArrayIn], str]:
    """Quantities of sheet or wire points sharing ``first``'s material, dimensionality and
    subbands at ``T`` (``given``: sheet_inputs arrays, broadcast against T); return
    (quantities, note)."""
    given = {name: np.broadcast_to(array, T.shape) for name, array in given.items()}
    kT = BOLTZMANN * T
    dim = 1 if is_wire(first) else 2
    put: dict[str, ArrayIn] = {
        "T": T,
        "kT": kT,
        "kT_q": kT / ELEMENTARY_CHARGE,
        "dim": np.full_like(T, float(dim)),
    }
    for x in Carrier:
        put[f"cond_{x}"] = np.ones_like(T)
    if is_linear(first.material):
        put.update(_linear_sheet(first.material, T, kT, given))
        band = first.material.bands("electron", 2)[0]
        note = (
            "zero-gap sheet statistics (linear bands, both carriers): n_i = "
            f"{_density_text(energy_window.dirac_intrinsic_density(band, T), 2)} cm-2"
        )
        return put, note
    notes = []
    stem, unit, _ = _DENSITY[dim]
    for x in Carrier:
        try:
            bands = first.material.bands(x.singular, dim, first.subband_energies or None)
        except MissingParameterError:
            continue  # a gas of one carrier: the other band is not described
        density = given[f"stated_{stem}_{x}"]
        other = given[f"stated_{stem}_{'n' if x == 'p' else 'p'}"]
        if not np.any(np.isfinite(density)) and (x == "p" or np.any(np.isfinite(other))):
            continue  # the other band of a one-carrier gas or wire: nothing to count
        put.update(_parabolic_sheet(x, bands, T, kT, given, dim))
        lowest = min(bands, key=lambda b: b.edge)
        count = len(first.subband_energies) or 1
        notes.append(
            f"{dim}D statistics of the {x.singular}s ({count} subband{'s' * (count > 1)}, "
            f"N_{dim}D = {_density_text(_edge_density(lowest, T), dim)} {unit})"
        )
    majority_n = np.nan_to_num(put.get(f"{stem}_n", 0.0)) >= np.nan_to_num(
        put.get(f"{stem}_p", 0.0)
    )
    put["maj_n"], put["maj_p"] = majority_n.astype(float), (~majority_n).astype(float)
    put["subbands"] = np.full_like(T, float(len(first.subband_energies) or 1))
    put["linear"] = np.zeros_like(T)
    etas = [np.broadcast_to(put.get(f"eta_{x}", np.nan), T.shape) for x in Carrier]
    degenerate = np.fmax(*etas) > -3.0  # the 3kT rule, as the bulk regime label
    kind = "2D gas" if dim == 2 else "wire"
    put["regime"] = np.asarray(
        np.where(degenerate, f"degenerate {kind}", f"non-degenerate {kind}"), dtype=object
    )
    return put, "; ".join(notes)


def _density_text(density: FloatArray, dim: int) -> str:
    """A sheet (m^-2) or line (m^-1) density in its display unit for the note: one value,
    or the range over the points."""
    values = np.atleast_1d(density) * _DENSITY[dim][2]
    low, high = float(np.min(values)), float(np.max(values))
    return f"{low:.3g}" if np.isclose(low, high) else f"{low:.3g}-{high:.3g}"


def _parabolic_sheet(
    x: Carrier,
    bands: tuple[Band, ...],
    T: FloatArray,
    kT: FloatArray,
    given: dict[str, FloatArray],
    dim: int,
) -> dict[str, ArrayIn]:
    """One carrier's gas (2D) or wire (1D): eta from its sheet or line density, else from
    the stated Fermi level."""
    density = given[f"stated_{_DENSITY[dim][0]}_{x}"]
    ef = given["stated_ef_minus_ec"] if x == "n" else -given["stated_ef_minus_ev"]
    eta_ref = np.full_like(T, np.nan)
    known = np.isfinite(density) & (density > 0)
    if known.any():
        eta_ref[known] = energy_window.eta_from_density(bands, density[known], T[known])
    eta_ref = np.where(known, eta_ref, ef / kT)
    lowest = min(bands, key=lambda b: b.edge)
    return _carrier_values(x, bands, eta_ref, T, dim) | {
        f"eta_{x}": eta_ref - lowest.edge / kT,  # from the lowest subband (STAT01's edge)
        f"N{dim}D_{x}": _edge_density(lowest, T),
    }


def _edge_density(band: Band, T: FloatArray) -> FloatArray:
    """Effective density of a 2D or 1D subband at its edge mass (spin included).

    Formula: N_2D = g_v m* kT/(pi hbar^2) (m^-2), N_1D = g_v sqrt(2 m* kT/(pi hbar^2))
    (m^-1); a Kane subband's at its edge mass, where its D(E) starts (Kane 1957).  Units:
    T in K.  Validity: the parabolic form near the subband bottom.

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2; J. H. Davies, The Physics
    of Low-Dimensional Semiconductors (1998), ch. 3.
    """
    if isinstance(band, ParabolicBand | KaneBand) and band.dimension in (1, 2):
        scale = band.valley_degeneracy * band.spin_degeneracy / 2.0
        thermal = band.mass * ELECTRON_MASS * BOLTZMANN * T / (np.pi * HBAR**2)
        density: FloatArray = scale * (thermal if band.dimension == 2 else np.sqrt(2.0 * thermal))
        return density
    return energy_window.effective_density(band, T)


def _carrier_values(
    x: Carrier, bands: tuple[Band, ...], eta: FloatArray, T: FloatArray, dim: int = 2
) -> dict[str, ArrayIn]:
    """Density, Einstein ratio, <v_x+> and the modes (per width in 2D, a count in 1D) of
    one carrier at eta (NaN where eta is)."""
    density, modes = f"{_DENSITY[dim][0]}_{x}", f"{_MODES[dim]}_{x}"
    names = (density, f"einstein_{x}", f"vth_{x}", modes)
    out = {name: np.full_like(T, np.nan) for name in names}
    ok = np.isfinite(eta)
    if ok.any():
        out[density][ok] = energy_window.carrier_density(bands, eta[ok], T[ok])
        out[f"einstein_{x}"][ok] = energy_window.generalized_einstein_ratio(bands, eta[ok], T[ok])
        out[f"vth_{x}"][ok] = sheet_statistics.unidirectional_velocity(bands, eta[ok], T[ok])
        # modes as 2q^2/h counts them: the ballistic conductance (per width) over G_0
        ballistic = energy_window.ballistic_conductance(bands, eta[ok], T[ok])
        out[modes][ok] = ballistic / energy_window.LANDAUER_QUANTUM
    return dict(out)


def _linear_sheet(
    material: Material, T: FloatArray, kT: FloatArray, given: dict[str, FloatArray]
) -> dict[str, ArrayIn]:
    """Both cones of a zero-gap sheet at one Fermi level E_F - E_D: from the net density
    n - p, else the stated Fermi level, else the one carrier density stated."""
    band = material.bands("electron", 2)[0]
    assert isinstance(band, DiracBand)  # is_linear
    net, n_s, p_s = given["stated_net_sheet"], given["stated_ns_n"], given["stated_ns_p"]
    eta = np.full_like(T, np.nan)
    pick = np.isfinite(net)
    if pick.any():
        eta[pick] = sheet_statistics.dirac_eta_from_net_density(band, net[pick], T[pick])
    ef = given["stated_ef_minus_ec"]
    pick = ~np.isfinite(eta) & np.isfinite(ef)
    eta[pick] = ef[pick] / kT[pick]
    for density, sign in ((n_s, 1.0), (p_s, -1.0)):
        pick = ~np.isfinite(eta) & np.isfinite(density) & (density > 0)
        if pick.any():
            eta[pick] = sign * energy_window.eta_from_density(band, density[pick], T[pick])
    put: dict[str, ArrayIn] = {
        "eta_n": eta,
        "eta_p": -eta,
        "Eg": np.zeros_like(T),  # zero gap: the hole cone's Fermi level is -eta
        "ni_s": energy_window.dirac_intrinsic_density(band, T),
        "linear": np.ones_like(T),
        "vF": np.full_like(T, band.fermi_velocity),
        "subbands": np.ones_like(T),
    }
    for x, at in ((Carrier("n"), eta), (Carrier("p"), -eta)):
        put.update(_carrier_values(x, (band,), at, T))
        put[f"N2D_{x}"] = energy_window.effective_density(band, T)
    majority_n = eta >= 0  # E_F at or above the Dirac point: electrons lead
    put["maj_n"], put["maj_p"] = majority_n.astype(float), (~majority_n).astype(float)
    near = np.abs(eta) < 3.0  # within 3kT of the Dirac point: both carriers matter
    put["regime"] = np.asarray(
        np.where(
            near, "near the Dirac point", np.where(majority_n, "n-type sheet", "p-type sheet")
        ),
        dtype=object,
    )
    return put
