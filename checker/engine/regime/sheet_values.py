"""The sheet solve: 2D electron and hole gases and zero-gap sheets (graphene).

A sheet has no dopants in its channel: the stated sheet density (or, for a zero-gap
sheet, the net density n - p a gate induces, or the stated Fermi level) fixes the Fermi
level.  The solve lays out the quantities rules read under their registered names: eta_x
(from the lowest subband, or from the Dirac point), the sheet densities ns_x, N2D_x, the
generalized Einstein ratio and the unidirectional velocity from the energy window.  The
bulk quantities (cm^-3, S/cm, ohm*cm, n_i of a crystal) stay unknown, so no bulk rule reads
a sheet as an undoped, intrinsic crystal.

Which solve a calculation gets: a 2D material, or ``dimensionality: 2`` with a sheet
density stated.  A bulk material given ``dimensionality: 2`` and doping keeps the bulk
solve (its D/mu and lambda then use the 2D ratios).
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

# the stated numbers that can fix a sheet's Fermi level (engine names)
SHEET_INPUTS = (
    "stated_ns_n",
    "stated_ns_p",
    "stated_net_sheet",
    "stated_ef_minus_ec",
    "stated_ef_minus_ev",
)
_BAND = {"n": "electron", "p": "hole"}
_PER_CM2 = 1e-4  # m^-2 -> cm^-2 (for the note)


def is_sheet(calc: Calculation) -> bool:
    """True where the sheet solve applies (a 2D material, or a stated sheet density in a
    2D calculation)."""
    if calc.material.dimensionality == 2:
        return True
    stated = any(name in calc.stated for name in SHEET_INPUTS[:3])
    return stated and int(calc.structure.get("dim", 3)) == 2


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
    """Quantities of sheet points sharing ``first``'s material and subbands at ``T``
    (``given``: sheet_inputs arrays, broadcast against T); return (quantities, note)."""
    given = {name: np.broadcast_to(array, T.shape) for name, array in given.items()}
    kT = BOLTZMANN * T
    put: dict[str, ArrayIn] = {
        "T": T,
        "kT": kT,
        "kT_q": kT / ELEMENTARY_CHARGE,
        "dim": np.full_like(T, 2.0),
    }
    for x in Carrier:
        put[f"cond_{x}"] = np.ones_like(T)
    if is_linear(first.material):
        put.update(_linear_sheet(first.material, T, kT, given))
        band = first.material.bands("electron", 2)[0]
        note = (
            "zero-gap sheet statistics (linear bands, both carriers): n_i = "
            f"{_sheet_text(energy_window.dirac_intrinsic_density(band, T))} cm-2"
        )
        return put, note
    notes = []
    for x in Carrier:
        try:
            bands = first.material.bands(_BAND[x], 2, first.subband_energies or None)
        except MissingParameterError:
            continue  # a 2D gas of one carrier: the other band is not described
        density = given[f"stated_ns_{x}"]
        if not np.any(np.isfinite(density)) and x == "p":
            continue  # the hole band of an electron gas: no holes to count
        put.update(_parabolic_sheet(x, bands, T, kT, given))
        lowest = min(bands, key=lambda b: b.edge)
        count = len(first.subband_energies) or 1
        notes.append(
            f"2D statistics of the {_BAND[x]}s ({count} subband{'s' * (count > 1)}, "
            f"N_2D = {_sheet_text(_edge_density(lowest, T))} cm-2)"
        )
    majority_n = np.nan_to_num(put.get("ns_n", 0.0)) >= np.nan_to_num(put.get("ns_p", 0.0))
    put["maj_n"], put["maj_p"] = majority_n.astype(float), (~majority_n).astype(float)
    put["subbands"] = np.full_like(T, float(len(first.subband_energies) or 1))
    put["linear"] = np.zeros_like(T)
    etas = [np.broadcast_to(put.get(f"eta_{x}", np.nan), T.shape) for x in Carrier]
    degenerate = np.fmax(*etas) > -3.0  # the 3kT rule, as the bulk regime label
    put["regime"] = np.asarray(
        np.where(degenerate, "degenerate 2D gas", "non-degenerate 2D gas"), dtype=object
    )
    return put, "; ".join(notes)


def _sheet_text(density: FloatArray) -> str:
    """A sheet density (m^-2) for the note: one value, or the range over the points."""
    values = np.atleast_1d(density) * _PER_CM2
    low, high = float(np.min(values)), float(np.max(values))
    return f"{low:.3g}" if np.isclose(low, high) else f"{low:.3g}-{high:.3g}"


def _parabolic_sheet(
    x: Carrier, bands: tuple[Band, ...], T: FloatArray, kT: FloatArray, given: dict[str, FloatArray]
) -> dict[str, ArrayIn]:
    """One carrier's gas: eta from its sheet density, else from the stated Fermi level."""
    density = given[f"stated_ns_{x}"]
    ef = given["stated_ef_minus_ec"] if x == "n" else -given["stated_ef_minus_ev"]
    eta_ref = np.full_like(T, np.nan)
    known = np.isfinite(density) & (density > 0)
    if known.any():
        eta_ref[known] = energy_window.eta_from_density(bands, density[known], T[known])
    eta_ref = np.where(known, eta_ref, ef / kT)
    lowest = min(bands, key=lambda b: b.edge)
    return _carrier_values(x, bands, eta_ref, T) | {
        f"eta_{x}": eta_ref - lowest.edge / kT,  # from the lowest subband (STAT01's edge)
        f"N2D_{x}": _edge_density(lowest, T),
    }


def _edge_density(band: Band, T: FloatArray) -> FloatArray:
    """N_2D = g_v m* kT/(pi hbar^2) of a 2D subband (spin included); a Kane subband's at its
    edge mass, where D(E) = (g_v m*/pi hbar^2)(1 + 2 alpha E) starts (Kane 1957)."""
    if isinstance(band, ParabolicBand | KaneBand):
        scale = band.valley_degeneracy * band.spin_degeneracy / 2.0
        density: FloatArray = scale * band.mass * ELECTRON_MASS * BOLTZMANN * T / (np.pi * HBAR**2)
        return density
    return energy_window.effective_density(band, T)


def _carrier_values(
    x: Carrier, bands: tuple[Band, ...], eta: FloatArray, T: FloatArray
) -> dict[str, ArrayIn]:
    """Density, Einstein ratio, <v_x+> and the modes per width of one carrier at eta (NaN
    where eta is)."""
    names = (f"ns_{x}", f"einstein_{x}", f"vth_{x}", f"modes_w_{x}")
    out = {name: np.full_like(T, np.nan) for name in names}
    ok = np.isfinite(eta)
    if ok.any():
        out[f"ns_{x}"][ok] = energy_window.carrier_density(bands, eta[ok], T[ok])
        out[f"einstein_{x}"][ok] = energy_window.generalized_einstein_ratio(bands, eta[ok], T[ok])
        out[f"vth_{x}"][ok] = sheet_statistics.unidirectional_velocity(bands, eta[ok], T[ok])
        # modes as 2q^2/h counts them: the ballistic conductance per width over G_0
        ballistic = energy_window.ballistic_conductance(bands, eta[ok], T[ok])
        out[f"modes_w_{x}"][ok] = ballistic / energy_window.LANDAUER_QUANTUM
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
