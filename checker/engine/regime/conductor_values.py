"""Conductors: their modes, ballistic limit and energy-resolved Landauer conductance.

The solve (state_values.solve_points) asks :func:`band_values` for each carrier's modes in
the energy window -- per width of a sheet (``modes_w_x``, from the sheet solve), per
cross-section of a bulk crystal (``modes_a_x``) -- and the power p of k^2 ∝ E^p of the
carrier's bands (``kpower_x``; NaN where no single power law describes them: a Kane band,
a ladder of subbands).  The corrected calculation (state_values.derive_corrected) then
asks :func:`conductor_values` for the conductor's mode count, its ballistic limit and the
Landauer conductance

    G = (2q^2/h) ∫ M(E) T(E) (-df/dE) dE × (W or A),  T = lambda(E)/(lambda(E) + L),
    lambda(E) = lambda_0 (E/kT)^r,  r = s + 1 - p/2 (tau ∝ E^s, the Hall factor's s),

with lambda_0 fixed so that the diffusive limit L -> ∞ gives the conductivity the
calculation uses (q n mu_used per carrier).  For a single power-law band every ratio of
window integrals depends only on (dimension, p, eta, r, L/lambda_0), not on the mass or
the degeneracies, so the integrals are taken for one unit band of that shape and scaled
by the carrier's own ballistic conductance: one vectorized call per (dimension, p, r)
group of points, with the mobility of the corrected calculation (a rule that replaces it
calls this again).  Where no single power law applies the Landauer value is the
averaged-lambda one, sigma (W or A)/(L + lambda), lambda = 2D/<<v_x+>> (the window-weighted
velocity: for r = 0 the two agree at any eta).

References
----------
R. Landauer, IBM J. Res. Dev. 1, 223 (1957); M. Lundstrom and C. Jeong, Near-Equilibrium
Transport (World Scientific, 2012), ch. 3 and 6 (T = lambda/(lambda + L), lambda(E)).
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

import numpy as np
import numpy.typing as npt

from ...errors import RegimecheckError
from ...physics import energy_window
from ...physics.arrays import FloatArray, distinct_points
from ...physics.bands import Band, DiracBand, ParabolicBand
from ...physics.constants import ELEMENTARY_CHARGE
from ...vocabulary_words import Carrier

if TYPE_CHECKING:
    from ...inputs.calculation_file import Calculation

G0 = energy_window.LANDAUER_QUANTUM  # 2q^2/h in S (exact, SI 2019)


def _single_power(bands: tuple[Band, ...]) -> float:
    """p of k^2 ∝ E^p where one power law at one edge describes every band, else NaN."""
    powers = {band.power for band in bands}
    edges = {band.edge for band in bands}
    if len(powers) != 1 or len(edges) != 1 or None in powers or edges != {0.0}:
        return np.nan
    return float(next(iter(powers)))  # type: ignore[arg-type]


def has_cross_section(calc: Calculation) -> bool:
    """A bulk conductor's modes count only through its cross-section (A, or thickness x
    width; conductor_values): without one they reach no value a rule reads."""
    given = calc.structure
    return "A" in given or ("thickness" in given and "width" in given)


def band_values(
    first: Calculation,
    T: FloatArray,
    eta: dict[str, Any],
    sheet: bool,
    modes_at: npt.NDArray[np.bool_] | None = None,
) -> dict[str, FloatArray]:
    """kpower_x of every calculation, and modes_a_x (modes per m^2 of cross-section in
    the energy window) of a bulk one at the solved ``eta`` (``eta_n``, ``eta_p``), at the
    points ``modes_at`` (default: all; NaN elsewhere: the window quadrature is the bulk
    solve's largest cost, and a point without a cross-section never uses its modes)."""
    out: dict[str, FloatArray] = {}
    # a sheet or wire solve says its dimensionality (2 or 1); a bulk solve has 3D bands
    dim = int(np.asarray(eta["dim"]).flat[0]) if sheet else int(first.structure.get("dim", 3))
    for x in Carrier:
        out[f"kpower_{x}"] = np.full_like(T, np.nan)
        out[f"modes_a_{x}"] = np.full_like(T, np.nan)
        try:
            bands = first.material.bands(
                x.singular, dim, (first.subband_energies or None) if sheet else None
            )
        except RegimecheckError:
            continue  # no band described for this carrier (or dimension)
        out[f"kpower_{x}"][:] = _single_power(bands)
        if sheet or dim != 3:
            continue
        at = np.broadcast_to(np.asarray(eta[f"eta_{x}"], dtype=float), T.shape)
        ok = np.isfinite(at) if modes_at is None else np.isfinite(at) & modes_at
        if ok.any():
            modes = np.asarray(energy_window.ballistic_conductance(bands, at[ok], T[ok])) / G0
            out[f"modes_a_{x}"][ok] = modes * _mode_mass_factor(bands, at[ok], T[ok], eta, x, ok)
    return out


def _mode_mass_factor(
    bands: tuple[Band, ...],
    eta: FloatArray,
    T: FloatArray,
    solved: dict[str, Any],
    x: str,
    ok: npt.NDArray[np.bool_],
) -> FloatArray:
    """<v_x+> of the solve (the material's thermal, i.e. conductivity, mass) over <v_x+> of
    the isotropic density-of-states band: the modes of many anisotropic valleys in one band.

    One isotropic band of the density-of-states mass m_d holds the right density, but its
    modes (∝ m_d) undercount those of ellipsoidal valleys; the flux n <v_x+> = (2g_s/h) ∫ M f
    dE fixes them, so the modes scale by <v_x+>(m_c)/<v_x+>(m_d) = sqrt(m_d/m_c)
    (silicon: about 2.0).  1 where the solve gives no velocity.

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2 (modes and <v_x+>);
    C. Jeong et al., J. Appl. Phys. 107, 023707 (2010) (modes of silicon's valleys).
    """
    solved_velocity = np.broadcast_to(
        np.asarray(solved.get(f"vth_{x}", np.nan), dtype=float), ok.shape
    )[ok]
    band_velocity = np.asarray(energy_window.forward_velocity(bands, eta, T))
    factor: FloatArray = np.where(
        np.isfinite(solved_velocity), solved_velocity / band_velocity, 1.0
    )
    return factor


def carrier_sum(parts: list[FloatArray]) -> FloatArray:
    """The sum over the carriers a conductor holds (an absent one, NaN, adds nothing; NaN
    where neither is known)."""
    counted = np.isfinite(parts[0]) | np.isfinite(parts[1])
    total: FloatArray = np.where(counted, np.nansum(parts, axis=0), np.nan)
    return total


def _unit_band(dim: int, power: float) -> Band:
    """A band of the given shape whose scale does not matter (only ratios are taken)."""
    if power == 2.0:
        return DiracBand(1.0e6)
    return ParabolicBand(dim, 1.0)


def energy_resolved_ratio(
    dim: int,
    power: float,
    r: float,
    eta: FloatArray,
    T: FloatArray,
    length: FloatArray,
    sigma_over_ballistic: FloatArray,
) -> FloatArray:
    """G/G_ballistic of one power-law band shape at L, with lambda_0 set by the diffusive
    limit: lambda_0 = sigma / (G_ballistic × <x^r>/<1>), <.> the window averages.

    ``sigma_over_ballistic``: the carrier's conductivity over its ballistic conductance
    per unit cross-section (m).  Dimensionless; T in K; lengths in m.
    """
    band = _unit_band(dim, power)
    ballistic = np.asarray(energy_window.ballistic_conductance(band, eta, T))
    per_mfp = np.asarray(energy_window.diffusive_conductivity(band, eta, T, 1.0, r)) / ballistic
    mfp0 = sigma_over_ballistic / per_mfp
    resolved = np.asarray(energy_window.conductance(band, eta, T, length, mfp0, r))
    ratio: FloatArray = resolved / ballistic
    return ratio


def _solved_as(values: dict[str, npt.NDArray[Any]], stem: str) -> npt.NDArray[np.bool_]:
    known: npt.NDArray[np.bool_] = np.isfinite(values[f"{stem}_n"]) | np.isfinite(
        values[f"{stem}_p"]
    )
    return known


def conductor_values(values: dict[str, npt.NDArray[Any]]) -> None:
    """modes, G_ballistic, G_energy and G_landauer of the corrected calculation, written
    into ``values`` (which holds used_mu_x, lambda_x and the solve's arrays): a wire's modes
    are a count, a sheet's are per width, a bulk conductor's per cross-section."""
    sheet, wire = _solved_as(values, "modes_w"), _solved_as(values, "modes_1d")
    size = np.where(wire, 1.0, np.where(sheet, values["width"], values["A"]))
    per_size, sigma, credit = [], [], []
    for x in Carrier:
        modes = np.where(
            wire,
            values[f"modes_1d_{x}"],
            np.where(sheet, values[f"modes_w_{x}"], values[f"modes_a_{x}"]),
        )
        per_size.append(modes * G0)
        density = np.where(
            wire, values[f"nl_{x}"], np.where(sheet, values[f"ns_{x}"], values[f"dens_{x}"])
        )
        sigma.append(ELEMENTARY_CHARGE * density * values[f"used_mu_{x}"])
        # a bulk carrier's conduction credit (the resistivity standard's mobility) scales
        # sigma, not lambda: lambda_0 follows the mobility, as lambda = 2D/<v_x+> does
        credit.append(np.where(sheet | wire, 1.0, values[f"cond_{x}"]))
    counted = carrier_sum(per_size) / G0 * size
    given = values["modes_given"]
    values["modes"] = np.where(np.isfinite(given), given, counted)
    values["G_ballistic"] = G0 * values["modes"]
    with np.errstate(all="ignore"):
        values["G_energy"] = _energy_resolved(values, per_size, sigma, credit) * size
        averaged = carrier_sum(
            [
                np.where(
                    sheet | wire,
                    per_size[i] * values[f"lambda_{x}"],  # the averaged-lambda sheet form
                    sigma[i] * credit[i],
                )
                / (values[f"lambda_{x}"] + values["L"])
                for i, x in enumerate(Carrier)
            ]
        )
    values["G_landauer"] = np.where(
        np.isfinite(values["G_energy"]), values["G_energy"], averaged * size
    )


def _energy_resolved(
    values: dict[str, npt.NDArray[Any]],
    per_size: list[FloatArray],
    sigma: list[FloatArray],
    credit: list[FloatArray],
) -> FloatArray:
    """Sum over the carriers of the energy-resolved G per unit width or cross-section (a
    wire: G itself)."""
    if not (np.isfinite(values["L"]) & (values["L"] > 0)).any():
        return np.full(values["L"].shape, np.nan)  # no conductor length: no conductance
    sheet, wire = _solved_as(values, "modes_w"), _solved_as(values, "modes_1d")
    dims = np.where(wire, 1.0, np.where(sheet, 2.0, values["dim"]))
    parts = []
    for i, x in enumerate(Carrier):
        power = values[f"kpower_{x}"]
        r = values["hall_r"] + 1.0 - power / 2.0
        mode_power = power * (dims - 1.0) / 2.0
        part = np.full(dims.shape, np.nan)
        ok = (
            np.isfinite(values[f"eta_{x}"])
            & np.isfinite(values["L"])
            & (values["L"] > 0)
            & (per_size[i] > 0)
            & (sigma[i] > 0)
            & np.isfinite(r)
            & (mode_power + r > -1.0)  # the window integral of E^(a + r) converges
        )
        at = np.flatnonzero(ok)
        columns = [dims[at], power[at], r[at]]
        first, back = distinct_points(columns, at.size)
        for row, k in enumerate(first):  # each (dimension, band power, exponent) once
            dim, p, rr = (float(column[k]) for column in columns)
            pick = at[back == row]
            ratio = energy_resolved_ratio(
                int(dim),
                float(p),
                float(rr),
                values[f"eta_{x}"][pick],
                values["T"][pick],
                values["L"][pick],
                sigma[i][pick] / per_size[i][pick],
            )
            part[pick] = per_size[i][pick] * ratio * credit[i][pick]
        # a carrier that conducts but has no energy-resolved value leaves the sum unknown
        conducts = np.isfinite(sigma[i]) & (sigma[i] > 0)
        parts.append(np.where(conducts, part, 0.0))
    total: FloatArray = parts[0] + parts[1]
    return np.where(total > 0, total, np.nan)
