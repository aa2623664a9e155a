"""Material definitions: the built-in data files and user-defined mappings.

Both are read by the same key tables (MATERIAL below, the one place that says which
keys a material has, their units and their allowed ranges): every quantity is
converted to SI once and checked, every problem is reported with the line of its
key, and a :class:`checker.physics.materials.Material` is built.  The JSON Schema
of material files (``checker/data/material.schema.json``) is generated from the
same tables by ``tools/generate_schema.py``.
"""

from __future__ import annotations

import re
from collections.abc import Callable
from functools import cache
from pathlib import Path
from typing import Any, Protocol

import numpy as np

from ..close_words import close_matches, did_you_mean
from ..errors import InputError, UnknownMaterialError
from ..physics import materials as m
from ..physics.band_shapes import BandShape
from ..physics.constants import EV, ROOM_TEMPERATURE
from ..records import FrozenRecord, Record, field
from ..resources import materials_dir
from ..user_cache import entry_name, kept
from .problems import Problems
from .quantities import (
    NUMBER,
    WRITTEN_NUMBER,
    example,
    parse_quantity,
    quantity_pattern,
    read_number,
)

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


# ---- the field kinds: each reads its value (SI, checked) and writes its JSON Schema ----
class FieldKind(Protocol):
    """What every field kind below offers (for the type checker)."""

    def read(self, value: Any, place: Any, path: tuple) -> Any: ...

    def schema(self) -> dict: ...


def _shown(value) -> str:
    return "nothing" if value is None else repr(value)


class Text(FrozenRecord):
    required: bool = False

    def read(self, value, place, path):
        if value is None or isinstance(value, (dict, list)):
            raise InputError(f"{place(*path)}: write a text here, got {_shown(value)}")
        return str(value)

    def schema(self) -> dict:
        return {"type": ["string", "number", "boolean"]}


class Choice(FrozenRecord):
    words: tuple
    required: bool = True

    def read(self, value, place, path):
        if not isinstance(value, str) or value not in self.words:
            raise InputError(
                f"{place(*path)} must be one of {', '.join(self.words)}, got {_shown(value)}"
            )
        return value

    def schema(self) -> dict:
        return {"enum": list(self.words)}


class Quantity(FrozenRecord):
    """A number with a unit of ``dimension`` (a plain number if dimensionless), bounded:
    ``least`` (inclusive), ``above`` (exclusive), ``most`` (inclusive), as trade text."""

    dimension: str
    least: str | None = None
    above: str | None = None
    most: str | None = None
    default: float | None = None
    required: bool = True
    why: str = ""

    def __post_init__(self):
        if self.default is not None:
            object.__setattr__(self, "required", False)

    def read(self, value, place, path):
        si = parse_quantity(value, self.dimension, place(*path))
        for bound, fails, words in (
            (self.least, lambda b: si < b, "at least"),
            (self.above, lambda b: si <= b, "above"),
            (self.most, lambda b: si > b, "at most"),
        ):
            if bound is not None and fails(parse_quantity(bound, self.dimension)):
                why = f" ({self.why})" if self.why else ""
                hint = (
                    "a plain number"
                    if self.dimension == "dimensionless"
                    else f"e.g. {example(self.dimension)}"
                )
                raise InputError(
                    f"{place(*path)}: {value!r} must be {words} {bound}{why}; "
                    f"write {hint} in that range"
                )
        return si

    def schema(self) -> dict:
        if self.dimension != "dimensionless":
            return {
                "type": "string",
                "pattern": quantity_pattern(True),
                "description": f"a {self.dimension} with its unit, e.g. {example(self.dimension)}",
            }
        number: dict[str, object] = {"type": "number"}
        for bound, key in (
            (self.least, "minimum"),
            (self.above, "exclusiveMinimum"),
            (self.most, "maximum"),
        ):
            if bound is not None:
                number[key] = float(bound)
        return {"anyOf": [number, {"type": "string", "pattern": quantity_pattern(False)}]}


# 1/eV has no dimension in the unit table (inputs/quantities.py); the Kane coefficient
# is its only use, so its few trade spellings are read here, in a closed table.
_PER_ENERGY_UNITS = {"1/eV": 1.0, "/eV": 1.0, "eV^-1": 1.0, "eV-1": 1.0, "1/meV": 1e3,
                     "/meV": 1e3, "meV^-1": 1e3, "meV-1": 1e3}  # fmt: skip
_PER_ENERGY = re.compile(
    rf"^\s*({NUMBER})\s*({'|'.join(re.escape(u) for u in _PER_ENERGY_UNITS)})\s*$"
)


class PerEnergy(FrozenRecord):
    """A number per energy with its unit (``0.61 1/eV``), read into J^-1, 0 <= x <= most."""

    most: float  # in 1/eV
    required: bool = True

    def read(self, value, place, path):
        text = str(value).replace("\u207b\u00b9", "^-1").replace("\u2212", "-")
        found = None if isinstance(value, (bool, dict, list)) else _PER_ENERGY.match(text)
        per_ev = read_number(found.group(1)) * _PER_ENERGY_UNITS[found.group(2)] if found else None
        if per_ev is None or not 0.0 <= per_ev <= self.most:
            raise InputError(
                f"{place(*path)}: write a value from 0 to {self.most:g} per eV with its "
                f"unit, e.g. '0.61 1/eV', got {_shown(value)}"
            )
        return per_ev / EV

    def schema(self) -> dict:
        units = "|".join(re.escape(u) for u in _PER_ENERGY_UNITS)
        return {
            "type": "string",
            "pattern": rf"^\s*{WRITTEN_NUMBER}\s*({units}|eV⁻¹|meV⁻¹)\s*$",
            "description": "a value per energy with its unit, e.g. 0.61 1/eV",
        }


class WholeNumber(FrozenRecord):
    """A whole number from ``least`` to ``most`` (a count, a dimensionality)."""

    least: int
    most: int
    default: int | None = None
    required: bool = False

    def read(self, value, place, path):
        # calculation files keep scalars as text, the package files as YAML numbers
        if isinstance(value, str) and re.fullmatch(r"\s*[0-9]{1,3}\s*", value):
            value = int(value)
        if isinstance(value, bool) or not isinstance(value, int):
            raise InputError(
                f"{place(*path)}: write a whole number from {self.least} to {self.most}, "
                f"got {_shown(value)}"
            )
        if not self.least <= value <= self.most:
            raise InputError(f"{place(*path)}: {value} must be from {self.least} to {self.most}")
        return value

    def schema(self) -> dict:
        return {"type": "integer", "minimum": self.least, "maximum": self.most}


class Range(FrozenRecord):
    """[low, high] of a dimension, both >= 0 (the fitted range of a model)."""

    dimension: str
    required: bool = False

    def read(self, value, place, path):
        if not isinstance(value, list) or len(value) != 2:
            raise InputError(
                f"{place(*path)}: write the range as [low, high], e.g. "
                f"[{example(self.dimension)[1:-1]}, ...], got {_shown(value)}"
            )
        low, high = (
            parse_quantity(v, self.dimension, place(*path, i)) for i, v in enumerate(value)
        )
        if not 0 <= low <= high:
            raise InputError(
                f"{place(*path)}: the range {value} must run from a value >= 0 up to a larger one"
            )
        return (low, high)

    def schema(self) -> dict:
        return {
            "type": "array",
            "items": Quantity(self.dimension).schema(),
            "minItems": 2,
            "maxItems": 2,
        }


class TextList(FrozenRecord):
    required: bool = False

    def read(self, value, place, path):
        if not isinstance(value, list):
            raise InputError(f"{place(*path)}: write a list of texts, e.g. [name1, name2]")
        return [Text().read(v, place, path + (i,)) for i, v in enumerate(value)]

    def schema(self) -> dict:
        return {"type": "array", "items": Text().schema()}


class NumberList(FrozenRecord):
    """A list of plain numbers (the coefficients of a published fit, in its own units)."""

    least_items: int = 1
    required: bool = True

    def read(self, value, place, path):
        if not isinstance(value, list) or len(value) < self.least_items:
            raise InputError(
                f"{place(*path)}: write a list of at least {self.least_items} "
                f"numbers, e.g. [1.094, -1.312e-5], got {_shown(value)}"
            )
        return tuple(
            Quantity("dimensionless", least="-1e30", most="1e30").read(v, place, path + (i,))
            for i, v in enumerate(value)
        )

    def schema(self) -> dict:
        return {
            "type": "array",
            "minItems": self.least_items,
            "items": Quantity("dimensionless").schema(),
        }


class BlockList(FrozenRecord):
    """A list of blocks of one form (e.g. the bound levels of a dopant)."""

    item: Block
    required: bool = False

    def read(self, value, place, path):
        if not isinstance(value, list) or not value:
            raise InputError(f"{place(*path)}: write a list of {self.item.form()} entries")
        return [self.item.read(v, place, path + (i,)) for i, v in enumerate(value)]

    def schema(self) -> dict:
        return {"type": "array", "minItems": 1, "items": self.item.schema()}


def _must_be_mapping(value, place, path, form: str):
    if not isinstance(value, dict):
        raise InputError(f"{place(*path)}: must be a mapping {form}, got {_shown(value)}")


class Block(FrozenRecord):
    """A mapping with fixed keys; unknown keys and missing required keys are errors."""

    fields: dict
    required: bool = True

    def form(self) -> str:
        return "{" + ", ".join(f"{k}: ..." for k, f in self.fields.items() if f.required) + "}"

    def read(self, value, place, path):
        _must_be_mapping(
            value,
            place,
            path,
            self.form() if self.form() != "{}" else "of " + ", ".join(self.fields),
        )
        for key in value:
            if key not in self.fields:
                place.problems.add(_unknown_key(key, value[key], self.fields, place, path))
        out = {}
        for key, kind in self.fields.items():
            if key in value:
                result = place.problems.run(kind.read, value[key], place, path + (key,))
                if result is not None:
                    out[key] = result
            elif kind.required:
                place.problems.add(
                    InputError(
                        f"{place(*path)}: missing {key!r}"
                        + (
                            f"; write e.g. {key}: {example(kind.dimension)}"
                            if isinstance(kind, Quantity)
                            else ""
                        )
                    )
                )
            elif getattr(kind, "default", None) is not None:
                out[key] = kind.default
        return out

    def schema(self) -> dict:
        return {
            "type": "object",
            "additionalProperties": False,
            "required": [k for k, f in self.fields.items() if f.required],
            "properties": {k: f.schema() for k, f in self.fields.items()},
        }


def _unknown_key(key, value, known, place, path) -> InputError:
    if value in (None, "") and " " in str(key):
        return InputError(
            f"{place(*path)}: {key!r} is not a key; a comma in unquoted text "
            "inside {...} starts a new key: quote the text, e.g. "
            'source: "Author, Journal 1 (2000)"'
        )
    hint = did_you_mean(str(key), known) or f"known: {', '.join(known)}"
    return InputError(f"{place(*path, key)}: unknown material field {key!r}; {hint}")


class Named(FrozenRecord):
    """A mapping of names the author chooses (dopant species, model names) to ``item``."""

    item: FieldKind
    what: str
    required: bool = True

    def read(self, value, place, path):
        _must_be_mapping(value, place, path, f"of {self.what} names to their entries")
        if self.required and not value:
            raise InputError(f"{place(*path)}: give at least one {self.what}")
        out = {}
        for name, entry in value.items():
            result = place.problems.run(self.item.read, entry, place, path + (name,))
            if result is not None:
                out[str(name)] = result
        return out

    def schema(self) -> dict:
        return {
            "type": "object",
            "additionalProperties": self.item.schema(),
            "minProperties": 1 if self.required else 0,
        }


class Variants(FrozenRecord):
    """A parameter block whose keys depend on its ``key`` (``model``; a key of ``variants``)."""

    variants: dict
    common: dict
    implied_model: str | None = None  # the model when the block does not say
    required: bool = True
    key: str = "model"

    def _block(self, model) -> Block:
        choice = Choice(tuple(self.variants), required=self.implied_model is None)
        return Block({self.key: choice, **self.variants[model], **self.common})

    def read(self, value, place, path):
        first = next(iter(self.variants))
        _must_be_mapping(
            value,
            place,
            path,
            f"{{{self.key}: {first}, ...}} ({self.key}s: {', '.join(self.variants)})",
        )
        model = value.get(self.key, self.implied_model)
        if not isinstance(model, str) or model not in self.variants:
            raise InputError(
                f"{place(*path, self.key)}: {self.key} must be one of "
                f"{', '.join(self.variants)}, got {_shown(model)}"
            )
        self._refuse_other_models_keys(value, model, place, path)
        return {**self._block(model).read(value, place, path), self.key: model}

    def _refuse_other_models_keys(self, value, model, place, path) -> None:
        """A key of another model (fermi_velocity in a kane band) says which model takes it."""
        mine = self._block(model).fields
        for name in value:
            owners = [other for other, keys in self.variants.items() if name in keys]
            if name not in mine and owners:
                raise InputError(
                    f"{place(*path, name)}: {name!r} belongs to {self.key} "
                    f"{' or '.join(owners)}, not {model}; remove it or change {self.key}"
                )

    def schema(self) -> dict:
        options = []
        for model in self.variants:
            block = self._block(model).schema()
            block["properties"][self.key] = {"const": model}
            options.append(block)
        return options[0] if len(options) == 1 else {"oneOf": options}


class NumberOrBlock(FrozenRecord):
    """A plain number, or a block {value: number, source, note}."""

    number: Quantity
    extra: dict
    required: bool = True

    def read(self, value, place, path):
        if isinstance(value, dict):
            block = Block({"value": self.number, **self.extra})
            return block.read(value, place, path).get("value")
        return self.number.read(value, place, path)

    def schema(self) -> dict:
        return {
            "anyOf": [self.number.schema(), Block({"value": self.number, **self.extra}).schema()]
        }


# ---- the key tables -------------------------------------------------------------------
# Bounds are wide: they catch signs, zeros and exponent typos, not unusual materials.
# The provenance keys every parameter block may carry.
PROVENANCE = {
    "source": Text(),
    "note": Text(),
    "valid_T": Range("temperature"),
    "valid_N": Range("density"),
}
_MOBILITY: dict[str, Any] = dict(dimension="mobility", above="0 cm^2/(V*s)", most="1e7 cm^2/(V*s)")
_MOBILITY_TERM: dict[str, Any] = dict(
    dimension="mobility", least="0 cm^2/(V*s)", most="1e7 cm^2/(V*s)"
)
_REF_DENSITY: dict[str, Any] = dict(dimension="density", above="0 cm-3", most="1e24 cm-3")
_POWER: dict[str, Any] = dict(dimension="dimensionless", least="-10", most="10")
_EXPONENT: dict[str, Any] = dict(dimension="dimensionless", above="0", most="10")

MOBILITY_MODELS: dict[str, dict[str, Any]] = {
    "masetti": {
        "mu_min1": Quantity(**_MOBILITY),
        "mu_max": Quantity(**_MOBILITY),
        "C_r": Quantity(**_REF_DENSITY),
        "alpha": Quantity(**_EXPONENT),
        "mu_1": Quantity(**_MOBILITY_TERM),
        "C_s": Quantity(**_REF_DENSITY),
        "beta": Quantity(**_EXPONENT),
        "P_c": Quantity("density", least="0 cm-3", most="1e24 cm-3", default=0.0),
        "gamma": Quantity(**_POWER, default=0.0),
    },
    # A_0 multiplies T^a_0 with T in kelvin, hence its large published values
    "arora": {
        "A_min": Quantity(**_MOBILITY),
        "a_min": Quantity(**_POWER),
        "A_0": Quantity("mobility", above="0 cm^2/(V*s)", most="1e20 cm^2/(V*s)"),
        "a_0": Quantity(**_POWER),
        "N_ref": Quantity(**_REF_DENSITY),
        "a_N": Quantity(**_POWER),
        "alpha": Quantity(**_EXPONENT),
        "a_alpha": Quantity(**_POWER),
    },
    "caughey_thomas": {
        "mu_max": Quantity(**_MOBILITY),
        "mu_min": Quantity(**_MOBILITY_TERM),
        "N_ref": Quantity(**_REF_DENSITY),
        "lam": Quantity(**_EXPONENT),
        "theta1": Quantity(**_POWER, default=0.0),
        "theta2": Quantity(**_POWER, default=0.0),
    },
    "levinshtein": {
        "mu_max": Quantity(**_MOBILITY),
        "mu_min": Quantity(**_MOBILITY_TERM),
        "N_ref": Quantity(**_REF_DENSITY),
        "alpha": Quantity(**_POWER),
        "beta": Quantity(**_POWER),
        "gamma": Quantity(**_POWER),
    },
    # the silicon resistivity standard (ASTM F723) read as mobility per dopant atom
    "resistivity_standard": {
        "form": Choice(("boron", "phosphorus")),
        "coefficients": NumberList(least_items=4),
    },
}
# any mobility model may take its temperature dependence from another model of the band
MOBILITY_COMMON = {
    **PROVENANCE,
    "temperature_scaling": Block(
        {
            "by": Text(required=True),
            "T0": Quantity("temperature", above="0 K", most="3000 K", default=300.0),
            "source": Text(),
            "note": Text(),
        },
        required=False,
    ),
}
NARROWING_MODELS = {
    "slotboom": {
        "V1": Quantity("energy", least="0 eV", most="1 eV"),
        "N0": Quantity(**_REF_DENSITY),
        "C": Quantity("dimensionless", least="0", most="100"),
    },
    "cube_root": {
        "a_n": Quantity("energy times length", least="0 eV*cm", most="1 eV*cm"),
        "a_p": Quantity("energy times length", least="0 eV*cm", most="1 eV*cm"),
    },
}
GAP_MODELS = {
    "varshni": {
        "Eg0": Quantity("energy", above="0 eV", most="15 eV", why="a band gap is positive"),
        "alpha": Quantity("energy per kelvin", least="-0.01 eV/K", most="0.01 eV/K", default=0.0),
        "beta": Quantity("temperature", least="0 K", most="1e4 K", default=1.0),
    },
}
DOS_MODELS = {
    "power_law": {
        "Nc300": Quantity("density", above="0 cm-3", most="1e23 cm-3"),
        "Nv300": Quantity("density", above="0 cm-3", most="1e23 cm-3"),
        "exponent": Quantity("dimensionless", least="0", most="3", default=1.5),
    },
    # N = 2 (2 pi m0 k T / h^2)^1.5 D(T), D = sum a_k T^k (Couderc et al. 2014)
    "mass_polynomial": {
        "Nc_mass": NumberList(),
        "Nv_mass": NumberList(),
        "T_fit": Quantity("temperature", above="0 K", most="3000 K"),
    },
}
_MASS = Quantity(
    "dimensionless",
    above="0",
    most="100",
    required=False,
    why="a mass in units of the free-electron mass m0",
)
CARRIER = Block(
    {
        "default": Text(required=False),
        "by_dopant": Named(Text(), "dopant", required=False),
        "models": Named(Variants(MOBILITY_MODELS, MOBILITY_COMMON), "mobility model"),
        "minority": Text(required=False),
        "saturation_velocity": Block(
            {
                "v300": Quantity("velocity", above="0 cm/s", most="1e9 cm/s"),
                "A": Quantity("dimensionless", least="0", most="1", default=0.0),
                # v300 (T/300 K)^power (Canali et al. 1975) in place of A
                "power": Quantity(**_POWER, required=False),
                **PROVENANCE,
            },
            required=False,
        ),
        "field_exponent": Block(
            {"ref": Quantity(**_EXPONENT), "power": Quantity(**_POWER, default=0.0), **PROVENANCE},
            required=False,
        ),
    },
    required=False,
)
_LEVEL_ENERGY = Quantity(
    "energy", least="0 eV", most="15 eV", why="a level measured from its band edge"
)
LOWERING_MODELS = {
    "altermatt": {"N_ref": Quantity(**_REF_DENSITY), "c": Quantity(**_EXPONENT)},
    "pearson_bardeen": {
        "alpha": Quantity("energy times length", least="0 eV*cm", most="1e-5 eV*cm")
    },
}
DOPANT = Block(
    {
        "kind": Choice(("donor", "acceptor")),
        "energy": _LEVEL_ENERGY,
        "degeneracy": Quantity("dimensionless", above="0", most="100", required=False),
        "mott_density": Quantity("density", above="0 cm-3", most="1e24 cm-3", required=False),
        # several bound levels (lattice sites) with their shares; energy is then the first's
        "levels": BlockList(
            Block(
                {
                    "energy": _LEVEL_ENERGY,
                    "share": Quantity("dimensionless", above="0", most="1"),
                    "degeneracy": Quantity("dimensionless", above="0", most="100", required=False),
                }
            )
        ),
        # ionization energy lowered with the same-type density
        "lowering": Variants(LOWERING_MODELS, {"source": Text(), "note": Text()}, required=False),
        # share of dopants that can bind a carrier, b(N) = 1/(1 + (N/N_b)^d)
        "bound_share": Block(
            {
                "N_b": Quantity(**_REF_DENSITY),
                "d": Quantity(**_EXPONENT),
                "source": Text(),
                "note": Text(),
            },
            required=False,
        ),
        **PROVENANCE,
    }
)
# the band of one carrier: its shape, density-of-states mass per valley and valleys
BAND_MODELS = {
    "parabolic": {"dos_mass": _MASS},
    # E (1 + alpha E) = hbar^2 k^2 / 2m* (Kane 1957); alpha in 1/eV
    "kane": {"dos_mass": _MASS, "nonparabolicity": PerEnergy(most=100.0)},
    # E = +-hbar v_F |k|, zero gap, 2D (graphene)
    "linear": {"fermi_velocity": Quantity("velocity", above="0 cm/s", most="1e9 cm/s")},
}
BAND = Variants(
    BAND_MODELS,
    {
        "valley_degeneracy": Quantity(
            "dimensionless", above="0", most="100", required=False, why="equivalent valleys"
        ),
        "source": Text(),
        "note": Text(),
    },
    implied_model="parabolic",
    required=False,
    key="band_model",
)
PERMITTIVITY = Quantity(
    "dimensionless", least="1", most="1000", why="the static relative permittivity; vacuum has 1"
)
MATERIAL = Block(
    {
        "name": Text(required=False),
        "long_name": Text(required=False),
        "aliases": TextList(required=False),
        "permittivity": NumberOrBlock(
            PERMITTIVITY, {"source": Text(), "note": Text()}, required=False
        ),
        "band_gap": Variants(GAP_MODELS, PROVENANCE, implied_model="varshni", required=False),
        "density_of_states": Variants(
            DOS_MODELS, PROVENANCE, implied_model="power_law", required=False
        ),
        "intrinsic_density": Block(
            {
                "published": Range("density", required=True),
                "at": Quantity("temperature", above="0 K", most="3000 K", default=300.0),
                "source": Text(),
                "note": Text(),
            },
            required=False,
        ),
        "hall_factor": Block(
            {"electron": Range("dimensionless"), "hole": Range("dimensionless"), **PROVENANCE},
            required=False,
        ),
        "thermal_mass": Block(
            {"electron": _MASS, "hole": _MASS, "source": Text(), "note": Text()}, required=False
        ),
        "dopants": Named(DOPANT, "dopant", required=False),
        "mobility": Block(
            {"electron": CARRIER, "hole": CARRIER, "source": Text(), "note": Text()}, required=False
        ),
        "band_gap_narrowing": Variants(NARROWING_MODELS, PROVENANCE, required=False),
        # 3: a bulk crystal; 2: a sheet or 2D channel (graphene, a heterojunction gas)
        "dimensionality": WholeNumber(2, 3, default=3),
        "bands": Block(
            {"electron": BAND, "hole": BAND, "source": Text(), "note": Text()}, required=False
        ),
        # what is typically measured, for plausibility (a 2D channel has no doping model)
        "typical_mobility": Block(
            {
                "electron": Range("mobility"),
                "hole": Range("mobility"),
                "at": Quantity("temperature", above="0 K", most="3000 K", default=300.0),
                "source": Text(),
                "note": Text(),
            },
            required=False,
        ),
    }
)
# ---------------------------------------------------------------------------------------


class _Place(Record):
    """Where a key of a material is: file:line:column and the key path, for messages."""

    locate: Callable[..., str]  # (*keys) -> "file:line:col" (or the file name)
    prefix: tuple = ()
    problems: Problems = field(default_factory=Problems)

    def __call__(self, *keys) -> str:
        return f"{self.locate(*keys)}: {'.'.join(map(str, self.prefix + keys))}"


def _provenance(block: dict) -> m.Provenance:
    return m.Provenance(
        source=str(block.get("source", "user-defined")),
        valid_T=block.get("valid_T", (0.0, float("inf"))),
        valid_N=block.get("valid_N", (0.0, float("inf"))),
        note=str(block.get("note", "")),
    )


def _parameters(block: dict, table: dict) -> dict:
    return {key: block.get(key) for key in table}


_MOBILITY_CLASSES = {
    "masetti": m.Masetti,
    "arora": m.Arora,
    "caughey_thomas": m.CaugheyThomas,
    "levinshtein": m.Levinshtein,
}
_NARROWING_CLASSES = {"slotboom": m.SlotboomNarrowing, "cube_root": m.CubeRootNarrowing}


def _mobility_model(block: dict, place: _Place, path: tuple):
    kind = block["model"]
    values = _parameters(block, MOBILITY_MODELS[kind])
    if kind == "resistivity_standard":
        expected = 4 if values["form"] == "boron" else 8
        if len(values["coefficients"]) != expected:
            raise InputError(
                f"{place(*path, 'coefficients')}: the {values['form']} form takes "
                f"{expected} coefficients (ASTM F723), got "
                f"{len(values['coefficients'])}"
            )
        provenance = _provenance(block)
        N_range = provenance.valid_N if np.isfinite(provenance.valid_N[1]) else (1e18, 1e27)
        return m.ResistivityStandardMobility(
            values["form"], values["coefficients"], (max(N_range[0], 1.0), N_range[1]), provenance
        )
    low = values.get("mu_min", values.get("mu_min1"))
    if low is not None and values["mu_max"] is not None and low >= values["mu_max"]:
        key = "mu_min" if "mu_min" in values else "mu_min1"
        raise InputError(
            f"{place(*path, key)}: must be below mu_max (the mobility of pure "
            "material); swap the two values"
        )
    if kind == "masetti" and values["mu_1"] >= values["mu_min1"]:
        raise InputError(
            f"{place(*path, 'mu_1')}: must be below mu_min1, or the mobility "
            "turns negative at high doping"
        )
    return _MOBILITY_CLASSES[kind](**values, provenance=_provenance(block))


def _carrier(block, carrier: str, dopants: dict, thermal_mass, place: _Place):
    if block is None:
        return None
    path = ("mobility", carrier)
    built = {}
    for name, spec in block["models"].items():
        built[name] = place.problems.run(_mobility_model, spec, place, path + ("models", name))
    if not built:
        raise InputError(
            f"{place(*path, 'models')}: give at least one model, e.g. "
            "{my_model: {model: caughey_thomas, mu_max: ..., ...}}"
        )
    default = block.get("default") or next(iter(built))
    if default not in built:
        raise InputError(
            f"{place(*path, 'default')}: {default!r} is not among the models {', '.join(built)}"
        )
    for species, name in (block.get("by_dopant") or {}).items():
        if name not in built:
            raise InputError(
                f"{place(*path, 'by_dopant', species)}: unknown model {name!r}; "
                f"models: {', '.join(built)}"
            )
        if species not in dopants:
            raise InputError(
                f"{place(*path, 'by_dopant', species)}: {species!r} is not a dopant "
                f"of this material; dopants: {', '.join(dopants) or 'none'}"
            )
    if any(model is None for model in built.values()):
        return None  # already reported
    built = _temperature_scaled(built, block["models"], place, path)
    minority = block.get("minority")
    if minority is not None and minority not in built:
        raise InputError(
            f"{place(*path, 'minority')}: unknown model {minority!r}; models: {', '.join(built)}"
        )
    vsat = beta = None
    if (spec := block.get("saturation_velocity")) is not None:
        vsat = (
            m.PowerLawVelocity(spec["v300"], spec["power"], _provenance(spec))
            if spec.get("power") is not None
            else m.SaturationVelocity(spec["v300"], spec["A"], _provenance(spec))
        )
    if (spec := block.get("field_exponent")) is not None:
        beta = m.PowerLawExponent(spec["ref"], spec["power"], _provenance(spec))
    return m.CarrierTransport(
        mobility=built,
        default_model=default,
        dopant_models=dict(block.get("by_dopant") or {}),
        vsat=vsat,
        beta=beta,
        thermal_mass=thermal_mass,
        minority_model=minority,
    )


def _temperature_scaled(built: dict, specs: dict, place: _Place, path: tuple) -> dict:
    """Models with ``temperature_scaling: {by: other, T0}`` take the other model's ratio
    mu(N, T)/mu(N, T0) (the other model itself must be unscaled)."""
    out = dict(built)
    for name, spec in specs.items():
        scaling = spec.get("temperature_scaling")
        if scaling is None:
            continue
        shape = scaling["by"]
        if shape not in built or shape == name or specs[shape].get("temperature_scaling"):
            raise InputError(
                f"{place(*path, 'models', name, 'temperature_scaling', 'by')}: "
                f"{shape!r} must be another, unscaled model of this carrier; "
                f"models: {', '.join(built)}"
            )
        out[name] = m.TemperatureRatio(built[name], built[shape], scaling["T0"], _provenance(spec))
    return out


def _dopants(block: dict, eps_r, gap, place: _Place) -> dict:
    result = {}
    for name, spec in block.items():
        here = ("dopants", name)
        energy = spec["energy"]
        if gap is not None and energy >= gap.Eg0:
            place.problems.add(
                InputError(
                    f"{place(*here, 'energy')}: a bound dopant level lies inside the band gap; "
                    f"this one is {energy / EV:g} eV from its band edge, the gap "
                    f"is {gap.Eg0 / EV:g} eV; give the ionization energy, e.g. "
                    "'45 meV'"
                )
            )
            continue
        if spec.get("mott_density") is not None:
            mott, estimated = spec["mott_density"], False
        elif eps_r is not None and energy > 0:
            mott, estimated = float(m.edwards_sienko_mott_density(energy, eps_r)), True
        else:
            place.problems.add(
                InputError(
                    f"{place(*here)}: give mott_density, or the material's permittivity so it can "
                    f"be estimated ({NEEDED_FOR['permittivity']})"
                )
            )
            continue
        degeneracy = spec.get("degeneracy") or (2.0 if spec["kind"] == "donor" else 4.0)
        levels = tuple(
            m.DopantLevel(level["energy"], level.get("degeneracy") or degeneracy, level["share"])
            for level in spec.get("levels") or ()
        )
        if levels and abs(sum(level.share for level in levels) - 1.0) > 1e-6:
            place.problems.add(
                InputError(f"{place(*here, 'levels')}: the shares of the levels must add up to 1")
            )
            continue
        if gap is not None and any(level.energy >= gap.Eg0 for level in levels):
            place.problems.add(
                InputError(f"{place(*here, 'levels')}: every level must lie inside the band gap")
            )
            continue
        result[name] = m.Dopant(
            name=name,
            kind=spec["kind"],
            energy=energy,
            degeneracy=degeneracy,
            mott_density=mott,
            mott_estimated=estimated,
            provenance=_provenance(spec),
            levels=levels,
            lowering=_lowering(spec.get("lowering"), energy),
            bound_share=_bound_share(spec.get("bound_share")),
        )
    return result


def _lowering(block, energy):
    if block is None:
        return None
    if block["model"] == "altermatt":
        return m.AltermattLowering(block["N_ref"], block["c"])
    return m.PearsonBardeenLowering(block["alpha"], energy)


def _bound_share(block):
    return None if block is None else m.BoundShare(block["N_b"], block["d"])


def _density_of_states(block):
    if block is None:
        return None, None
    provenance = _provenance(block)
    if block["model"] == "mass_polynomial":
        return (
            m.MassPolynomialDOS(block["Nc_mass"], block["T_fit"], provenance),
            m.MassPolynomialDOS(block["Nv_mass"], block["T_fit"], provenance),
        )
    return (
        m.PowerLawDOS(block["Nc300"], block["exponent"], provenance),
        m.PowerLawDOS(block["Nv300"], block["exponent"], provenance),
    )


def _hall_factors(block) -> dict:
    if block is None:
        return {}
    valid_T = block.get("valid_T", (0.0, float("inf")))
    return {band: (*block[band], valid_T) for band in ("electron", "hole") if band in block}


def _narrowing(block):
    if block is None:
        return None
    kind = block["model"]
    return _NARROWING_CLASSES[kind](
        **_parameters(block, NARROWING_MODELS[kind]), provenance=_provenance(block)
    )


def _band_shapes(values: dict, place: _Place) -> dict:
    """BandShapes per carrier, checked against the rest of the material: a linear band
    is 2D, gapless and shared by both carriers; a 2D material states its masses (the
    bulk N_c and N_v do not apply to it)."""
    block = values.get("bands") or {}
    shapes = {}
    for carrier in ("electron", "hole"):
        if (spec := block.get(carrier)) is not None:
            shapes[carrier] = BandShape(
                model=spec["band_model"],
                dos_mass=spec.get("dos_mass"),
                valley_degeneracy=spec.get("valley_degeneracy", 1.0),
                nonparabolicity=spec.get("nonparabolicity", 0.0),
                fermi_velocity=spec.get("fermi_velocity"),
                source=spec.get("source") or block.get("source"),
            )
    linear = [c for c, shape in shapes.items() if shape.model == "linear"]
    flat = values.get("dimensionality") == 2

    def refuse(keys: tuple, message: str) -> None:
        place.problems.add(InputError(f"{place(*keys)}: {message}"))

    if linear and len(linear) != len(shapes):
        refuse(
            ("bands",),
            "a linear (zero-gap) band is shared by electrons and holes: give band_model: "
            "linear to both, or describe only the electron band",
        )
    if linear and not flat:
        refuse(
            ("bands", linear[0], "band_model"),
            "a linear zero-gap band is two-dimensional (graphene); add dimensionality: 2",
        )
    if linear and "band_gap" in values:
        refuse(
            ("band_gap",),
            "a linear band has no gap (its cones touch at the Dirac point); remove "
            "band_gap, or describe the bands as parabolic or kane",
        )
    if flat and "density_of_states" in values:
        refuse(
            ("density_of_states",),
            "N_c and N_v are bulk (per volume) densities; a 2D material gives "
            "bands.electron.dos_mass (in-plane) and valley_degeneracy instead",
        )
    if flat and not linear and "electron" not in shapes:
        refuse(
            ("bands",) if "bands" in values else (),
            "a 2D material describes its bands, e.g. "
            "bands: {electron: {dos_mass: 0.067, valley_degeneracy: 1}}",
        )
    for carrier, shape in shapes.items():
        if flat and shape.model != "linear" and shape.dos_mass is None:
            refuse(
                ("bands", carrier),
                "a 2D band needs its in-plane dos_mass (the density-of-states mass of "
                "one valley over m0), e.g. dos_mass: 0.067",
            )
    return shapes


def _typical_mobility(block) -> dict:
    if block is None:
        return {}
    return {
        carrier: m.MobilityRange(
            block[carrier][0], block[carrier][1], block["at"], block.get("source")
        )
        for carrier in ("electron", "hole")
        if carrier in block
    }


def material_from_mapping(data, where: str = "material", locate=None) -> m.Material:
    """Build a Material from a mapping in the data-file form (units required).

    ``locate(*keys)`` gives "file:line:column" of a key inside ``data`` (a calculation
    file knows the positions); without it, messages start with ``where``.  Every
    problem of the mapping is reported at once (InputErrors)."""
    place = _Place(locate or (lambda *keys: where), ("material",) if locate else ())
    if not isinstance(data, dict):
        raise InputError(
            f"{place.locate()}: a material is a built-in name such as Si or a "
            "mapping in the form of the material files (see DEVELOPERS.md)"
        )
    values = MATERIAL.read(data, place, ())
    place.problems.raise_any()
    gap = None
    if (blk := values.get("band_gap")) is not None:
        gap = m.VarshniGap(**_parameters(blk, GAP_MODELS["varshni"]), provenance=_provenance(blk))
    dos_c, dos_v = _density_of_states(values.get("density_of_states"))
    ni_published = None
    if (blk := values.get("intrinsic_density")) is not None:
        if abs(blk["at"] - ROOM_TEMPERATURE) > 1e-9:
            place.problems.add(
                InputError(
                    f"{place('intrinsic_density', 'at')}: give the published spread at 300 K"
                )
            )
        ni_published = blk["published"]
    eps_r = values.get("permittivity")
    dopants = _dopants(values.get("dopants") or {}, eps_r, gap, place)
    masses = values.get("thermal_mass") or {}
    mobility = values.get("mobility") or {}
    carriers = {
        carrier: place.problems.run(
            _carrier, mobility.get(carrier), carrier, dopants, masses.get(carrier), place
        )
        for carrier in ("electron", "hole")
    }
    shapes = _band_shapes(values, place)
    place.problems.raise_any()
    name = str(values.get("name", "custom"))
    return m.Material(
        name=name,
        long_name=str(values.get("long_name", name)),
        band_gap=gap,
        Nc=dos_c,
        Nv=dos_v,
        eps_r=eps_r,
        dopants=dopants,
        **carriers,
        narrowing=_narrowing(values.get("band_gap_narrowing")),
        ni_published=ni_published,
        hall_factors=_hall_factors(values.get("hall_factor")),
        dimensionality=values["dimensionality"],
        band_shapes=shapes,
        typical_mobility=_typical_mobility(values.get("typical_mobility")),
        sources={
            k: (v.get("source") if isinstance(v, dict) else None)
            for k, v in data.items()
            if isinstance(v, dict)
        },
    )


def missing_parameters(material: m.Material) -> dict:
    """Parameters a (user-defined) material lacks, each with what needs it."""
    checks = {
        "band_gap": material.band_gap,
        "density_of_states": material.Nc,
        "permittivity": material.eps_r,
        "dopants": material.dopants or None,
        "mobility": material.electron,
        "band_gap_narrowing": material.narrowing,
    }
    missing = {k: NEEDED_FOR[k] for k, v in checks.items() if v is None}
    if material.electron is not None and material.electron.thermal_mass is None:
        missing["thermal_mass"] = NEEDED_FOR["thermal_mass"]
    return missing


def _data_files():
    return materials_dir()


def _lookup_key(name: str) -> str:
    """Case and spacing do not matter in a material name: ' Gallium  Nitride ' = gallium nitride."""
    return " ".join(str(name).split()).lower()


@cache
def _index() -> dict:
    """Name and alias (case-insensitive) -> file name.

    Read from the top-level ``name:`` and ``aliases: [...]`` lines only, so that
    start-up does not parse every material file (a test checks this against a
    full parse).
    """
    index: dict[str, str] = {}
    for entry in _data_files().iterdir():
        if entry.name.endswith(".yaml"):
            text = entry.read_text(encoding="utf-8")
            name = re.search(r"^name:\s*(\S+)\s*$", text, re.M)
            aliases = re.search(r"^aliases:\s*\[([^\]]*)\]", text, re.M)
            # a file without a name line is known by its file name
            keys = [name.group(1) if name else entry.name[: -len(".yaml")]] + (
                [a.strip() for a in aliases.group(1).split(",")] if aliases else []
            )
            for key in keys:
                index[key.lower()] = entry.name
    return index


@cache
def _long_name_index() -> dict:
    """Long names as further aliases: 'gallium nitride (wurtzite)' and 'gallium nitride'."""
    index: dict[str, str] = {}
    for entry in _data_files().glob("*.yaml"):
        found = re.search(r"^long_name:\s*(.+?)\s*$", entry.read_text(encoding="utf-8"), re.M)
        if found:
            long_name = found.group(1).strip("'\"")
            for key in (long_name, re.sub(r"\s*\(.*\)\s*$", "", long_name)):
                index.setdefault(_lookup_key(key), entry.name)
    return index


def builtin_names() -> list[str]:
    return sorted({name[:-5] for name in _index().values()})


def _builtin_file(name: str):
    key = _lookup_key(name)
    found = _index().get(key) or _long_name_index().get(key)
    if found is None:
        known = list(_index()) + list(_long_name_index())
        close = close_matches(key, known, n=3, cutoff=0.5)
        hint = f"; did you mean {', '.join(close)}?" if close else ""
        raise UnknownMaterialError(
            f"unknown material {name!r}{hint or '.'} Built in: {', '.join(builtin_names())}; "
            "or define it as a mapping with the same parameters"
        )
    return found


# a built material is kept in the user cache while its file and the package's code are
# unchanged (reading and checking Si's file was a tenth of a one-file check's own time;
# unpickling it takes microseconds)
# the only classes a kept material may name: the models of physics.materials and the
# band shapes
_MATERIAL_CLASSES = frozenset(
    {
        ("checker.physics.materials", name)
        for name, kind in vars(m).items()
        if isinstance(kind, type) and issubclass(kind, FrozenRecord)
    }
    | {("checker.physics.band_shapes", "BandShape")}
)


@cache
def _load_builtin(file_name: str) -> m.Material:
    entry = _data_files() / file_name
    found = kept(
        entry_name(f"material-{entry.stem}", entry),
        (entry,),  # and user_cache.code_stamp(): every module of the package
        _MATERIAL_CLASSES,
        lambda: _read_builtin(entry),
        lambda made: isinstance(made, m.Material),
    )
    return found  # type: ignore[return-value]  # checked to be a Material


def _read_builtin(entry: Path) -> m.Material:
    from .yaml_source import load_package_yaml  # a cold user cache only

    data = load_package_yaml(entry.read_text(encoding="utf-8"), entry.name)
    return material_from_mapping(_drop_split_text(data), where=entry.name)


def builtin_material(name: str) -> m.Material:
    """A built-in material by name, alias or long name (case and spacing ignored)."""
    if not isinstance(name, str):
        raise InputError(
            f"a material is a name such as Si, or a mapping of its parameters; got {name!r}"
        )
    return _load_builtin(_builtin_file(name))


def _drop_split_text(node):
    """Without quotes, a comma inside a flow mapping ends the text before it: in
    ``{source: Ioffe, Si impurities}`` 'Si impurities' becomes a key with no value.
    Some shipped files still hold such fragments (the schema test names them); they
    are dropped here so that those materials load.  A user's file is refused instead."""
    if isinstance(node, dict):
        return {
            k: _drop_split_text(v)
            for k, v in node.items()
            if not (v is None and (not isinstance(k, str) or " " in k or k[:1].isdigit()))
        }
    return node


def resolve_material(material, locate=None) -> m.Material:
    """Accept a Material, a built-in name, or a user mapping (``locate``: see
    :func:`material_from_mapping`)."""
    if isinstance(material, m.Material):
        return material
    if isinstance(material, dict):
        return material_from_mapping(material, locate=locate)
    return builtin_material(material)


__all__ = [
    "MATERIAL",
    "builtin_material",
    "builtin_names",
    "material_from_mapping",
    "missing_parameters",
    "resolve_material",
    "ROOM_TEMPERATURE",
]
