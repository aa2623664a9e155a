"""The trade-unit summary of a solved operating point: the ``state`` object of the JSON
reports (``check`` and ``state`` commands, the Python API) and the rows of the console
tables, one field each, so that a quantity has one key and one label everywhere.

A field reads registered quantities (SI, :mod:`.registry`) as columns over the points
summarized and gives, per point, one number, word or flag in the trade unit its key names,
or None where the point has no such value (no field given, band-gap narrowing off, a
material without mobility data, or values that do not carry the quantity): JSON writes
null, the console tables leave the row out.  One point's summary is the columns over that
point alone; a check of many calculations computes each field once for all of them.  JSON lists
the fields every summary has first, then those of the ``state`` command alone (the band
densities of states and the solve's residual); the console tables list them in the
table's order.

Derived transport numbers (D, v(E)) are computed by the physics functions, never
re-typed here.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any, TypeAlias

import numpy as np

from ..physics import transport
from ..physics.arrays import distinct
from ..physics.constants import EV
from ..records import FrozenRecord
from .display_units import DISPLAY_UNITS

PER_CM3 = DISPLAY_UNITS["cm^-3"]  # m^-3 -> cm^-3

# get(name): a registered quantity's values at the points summarized, a one-dimensional
# array (one element for one point); KeyError where the values do not carry it
Columns: TypeAlias = Callable[[str], Any]
# what a summary field gives at a point: a number, a word, a flag, or None (unknown here)
FieldValue: TypeAlias = float | str | bool | None
# a field's values at every point, in order; None: unknown at every point
Reader: TypeAlias = Callable[[Columns], Sequence[FieldValue] | None]
# numbers computed from the quantities, one per point (an array)
Compute: TypeAlias = Callable[[Columns], Any]


class SummaryField(FrozenRecord):
    """One field of the summary: its value at one point is its column over that point
    alone (``trade_summary``), so a check of many calculations computes each field once
    for all of them with the same elementwise arithmetic."""

    key: str  # JSON key (its trade unit in the name)
    label: str | None  # console label; None: JSON only
    shown: str  # console format of the value
    reads: tuple[str, ...]  # the registered quantities (concrete names) it is computed from
    values: Reader  # get(name) -> the quantity's column  ->  the field's column
    state_only: bool = False  # only the state command solves for it
    in_check: bool = False  # also a row of the check report's state table


def _floats(get: Columns, name: str) -> Any:
    return np.asarray(get(name), dtype=float)


def _number(name: str, factor: float = 1.0) -> Reader:
    if factor == 1.0:
        return lambda get: _floats(get, name).tolist()
    return lambda get: (_floats(get, name) * factor).tolist()


def _energy_ev(name: str) -> Reader:
    return lambda get: (_floats(get, name) / EV).tolist()


def _where_known(compute: Compute, unit: str) -> Reader:
    """The values of ``compute`` in ``unit``, None where unknown: a quantity the values
    do not carry (a summary built from a bare solve has no structure: None everywhere),
    or NaN (no field given, no mobility data)."""

    def values(get: Columns) -> list[FieldValue] | None:
        try:
            numbers = np.asarray(compute(get), dtype=float) * DISPLAY_UNITS[unit]
        except KeyError:
            return None
        known = numbers.astype(object)  # (its elements Python floats)
        known[~np.isfinite(numbers)] = None
        column: list[FieldValue] = known.tolist()
        return column

    return values


def _quantity(name: str) -> Compute:
    return lambda get: get(name)


def _diffusivity(x: str) -> Compute:
    # generalized Einstein relation at the mobility the calculation uses: the solve's own
    # ratio n/(dn/deta) where it gives one (Kane bulk bands, sheets, linear bands), else
    # physics.transport's parabolic form, one call per dimensionality
    def compute(get: Columns) -> Any:
        mu = _floats(get, f"used_mu_{x}")
        try:
            ratio = _floats(get, f"einstein_{x}")
        except KeyError:
            T, eta, dims = _floats(get, "T"), _floats(get, f"eta_{x}"), _floats(get, "dim")
            first = dims[0] if dims.size else 3.0
            if (dims == first).all():
                return transport.diffusion_coefficient(mu, T, eta, int(first))
            out = np.empty(dims.size)
            for dim in distinct(dims).tolist():
                at = dims == dim
                out[at] = transport.diffusion_coefficient(mu[at], T[at], eta[at], int(dim))
            return out
        return mu * _floats(get, "kT_q") * ratio

    return compute


def _field_velocity(x: str) -> Compute:
    # Caughey–Thomas velocity at the given field; NaN (so no row) where no field is given
    return lambda get: transport.drift_velocity(
        *(_floats(get, name) for name in (f"used_mu_{x}", "field", f"vsat_{x}", f"beta_{x}"))
    )


def _linear(get: Columns) -> Any:
    try:
        return _floats(get, "linear") > 0
    except KeyError:  # a bare bulk solve carries no band shape: gapped
        return None


def _gapped(compute: Compute) -> Reader:
    # band edges E_C, E_V exist only where there is a gap; a zero-gap sheet has E_D
    def values(get: Columns) -> list[FieldValue]:
        linear, numbers = _linear(get), compute(get).tolist()
        if linear is None or not linear.any():
            return numbers  # type: ignore[no-any-return]
        return [None if gapless else v for gapless, v in zip(linear.tolist(), numbers)]

    return values


def _zero_gap(compute: Compute) -> Reader:
    def values(get: Columns) -> list[FieldValue] | None:
        linear = _linear(get)
        if linear is None:
            return None
        numbers = compute(get).tolist()
        return [v if gapless else None for gapless, v in zip(linear.tolist(), numbers)]

    return values


def _fermi_level_ev(get: Columns) -> Any:
    return _floats(get, "eta_n") * _floats(get, "kT") / EV


def _narrowed_ni(get: Columns) -> Any:
    # shown only where the solve narrows the gap (elsewhere n_ie is n_i, the row above)
    return np.where(_floats(get, "bgn_on") > 0, _floats(get, "nie"), np.nan)


def _per_carrier(
    key: str,
    label: str,
    shown: str,
    reads: tuple[str, ...],
    compute: Callable[[str], Compute],
    unit: str,
    in_check: bool = False,
) -> tuple[SummaryField, ...]:
    """One field per carrier: ``{x}`` in key, label and reads stands for n and p."""
    return tuple(
        SummaryField(
            key.format(x=x),
            label.format(x=x),
            shown,
            tuple(name.format(x=x) for name in reads),
            _where_known(compute(x), unit),
            in_check=in_check,
        )
        for x in ("n", "p")
    )


# the transport the engine computes, in the trade's units (state rows; the check report's
# table keeps the mobilities, the resistivity and what is only there when the
# calculation asks for it: v(E) with a field, n_ie with band-gap narrowing)
TRANSPORT = (
    *_per_carrier(
        "mu_{x}_cm2_per_Vs",
        "μ_{x} (model)",
        "{:.4g} cm^2/(V*s)",
        ("mu_{x}",),
        lambda x: _quantity(f"mu_{x}"),
        "cm^2/(V*s)",
        in_check=True,
    ),
    *_per_carrier(
        "D_{x}_cm2_per_s",
        "D_{x} (generalized Einstein)",
        "{:.4g} cm^2/s",
        ("used_mu_{x}", "T", "eta_{x}", "dim"),
        _diffusivity,
        "cm^2/s",
    ),
    *_per_carrier(
        "v_{x}_at_field_cm_per_s",
        "v_{x}(E) (Caughey–Thomas)",
        "{:.4g} cm/s",
        ("used_mu_{x}", "field", "vsat_{x}", "beta_{x}"),
        _field_velocity,
        "cm/s",
        in_check=True,
    ),
    *_per_carrier(
        "lambda_{x}_nm",
        "λ_{x} (mean free path)",
        "{:.3g} nm",
        ("lambda_{x}",),
        lambda x: _quantity(f"lambda_{x}"),
        "nm",
    ),
    SummaryField(
        "sigma_S_per_cm",
        "σ",
        "{:.4g} S/cm",
        ("sigma",),
        _where_known(_quantity("sigma"), "S/cm"),
    ),
    SummaryField(
        "rho_ohm_cm",
        "ρ",
        "{:.4g} ohm*cm",
        ("rho",),
        _where_known(_quantity("rho"), "ohm*cm"),
        in_check=True,
    ),
    SummaryField(
        "nie_cm3",
        "n_ie (narrowed gap)",
        "{:.4g} cm^-3",
        ("nie", "bgn_on"),
        _where_known(_narrowed_ni, "cm^-3"),
        in_check=True,
    ),
)


# a sheet (2D gas, graphene): its densities per area (the bulk rows stay unknown there)
SHEET = (
    *_per_carrier(
        "{x}s_cm2",
        "{x}_s (sheet)",
        "{:.4g} cm^-2",
        ("ns_{x}",),
        lambda x: _quantity(f"ns_{x}"),
        "cm^-2",
        in_check=True,
    ),
    *_per_carrier(
        "N2D_{x}_cm2",
        "N_2D ({x})",
        "{:.4g} cm^-2",
        ("N2D_{x}",),
        lambda x: _quantity(f"N2D_{x}"),
        "cm^-2",
    ),
    SummaryField(
        "ni_sheet_cm2",
        "n_i (sheet)",
        "{:.4g} cm^-2",
        ("ni_s",),
        _where_known(_quantity("ni_s"), "cm^-2"),
        in_check=True,
    ),
)

# a wire (1D conductor): its densities per length and its conducting modes, a count
WIRE = (
    *_per_carrier(
        "{x}l_cm1",
        "{x}_l (line)",
        "{:.4g} cm^-1",
        ("nl_{x}",),
        lambda x: _quantity(f"nl_{x}"),
        "cm^-1",
        in_check=True,
    ),
    *_per_carrier(
        "N1D_{x}_cm1",
        "N_1D ({x})",
        "{:.4g} cm^-1",
        ("N1D_{x}",),
        lambda x: _quantity(f"N1D_{x}"),
        "cm^-1",
    ),
    *_per_carrier(
        "modes_{x}_wire",
        "modes ({x}, wire)",
        "{:.4g}",
        ("modes_1d_{x}",),
        lambda x: _quantity(f"modes_1d_{x}"),
        "1",
    ),
)

FIELDS = (
    SummaryField(
        "regime",
        "regime",
        "{}",
        ("regime",),
        lambda get: [str(word) for word in np.asarray(get("regime")).tolist()],
        False,
        True,
    ),
    SummaryField("temperature_K", None, "{} K", ("T",), _number("T")),
    SummaryField(
        "EF_minus_EC_eV",
        "E_F - E_C",
        "{:+.4f} eV",
        ("eta_n", "kT"),
        _gapped(_fermi_level_ev),
        in_check=True,
    ),
    SummaryField(
        "EF_minus_EV_eV",
        "E_F - E_V",
        "{:+.4f} eV",
        ("eta_p", "kT"),
        _gapped(lambda get: -_floats(get, "eta_p") * _floats(get, "kT") / EV),
    ),
    SummaryField(
        "EF_minus_ED_eV",
        "E_F - E_D (Dirac point)",
        "{:+.4f} eV",
        ("eta_n", "kT", "linear"),
        _zero_gap(_fermi_level_ev),
        in_check=True,
    ),
    SummaryField(
        "eta_n", "η_n = (E_F - E_C)/kT", "{:+.3f}", ("eta_n",), _number("eta_n"), in_check=True
    ),
    SummaryField(
        "eta_p", "η_p = (E_V - E_F)/kT", "{:+.3f}", ("eta_p",), _number("eta_p"), in_check=True
    ),
    SummaryField(
        "n_cm3", "n", "{:.4g} cm^-3", ("dens_n",), _number("dens_n", PER_CM3), in_check=True
    ),
    SummaryField(
        "p_cm3", "p", "{:.4g} cm^-3", ("dens_p",), _number("dens_p", PER_CM3), in_check=True
    ),
    SummaryField(
        "donors_ionized_fraction",
        "donors ionized",
        "{:.1%}",
        ("f_n",),
        _number("f_n"),
        in_check=True,
    ),
    SummaryField(
        "acceptors_ionized_fraction",
        "acceptors ionized",
        "{:.1%}",
        ("f_p",),
        _number("f_p"),
        in_check=True,
    ),
    SummaryField("ni_cm3", "n_i", "{:.4g} cm^-3", ("ni",), _number("ni", PER_CM3), in_check=True),
    SummaryField("band_gap_eV", "E_g", "{:.4f} eV", ("Eg",), _energy_ev("Eg")),
    SummaryField(
        "Nc_cm3", "N_c", "{:.4g} cm^-3", ("Nband_n",), _number("Nband_n", PER_CM3), state_only=True
    ),
    SummaryField(
        "Nv_cm3", "N_v", "{:.4g} cm^-3", ("Nband_p",), _number("Nband_p", PER_CM3), state_only=True
    ),
    SummaryField(
        "above_mott_density",
        "above Mott density",
        "{}",
        ("metal_n", "metal_p"),
        lambda get: ((_floats(get, "metal_n") > 0) | (_floats(get, "metal_p") > 0)).tolist(),
    ),
    *TRANSPORT,
    *SHEET,
    *WIRE,
    SummaryField(
        "neutrality_residual",
        "neutrality residual",
        "{:.1e}",
        ("residual",),
        _number("residual"),
        state_only=True,
    ),
)

# the JSON order: the fields of every summary, then the state command's own
JSON_FIELDS = tuple(f for f in FIELDS if not f.state_only) + tuple(
    f for f in FIELDS if f.state_only
)
# (key, label, format) of the console tables: the state command's, and the check report's
STATE_ROWS = tuple((f.key, f.label, f.shown) for f in FIELDS if f.label)
CHECK_ROWS = tuple((f.key, f.label, f.shown) for f in FIELDS if f.label and f.in_check)


# (key, label, format) of one console row
Row: TypeAlias = tuple[str, str, str]


def shown_rows(rows: tuple[Row, ...], summary: dict[str, FieldValue]) -> list[tuple[str, str]]:
    """(label, text) of the rows a console table shows: those with a value here."""
    return [
        (label, shown.format(summary[key]))
        for key, label, shown in rows
        if summary[key] is not None and summary[key] == summary[key]  # NaN: unknown here
    ]
