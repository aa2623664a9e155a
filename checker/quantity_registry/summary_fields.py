"""The trade-unit summary of a solved operating point: the ``state`` object of the JSON
reports (``check`` and ``state`` commands, the Python API) and the rows of the console
tables, one field each, so that a quantity has one key and one label everywhere.

A field reads registered quantities (SI, :mod:`.registry`) and gives one number, word or
flag in the trade unit its key names, or None where the point has no such value (no field
given, band-gap narrowing off, a material without mobility data, or values that do not
carry the quantity): JSON writes null, the console tables leave the row out.  JSON lists
the fields every summary has first, then those of the ``state`` command alone (the band
densities of states and the solve's residual); the console tables list them in the
table's order.

Derived transport numbers (D, v(E)) are computed by the physics functions, never
re-typed here.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any, SupportsFloat, TypeAlias

from ..physics import transport
from ..physics.constants import EV
from ..records import FrozenRecord
from .display_units import DISPLAY_UNITS

PER_CM3 = DISPLAY_UNITS["cm^-3"]  # m^-3 -> cm^-3

# get(name): the point's value of a registered quantity (a number, or a word for the
# text-valued ones such as the regime); KeyError where the values do not carry it
Getter: TypeAlias = Callable[[str], Any]
# what a summary field gives: a number, a word, a flag, or None (unknown here)
FieldValue: TypeAlias = float | str | bool | None
Reader: TypeAlias = Callable[[Getter], FieldValue]
# a number computed from the quantities (a float or a one-point array)
Compute: TypeAlias = Callable[[Getter], SupportsFloat]


class SummaryField(FrozenRecord):
    key: str  # JSON key (its trade unit in the name)
    label: str | None  # console label; None: JSON only
    shown: str  # console format of the value
    reads: tuple[str, ...]  # the registered quantities (concrete names) it is computed from
    value: Reader  # get(name) -> the point's value of a quantity  ->  the field's value
    state_only: bool = False  # only the state command solves for it
    in_check: bool = False  # also a row of the check report's state table


def _number(name: str, factor: float = 1.0) -> Reader:
    return lambda get: float(get(name)) * factor


def _energy_ev(name: str) -> Reader:
    return lambda get: float(get(name)) / EV


def _where_known(compute: Compute, unit: str) -> Reader:
    """The value of ``compute`` in ``unit``, or None where it is unknown: a quantity the
    values do not carry (a summary built from a bare solve has no structure), or NaN
    (no field given, no mobility data)."""

    def value(get: Getter) -> float | None:
        try:
            number = float(compute(get)) * DISPLAY_UNITS[unit]
        except KeyError:
            return None
        return number if math.isfinite(number) else None

    return value


def _diffusivity(x: str) -> Compute:
    # generalized Einstein relation at the mobility the calculation uses: the solve's own
    # ratio n/(dn/deta) where it gives one (Kane bulk bands, sheets, linear bands), else
    # physics.transport's parabolic form
    def compute(get: Getter) -> float:
        try:
            ratio = float(get(f"einstein_{x}"))
        except KeyError:
            return float(
                transport.diffusion_coefficient(
                    float(get(f"used_mu_{x}")),
                    float(get("T")),
                    float(get(f"eta_{x}")),
                    int(get("dim")),
                )
            )
        return float(get(f"used_mu_{x}")) * float(get("kT_q")) * ratio

    return compute


def _field_velocity(x: str) -> Compute:
    # Caughey–Thomas velocity at the given field; NaN (so no row) where no field is given
    return lambda get: transport.drift_velocity(
        float(get(f"used_mu_{x}")),
        float(get("field")),
        float(get(f"vsat_{x}")),
        float(get(f"beta_{x}")),
    )


def _is_linear(get: Getter) -> bool:
    try:
        return float(get("linear")) > 0
    except KeyError:  # a bare bulk solve carries no band shape: gapped
        return False


def _gapped(compute: Reader) -> Reader:
    # band edges E_C, E_V exist only where there is a gap; a zero-gap sheet has E_D
    return lambda get: None if _is_linear(get) else compute(get)


def _zero_gap(compute: Reader) -> Reader:
    return lambda get: compute(get) if _is_linear(get) else None


def _narrowed_ni(get: Getter) -> float:
    # shown only where the solve narrows the gap (elsewhere n_ie is n_i, the row above)
    return float(get("nie")) if float(get("bgn_on")) > 0 else math.nan


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
        lambda x: lambda get: get(f"mu_{x}"),
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
        lambda x: lambda get: get(f"lambda_{x}"),
        "nm",
    ),
    SummaryField(
        "sigma_S_per_cm",
        "σ",
        "{:.4g} S/cm",
        ("sigma",),
        _where_known(lambda get: get("sigma"), "S/cm"),
    ),
    SummaryField(
        "rho_ohm_cm",
        "ρ",
        "{:.4g} ohm*cm",
        ("rho",),
        _where_known(lambda get: get("rho"), "ohm*cm"),
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
        lambda x: lambda get: get(f"ns_{x}"),
        "cm^-2",
        in_check=True,
    ),
    *_per_carrier(
        "N2D_{x}_cm2",
        "N_2D ({x})",
        "{:.4g} cm^-2",
        ("N2D_{x}",),
        lambda x: lambda get: get(f"N2D_{x}"),
        "cm^-2",
    ),
    SummaryField(
        "ni_sheet_cm2",
        "n_i (sheet)",
        "{:.4g} cm^-2",
        ("ni_s",),
        _where_known(lambda get: get("ni_s"), "cm^-2"),
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
        lambda x: lambda get: get(f"nl_{x}"),
        "cm^-1",
        in_check=True,
    ),
    *_per_carrier(
        "N1D_{x}_cm1",
        "N_1D ({x})",
        "{:.4g} cm^-1",
        ("N1D_{x}",),
        lambda x: lambda get: get(f"N1D_{x}"),
        "cm^-1",
    ),
    *_per_carrier(
        "modes_{x}_wire",
        "modes ({x}, wire)",
        "{:.4g}",
        ("modes_1d_{x}",),
        lambda x: lambda get: get(f"modes_1d_{x}"),
        "1",
    ),
)

FIELDS = (
    SummaryField(
        "regime", "regime", "{}", ("regime",), lambda get: str(get("regime")), False, True
    ),
    SummaryField("temperature_K", None, "{} K", ("T",), _number("T")),
    SummaryField(
        "EF_minus_EC_eV",
        "E_F - E_C",
        "{:+.4f} eV",
        ("eta_n", "kT"),
        _gapped(lambda get: float(get("eta_n")) * float(get("kT")) / EV),
        in_check=True,
    ),
    SummaryField(
        "EF_minus_EV_eV",
        "E_F - E_V",
        "{:+.4f} eV",
        ("eta_p", "kT"),
        _gapped(lambda get: -float(get("eta_p")) * float(get("kT")) / EV),
    ),
    SummaryField(
        "EF_minus_ED_eV",
        "E_F - E_D (Dirac point)",
        "{:+.4f} eV",
        ("eta_n", "kT", "linear"),
        _zero_gap(lambda get: float(get("eta_n")) * float(get("kT")) / EV),
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
        lambda get: bool(float(get("metal_n")) > 0 or float(get("metal_p")) > 0),
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
