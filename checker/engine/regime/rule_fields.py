"""The kinds of field a rule file is made of.

Each kind finds the problems of a value at a key path of a rule file (``problems``
yields ``(path, message)``) and writes its JSON Schema (``schema``).  The loader
(engine/rulebook.py) and the rule-file schema (tools/generate_schema.py ->
checker/data/rule.schema.json) read the one table built from these kinds, so an
editor and the loader accept the same files.  What JSON Schema cannot say (an
expression's names and dimensions, message placeholders, the id against the file
name) the loader checks after the table.
"""

from __future__ import annotations

import re
from collections.abc import Iterator
from dataclasses import dataclass, field
from typing import Any, Protocol, TypeAlias, TypeGuard

from ...close_words import close_matches

NOT_BLANK = r"\S"

# where a value stands in a rule file: keys and list positions from the top
KeyPath: TypeAlias = tuple[str | int, ...]
Problem: TypeAlias = tuple[KeyPath, str]
Problems: TypeAlias = Iterator[Problem]
# a JSON Schema fragment (tools/generate_schema.py writes it out as JSON)
Schema: TypeAlias = dict[str, Any]


class FieldKind(Protocol):
    """What every kind of field does: find the problems of a value, write its schema."""

    def problems(self, value: object, path: KeyPath) -> Problems: ...

    def schema(self) -> Schema: ...


def _shown(value: object) -> str:
    return "nothing" if value is None else repr(value)


def _described(schema: Schema, about: str) -> Schema:
    return {**schema, "description": about} if about else schema


def _is_number(value: object) -> TypeGuard[int | float]:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def field_name(path: KeyPath) -> str:
    """('corrections', 0, 'unit') -> 'corrections[0].unit' (as rule authors read it)."""
    out = ""
    for part in path:
        out += f"[{part}]" if isinstance(part, int) else f".{part}" if out else str(part)
    return out or "(top)"


@dataclass(frozen=True)
class Text:
    about: str = ""

    def problems(self, value: object, path: KeyPath) -> Problems:
        if not isinstance(value, str) or not re.search(NOT_BLANK, value):
            yield path, f"must be non-empty text, got {_shown(value)}"

    def schema(self) -> Schema:
        return _described({"type": "string", "pattern": NOT_BLANK}, self.about)


@dataclass(frozen=True)
class Pattern:
    regex: str  # matched against the whole text
    example: str
    about: str = ""

    def problems(self, value: object, path: KeyPath) -> Problems:
        if not isinstance(value, str) or not re.fullmatch(self.regex, value):
            yield path, f"must look like {self.example}, got {_shown(value)}"

    def schema(self) -> Schema:
        return _described({"type": "string", "pattern": f"^(?:{self.regex})$"}, self.about)


@dataclass(frozen=True)
class Choice:
    words: tuple[str, ...]
    about: str = ""
    what: str = ""  # what a word is, said instead of listing many words

    def problems(self, value: object, path: KeyPath) -> Problems:
        if not isinstance(value, str) or value not in self.words:
            close = close_matches(str(value), self.words, n=1)
            hint = f"; did you mean {close[0]!r}?" if close else ""
            known = f"a {self.what}" if self.what else f"one of {', '.join(self.words)}"
            yield path, f"{_shown(value)} is not {known}{hint}"

    def schema(self) -> Schema:
        return _described({"enum": list(self.words)}, self.about)


@dataclass(frozen=True)
class Number:
    above: float | None = None  # exclusive lower bound
    about: str = ""

    def problems(self, value: object, path: KeyPath) -> Problems:
        if not _is_number(value):
            yield path, f"must be a number, got {_shown(value)}"
        elif self.above is not None and not value > self.above:
            yield path, f"must be above {self.above:g}, got {value!r}"

    def schema(self) -> Schema:
        schema: Schema = {"type": "number"}
        if self.above is not None:
            schema["exclusiveMinimum"] = self.above
        return _described(schema, self.about)


@dataclass(frozen=True)
class Expression:
    """Text in the expression language (or a bare number); its names, functions and
    dimensions are checked by the loader."""

    longest: int
    about: str = ""

    def problems(self, value: object, path: KeyPath) -> Problems:
        if _is_number(value):
            return
        if not isinstance(value, str) or not re.search(NOT_BLANK, value):
            yield path, f"must be an expression (text), got {_shown(value)}"
        elif len(value) > self.longest:
            yield path, f"is {len(value)} characters long; the limit is {self.longest}"

    def schema(self) -> Schema:
        return _described(
            {
                "anyOf": [
                    {"type": "string", "pattern": NOT_BLANK, "maxLength": self.longest},
                    {"type": "number"},
                ]
            },
            self.about,
        )


@dataclass(frozen=True)
class ListOf:
    item: FieldKind
    single: bool = False  # a lone item may stand for a list of one
    about: str = ""

    def problems(self, value: object, path: KeyPath) -> Problems:
        if self.single and not isinstance(value, list):
            yield from self.item.problems(value, path)
            return
        if not isinstance(value, list) or not value:
            yield path, f"must be a non-empty list, got {_shown(value)}"
            return
        for i, entry in enumerate(value):
            yield from self.item.problems(entry, path + (i,))

    def schema(self) -> Schema:
        listed: Schema = {"type": "array", "minItems": 1, "items": self.item.schema()}
        if self.single:
            listed = {"anyOf": [self.item.schema(), listed]}
        return _described(listed, self.about)


@dataclass(frozen=True)
class EmptyOrListOf(ListOf):
    """A list that may be empty (a rule without corrections says ``corrections: []``)."""

    def problems(self, value: object, path: KeyPath) -> Problems:
        if value == []:
            return
        yield from super().problems(value, path)

    def schema(self) -> Schema:
        return _described({"type": "array", "items": self.item.schema()}, self.about)


@dataclass
class Block:
    """A mapping with fixed keys: unknown keys and missing required ones are problems.
    ``exactly_one``: keys of which one and only one is given; ``at_least_one``: keys of
    which one or more are given; ``needs``: key -> the key it cannot go without."""

    fields: dict[str, FieldKind]
    optional: tuple[str, ...] = ()
    exactly_one: tuple[str, ...] = ()
    at_least_one: tuple[str, ...] = ()
    needs: dict[str, str] = field(default_factory=dict)
    about: str = ""

    def problems(self, value: object, path: KeyPath) -> Problems:
        if not isinstance(value, dict):
            yield path, f"must be a mapping of {', '.join(self.fields)}, got {_shown(value)}"
            return
        for key in value:
            if key not in self.fields:
                close = close_matches(str(key), list(self.fields), n=1)
                hint = f" (did you mean {close[0]!r}?)" if close else ""
                yield (
                    path + (key,),
                    f"unknown field; fields here are {', '.join(self.fields)}{hint}",
                )
        for key, kind in self.fields.items():
            if key in value:
                yield from kind.problems(value[key], path + (key,))
            elif key not in self.optional:
                yield path + (key,), "missing"
        given = [key for key in self.exactly_one if key in value]
        if self.exactly_one and len(given) != 1:
            yield (
                path,
                (
                    f"give exactly one of {', '.join(self.exactly_one)}"
                    + (f", not {' and '.join(given)}" if given else "")
                ),
            )
        if self.at_least_one and not any(key in value for key in self.at_least_one):
            yield path, f"give at least one of {', '.join(self.at_least_one)}"
        for key, needed in self.needs.items():
            if key in value and needed not in value:
                yield path + (key,), f"goes only with {needed!r}"

    def schema(self) -> Schema:
        schema: Schema = {
            "type": "object",
            "additionalProperties": False,
            "required": [k for k in self.fields if k not in self.optional],
            "properties": {k: kind.schema() for k, kind in self.fields.items()},
        }
        if self.exactly_one:
            schema["oneOf"] = [{"required": [k]} for k in self.exactly_one]
        if self.at_least_one:
            schema["anyOf"] = [{"required": [k]} for k in self.at_least_one]
        if self.needs:
            schema["dependentRequired"] = {k: [v] for k, v in self.needs.items()}
        return _described(schema, self.about)


@dataclass(frozen=True)
class Named:
    """A mapping of names the author chooses (message placeholders) to ``item``."""

    name: FieldKind  # the names' form: a Pattern, or a Choice of fixed names
    item: FieldKind
    about: str = ""

    def problems(self, value: object, path: KeyPath) -> Problems:
        if not isinstance(value, dict) or not value:
            yield path, f"must be a non-empty mapping of names to entries, got {_shown(value)}"
            return
        for key, entry in value.items():
            yield from self.name.problems(key, path + (key,))
            yield from self.item.problems(entry, path + (key,))

    def schema(self) -> Schema:
        return _described(
            {
                "type": "object",
                "minProperties": 1,
                "propertyNames": self.name.schema(),
                "additionalProperties": self.item.schema(),
            },
            self.about,
        )


@dataclass(frozen=True)
class Alternatives:
    """One of two blocks, chosen by whether ``key`` is given."""

    key: str
    given: Block
    otherwise: Block

    def chosen(self, value: object) -> Block:
        return self.given if isinstance(value, dict) and self.key in value else self.otherwise

    def problems(self, value: object, path: KeyPath) -> Problems:
        yield from self.chosen(value).problems(value, path)

    def schema(self) -> Schema:
        return {
            "if": {"type": "object", "required": [self.key]},
            "then": self.given.schema(),
            "else": self.otherwise.schema(),
        }
