"""Plain-text listing of a material: each value the checks use, and where it comes from.

Used by ``regimecheck materials``.  One block per material: a heading with the name,
long name and whether it is a bulk crystal or a 2D sheet/channel, then one line per
value (band gap, effective densities, bands, mobility models, typical mobilities,
dopants) followed by its source as the material file gives it.
"""

from __future__ import annotations

import re

from ..physics.constants import EV
from ..physics.materials import Material

_INDENT = "    "
_SOURCE = _INDENT + "  from: "
_CM2_PER_VS = 1e-4  # m^2/(V s) per cm^2/(V s)
_EFFECTIVE_DENSITY = {"electron": "N_c", "hole": "N_v"}


def _row(label: str, value: str, source: str | None) -> list[str]:
    lines = [f"{_INDENT}{label:<18} {value}"]
    if source:
        lines.append(_SOURCE + " ".join(str(source).split()))
    return lines


def _band_text(material: Material, carrier: str) -> str:
    shape = material.band_shape(carrier)
    valleys = f"{shape.valley_degeneracy:g} valley" + ("s" if shape.valley_degeneracy != 1 else "")
    if shape.model == "linear":
        velocity = (shape.fermi_velocity or 0.0) * 100.0
        return f"linear, zero gap, v_F = {velocity:.3g} cm/s, {valleys}"
    origin = "" if shape.dos_mass is not None else f" (from {_EFFECTIVE_DENSITY[carrier]})"
    text = f"{shape.model}, DOS mass {material.dos_mass(carrier):.3g} m0{origin}, {valleys}"
    if shape.model == "kane":
        text += f", alpha = {shape.nonparabolicity * EV:.3g} 1/eV"
    return text


def _band_rows(material: Material) -> list[str]:
    rows: list[str] = []
    for carrier in ("electron", "hole"):
        described = material.band_shapes.get(carrier)
        shared = material.band_shape(carrier).model == "linear"
        if described is None and material.dimensionality != 3 and not shared:
            continue  # a 2D channel of one carrier
        source = described.source if described else "parabolic by default, mass from N_c / N_v"
        rows += _row(f"{carrier} band", _band_text(material, carrier), source)
    return rows


def _model_word(model: object) -> str:
    """The material files' word for a model class: CaugheyThomas -> caughey_thomas."""
    base, shape = getattr(model, "base", None), getattr(model, "shape", None)
    if base is not None and shape is not None:  # a model carried to other temperatures
        return f"{_model_word(base)}, temperature dependence of {_model_word(shape)}"
    return re.sub(r"(?<!^)(?=[A-Z])", "_", type(model).__name__).lower()


def _mobility_rows(material: Material) -> list[str]:
    rows: list[str] = []
    for carrier in ("electron", "hole"):
        transport = getattr(material, carrier)
        if transport is not None:
            for name, model in transport.mobility.items():
                default = " (default)" if name == transport.default_model else ""
                kind = _model_word(model)
                rows += _row(
                    f"{carrier} mobility",
                    f"{name}: {kind}{default}",
                    getattr(getattr(model, "provenance", None), "source", None),
                )
        span = material.typical_mobility.get(carrier)
        if span is not None:
            rows += _row(
                f"typical {carrier} μ",
                f"{span.low / _CM2_PER_VS:g}-{span.high / _CM2_PER_VS:g} cm^2/(V*s) "
                f"at {span.T:g} K",
                span.source,
            )
    return rows


def material_block(material: Material, file_name: str) -> list[str]:
    """The lines listing one material (``file_name``: the name it is found under)."""
    kind = "bulk (3D)" if material.dimensionality == 3 else "2D sheet or channel"
    rows = [f"{file_name} — {material.long_name}; {kind}"]
    if material.band_gap is not None:
        gap = float(material.band_gap(300.0)) / EV
        rows += _row(
            "band gap", f"{gap:.4g} eV at 300 K (Varshni)", material.band_gap.provenance.source
        )
    if material.Nc is not None and material.Nv is not None:
        nc, nv = float(material.Nc(300.0)) * 1e-6, float(material.Nv(300.0)) * 1e-6
        rows += _row("N_c, N_v", f"{nc:.3g}, {nv:.3g} cm-3 at 300 K", material.Nc.provenance.source)
    if material.eps_r is not None:
        rows += _row("permittivity", f"{material.eps_r:g}", material.sources.get("permittivity"))
    rows += _band_rows(material)
    rows += _mobility_rows(material)
    for name, dopant in material.dopants.items():
        level = f"{dopant.kind}, {dopant.energy / EV * 1e3:.3g} meV"
        rows += _row(f"dopant {name}", level, dopant.provenance.source)
    return rows


__all__ = ["material_block"]
