"""Write the JSON Schemas of regimecheck's input files from the readers' key tables:

- checker/data/calculation.schema.json  (the structure and stated keys of the quantity
  registry, checker/quantity_registry/registry.py; ASSUMPTIONS, ... of
  checker/inputs/calculation_file.py; with the material form embedded)
- checker/data/material.schema.json     (MATERIAL of checker/inputs/material_catalog.py)
- checker/data/rule.schema.json         (RULE_FILE of checker/engine/rulebook.py)

Run after changing any of those tables; a test checks that the shipped schemas match
what this script writes.  Each schema accepts the form the reader accepts; numbers'
units and the cross-checks between keys (a dopant level inside the band gap, ...)
are left to the reader.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from checker.engine.regime.rulebook import RULE_FILE  # noqa: E402
from checker.inputs import calculation_file as cf  # noqa: E402
from checker.inputs.material_catalog import MATERIAL  # noqa: E402
from checker.inputs.quantities import DIMENSIONS, quantity_pattern  # noqa: E402
from checker.physics.hall import SCATTERING_EXPONENTS  # noqa: E402
from checker.quantity_registry.registry import QUANTITIES  # noqa: E402

DATA = ROOT / "checker" / "data"
SCHEMA_PATH = DATA / "calculation.schema.json"
MATERIAL_SCHEMA_PATH = DATA / "material.schema.json"
RULE_SCHEMA_PATH = DATA / "rule.schema.json"
MATERIAL_REF = {"$ref": "#/$defs/material"}


def any_case(word: str) -> str:
    """ECMA pattern of ``word`` as calculation_file.normal_word reads it: any case,
    '-' also written '_' or ' '."""
    out = []
    for char in word:
        if char == "-":
            out.append("[-_ ]")
        elif char.isalpha():
            out.append(f"[{char.lower()}{char.upper()}]")
        else:
            out.append("\\" + char if char in ".+*?()[]{}|^$\\" else char)
    return "".join(out)


def words(choices) -> str:
    return r"^\s*(" + "|".join(any_case(w) for w in choices) + r")\s*$"


def or_null(schema: dict) -> dict:
    """An optional section may be left empty (YAML null)."""
    return {"anyOf": [schema, {"type": "null"}]}


def quantity(dimension: str, meaning: str = "") -> dict:
    article = "an" if dimension[0] in "aeiou" else "a"
    form = f"{article} {dimension} with its unit, e.g. '{DIMENSIONS[dimension][1]}'"
    return {
        "type": "string",
        "pattern": quantity_pattern(True),
        "description": f"{meaning}: {form}" if meaning else form,
    }


def temperature() -> dict:
    return {
        "type": "string",
        "description": "e.g. '300 K' or '27 degC'",
        "pattern": quantity_pattern(True).replace(r"\s*\S.{0,40}$", r"\s*(K|degC|°C|℃|C)\s*$"),
    }


def sweep(dimension, default, end) -> dict:
    return {
        "type": "object",
        "required": ["from", "to", "steps"],
        "additionalProperties": False,
        "description": f"a sweep: the range is checked on a grid ({default} spacing "
        "unless 'spacing' says otherwise)",
        "properties": {
            "from": end,
            "to": end,
            "steps": {
                "anyOf": [
                    {"type": "integer", "minimum": 2, "maximum": cf.MAX_SWEEP_STEPS},
                    {"type": "string", "pattern": r"^\s*[0-9]{1,6}\s*$"},
                ]
            },
            "spacing": {"enum": ["linear", "log"]},
        },
    }


def section(name: str) -> dict:
    """A calculation section (structure, stated): the registry's quantities given there,
    each described by its meaning (per carrier: the carrier named)."""
    properties = {}
    for q in QUANTITIES:
        if q.section != name:
            continue
        for key, (carrier, _) in zip(q.keys, q.carriers(), strict=True):
            meaning = f"{q.meaning} ({carrier.plural})" if carrier else q.meaning
            if key == "dimensionality":  # a bare number, not a quantity with a unit
                properties[key] = {
                    "anyOf": [{"enum": [1, 2, 3]}, {"type": "string", "pattern": r"^\s*[123]\s*$"}],
                    "description": meaning,
                }
            elif q.kind == "dimensionless":  # a count (structure.modes): a plain number
                properties[key] = {
                    "anyOf": [
                        {"type": "number", "exclusiveMinimum": 0},
                        {"type": "string", "pattern": r"^\s*[0-9.eE+-]+\s*$"},
                    ],
                    "description": meaning,
                }
            else:
                properties[key] = quantity(q.kind, meaning)
    if name == "structure":  # a list, not one quantity: read by calculation_file itself
        energy = quantity("energy", "a subband bottom above the band edge")
        properties[cf.SUBBAND_KEY] = {
            "anyOf": [
                energy,
                {"type": "array", "items": energy, "minItems": 1, "maxItems": cf.MAX_SUBBANDS},
            ],
            "description": "subband bottoms of a 2D gas or a 1D wire, from the band edge, "
            "e.g. [0 meV, 45 meV]",
        }
    return or_null({"type": "object", "additionalProperties": False, "properties": properties})


def text_list(item: dict, description: str) -> dict:
    return or_null({"anyOf": [item, {"type": "array", "items": item}], "description": description})


def build() -> dict:
    density = quantity("density")
    species = or_null(
        {
            "type": "object",
            "additionalProperties": {"anyOf": [density, sweep("density", "log", density)]},
            "description": "species name -> density, e.g. {P: 1e17 cm-3}, or a sweep",
        }
    )
    hall_words = words(SCATTERING_EXPONENTS)
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": "https://regimecheck.example/calculation.schema.json",
        "title": "regimecheck calculation",
        "description": "One calculation per YAML document. Quantities are strings with units.",
        "type": "object",
        "required": ["material", "temperature"],
        "additionalProperties": False,
        "properties": {
            "name": {"type": ["string", "number", "boolean"]},
            "material": {
                "anyOf": [
                    {
                        "type": "string",
                        "pattern": r"\S",
                        "description": "a built-in material: name, alias or long name (any case)",
                    },
                    MATERIAL_REF,
                ]
            },
            "temperature": {
                "anyOf": [temperature(), sweep("temperature", "linear", temperature())]
            },
            "doping": or_null(
                {
                    "type": "object",
                    "additionalProperties": False,
                    "properties": {"donors": species, "acceptors": species},
                }
            ),
            "structure": section("structure"),
            "stated": section("stated"),
            "assumes": text_list(
                {
                    "type": "string",
                    "pattern": words(list(cf.ASSUMPTIONS) + sorted(cf.ASSUMPTION_SPELLINGS)),
                },
                "trade words the calculation assumes, e.g. [non-degenerate, full-ionization]",
            ),
            "formulas": text_list(
                {
                    "type": "string",
                    "pattern": "^[^=]+=[^=]+$",
                    "maxLength": 4000,
                    "description": "a formula the calculation uses, 'lhs = rhs' in trade symbols "
                    "(regimecheck symbols lists them), e.g. 'D_n = mu_n*k*T/q'",
                },
                "formulas the calculation uses",
            ),
            "waivers": or_null(
                {
                    "type": "array",
                    "items": {
                        "type": "object",
                        "required": ["rule", "reason"],
                        "additionalProperties": False,
                        "properties": {
                            "rule": {"type": "string", "pattern": "^[A-Za-z]{2,5}[0-9]{2}$"},
                            "reason": {"type": "string", "pattern": r"\S.*\S.*\S"},
                        },
                    },
                }
            ),
            "options": or_null(
                {
                    "type": "object",
                    "additionalProperties": False,
                    "properties": {
                        "band_gap_narrowing": {
                            "anyOf": [
                                {"type": "boolean"},
                                {
                                    "type": "string",
                                    "pattern": words(("true", "yes", "on", "false", "no", "off")),
                                },
                            ]
                        },
                        "hall_scattering": {
                            "anyOf": [
                                {"type": "string", "pattern": hall_words},
                                {"type": "string", "pattern": rf"^\s*{cf.HALL_EXPONENT}\s*$"},
                                {
                                    "type": "number",
                                    "minimum": -1.5,
                                    "maximum": 2.5,
                                    "multipleOf": 0.5,
                                },
                            ]
                        },
                    },
                }
            ),
        },
        "$defs": {"material": material_form()},
    }


def material_form() -> dict:
    return {
        **MATERIAL.schema(),
        "description": "a material in the form of the built-in "
        "material files (checker/data/materials; see DEVELOPERS.md)",
    }


def build_material() -> dict:
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": "https://regimecheck.example/material.schema.json",
        "title": "regimecheck material",
        **material_form(),
    }


def build_rule() -> dict:
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": "https://regimecheck.example/rule.schema.json",
        "title": "regimecheck rule",
        "description": "One rule file of rules/ (DEVELOPERS.md, 'Adding a rule'); "
        "expressions, their dimensions and message placeholders are "
        "checked by the loader.",
        **RULE_FILE.schema(),
    }


def render() -> str:
    return json.dumps(build(), indent=2, ensure_ascii=False) + "\n"


def render_material() -> str:
    return json.dumps(build_material(), indent=2, ensure_ascii=False) + "\n"


def render_rule() -> str:
    return json.dumps(build_rule(), indent=2, ensure_ascii=False) + "\n"


if __name__ == "__main__":
    SCHEMA_PATH.write_text(render(), encoding="utf-8")
    MATERIAL_SCHEMA_PATH.write_text(render_material(), encoding="utf-8")
    RULE_SCHEMA_PATH.write_text(render_rule(), encoding="utf-8")
    print(f"wrote {SCHEMA_PATH}, {MATERIAL_SCHEMA_PATH} and {RULE_SCHEMA_PATH}")
