"""Load, validate and compile the declarative rule files of ``rules/``.

A rule file is YAML (format in rules/README.md).  Every expression in it is
parsed by :mod:`checker.engine.expression` against the vocabulary and compiled
once into numpy closures; a per-carrier rule is compiled for electrons and for
holes.  A broken rule file raises :class:`RuleFileError` naming the file and
the field.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field, replace
from functools import lru_cache
from pathlib import Path

from ..errors import RegimecheckError
from ..inputs.calculation_file import ASSUMPTIONS
from ..inputs.config import TOLERANCES
from ..inputs.yaml_source import load_package_yaml
from ..resources import rules_dir
from . import expression
from .vocabulary import DISPLAY_UNITS, TEXT, carrier_names, rule_names

SEVERITIES = ("info", "warning", "error")
# what a rule may guard beyond the words an author declares
RULE_ONLY_ASSUMPTIONS = ("carrier-type", "stated-mobility", "stated-constants", "light-doping",
                         "model-validity", "stated-formula", "stated-measurement")
# checks done by engine code rather than by expressions; their rule files hold the
# documentation, severity and threshold (see DEVELOPERS.md, "Rules evaluated by the engine")
ENGINE_CHECKS = ("formula-analysis",)
ENGINE_REQUIRED = ("id", "title", "assumption", "severity", "per", "evaluated_by", "indicator",
                   "message", "why", "example", "fix", "references")
FORMULA_PLACEHOLDERS = {"formula", "left", "right", "detail", "fix", "value", "exact", "error",
                        "threshold", "embodies"}
ID_PATTERN = re.compile(r"^[A-Z]{2,5}\d{2}$")
REQUIRED = ("id", "title", "assumption", "severity", "per", "applies", "indicator", "message",
            "corrections", "why", "example", "fix", "references")
OPTIONAL = ("requires", "show")
PLACEHOLDER = re.compile(r"\{([A-Za-z_][A-Za-z0-9_]*)(?::([^{}]*))?\}")


class RuleFileError(RegimecheckError):
    """A rule file that cannot be used (names the file and the field)."""


@dataclass
class Compiled:
    """One expression: its source text, tree, and a numpy closure per carrier."""

    text: str
    tree: tuple
    run: dict          # carrier ("n", "p" or "") -> callable(values)


@dataclass
class Correction:
    label: str
    unit: str
    stated: str | None
    shortcut: Compiled
    exact: Compiled


@dataclass
class Implication:
    stated: str
    shortcut: Compiled
    within: float


@dataclass
class Rule:
    id: str
    title: str
    assumption: str
    severity: str
    per: str                     # "carrier" | "calculation"
    declared: tuple
    when: Compiled | None
    implied_by: list
    indicator_label: str
    indicator: Compiled
    indicator_unit: str
    relation: str                # "above" | "below"
    threshold: float
    threshold_source: str
    message: str
    corrections: list
    requires: tuple
    show: dict
    why: str
    example: str
    fix: str
    references: list
    path: str
    carriers: tuple = field(default=())
    evaluated_by: str | None = None     # engine check that produces this rule's findings


def _fail(path, field_name, message):
    raise RuleFileError(f"rule file {path}: field {field_name!r}: {message}")


def _text(data, key, path):
    value = data.get(key)
    if not isinstance(value, str) or not value.strip():
        _fail(path, key, "must be non-empty text")
    return value.strip()


def _compile(text, path, field_name, carriers):
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        text = repr(float(text))
    try:
        tree = expression.parse(text, rule_names())
    except RegimecheckError as exc:
        _fail(path, field_name, str(exc))
    run = {}
    for x in carriers:
        concrete = expression.rename(tree, carrier_names(x)) if x else tree
        run[x] = expression.to_numpy(concrete)
    return Compiled(text, tree, run)


def _number(data, key, path):
    value = data.get(key)
    try:
        return float(value)
    except (TypeError, ValueError):
        _fail(path, key, f"must be a number, got {value!r}")


def load_rule(path: Path) -> Rule:
    path = Path(path)
    data = load_package_yaml(path.read_text(encoding="utf-8"), str(path))
    if not isinstance(data, dict):
        _fail(path, "(top)", "a rule file is a mapping")
    if "evaluated_by" in data:
        return _load_engine_rule(path, data)
    rule_id = _identity(data, path, REQUIRED, OPTIONAL)
    if data["per"] not in ("carrier", "calculation"):
        _fail(path, "per", "must be 'carrier' or 'calculation'")
    carriers = ("n", "p") if data["per"] == "carrier" else ("",)

    applies = data["applies"]
    if not isinstance(applies, dict):
        _fail(path, "applies", "must be a mapping with declared / when / implied_by")
    declared = applies.get("declared") or []
    if isinstance(declared, str):
        declared = [declared]
    for word in declared:
        if word not in ASSUMPTIONS:
            _fail(path, "applies.declared", f"unknown assumption {word!r}")
    when = _compile(applies["when"], path, "applies.when", carriers) if "when" in applies else None
    implied = []
    for i, entry in enumerate(applies.get("implied_by") or []):
        where = f"applies.implied_by[{i}]"
        if not isinstance(entry, dict) or set(entry) - {"stated", "shortcut", "within"}:
            _fail(path, where, "needs stated, shortcut and within")
        stated = str(entry.get("stated", ""))
        if stated not in rule_names():
            _fail(path, f"{where}.stated", f"unknown quantity {stated!r}")
        implied.append(Implication(stated, _compile(entry.get("shortcut"), path,
                                                    f"{where}.shortcut", carriers),
                                   _number(entry, "within", path)))
    if not declared and when is None and not implied:
        _fail(path, "applies", "give at least one of declared, when, implied_by")

    ind = data["indicator"]
    if not isinstance(ind, dict):
        _fail(path, "indicator", "must be a mapping")
    relation = "above" if "above" in ind else "below" if "below" in ind else None
    if relation is None:
        _fail(path, "indicator", "give the threshold as 'above: x' or 'below: x'")
    threshold = _number(ind, relation, path)
    unit = ind.get("unit", "1")
    if unit not in DISPLAY_UNITS:
        _fail(path, "indicator.unit", f"unknown display unit {unit!r}")

    corrections = []
    for i, entry in enumerate(data["corrections"] or []):
        where = f"corrections[{i}]"
        if not isinstance(entry, dict):
            _fail(path, where, "must be a mapping")
        if entry.get("unit", "1") not in DISPLAY_UNITS:
            _fail(path, f"{where}.unit", f"unknown display unit {entry.get('unit')!r}")
        stated = entry.get("stated")
        if stated is not None and stated not in rule_names():
            _fail(path, f"{where}.stated", f"unknown quantity {stated!r}")
        corrections.append(Correction(
            label=_text(entry, "label", path), unit=entry.get("unit", "1"), stated=stated,
            shortcut=_compile(entry.get("shortcut"), path, f"{where}.shortcut", carriers),
            exact=_compile(entry.get("exact"), path, f"{where}.exact", carriers)))
    show = {}
    for name, entry in (data.get("show") or {}).items():
        if isinstance(entry, dict) and "text" in entry:
            if entry["text"] not in TEXT or len(entry) != 1:
                _fail(path, f"show.{name}", f"text must name one of {', '.join(TEXT)}")
            show[name] = (entry["text"], "text")
            continue
        if not isinstance(entry, dict) or entry.get("unit", "1") not in DISPLAY_UNITS:
            _fail(path, f"show.{name}", "needs expression and a known unit, or text")
        show[name] = (_compile(entry.get("expression"), path, f"show.{name}", carriers),
                      entry.get("unit", "1"))
    requires = tuple(data.get("requires") or ())
    for name in requires:
        if name not in rule_names():
            _fail(path, "requires", f"unknown quantity {name!r}")
    message = _message(data, path, {"value", "threshold", "carrier", "dopants", "kind",
                                    "error"} | set(show))
    return Rule(
        id=rule_id, title=_text(data, "title", path), assumption=data["assumption"],
        severity=data["severity"], per=data["per"], declared=tuple(declared), when=when,
        implied_by=implied, indicator_label=_text(ind, "label", path),
        indicator=_compile(ind.get("expression"), path, "indicator.expression", carriers),
        indicator_unit=unit, relation=relation, threshold=threshold,
        threshold_source=_text(ind, "source", path), message=message,
        corrections=corrections, requires=requires, show=show, why=_text(data, "why", path),
        example=_text(data, "example", path), fix=_text(data, "fix", path),
        references=[str(r) for r in data["references"]], path=str(path), carriers=carriers)


def _message(data, path, allowed) -> str:
    """The message template (its placeholders checked); also checks the references."""
    message = _text(data, "message", path)
    for match in PLACEHOLDER.finditer(message):
        if match.group(1) not in allowed:
            _fail(path, "message", f"unknown placeholder {{{match.group(1)}}}; "
                                   f"available: {', '.join(sorted(allowed))}")
    refs = data["references"]
    if not isinstance(refs, list) or not refs:
        _fail(path, "references", "must be a non-empty list")
    return message


def _identity(data, path, required, optional=()):
    """Check the fields every rule file has; return the rule id."""
    for key in data:
        if key not in required + optional:
            _fail(path, key, f"unknown field; fields are {', '.join(required + optional)}")
    for key in required:
        if key not in data:
            _fail(path, key, "missing")
    rule_id = str(data["id"])
    if not ID_PATTERN.match(rule_id):
        _fail(path, "id", "must be 2-5 capitals and 2 digits, e.g. STAT01")
    if Path(path).stem != rule_id:
        _fail(path, "id", f"must match the file name ({Path(path).stem})")
    if data["assumption"] not in ASSUMPTIONS + RULE_ONLY_ASSUMPTIONS:
        _fail(path, "assumption", f"unknown assumption {data['assumption']!r}")
    if data["severity"] not in SEVERITIES:
        _fail(path, "severity", f"must be one of {', '.join(SEVERITIES)}")
    return rule_id


def _load_engine_rule(path: Path, data: dict) -> Rule:
    """A rule whose findings come from engine code (e.g. formula analysis)."""
    rule_id = _identity(data, path, ENGINE_REQUIRED)
    if data["evaluated_by"] not in ENGINE_CHECKS:
        _fail(path, "evaluated_by", f"must be one of {', '.join(ENGINE_CHECKS)}")
    if data["per"] != "calculation":
        _fail(path, "per", "an engine-evaluated rule is per calculation")
    ind = data["indicator"]
    if not isinstance(ind, dict) or set(ind) - {"label", "unit", "above", "source"}:
        _fail(path, "indicator", "give label and source (and optionally unit and above)")
    unit = ind.get("unit", "1")
    if unit not in DISPLAY_UNITS:
        _fail(path, "indicator.unit", f"unknown display unit {unit!r}")
    threshold = _number(ind, "above", path) if "above" in ind else float("nan")
    message = _message(data, path, FORMULA_PLACEHOLDERS)
    return Rule(
        id=rule_id, title=_text(data, "title", path), assumption=data["assumption"],
        severity=data["severity"], per="calculation", declared=(), when=None, implied_by=[],
        indicator_label=_text(ind, "label", path), indicator=None, indicator_unit=unit,
        relation="above", threshold=threshold, threshold_source=_text(ind, "source", path),
        message=message, corrections=[], requires=(), show={}, why=_text(data, "why", path),
        example=_text(data, "example", path), fix=_text(data, "fix", path),
        references=[str(r) for r in data["references"]], path=str(path), carriers=("",),
        evaluated_by=data["evaluated_by"])


@lru_cache(maxsize=4)
def load_rules(folder: str | None = None) -> tuple:
    """Every rule of the folder (default: the shipped rules), sorted by id."""
    folder = Path(folder) if folder else rules_dir()
    rules = [load_rule(p) for p in sorted(folder.glob("*.yaml"))]
    seen = set()
    for rule in rules:
        if rule.id in seen:
            raise RuleFileError(f"rule file {rule.path}: field 'id': {rule.id} is used twice")
        seen.add(rule.id)
    return tuple(rules)


def configured(rules, config) -> tuple:
    """The rules a configuration selects, with its severities and thresholds applied."""
    def named(rule_id, names):
        return any(rule_id == n or rule_id.startswith(n) for n in names)

    tolerances = {TOLERANCES[name]: 1.0 + value for name, value in config.tolerance.items()}
    out = []
    for rule in rules:
        if (config.only and not named(rule.id, config.only)) or named(rule.id, config.skip):
            continue
        changes = {}
        if rule.id in config.severity:
            changes["severity"] = config.severity[rule.id]
        if rule.id in tolerances:
            changes["threshold"] = tolerances[rule.id]
        if rule.id in config.threshold:
            changes["threshold"] = config.threshold[rule.id]
        out.append(replace(rule, **changes) if changes else rule)
    return tuple(out)
