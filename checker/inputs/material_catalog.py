"""Material definitions: the built-in data files and user-defined mappings.

Reads ``checker/data/materials/*.yaml`` (or a user mapping of the same form),
converts every quantity to SI once, and builds a :class:`checker.physics.materials.Material`.
"""
from __future__ import annotations

import re
from functools import lru_cache
from ..errors import InputError, UnknownMaterialError
from ..physics import materials as m
from ..physics.constants import ROOM_TEMPERATURE
from ..resources import materials_dir
from .quantities import parse_quantity
from .yaml_source import load_package_yaml

# What each optional block is needed for (used in "missing parameter" messages).
NEEDED_FOR = {
    "band_gap": "the equilibrium solve (intrinsic density, minority carriers)",
    "density_of_states": "the equilibrium solve (carrier densities, eta)",
    "permittivity": "estimating the Mott density of dopants without a tabulated one",
    "dopants": "incomplete ionization (dopant species)",
    "mobility": "conductivity, resistance, the Einstein relation and the mean free path",
    "thermal_mass": "the thermal velocity and the ballistic mean free path",
    "band_gap_narrowing": "the band-gap narrowing option",
}
_MOBILITY_FIELDS = {
    "masetti": {"mu_min1": "mobility", "mu_max": "mobility", "C_r": "density", "alpha": "dimensionless",
                "mu_1": "mobility", "C_s": "density", "beta": "dimensionless",
                "P_c": "density", "gamma": "dimensionless"},
    "arora": {"A_min": "mobility", "a_min": "dimensionless", "A_0": "mobility", "a_0": "dimensionless",
              "N_ref": "density", "a_N": "dimensionless", "alpha": "dimensionless",
              "a_alpha": "dimensionless"},
    "caughey_thomas": {"mu_max": "mobility", "mu_min": "mobility", "N_ref": "density",
                       "lam": "dimensionless", "theta1": "dimensionless", "theta2": "dimensionless"},
    "levinshtein": {"mu_max": "mobility", "mu_min": "mobility", "N_ref": "density",
                    "alpha": "dimensionless", "beta": "dimensionless", "gamma": "dimensionless"},
}
_MOBILITY_CLASSES = {"masetti": m.Masetti, "arora": m.Arora,
                     "caughey_thomas": m.CaugheyThomas, "levinshtein": m.Levinshtein}
_OPTIONAL_ZERO = {"P_c": 0.0, "gamma": 0.0, "theta1": 0.0, "theta2": 0.0}


def _block(data: dict, key: str, where: str, required=True):
    if key not in data:
        if required:
            raise InputError(f"{where}: missing {key!r}")
        return None
    value = data[key]
    if not isinstance(value, dict):
        raise InputError(f"{where}: {key!r} must be a mapping of parameters")
    return value


def _provenance(block: dict, where: str) -> m.Provenance:
    def limits(key, dimension):
        if key not in block:
            return (0.0, float("inf"))
        pair = block[key]
        if not isinstance(pair, list) or len(pair) != 2:
            raise InputError(f"{where}: {key} must be a list [low, high]")
        return tuple(parse_quantity(v, dimension, f"{where}.{key}") for v in pair)

    return m.Provenance(source=str(block.get("source", "user-defined")),
                        valid_T=limits("valid_T", "temperature"),
                        valid_N=limits("valid_N", "density"),
                        note=str(block.get("note", "")))


def _q(block, key, dimension, where, default=None):
    if key not in block:
        if default is not None:
            return default
        raise InputError(f"{where}: missing {key!r} ({dimension})")
    return parse_quantity(block[key], dimension, f"{where}.{key}")


def _mobility_model(block: dict, where: str):
    kind = block.get("model")
    if kind not in _MOBILITY_CLASSES:
        raise InputError(f"{where}: model must be one of {', '.join(_MOBILITY_CLASSES)}, got {kind!r}")
    values = {name: _q(block, name, dim, where, _OPTIONAL_ZERO.get(name))
              for name, dim in _MOBILITY_FIELDS[kind].items()}
    return _MOBILITY_CLASSES[kind](**values, provenance=_provenance(block, where))


def _carrier(block: dict | None, where: str, thermal_mass):
    if block is None:
        return None
    models = _block(block, "models", where)
    built = {name: _mobility_model(spec, f"{where}.models.{name}") for name, spec in models.items()}
    default = block.get("default", next(iter(built)))
    if default not in built:
        raise InputError(f"{where}: default model {default!r} is not among {', '.join(built)}")
    by_dopant = block.get("by_dopant", {}) or {}
    for species, name in by_dopant.items():
        if name not in built:
            raise InputError(f"{where}.by_dopant: {species} -> unknown model {name!r}")
    vsat = beta = None
    if "saturation_velocity" in block:
        spec = block["saturation_velocity"]
        vsat = m.SaturationVelocity(_q(spec, "v300", "velocity", where),
                                    _q(spec, "A", "dimensionless", where, 0.0),
                                    _provenance(spec, f"{where}.saturation_velocity"))
    if "field_exponent" in block:
        spec = block["field_exponent"]
        beta = m.PowerLawExponent(_q(spec, "ref", "dimensionless", where),
                                  _q(spec, "power", "dimensionless", where, 0.0),
                                  _provenance(spec, f"{where}.field_exponent"))
    return m.CarrierTransport(mobility=built, default_model=default, dopant_models=dict(by_dopant),
                              vsat=vsat, beta=beta, thermal_mass=thermal_mass)


def _dopants(block: dict | None, eps_r, where: str) -> dict:
    result = {}
    for name, spec in (block or {}).items():
        here = f"{where}.{name}"
        kind = spec.get("kind")
        if kind not in ("donor", "acceptor"):
            raise InputError(f"{here}: kind must be 'donor' or 'acceptor', got {kind!r}")
        energy = _q(spec, "energy", "energy", here)
        if energy < 0:
            raise InputError(f"{here}: ionization energy must be >= 0")
        degeneracy = _q(spec, "degeneracy", "dimensionless", here, 2.0 if kind == "donor" else 4.0)
        if "mott_density" in spec:
            mott, estimated = _q(spec, "mott_density", "density", here), False
        elif eps_r is not None and energy > 0:
            mott, estimated = float(m.edwards_sienko_mott_density(energy, eps_r)), True
        else:
            raise InputError(f"{here}: give mott_density, or the material's permittivity so it "
                             f"can be estimated ({NEEDED_FOR['permittivity']})")
        result[name] = m.Dopant(name=name, kind=kind, energy=energy, degeneracy=degeneracy,
                                mott_density=mott, mott_estimated=estimated,
                                provenance=_provenance(spec, here))
    return result


def _narrowing(block: dict | None, where: str):
    if block is None:
        return None
    kind = block.get("model")
    prov = _provenance(block, where)
    if kind == "slotboom":
        return m.SlotboomNarrowing(_q(block, "V1", "energy", where), _q(block, "N0", "density", where),
                                   _q(block, "C", "dimensionless", where), prov)
    if kind == "cube_root":
        return m.CubeRootNarrowing(_q(block, "a_n", "energy times length", where),
                                   _q(block, "a_p", "energy times length", where), prov)
    raise InputError(f"{where}: band_gap_narrowing model must be 'slotboom' or 'cube_root'")


def material_from_mapping(data: dict, where: str = "material") -> m.Material:
    """Build a Material from a mapping in the data-file form (units required)."""
    if not isinstance(data, dict):
        raise InputError(f"{where}: a material definition must be a mapping")
    name = str(data.get("name", "custom"))
    known = {"name", "long_name", "aliases", "permittivity", "band_gap", "density_of_states",
             "thermal_mass", "dopants", "mobility", "band_gap_narrowing"}
    unknown = sorted(set(data) - known)
    if unknown:
        raise InputError(f"{where}: unknown material field(s) {', '.join(unknown)}; "
                         f"known: {', '.join(sorted(known))}")
    eps_block = data.get("permittivity")
    eps_r = None
    if eps_block is not None:
        raw = eps_block.get("value") if isinstance(eps_block, dict) else eps_block
        eps_r = parse_quantity(raw, "dimensionless", f"{where}.permittivity")
    gap = dos_c = dos_v = None
    if (blk := _block(data, "band_gap", where, required=False)) is not None:
        here = f"{where}.band_gap"
        if blk.get("model", "varshni") != "varshni":
            raise InputError(f"{here}: only the 'varshni' model is supported")
        gap = m.VarshniGap(_q(blk, "Eg0", "energy", here), _q(blk, "alpha", "energy per kelvin", here, 0.0),
                           _q(blk, "beta", "temperature", here, 1.0), _provenance(blk, here))
    if (blk := _block(data, "density_of_states", where, required=False)) is not None:
        here = f"{where}.density_of_states"
        expo = _q(blk, "exponent", "dimensionless", here, 1.5)
        prov = _provenance(blk, here)
        dos_c = m.PowerLawDOS(_q(blk, "Nc300", "density", here), expo, prov)
        dos_v = m.PowerLawDOS(_q(blk, "Nv300", "density", here), expo, prov)
    masses = data.get("thermal_mass") or {}
    mob = _block(data, "mobility", where, required=False) or {}
    electron = _carrier(_block(mob, "electron", f"{where}.mobility", required=False),
                        f"{where}.mobility.electron", masses.get("electron"))
    hole = _carrier(_block(mob, "hole", f"{where}.mobility", required=False),
                    f"{where}.mobility.hole", masses.get("hole"))
    return m.Material(
        name=name, long_name=str(data.get("long_name", name)), band_gap=gap, Nc=dos_c, Nv=dos_v,
        eps_r=eps_r, dopants=_dopants(data.get("dopants"), eps_r, f"{where}.dopants"),
        electron=electron, hole=hole,
        narrowing=_narrowing(data.get("band_gap_narrowing"), f"{where}.band_gap_narrowing"),
        sources={k: (v.get("source") if isinstance(v, dict) else None) for k, v in data.items()
                 if isinstance(v, dict)},
    )


def missing_parameters(material: m.Material) -> dict:
    """Parameters a (user-defined) material lacks, each with what needs it."""
    checks = {"band_gap": material.band_gap, "density_of_states": material.Nc,
              "permittivity": material.eps_r, "dopants": material.dopants or None,
              "mobility": material.electron, "band_gap_narrowing": material.narrowing}
    missing = {k: NEEDED_FOR[k] for k, v in checks.items() if v is None}
    if material.electron is not None and material.electron.thermal_mass is None:
        missing["thermal_mass"] = NEEDED_FOR["thermal_mass"]
    return missing


def _data_files():
    return materials_dir()


@lru_cache(maxsize=None)
def _index() -> dict:
    """Name and alias (case-insensitive) -> file name.

    Read from the top-level ``name:`` and ``aliases: [...]`` lines only, so that
    start-up does not parse every material file (a test checks this against a
    full parse).
    """
    index = {}
    for entry in _data_files().iterdir():
        if entry.name.endswith(".yaml"):
            text = entry.read_text(encoding="utf-8")
            name = re.search(r"^name:\s*(\S+)\s*$", text, re.M)
            aliases = re.search(r"^aliases:\s*\[([^\]]*)\]", text, re.M)
            keys = [name.group(1)] + ([a.strip() for a in aliases.group(1).split(",")]
                                      if aliases else [])
            for key in keys:
                index[key.lower()] = entry.name
    return index


def builtin_names() -> list[str]:
    return sorted({name[:-5] for name in _index().values()})


@lru_cache(maxsize=None)
def builtin_material(name: str) -> m.Material:
    """A built-in material by name or alias (case-insensitive)."""
    key = str(name).lower()
    if key not in _index():
        import difflib
        close = difflib.get_close_matches(key, list(_index()), n=3, cutoff=0.5)
        hint = f"; did you mean {', '.join(close)}?" if close else ""
        raise UnknownMaterialError(
            f"unknown material {name!r}{hint} Built in: {', '.join(builtin_names())}; "
            "or define it as a mapping with the same parameters")
    entry = _data_files() / _index()[key]
    return material_from_mapping(load_package_yaml(entry.read_text(encoding="utf-8"), entry.name),
                                 where=entry.name)


def resolve_material(material) -> m.Material:
    """Accept a Material, a built-in name, or a user mapping."""
    if isinstance(material, m.Material):
        return material
    if isinstance(material, dict):
        return material_from_mapping(material)
    return builtin_material(material)


__all__ = ["builtin_material", "builtin_names", "material_from_mapping", "missing_parameters",
           "resolve_material", "ROOM_TEMPERATURE"]
