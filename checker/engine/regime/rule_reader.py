"""Read and validate one rule file (the slow path of :mod:`.rulebook`).

RULE_FILE below is the one table of a rule file's fields: the reader checks every file
against it, and tools/generate_schema.py writes checker/data/rule.schema.json from it
(through ``rulebook.RULE_FILE``).  Beyond the table the reader checks what a schema
cannot: the editor modeline, the id against the file name, message placeholders, and
every expression -- parsed against the vocabulary, dimension-checked (terms, function
arguments, and the unit the value is shown in or compared with).  A broken rule file
raises :class:`~.rulebook.RuleFileError` with one line per problem:
``rule file <path>:<line>: field '<field>': <what is wrong>``.

A run whose rule files are unchanged takes the validated rules from the rule cache
(:mod:`.rule_cache`) and never imports this module.
"""

from __future__ import annotations

from collections.abc import Iterable
from pathlib import Path
from typing import Any

import yaml

from ...errors import RegimecheckError
from ...vocabulary_words import ASSUMPTIONS, SEVERITIES, TOLERANCE_NAMES
from ..expressions import dimensions as dm
from ..expressions import parser as expression
from ..expressions.dimension_check import (
    UNIT_DIMENSIONS,
    DimensionProblem,
    dimension,
    name_dimension,
)
from ..expressions.tree import num
from ..vocabulary import DISPLAY_UNITS, TEXT, rule_names
from .rule_fields import (
    Alternatives,
    Block,
    Choice,
    EmptyOrListOf,
    Expression,
    FieldKind,
    KeyPath,
    ListOf,
    Named,
    Number,
    Pattern,
    Text,
    field_name,
)
from .rulebook import (
    MODELINE,
    PLACEHOLDER,
    Compiled,
    Correction,
    Implication,
    PerCarrier,
    Rule,
    RuleFileError,
    Shown,
)

# what a rule may guard beyond the words an author declares
RULE_ONLY_ASSUMPTIONS = (
    "carrier-type",
    "stated-mobility",
    "stated-constants",
    "light-doping",
    "model-validity",
    "stated-formula",
    "stated-measurement",
)
# checks done by engine code rather than by expressions; their rule files hold the
# documentation, severity and threshold (see DEVELOPERS.md, "Rules evaluated by the engine")
ENGINE_CHECKS = ("formula-analysis",)
FORMULA_PLACEHOLDERS = {
    "formula",
    "left",
    "right",
    "detail",
    "fix",
    "value",
    "exact",
    "error",
    "threshold",
    "embodies",
}
INDICATOR_PLACEHOLDERS = {"value", "threshold", "carrier", "dopants", "kind", "error"}

# ---- the table of rule-file fields (read by the loader and by the schema generator) -----
_UNIT = Choice(tuple(DISPLAY_UNITS), "display unit (engine/vocabulary.py); 1 when left out")
_EXPRESSION = Expression(
    expression.MAX_LENGTH, "expression over the names of engine/vocabulary.py (SI values)"
)
_QUANTITY = Choice(
    tuple(sorted(rule_names())),
    "a quantity of engine/vocabulary.py",
    "quantity of engine/vocabulary.py",
)
# what a rule may replace in the corrected calculation where it fires (the rule-file forms
# of state_values.REPLACEABLE): a rejected stated mobility or resistivity, or a density
REPLACEABLE = ("used_mu_x", "used_rho", "dens_x", "dens_o")
_HEAD: dict[str, FieldKind] = {
    "id": Pattern(r"[A-Z]{2,5}[0-9]{2}", "STAT01", "2-5 capitals and 2 digits; the file name"),
    "title": Text(),
    "assumption": Choice(ASSUMPTIONS + RULE_ONLY_ASSUMPTIONS, "the assumption the rule guards"),
    "severity": Choice(SEVERITIES),
}
_TAIL: dict[str, FieldKind] = {
    "why": Text(),
    "example": Text(),
    "fix": Text(),
    "references": ListOf(Text(), about="published sources (at least one)"),
}
_MESSAGE = Text("finding text with {placeholders}")
EXPRESSION_RULE = Block(
    {
        **_HEAD,
        "per": Choice(("carrier", "calculation"), "carrier: compiled for electrons and holes"),
        "requires": ListOf(_QUANTITY, about="quantities that must be known"),
        "applies": Block(
            {
                "declared": ListOf(
                    Choice(ASSUMPTIONS), single=True, about="the author declares one of these words"
                ),
                "when": Expression(expression.MAX_LENGTH, "gate expression (non-zero: applies)"),
                "implied_by": ListOf(
                    Block(
                        {
                            "stated": _QUANTITY,
                            "shortcut": _EXPRESSION,
                            "within": Number(above=0, about="relative tolerance, e.g. 0.02"),
                            "exact": Expression(
                                expression.MAX_LENGTH,
                                "the exact value of the stated number (default: the exact "
                                "value of the rule's correction of it): a stated number "
                                "nearer this than the shortcut was not made with it",
                            ),
                        },
                        optional=("exact",),
                    ),
                    about="a stated number equal to a shortcut within a tolerance",
                ),
            },
            optional=("declared", "when", "implied_by"),
            at_least_one=("declared", "when", "implied_by"),
        ),
        "indicator": Block(
            {
                "label": Text(),
                "expression": _EXPRESSION,
                "unit": _UNIT,
                "above": Number(about="fires above this value"),
                "below": Number(about="fires below this value"),
                "tolerance": Choice(
                    TOLERANCE_NAMES,
                    "the configuration tolerance that sets the threshold (above = 1 + tolerance)",
                ),
                "source": Text("where the threshold comes from"),
            },
            optional=("unit", "above", "below", "tolerance"),
            exactly_one=("above", "below"),
            needs={"tolerance": "above"},
        ),
        "show": Named(
            Pattern(r"[A-Za-z_][A-Za-z0-9_]*", "mfp"),
            Alternatives(
                "text",
                Block({"text": Choice(tuple(TEXT), "a word-valued quantity")}),
                Block({"expression": _EXPRESSION, "unit": _UNIT}, optional=("unit",)),
            ),
            about="extra message values: name -> {expression, unit} or {text}",
        ),
        "replaces": Named(
            Choice(REPLACEABLE, "a quantity the corrected calculation may take from elsewhere"),
            _QUANTITY,
            about=(
                "where the rule fires, the corrected calculation uses the quantity on the "
                "right for the one on the left (a rejected stated value is not used downstream)"
            ),
        ),
        "message": _MESSAGE,
        "causes": ListOf(
            Block(
                {
                    "when": Expression(
                        expression.MAX_LENGTH, "non-zero where this explains the stated number"
                    ),
                    "text": Text("the likely cause, appended to the message"),
                }
            ),
            about="likely causes of a stated number the rule rejects; the first that holds "
            "is named in the message",
        ),
        "corrections": EmptyOrListOf(
            Block(
                {
                    "label": Text(),
                    "unit": _UNIT,
                    "stated": _QUANTITY,
                    "shortcut": _EXPRESSION,
                    "exact": _EXPRESSION,
                },
                optional=("unit", "stated"),
            ),
            about="stated (or shortcut) value -> exact value",
        ),
        **_TAIL,
    },
    optional=("requires", "show", "replaces", "causes"),
)
ENGINE_RULE = Block(
    {
        **_HEAD,
        "per": Choice(("calculation",), "an engine-evaluated rule runs once per calculation"),
        "evaluated_by": Choice(ENGINE_CHECKS, "the engine code that produces the findings"),
        "indicator": Block(
            {"label": Text(), "unit": _UNIT, "above": Number(), "source": Text()},
            optional=("unit", "above"),
        ),
        "message": _MESSAGE,
        **_TAIL,
    }
)
RULE_FILE = Alternatives("evaluated_by", ENGINE_RULE, EXPRESSION_RULE)


# ---- reading a rule file ---------------------------------------------------------------
_LOADER = getattr(yaml, "CSafeLoader", yaml.SafeLoader)


class _Report:
    """The problems of one rule file, each at the line of its field."""

    def __init__(self, path: Path, lines: dict[KeyPath, int]):
        self.path, self.lines = path, lines
        self.found: list[tuple[int, str]] = []

    def line(self, where: KeyPath) -> int:
        for cut in range(len(where), -1, -1):
            if where[:cut] in self.lines:
                return self.lines[where[:cut]]
        return 1

    def add(self, where: KeyPath, message: str, line: int | None = None) -> None:
        line = line or self.line(where)
        self.found.append(
            (line, f"rule file {self.path}:{line}: field {field_name(where)!r}: {message}")
        )

    def raise_any(self) -> None:
        if self.found:
            raise RuleFileError("\n".join(text for _, text in sorted(self.found)))


def _read(path: Path) -> tuple[str, Any, _Report]:
    """(text, data, report) of a rule file; the report knows the line of every key and
    list entry (key path -> 1-based line) and holds any key given twice."""
    text = path.read_text(encoding="utf-8")
    loader = _LOADER(text)
    try:
        node = loader.get_single_node()
        data = loader.construct_document(node) if node is not None else None
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark
        raise RuleFileError(
            f"rule file {path}:{mark.line + 1 if mark else 1}: malformed YAML: {exc.problem}"
        ) from None
    finally:
        loader.dispose()
    report = _Report(path, {})
    todo: list[tuple[KeyPath, yaml.Node]] = [((), node)] if node is not None else []
    while todo:
        where, node = todo.pop()
        report.lines.setdefault(where, node.start_mark.line + 1)
        if isinstance(node, yaml.MappingNode):
            for key, value in node.value:
                if (*where, key.value) in report.lines:
                    report.add(
                        (*where, key.value),
                        "the key is given twice; keep one",
                        key.start_mark.line + 1,
                    )
                report.lines[(*where, key.value)] = key.start_mark.line + 1
                todo.append(((*where, key.value), value))
        elif isinstance(node, yaml.SequenceNode):
            todo += [((*where, i), item) for i, item in enumerate(node.value)]
    return text, data, report


def read_rule(path: Path) -> Rule:
    """The rule of one rule file, checked against RULE_FILE, its expressions parsed,
    dimension-checked and compiled; RuleFileError names every problem at once."""
    path = Path(path)
    text, data, report = _read(path)
    if text.split("\n", 1)[0].rstrip() != MODELINE:
        report.add(
            ("(modeline)",),
            f"the first line must be '{MODELINE}' (editors check the "
            "file against the rule schema with it)",
            line=1,
        )
    problems = list(RULE_FILE.problems(data, ()))
    for where, message in problems:
        report.add(where, message)
    if problems:
        report.raise_any()  # only sound fields can be built on
    build = _Builder(path, report, data)
    rule = build.engine_rule() if "evaluated_by" in data else build.expression_rule()
    report.raise_any()
    return rule


class _Builder:
    """Builds a Rule from a rule file whose fields passed the table, recording the
    problems of its expressions and text."""

    def __init__(self, path: Path, report: _Report, data: dict[str, Any]):
        self.path, self.report, self.data = path, report, data
        self.carriers = ("n", "p") if data["per"] == "carrier" else ("",)
        if path.stem != data["id"]:
            report.add(("id",), f"must match the file name ({path.stem})")

    def compile(
        self, text: str | float, where: KeyPath, expected: tuple[dm.Dimension, str] | None = None
    ) -> Compiled:
        """One expression, parsed, dimension-checked and compiled per carrier; after
        recording a problem, an unusable stand-in (the rule is never returned: load_rule
        raises the report).  ``expected``: (dimension, what it is the dimension of)."""
        if isinstance(text, (int, float)):
            text = repr(float(text))
        try:
            tree = expression.parse(text, rule_names())
            found = dimension(tree)
        except RegimecheckError as exc:
            return self._broken(where, str(exc), text)
        except DimensionProblem as exc:
            return self._broken(where, f"the dimensions do not fit: {exc}", text)
        if expected is not None and found != expected[0]:
            return self._broken(
                where,
                f"{text.strip()!r} is {dm.describe(found)}, but "
                f"{expected[1]} is {dm.describe(expected[0])}",
                text,
            )
        return Compiled(text, tree, PerCarrier(tree, self.carriers))

    def _broken(self, where: KeyPath, problem: str, text: str) -> Compiled:
        self.report.add(where, problem)
        return Compiled(text, num(float("nan")), {})

    def message(self, allowed: Iterable[str]) -> str:
        message: str = self.data["message"].strip()
        for match in PLACEHOLDER.finditer(message):
            if match.group(1) not in allowed:
                self.report.add(
                    ("message",),
                    f"unknown placeholder {{{match.group(1)}}}; "
                    f"available: {', '.join(sorted(allowed))}",
                )
        return message

    def common(self) -> dict[str, Any]:
        """The fields every rule has, as Rule arguments."""
        data, indicator = self.data, self.data["indicator"]
        return dict(
            id=data["id"],
            title=data["title"].strip(),
            assumption=data["assumption"],
            severity=data["severity"],
            per=data["per"],
            indicator_label=indicator["label"].strip(),
            indicator_unit=indicator.get("unit", "1"),
            threshold_source=indicator["source"].strip(),
            why=data["why"].strip(),
            example=data["example"].strip(),
            fix=data["fix"].strip(),
            references=list(data["references"]),
            path=str(self.path),
            carriers=self.carriers,
        )

    def expression_rule(self) -> Rule:
        data, applies, ind = self.data, self.data["applies"], self.data["indicator"]
        declared = applies.get("declared", ())
        implied = [
            Implication(
                entry["stated"],
                self.compile(
                    entry["shortcut"],
                    ("applies", "implied_by", i, "shortcut"),
                    (name_dimension(entry["stated"]), entry["stated"]),
                ),
                float(entry["within"]),
                self.compile(
                    entry["exact"],
                    ("applies", "implied_by", i, "exact"),
                    (name_dimension(entry["stated"]), entry["stated"]),
                )
                if "exact" in entry
                else None,
            )
            for i, entry in enumerate(applies.get("implied_by", ()))
        ]
        unit = ind.get("unit", "1")
        indicator = self.compile(
            ind["expression"],
            ("indicator", "expression"),
            (UNIT_DIMENSIONS[unit], f"its unit {unit}"),
        )
        corrections = [
            self.correction(entry, ("corrections", i))
            for i, entry in enumerate(data["corrections"])
        ]
        show = {
            name: self.shown(entry, ("show", name)) for name, entry in data.get("show", {}).items()
        }
        when = self.compile(applies["when"], ("applies", "when")) if "when" in applies else None
        relation = "above" if "above" in ind else "below"
        return Rule(
            **self.common(),
            declared=(declared,) if isinstance(declared, str) else tuple(declared),
            when=when,
            implied_by=implied,
            indicator=indicator,
            relation=relation,
            threshold=float(ind[relation]),
            tolerance=ind.get("tolerance"),
            message=self.message(INDICATOR_PLACEHOLDERS | set(show)),
            corrections=corrections,
            requires=tuple(data.get("requires", ())),
            show=show,
            replaces=self.replacements(data.get("replaces", {})),
            causes=[
                (self.compile(entry["when"], ("causes", i, "when")), entry["text"].strip())
                for i, entry in enumerate(data.get("causes", ()))
            ],
        )

    def replacements(self, entries: dict[str, str]) -> dict[str, str]:
        for target, source in entries.items():
            if name_dimension(target) != name_dimension(source):
                self.report.add(
                    ("replaces", target),
                    f"{source} is {dm.describe(name_dimension(source))}, but {target} is "
                    f"{dm.describe(name_dimension(target))}",
                )
        return dict(entries)

    def correction(self, entry: dict[str, Any], where: KeyPath) -> Correction:
        unit = entry.get("unit", "1")
        expected = (UNIT_DIMENSIONS[unit], f"its unit {unit}")
        stated = entry.get("stated")
        if stated is not None and name_dimension(stated) != expected[0]:
            self.report.add(
                (*where, "stated"),
                f"{stated} is "
                f"{dm.describe(name_dimension(stated))}, but its unit {unit} is "
                f"{dm.describe(expected[0])}",
            )
        return Correction(
            label=entry["label"].strip(),
            unit=unit,
            stated=stated,
            shortcut=self.compile(entry["shortcut"], (*where, "shortcut"), expected),
            exact=self.compile(entry["exact"], (*where, "exact"), expected),
        )

    def shown(self, entry: dict[str, Any], where: KeyPath) -> Shown:
        if "text" in entry:
            return (entry["text"], "text")
        unit = entry.get("unit", "1")
        return (
            self.compile(
                entry["expression"],
                (*where, "expression"),
                (UNIT_DIMENSIONS[unit], f"its unit {unit}"),
            ),
            unit,
        )

    def engine_rule(self) -> Rule:
        """A rule whose findings come from engine code (e.g. formula analysis)."""
        ind = self.data["indicator"]
        return Rule(
            **self.common(),
            declared=(),
            when=None,
            implied_by=[],
            indicator=None,
            relation="above",
            threshold=float(ind.get("above", float("nan"))),
            message=self.message(FORMULA_PLACEHOLDERS),
            corrections=[],
            requires=(),
            show={},
            evaluated_by=self.data["evaluated_by"],
        )
