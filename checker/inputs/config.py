"""Project configuration: ``[tool.regimecheck]`` in pyproject.toml, or a file given with
``--config``.

    [tool.regimecheck]
    fail-level = "warning"          # info | warning | error (the --fail-on default)
    only = ["STAT", "ION01"]        # run only these rules (ids or id prefixes)
    skip = ["MODEL"]                # never run these
    file-patterns = ["*.yaml", "*.yml", "*.md", "*.csv"]   # what a directory walk reads
    exclude-patterns = ["build/*"]  # paths (relative to the directory walked) left out

    [tool.regimecheck.severity]     # per rule
    MODEL01 = "warning"

    [tool.regimecheck.threshold]    # per rule, in the rule file's own numbers
    STAT01 = -2.0

    [tool.regimecheck.tolerance]    # measured numbers (relative): resistivity, hall_density,
    resistivity = 0.25              # diffusivity, mobility (sets MEAS01-03, MOB01)

    [tool.regimecheck.columns]      # our table key = the header a CSV uses
    resistivity = "Rho (ohm cm)"

    [[tool.regimecheck.waive]]      # waivers per path (glob), with the reason
    path = "examples/lg8_*.yaml"
    rule = "MOB01"
    reason = "Hall-measured on wafer LG8-W3"

The file found is the first pyproject.toml from the working directory upward that
has a ``[tool.regimecheck]`` table.  Unknown keys, rule ids and values are input
errors naming the file and line; command-line options override the file.
"""
from __future__ import annotations

import difflib
import fnmatch
import re
from dataclasses import dataclass, field
from pathlib import Path

from ..errors import InputError
from .table import KEYS as TABLE_KEYS

LEVELS = ("info", "warning", "error")
KEYS = ("fail-level", "only", "skip", "file-patterns", "exclude-patterns", "severity",
        "threshold", "tolerance", "columns", "waive")
DEFAULT_PATTERNS = ("*.yaml", "*.yml", "*.md", "*.csv")
# a tolerance name -> the rule whose threshold (1 + tolerance, a factor) it sets
TOLERANCES = {"resistivity": "MEAS01", "hall_density": "MEAS02", "diffusivity": "MEAS03",
              "mobility": "MOB01"}
WAIVER_KEYS = ("path", "rule", "reason")


@dataclass
class PathWaiver:
    pattern: str
    rule: str
    reason: str
    line: int


@dataclass
class Config:
    source: str | None = None           # file the settings came from (None: defaults)
    fail_level: str | None = None
    only: tuple = ()
    skip: tuple = ()
    file_patterns: tuple = DEFAULT_PATTERNS
    exclude_patterns: tuple = ()
    severity: dict = field(default_factory=dict)     # rule id -> level
    threshold: dict = field(default_factory=dict)    # rule id -> number
    tolerance: dict = field(default_factory=dict)    # table check -> relative tolerance
    columns: dict = field(default_factory=dict)      # our table key -> header in the CSV
    waive: list = field(default_factory=list)        # PathWaiver
    lines: dict = field(default_factory=dict)        # key -> line in the source

    def where(self, key: str) -> str:
        line = self.lines.get(key)
        return f"{self.source}:{line}" if line else str(self.source)

    def waivers_for(self, path: str) -> list:
        """Path waivers whose pattern matches the file: relative to the configuration's
        folder, as given on the command line, or by its name alone."""
        forms = {Path(path).as_posix(), Path(path).name}
        if self.source:
            try:
                forms.add(Path(path).resolve().relative_to(
                    Path(self.source).resolve().parent).as_posix())
            except ValueError:
                pass
        return [w for w in self.waive if any(fnmatch.fnmatch(f, w.pattern) for f in forms)]

    def excluded(self, relative: str) -> bool:
        return any(fnmatch.fnmatch(relative, p) for p in self.exclude_patterns)

    def reads(self, name: str) -> bool:
        return any(fnmatch.fnmatch(name, p) for p in self.file_patterns)


def find_config(start: Path | None = None) -> Path | None:
    """The first pyproject.toml with [tool.regimecheck], from ``start`` upward."""
    here = (start or Path.cwd()).resolve()
    for folder in (here, *here.parents):
        candidate = folder / "pyproject.toml"
        if candidate.is_file():
            try:
                text = candidate.read_text(encoding="utf-8")
            except (OSError, UnicodeDecodeError):
                continue
            if re.search(r"^\s*\[\s*tool\.regimecheck[\].]", text, re.MULTILINE):
                return candidate
    return None


def load_config(path=None, search_from=None) -> Config:
    """The configuration of ``path`` (a TOML file), else the one found upward, else defaults."""
    import tomllib

    if path is None:
        path = find_config(search_from)
        if path is None:
            return Config()
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as exc:
        raise InputError(f"{path}: cannot read the configuration ({exc.strerror})") from None
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{path}: malformed TOML: {exc}") from None
    table = data.get("tool", {}).get("regimecheck") if "tool" in data else None
    if table is None:
        if path.name == "pyproject.toml":
            raise InputError(f"{path}: has no [tool.regimecheck] table")
        table = data
    return _parse(table, str(path), text)


def _line_of(text: str, key: str) -> int | None:
    match = re.search(rf"^\s*\"?{re.escape(key)}\"?\s*=|^\s*\[+\s*tool\.regimecheck\.{re.escape(key)}",
                      text, re.MULTILINE)
    return text.count("\n", 0, match.start()) + 1 if match else None


def _parse(table: dict, source: str, text: str) -> Config:
    config = Config(source=source)
    config.lines = {key: _line_of(text, key) for key in table}

    def fail(key, message):
        raise InputError(f"{config.where(key)}: [tool.regimecheck] {key}: {message}")

    for key in table:
        if key not in KEYS:
            close = difflib.get_close_matches(key, KEYS, n=1)
            hint = f"; did you mean {close[0]!r}?" if close else f"; keys are {', '.join(KEYS)}"
            fail(key, f"unknown key{hint}")
    if "fail-level" in table:
        if table["fail-level"] not in LEVELS:
            fail("fail-level", f"must be one of {', '.join(LEVELS)}")
        config.fail_level = table["fail-level"]
    for key in ("only", "skip", "file-patterns", "exclude-patterns"):
        if key in table:
            value = table[key]
            if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
                fail(key, "must be a list of texts")
            setattr(config, key.replace("-", "_"), tuple(v.strip() for v in value))
    config.only = tuple(v.upper() for v in config.only)
    config.skip = tuple(v.upper() for v in config.skip)
    for key, kind in (("severity", str), ("threshold", float), ("tolerance", float)):
        value = table.get(key, {})
        if not isinstance(value, dict):
            fail(key, "must be a table of name = value")
        for name, item in value.items():
            if kind is str and item not in LEVELS:
                fail(key, f"{name} = {item!r}: must be one of {', '.join(LEVELS)}")
            if kind is float and (isinstance(item, bool) or not isinstance(item, (int, float))):
                fail(key, f"{name} = {item!r}: must be a number")
        getattr(config, key).update({(n.upper() if key != "tolerance" else n): kind(v)
                                     for n, v in value.items()})
    for name in config.tolerance:
        if name not in TOLERANCES:
            fail("tolerance", f"unknown tolerance {name!r}; known: {', '.join(TOLERANCES)}")
    columns = table.get("columns", {})
    if not isinstance(columns, dict) or not all(isinstance(v, str) for v in columns.values()):
        fail("columns", "must be a table of our key = \"their header\"")
    for name in columns:
        if name not in TABLE_KEYS:
            fail("columns", f"unknown table key {name!r}; keys are {', '.join(TABLE_KEYS)}")
    config.columns = dict(columns)
    waivers = table.get("waive", [])
    if not isinstance(waivers, list):
        fail("waive", "write each waiver as [[tool.regimecheck.waive]] with path, rule, reason")
    headers = [text.count("\n", 0, m.start()) + 1 for m in
               re.finditer(r"^\s*\[\[\s*tool\.regimecheck\.waive\s*\]\]", text, re.MULTILINE)]
    for number, entry in enumerate(waivers):
        if number < len(headers):
            config.lines["waive"] = headers[number]
        if not isinstance(entry, dict) or set(entry) - set(WAIVER_KEYS):
            fail("waive", f"a waiver has exactly the keys {', '.join(WAIVER_KEYS)}")
        missing = [k for k in WAIVER_KEYS if not str(entry.get(k, "")).strip()]
        if missing:
            fail("waive", f"a waiver misses {', '.join(missing)} (a reason is required)")
        config.waive.append(PathWaiver(str(entry["path"]), str(entry["rule"]).upper(),
                                       str(entry["reason"]).strip(), config.lines.get("waive")))
    if headers:
        config.lines["waive"] = headers[0]
    return config


def check_rule_ids(config: Config, known) -> None:
    """Every rule id the configuration names must exist (prefixes for only/skip)."""
    known = list(known)

    def exists(name, prefix_ok):
        return name in known or (prefix_ok and any(k.startswith(name) for k in known))

    named = [("only", n, True) for n in config.only] + [("skip", n, True) for n in config.skip]
    named += [("severity", n, False) for n in config.severity]
    named += [("threshold", n, False) for n in config.threshold]
    named += [("waive", w.rule, False) for w in config.waive]
    for key, name, prefix_ok in named:
        if not exists(name, prefix_ok):
            close = difflib.get_close_matches(name, known, n=1)
            hint = f"; did you mean {close[0]}?" if close else "; 'regimecheck rules' lists them"
            raise InputError(f"{config.where(key)}: [tool.regimecheck] {key}: unknown rule "
                             f"{name!r}{hint}")
