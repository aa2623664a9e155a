"""Project configuration: ``[tool.regimecheck]`` in pyproject.toml, or a file given with
``--config``.

    [tool.regimecheck]
    fail-level = "warning"          # info | warning | error (the --fail-on default)
    only = ["STAT", "ION01"]        # run only these rules (ids or id prefixes)
    skip = ["MODEL"]                # never run these
    file-patterns = ["*.yaml", "*.yml", "*.md", "*.csv"]   # what a directory walk reads
    exclude-patterns = ["build/*"]  # paths left out (relative to the directory walked,
                                    # or, for files named, as named or to this file's folder)

    [tool.regimecheck.severity]     # per rule
    MODEL01 = "warning"

    [tool.regimecheck.threshold]    # per rule with a threshold, in the rule file's numbers
    STAT01 = -2.0

    [tool.regimecheck.tolerance]    # measured numbers (relative, >= 0): resistivity,
    resistivity = 0.25              # hall_density, diffusivity, mobility; the rule whose
                                    # file names the tolerance gets the threshold 1 + value

    [tool.regimecheck.columns]      # our table key = the header a CSV uses
    resistivity = "Rho (ohm cm)"
    ignore = ["Supplier"]           # headers of columns a table may carry but we do not read

    [[tool.regimecheck.waive]]      # waivers per path (glob), with the reason
    path = "examples/lg8_*.yaml"
    rule = "MOB01"
    reason = "Hall-measured on wafer LG8-W3"

The file found is the first pyproject.toml from the working directory upward that
has a ``[tool.regimecheck]`` table.  Unknown keys, rule ids and values are input
errors naming the file and line; command-line options override the file.  File
patterns match a file's suffix in any case (``*.yaml`` reads ``NOTES.YAML``).
"""

from __future__ import annotations

import fnmatch
import math
import re
from pathlib import Path

from ..close_words import close_matches, did_you_mean
from ..errors import InputError
from ..records import Record, field
from ..vocabulary_words import SEVERITIES, TOLERANCE_NAMES
from .table import IGNORE as IGNORED_COLUMNS
from .table import KEYS as TABLE_KEYS
from .text_bytes import decode_utf8

LEVELS = SEVERITIES  # the fail levels are the rules' severities
KEYS = (
    "fail-level",
    "only",
    "skip",
    "file-patterns",
    "exclude-patterns",
    "severity",
    "threshold",
    "tolerance",
    "columns",
    "waive",
)
DEFAULT_PATTERNS = ("*.yaml", "*.yml", "*.md", "*.csv")
WAIVER_KEYS = ("path", "rule", "reason")
TABLE = ("tool", "regimecheck")
# a TOML key path: table and key names, and the index in an array of tables
KeyPath = tuple[str | int, ...]


class PathWaiver(Record):
    pattern: str
    rule: str
    reason: str
    line: int


class Config(Record):
    source: str | None = None  # file the settings came from (None: defaults)
    fail_level: str | None = None
    only: tuple = ()
    skip: tuple = ()
    file_patterns: tuple = DEFAULT_PATTERNS
    exclude_patterns: tuple = ()
    severity: dict = field(default_factory=dict)  # rule id -> level
    threshold: dict = field(default_factory=dict)  # rule id -> number
    tolerance: dict = field(default_factory=dict)  # table check -> relative tolerance
    columns: dict = field(default_factory=dict)  # our table key -> header in the CSV
    waive: list = field(default_factory=list)  # PathWaiver
    lines: dict = field(default_factory=dict)  # key path (below our table) -> line

    def selects(self, rule_id: str) -> bool:
        """Whether ``only``/``skip`` (ids or id prefixes) let the rule run."""

        def named(names) -> bool:
            return any(rule_id == n or rule_id.startswith(n) for n in names)

        return (not self.only or named(self.only)) and not named(self.skip)

    def where(self, *keys) -> str:
        """``file:line`` of the deepest of ``keys`` (e.g. "threshold", "STAT01") found."""
        for cut in range(len(keys), 0, -1):
            if keys[:cut] in self.lines:
                return f"{self.source}:{self.lines[keys[:cut]]}"
        return str(self.source)

    def _forms(self, path: str) -> set:
        """The path as given and relative to the configuration's folder."""
        forms = {Path(path).as_posix()}
        if self.source:
            try:
                forms.add(
                    Path(path).resolve().relative_to(Path(self.source).resolve().parent).as_posix()
                )
            except (ValueError, OSError):
                pass
        return forms

    def waivers_for(self, path: str) -> list:
        """Path waivers whose pattern matches the file: relative to the configuration's
        folder, as given on the command line, or by its name alone."""
        forms = self._forms(path) | {Path(path).name}
        return [w for w in self.waive if any(fnmatch.fnmatch(f, w.pattern) for f in forms)]

    def idle_waivers(self, used, checked_sources, rules_run) -> list:
        """The waivers to report as waiving nothing: none of their findings was waived
        (``used``: ids of the waivers that waived one) although their rule ran on a file
        they name.  A waiver whose rule is not selected, or whose files this run did
        not check (a pre-commit run over the changed files), is not idle."""
        ran = set(rules_run)
        named = {id(w) for source in set(checked_sources) for w in self.waivers_for(source)}
        return [w for w in self.waive if id(w) not in used and w.rule in ran and id(w) in named]

    def excluded(self, relative: str) -> bool:
        """Whether a file found by a walk (path relative to the walked folder) is left out."""
        return any(fnmatch.fnmatch(relative, p) for p in self.exclude_patterns)

    def excludes_named(self, path: str) -> bool:
        """Whether a file named on the command line (a pre-commit hook names every
        changed file) is left out: its path as named or relative to this file's folder."""
        return any(self.excluded(form) for form in self._forms(path))

    def reads(self, name: str) -> bool:
        """Whether a directory walk reads a file of this name; the suffix matches in
        any case on both sides (``*.YAML`` and ``*.yaml`` read ``a.yaml`` and
        ``B.YAML`` alike), as the readers take it."""
        forms = {name, _lower_suffix(name)}
        patterns = {p for pattern in self.file_patterns for p in (pattern, _lower_suffix(pattern))}
        return any(fnmatch.fnmatchcase(f, p) for f in forms for p in patterns)


def _lower_suffix(name: str) -> str:
    """``name`` with the part after its last dot in lower case (a folder part kept)."""
    stem, dot, suffix = name.rpartition(".")
    return f"{stem}.{suffix.lower()}" if dot and "/" not in suffix else name


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
            if re.search(r"^\ufeff?\s*\[\s*tool\.regimecheck[\].]", text, re.MULTILINE):
                return candidate
    return None


def load_config(path=None, search_from=None) -> Config:
    """The configuration of ``path`` (a TOML file), else the one found upward, else defaults."""
    if path is None:
        path = find_config(search_from)
        if path is None:
            return Config()
    import tomllib  # only where there is a configuration to read

    path = Path(path)
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise InputError(f"{path}: cannot read the configuration ({exc.strerror})") from None
    text, problem = decode_utf8(raw)
    if problem:
        raise InputError(f"{path}:{problem}; save the configuration as UTF-8") from None
    # a byte-order mark some editors write: TOML has no place for one, so it goes
    text = text.removeprefix("\ufeff")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(_toml_error(path, exc)) from None
    except RecursionError:
        raise InputError(
            f"{path}: arrays or inline tables nested too deeply to read; "
            "the settings need at most two levels"
        ) from None
    prefix = TABLE if isinstance(data.get("tool"), dict) and "regimecheck" in data["tool"] else ()
    table = data["tool"]["regimecheck"] if prefix else None
    if table is None:
        if path.name == "pyproject.toml":
            raise InputError(f"{path}: has no [tool.regimecheck] table")
        table = data
    if not isinstance(table, dict):
        raise InputError(f"{path}: tool.regimecheck must be a table ([tool.regimecheck])")
    lines = toml_key_lines(text)
    config = Config(source=str(path))
    # () is the line of the [tool.regimecheck] table itself, where there is one
    config.lines = {
        key[len(prefix) :]: line for key, line in lines.items() if key[: len(prefix)] == prefix
    }
    return _parse(table, config)


def _parse(table: dict, config: Config) -> Config:
    def fail(message, *keys):
        raise InputError(f"{config.where(*keys)}: [tool.regimecheck] {keys[0]}: {message}")

    for key in table:
        if key not in KEYS:
            hint = did_you_mean(key, KEYS) or f"keys are {', '.join(KEYS)}"
            fail(f"unknown key; {hint}", key)
    if "fail-level" in table:
        if table["fail-level"] not in LEVELS:
            fail(f"must be one of {', '.join(LEVELS)}", "fail-level")
        config.fail_level = table["fail-level"]
    for key in ("only", "skip", "file-patterns", "exclude-patterns"):
        if key in table:
            value = table[key]
            if not _texts(value):
                fail("must be a list of texts", key)
            setattr(config, key.replace("-", "_"), tuple(v.strip() for v in value))
    config.only = tuple(v.upper() for v in config.only)
    config.skip = tuple(v.upper() for v in config.skip)
    _numbers_per_name(table, config, fail)
    columns = table.get("columns", {})
    if not isinstance(columns, dict):
        fail('must be a table of our key = "their header"', "columns")
    for name, header in columns.items():
        if name == IGNORED_COLUMNS:
            if not _texts(header):
                fail(
                    f'{name} must be a list of headers, e.g. {name} = ["Supplier"]', "columns", name
                )
        elif name not in TABLE_KEYS:
            fail(
                f"unknown table key {name!r}; keys are {', '.join(TABLE_KEYS)} (and "
                f"{IGNORED_COLUMNS} = [headers left out])",
                "columns",
                name,
            )
        elif not isinstance(header, str):
            fail(f'{name} must be the header text, e.g. {name} = "Rho (ohm cm)"', "columns", name)
    config.columns = dict(columns)
    _waivers(table.get("waive", []), config, fail)
    return config


def _texts(value) -> bool:
    return isinstance(value, list) and all(isinstance(v, str) for v in value)


def _numbers_per_name(table: dict, config: Config, fail) -> None:
    """severity, threshold and tolerance: each a table of name = value."""
    for key in ("severity", "threshold", "tolerance"):
        value = table.get(key, {})
        if not isinstance(value, dict):
            fail("must be a table of name = value", key)
        for name, item in value.items():
            if key == "severity":
                if item not in LEVELS:
                    fail(f"{name} = {item!r}: must be one of {', '.join(LEVELS)}", key, name)
                continue
            if key == "tolerance" and name not in TOLERANCE_NAMES:
                fail(f"unknown tolerance {name!r}; known: {', '.join(TOLERANCE_NAMES)}", key, name)
            if isinstance(item, bool) or not isinstance(item, (int, float)):
                fail(f"{name} = {item!r}: must be a number", key, name)
            if not math.isfinite(item):
                fail(f"{name} = {item!r}: must be a finite number", key, name)
            if key == "tolerance" and item < 0:
                fail(
                    f"{name} = {item!r}: a relative tolerance is >= 0, e.g. 0.25 for 25%", key, name
                )
        converted = {
            (n if key == "tolerance" else n.upper()): (v if key == "severity" else float(v))
            for n, v in value.items()
        }
        getattr(config, key).update(converted)
        config.lines.update(
            {
                (key, n.upper()): config.lines[(key, n)]
                for n in value
                if (key, n) in config.lines and key != "tolerance"
            }
        )


def _waivers(waivers, config: Config, fail) -> None:
    if not isinstance(waivers, list):
        fail("write each waiver as [[tool.regimecheck.waive]] with path, rule, reason", "waive")
    for number, entry in enumerate(waivers):
        if not isinstance(entry, dict) or set(entry) - set(WAIVER_KEYS):
            fail(f"a waiver has exactly the keys {', '.join(WAIVER_KEYS)}", "waive", number)
        missing = [k for k in WAIVER_KEYS if not str(entry.get(k, "")).strip()]
        if missing:
            fail(f"a waiver misses {', '.join(missing)} (a reason is required)", "waive", number)
        config.waive.append(
            PathWaiver(
                str(entry["path"]),
                str(entry["rule"]).upper(),
                str(entry["reason"]).strip(),
                # an inline table (regimecheck = {waive = [...]}) has no line per key
                config.lines.get(("waive", number))
                or config.lines.get(("waive",))
                or config.lines.get((), 1),
            )
        )


def _toml_error(path: Path, exc: Exception) -> str:
    """``file:line:column: malformed TOML: ...`` (tomllib puts the place at the end)."""
    text = str(exc)
    place = re.search(r"\(at line (\d+), column (\d+)\)$", text)
    if place is None:
        return f"{path}: malformed TOML: {text}"
    what = text[: place.start()].rstrip()
    return f"{path}:{place[1]}:{place[2]}: malformed TOML: {what}; correct this line"


def check_rule_ids(config: Config, known) -> None:
    """Every rule the configuration names must exist (prefixes for only/skip), and a
    threshold is given only to a rule that has one.  ``known``: the rules (objects with
    ``id`` and ``threshold``) or their ids."""
    known = list(known)
    ids = [rule if isinstance(rule, str) else rule.id for rule in known]
    without_threshold = {
        rule.id for rule in known if not isinstance(rule, str) and math.isnan(rule.threshold)
    }

    def exists(name, prefix_ok):
        return name in ids or (prefix_ok and any(k.startswith(name) for k in ids))

    named = [("only", n, True) for n in config.only] + [("skip", n, True) for n in config.skip]
    named += [("severity", n, False) for n in config.severity]
    named += [("threshold", n, False) for n in config.threshold]
    named += [("waive", w.rule, False) for w in config.waive]
    for key, name, prefix_ok in named:
        if not exists(name, prefix_ok):
            close = close_matches(name, ids, n=1)
            hint = f"; did you mean {close[0]}?" if close else "; 'regimecheck rules' lists them"
            here = config.where(key, name) if key != "waive" else _waiver_line(config, name)
            raise InputError(f"{here}: [tool.regimecheck] {key}: unknown rule {name!r}{hint}")
    for name in config.threshold:
        if name in without_threshold:
            raise InputError(
                f"{config.where('threshold', name)}: [tool.regimecheck] threshold: "
                f"{name} has no threshold (its indicator has no above or below "
                "value); remove this line, or use severity or skip for it"
            )


def _waiver_line(config: Config, rule: str) -> str:
    line = next((w.line for w in config.waive if w.rule == rule and w.line), None)
    return f"{config.source}:{line}" if line else config.where("waive")


# --- where each key of a TOML text is -------------------------------------------------

_BARE = r"[A-Za-z0-9_-]+"
_PART = rf"(?:{_BARE}|\"(?:[^\"\\]|\\.)*\"|'[^']*')"
_DOTTED = rf"{_PART}(?:\s*\.\s*{_PART})*"
_HEADER = re.compile(rf"\s*(\[\[?)\s*({_DOTTED})\s*\]")
_ASSIGN = re.compile(rf"\s*({_DOTTED})\s*=")
_PARTS = re.compile(_PART)


def toml_key_lines(text: str) -> dict[KeyPath, int]:
    """Key path -> 1-based line of every table header and key of a TOML text.  Paths
    are tuples of key names; an array of tables adds its element index
    (``("tool", "regimecheck", "waive", 0, "rule")``).  No recursion, so any nesting
    depth is safe; lines inside multi-line strings and arrays are not keys."""
    out: dict[KeyPath, int] = {}
    arrays: dict[KeyPath, int] = {}
    table: KeyPath = ()
    top = _top_lines(text)
    for number, line in enumerate(text.split("\n"), start=1):
        if number not in top:
            continue
        header = _HEADER.match(line)
        assign = None if header else _ASSIGN.match(line)
        if header:
            parts = _resolve(_names(header[2]), arrays)
            if header[1] == "[[":
                arrays[parts] = arrays.get(parts, -1) + 1
                out.setdefault(parts, number)
                parts += (arrays[parts],)
            table = parts
            out.setdefault(table, number)
        elif assign:
            names = _names(assign[1])
            for cut in range(1, len(names) + 1):
                out.setdefault(table + names[:cut], number)
    return out


def _names(dotted: str) -> tuple[str, ...]:
    return tuple(p[1:-1] if p[0] in "\"'" else p for p in _PARTS.findall(dotted))


def _resolve(names: tuple[str, ...], arrays: dict[KeyPath, int]) -> KeyPath:
    """A table path with the current index of every array of tables on it."""
    path: KeyPath = ()
    for name in names[:-1]:
        path += (name,)
        if path in arrays:
            path += (arrays[path],)
    return path + names[-1:]


def _top_lines(text: str) -> set:
    """Numbers of the lines that begin outside any string, comment, array or inline
    table (only there can a key or a table header start)."""
    top, depth, mode, i, number = {1}, 0, "", 0, 1
    while i < len(text):
        char = text[i]
        if char == "\n":
            number += 1
            if mode in ("#", '"', "'"):
                mode = ""  # comments and one-line strings end here
            if not mode and depth == 0:
                top.add(number)
        elif mode == "#":
            pass
        elif mode in ('"""', "'''", '"', "'"):
            if char == "\\" and mode[0] == '"' and text[i + 1 : i + 2] not in ("", "\n"):
                i += 1  # an escaped character cannot end the string
            elif text.startswith(mode, i):
                i += len(mode) - 1
                mode = ""
        elif text.startswith('"""', i) or text.startswith("'''", i):
            mode = text[i : i + 3]
            i += 2
        elif char in "\"'#":
            mode = char
        elif char in "[{":
            depth += 1
        elif char in "]}":
            depth = max(depth - 1, 0)
        i += 1
    return top
