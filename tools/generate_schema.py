"""Write checker/data/calculation.schema.json from the calculation-file key tables.

Run after changing STRUCTURE_KEYS, STATED_KEYS or ASSUMPTIONS; a test checks that
the shipped schema matches what this script writes.
"""
from __future__ import annotations

import json
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from checker.inputs import calculation_file as cf  # noqa: E402
from checker.inputs.quantities import DIMENSIONS  # noqa: E402

SCHEMA_PATH = ROOT / "checker" / "data" / "calculation.schema.json"


def quantity(dimension: str) -> dict:
    if dimension == "dimensionless":
        return {"enum": [1, 2, 3, "1", "2", "3"]}
    return {"type": "string", "description": f"a {dimension} with its unit, "
            f"e.g. '{DIMENSIONS[dimension][1]}'"}


def build() -> dict:
    density = quantity("density")

    def sweep(dimension, default):
        return {"type": "object", "required": ["from", "to", "steps"],
                "additionalProperties": False,
                "description": f"a sweep: the range is checked on a grid ({default} spacing "
                               "unless 'spacing' says otherwise)",
                "properties": {"from": quantity(dimension), "to": quantity(dimension),
                               "steps": {"type": ["integer", "string"]},
                               "spacing": {"enum": ["linear", "log"]}}}

    species = {"type": "object", "additionalProperties": {"anyOf": [density,
                                                                    sweep("density", "log")]},
               "description": "species name -> density, e.g. {P: 1e17 cm-3}, or a sweep"}
    material_mapping = {"type": "object", "description": "a custom material in the form of the "
                        "built-in material files (see DEVELOPERS.md)"}
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": "https://regimecheck.example/calculation.schema.json",
        "title": "regimecheck calculation",
        "description": "One calculation per YAML document. Quantities are strings with units.",
        "type": "object",
        "required": ["material", "temperature"],
        "additionalProperties": False,
        "properties": {
            "name": {"type": "string"},
            "material": {"anyOf": [{"type": "string"}, material_mapping]},
            "temperature": {"anyOf": [
                {"type": "string", "pattern": r"^\s*[-+]?[0-9.eE+-]+\s*(K|degC|°C|C)\s*$",
                 "description": "e.g. '300 K' or '27 degC'"},
                sweep("temperature", "linear")]},
            "doping": {"type": "object", "additionalProperties": False,
                       "properties": {"donors": species, "acceptors": species}},
            "structure": {"type": "object", "additionalProperties": False,
                          "properties": {k: quantity(d) for k, (_, d) in cf.STRUCTURE_KEYS.items()}},
            "stated": {"type": "object", "additionalProperties": False,
                       "properties": {k: quantity(d) for k, (_, d) in cf.STATED_KEYS.items()}},
            "assumes": {"type": "array", "items": {"enum": list(cf.ASSUMPTIONS) + sorted(
                cf.ASSUMPTION_SPELLINGS)}},
            "formulas": {"type": "array", "items": {
                "type": "string", "pattern": "^[^=]+=[^=]+$", "maxLength": 4000,
                "description": "a formula the calculation uses, 'lhs = rhs' in trade symbols "
                               "(regimecheck symbols lists them), e.g. 'D_n = mu_n*k*T/q'"}},
            "waivers": {"type": "array", "items": {
                "type": "object", "required": ["rule", "reason"], "additionalProperties": False,
                "properties": {"rule": {"type": "string", "pattern": "^[A-Za-z]{2,5}[0-9]{2}$"},
                               "reason": {"type": "string", "minLength": 3}}}},
            "options": {"type": "object", "additionalProperties": False,
                        "properties": {"band_gap_narrowing": {"type": ["boolean", "string"]},
                                       "hall_scattering": {"anyOf": [
                                           {"enum": ["acoustic", "ionized-impurity",
                                                     "neutral-impurity"]},
                                           {"type": ["number", "string"]}]}}},
        },
    }


def render() -> str:
    return json.dumps(build(), indent=2, ensure_ascii=False) + "\n"


if __name__ == "__main__":
    SCHEMA_PATH.write_text(render(), encoding="utf-8")
    print(f"wrote {SCHEMA_PATH}")
