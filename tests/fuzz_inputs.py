"""Hostile inputs for ``regimecheck check`` and a harness that runs one case in-process.

Shared by the short property run of the test suite (tests/test_fuzz.py) and the long
run (bench/fuzz_inputs.py).  Every strategy starts from a valid input and mutates it,
so that most cases get past the first reader and reach the deeper steps:

    calculation  calculation YAML: values, keys, types, YAML tags and anchors, control
                 characters, deep nesting, huge and odd numbers, several documents,
                 other encodings and line endings
    units        quantity strings ("1.5x10^16 cm^-3", "3 furlong**-3" ...) at every
                 quantity slot of a calculation
    formulas     the formulas: list: random expression trees over the trade symbols
                 that ``regimecheck symbols`` lists, numbers, powers, functions
    table        CSV datasheet tables: headers with units, odd cells, quotes, newlines
    memo         Markdown memos: fenced blocks in lists and quotes, odd line separators
    config       TOML settings given with --config: keys, values, nesting

Each case also writes ``sentinel.yaml``, a valid calculation with one finding: a bad
file must not keep the other files of the run from being checked, so the sentinel
must appear in every report (except in the config kind, where a settings file may
rightly exclude it or abort the run).

:func:`run_case` writes the files into a fresh temporary folder, hashes them, runs
``checker.cli.main(["check", ...])`` in a worker thread with stdout and stderr
captured, waits at most ``timeout`` seconds, hashes the files again and returns an
:class:`Outcome`.  ``Outcome.failures()`` names each broken property by class:

    exit3             exit code 3 (an internal error) or any code outside {0, 1, 2}
    traceback         a Python traceback printed, or an exception escaping main()
    input-modified    an input file changed or vanished, or a file appeared beside them
    hang              no answer within the bound
    malformed-output  a JSON/SARIF report that is not strict JSON, a JUnit/HTML report
                      that is not well-formed XML, an exit code that disagrees with the
                      JSON summary, or a control/bidi character printed raw
    lost-calculation  the sentinel file is missing from the report
"""

from __future__ import annotations

import contextlib
import dataclasses
import hashlib
import io
import json
import math
import os
import random
import re
import shutil
import sys
import tempfile
import threading
import time
import traceback
import xml.etree.ElementTree as ET
from pathlib import Path

from hypothesis import strategies as st

from checker.inputs.calculation_file import STATED_KEYS, STRUCTURE_KEYS
from checker.inputs.table import DIMENSIONS as TABLE_DIMENSIONS

DEFAULT_TIMEOUT = 20.0  # seconds a single case may take before it counts as a hang
KINDS = ("calculation", "units", "formulas", "table", "memo", "config")
FAILURE_CLASSES = (
    "exit3",
    "traceback",
    "input-modified",
    "hang",
    "malformed-output",
    "lost-calculation",
)

SENTINEL_NAME = "sentinel.yaml"
# a valid calculation with one finding (CONST01: kT/q of another temperature), so that
# it shows in every report format, SARIF included
SENTINEL = (
    b"name: sentinel calculation\nmaterial: Si\ntemperature: 300 K\n"
    b"doping:\n  donors: {P: 1e16 cm-3}\nstated:\n  thermal_voltage: 0.0345 V\n"
)

# Built-in materials and their dopant species (``regimecheck materials``).
MATERIALS = {
    "Si": (("P", "As", "Sb", "Bi"), ("B", "Al", "Ga", "In")),
    "Ge": (("P", "As", "Sb"), ("B", "Al", "Ga", "In")),
    "GaAs": (("Si", "Te", "Se", "S", "Sn"), ("C", "Be", "Mg", "Zn", "Cd", "Mn")),
    "GaN": (("Si", "O"), ("Mg",)),
    "4H-SiC": (("N", "P"), ("Al", "B")),
    "InAs": (("S", "Te", "Si"), ("Zn", "Be")),
    "InGaAs": (("Si", "Sn", "S"), ("Zn", "Be")),
    "InP": (("S", "Si", "Sn"), ("Zn", "Be", "C")),
}


def _rule_ids() -> tuple:
    """The ids of the shipped rule files (a fixed list if they cannot be listed)."""
    try:
        from checker.resources import rules_dir

        found = sorted(
            p.name[:-5]
            for p in rules_dir().iterdir()
            if re.fullmatch(r"[A-Z]{2,5}[0-9]{2}\.yaml", p.name)
        )
    except Exception:
        found = []
    return tuple(found) or (
        "STAT01",
        "STAT02",
        "CARR01",
        "CARR02",
        "CARR03",
        "ION01",
        "ION02",
        "TRAN01",
        "TRAN02",
        "MOB01",
        "MOB02",
        "CONST01",
        "CONST02",
        "CONST03",
        "DOPE01",
        "DOPE02",
        "MODEL01",
        "MODEL02",
        "MEAS01",
        "MEAS02",
        "MEAS03",
        "FORM01",
        "FORM02",
        "FORM03",
    )


RULE_IDS = _rule_ids()
ASSUMPTION_WORDS = (
    "non-degenerate",
    "boltzmann",
    "full-ionization",
    "no-compensation",
    "single-carrier",
    "extrinsic",
    "einstein-relation",
    "diffusive",
    "low-field",
    "nondegenerate",
    "fully-ionized",
    "ohmic",
)
HALL_SCATTERING = ("acoustic", "ionized-impurity", "neutral-impurity", "-0.5", "1.5", "0")
FORMATS = ("console", "json", "markdown", "sarif", "junit", "html")
# weights: html renders regime maps (about ten times the cost of the others)
FORMAT_CHOICES = (
    ("console",) * 3
    + ("json",) * 4
    + ("sarif",) * 2
    + ("junit",) * 2
    + ("markdown",) * 2
    + ("html",)
)


# --- quantities -------------------------------------------------------------------------

# dimension -> (log10 range in the first unit, [(unit, factor: value in this unit = value
# in the first unit * factor)])
QUANTITY_UNITS = {
    "density": (
        (10, 21),
        [("cm-3", 1), ("cm^-3", 1), ("/cm^3", 1), ("cm⁻³", 1), ("m^-3", 1e6), ("1/cm^3", 1)],
    ),
    "length": ((-2, 3), [("um", 1), ("nm", 1e3), ("cm", 1e-4), ("mm", 1e-3), ("µm", 1)]),
    "area": ((-2, 4), [("um^2", 1), ("cm^2", 1e-8), ("nm^2", 1e6)]),
    "field": ((0, 5.5), [("V/cm", 1), ("kV/cm", 1e-3), ("V/m", 1e2)]),
    "voltage": ((-3, 2), [("V", 1), ("mV", 1e3)]),
    "mobility": ((1, 4.7), [("cm^2/(V*s)", 1), ("cm2/Vs", 1), ("cm²/V·s", 1), ("m^2/(V*s)", 1e-4)]),
    "diffusivity": ((-1, 3), [("cm^2/s", 1), ("cm2/s", 1), ("m^2/s", 1e-4)]),
    "velocity": ((3, 7.5), [("cm/s", 1), ("m/s", 1e-2)]),
    "conductivity": ((-6, 5), [("S/cm", 1), ("S/m", 1e2)]),
    "resistivity": ((-5, 6), [("ohm*cm", 1), ("ohm*m", 1e-2), ("Ω·cm", 1), ("ohm-cm", 1)]),
    "sheet resistance": ((0, 6), [("ohm/sq", 1), ("kohm/sq", 1e-3)]),
    "resistance": ((0, 9), [("ohm", 1), ("kohm", 1e-3), ("Ω", 1)]),
    "energy": ((-3, 0), [("eV", 1), ("meV", 1e3)]),
}


def _keys_of(table: dict) -> dict:
    """YAML key -> dimension, for the keys whose dimension has units here."""
    return {key: dimension for key, (_, dimension) in table.items() if dimension in QUANTITY_UNITS}


STRUCTURE = _keys_of(STRUCTURE_KEYS)
STATED = _keys_of(STATED_KEYS)


def _number_text(value: float) -> str:
    return f"{value:.3g}"


# Values at and next to the bounds a calculation accepts (physically absurd but legal):
# they reach the solver and the rules at their extremes.
EXTREMES = {
    "density": (
        "0 cm-3",
        "1e23 cm-3",
        "9.99e22 cm-3",
        "1e29 m^-3",
        "1e-300 cm-3",
        "5e-324 m^-3",
        "1 cm-3",
        "1e-20 cm-3",
        "1e22 cm-3",
    ),
    "length": ("0.1 nm", "1 m", "1.0000001e-10 m", "100 cm"),
    "area": ("0.01 nm^2", "1 m^2", "1e-20 m^2"),
    "field": ("0 V/cm", "1e8 V/cm", "1e10 V/m", "1e-300 V/cm"),
    "voltage": ("0 V", "1e6 V", "-1e6 V", "1e-300 V"),
    "mobility": ("0 cm^2/(V*s)", "1e7 cm^2/(V*s)", "1e-300 cm^2/(V*s)"),
    "diffusivity": ("0 cm^2/s", "1e6 cm^2/s", "1e-300 cm^2/s"),
    "velocity": ("0 cm/s", "1e9 cm/s", "1e-300 cm/s"),
    "conductivity": ("0 S/cm", "1e300 S/cm", "1e-300 S/cm"),
    "resistivity": ("0 ohm*cm", "1e300 ohm*cm", "1e-300 ohm*cm"),
    "sheet resistance": ("0 ohm/sq", "1e300 ohm/sq", "1e-300 ohm/sq"),
    "resistance": ("0 ohm", "1e300 ohm", "1e-300 ohm"),
    "energy": ("10 eV", "-10 eV", "0 eV", "-0 eV", "1e-300 eV", "9.999 eV"),
    "temperature": (
        "1 K",
        "3000 K",
        "1.0000001 K",
        "2999.999 K",
        "-272.15 degC",
        "2726.85 degC",
        "1.5 K",
        "4.2 K",
        "77 K",
    ),
}


@st.composite
def valid_quantity(draw, dimension: str, signed: bool = False) -> str:
    """A plausible quantity of ``dimension`` in one of its trade units (sometimes one
    at the bounds of what a calculation accepts)."""
    if draw(st.integers(0, 9)) == 0:
        return draw(st.sampled_from(EXTREMES[dimension]))
    (low, high), units = QUANTITY_UNITS[dimension]
    unit, factor = draw(st.sampled_from(units))
    value = 10 ** draw(st.floats(low, high)) * factor
    if signed and draw(st.booleans()):
        value = -value
    space = draw(st.sampled_from([" ", " ", "", "  "])) if not unit[0].isdigit() else " "
    return f"{_number_text(value)}{space}{unit}"


@st.composite
def valid_temperature(draw) -> str:
    if draw(st.integers(0, 9)) == 0:
        return draw(st.sampled_from(EXTREMES["temperature"]))
    if draw(st.booleans()):
        return f"{draw(st.floats(20, 900)):.4g} K"
    return f"{draw(st.floats(-150, 500)):.4g} {draw(st.sampled_from(['degC', '°C', 'degC']))}"


# Pieces of quantity strings: numbers and units as authors (and typos) write them.
_MANTISSAS = (
    "1",
    "3",
    "1.5",
    "0.5",
    ".5",
    "5.",
    "12345678901234567890",
    "0",
    "00001",
    "1.0000000000000000000001",
    "9" * 40,
    "-1",
    "+2",
    "−3",
    "１",
    "٣",
    "1,5",
    "1_000",
    "0x1F",
    "NaN",
    "nan",
    "inf",
    "-inf",
    "",
    "e",
    ".",
    "1.2.3",
)
_EXPONENTS = (
    "",
    "",
    "e17",
    "E-3",
    "e+308",
    "e309",
    "e-324",
    "e999",
    "e-999",
    "e1000",
    "e0",
    "e",
    "e+",
    "x10^16",
    "×10^16",
    "×10¹⁶",
    "x 10 ^ -3",
    "*10^5",
    "·10^2",
    "×10⁻³",
    "e17.5",
    "e٣",
    "x10^1000",
    "E-0400",
)
_UNIT_NAMES = (
    "cm",
    "m",
    "um",
    "µm",
    "μm",
    "nm",
    "mm",
    "K",
    "V",
    "kV",
    "mV",
    "s",
    "ohm",
    "Ω",
    "kohm",
    "Ohm",
    "S",
    "eV",
    "meV",
    "J",
    "C",
    "A",
    "sq",
    "degC",
    "°C",
    "℃",
    "g",
    "inch",
    "ft",
    "angstrom",
    "Å",
    "furlong",
    "turn",
    "percent",
    "%",
    "rad",
    "deg",
    "pi",
    "h",
    "Hz",
    "T",
    "W",
    "Pa",
    "x",
    "cc",
    "liter",
    "mol",
    "dimensionless",
    "bit",
    "year",
    "lightyear",
    "parsec",
    "Kelvin",
    "kelvin",
    "ABCDEFGHIJ",
    "e",
    "E",
    "nan",
    "inf",
    "__class__",
    "1",
)
_POWERS = (
    "",
    "",
    "",
    "^-3",
    "^3",
    "^2",
    "**2",
    "**-3",
    "-3",
    "3",
    "⁻³",
    "²",
    "^(3/2)",
    "^-99",
    "^100",
    "^0",
    "^-0",
    "^",
    "**",
    "^1.5",
    "^-1/2",
    "^^2",
    "^ -3",
)
_JOINS = ("*", "/", "·", "-", " ", "×", "/", "*", "", "**", "//", "⋅")


@st.composite
def unit_text(draw) -> str:
    """A unit expression, mostly made of real unit names, often not a valid one."""
    parts = []
    for i in range(draw(st.integers(1, 4))):
        if i:
            parts.append(draw(st.sampled_from(_JOINS)))
        factor = draw(st.sampled_from(_UNIT_NAMES)) + draw(st.sampled_from(_POWERS))
        if draw(st.integers(0, 5)) == 0:
            factor = f"({factor})"
        parts.append(factor)
    text = "".join(parts)
    prefix = draw(st.sampled_from(["", "", "", "/", "1/", "(", "per "]))
    suffix = draw(st.sampled_from(["", "", "", "/sq", ")", " # note", "  ", "\t", "?"]))
    return prefix + text + suffix


@st.composite
def quantity_text(draw) -> str:
    """A quantity string: a valid one of some dimension, or an odd number and unit."""
    choice = draw(st.integers(0, 4))
    if choice == 0:
        return draw(valid_quantity(draw(st.sampled_from(sorted(QUANTITY_UNITS)))))
    if choice == 1:
        return draw(valid_temperature())
    number = draw(st.sampled_from(_MANTISSAS)) + draw(st.sampled_from(_EXPONENTS))
    space = draw(st.sampled_from([" ", "", "  ", "\t", "\u00a0", "\u2009", " \n "]))
    if choice == 2:
        unit = draw(
            st.sampled_from(
                [u for _, units in QUANTITY_UNITS.values() for u, _ in units] + ["K", "degC"]
            )
        )
    else:
        unit = draw(unit_text())
    return number + space + unit


# --- YAML: a tree of values emitted as text -------------------------------------------


@dataclasses.dataclass(frozen=True)
class Raw:
    """Text written into the YAML (or TOML) verbatim: tags, anchors, flow nesting."""

    text: str


def _plain_ok(text: str, flow: bool) -> bool:
    """Whether ``text`` can be written as a plain YAML scalar and still read as text."""
    import yaml

    if not text or text != text.strip() or "\n" in text or "\r" in text:
        return False
    if not re.fullmatch(r"[A-Za-z0-9_.+\-/^*() °·⁻³²µΩ]+", text):
        return False
    if text[0] in "-?:" or ": " in text or " #" in text:
        return False
    if flow and re.search(r"[,\[\]{}]", text):
        return False
    resolved = yaml.resolver.Resolver().resolve(yaml.ScalarNode, text, (True, False))
    return resolved == "tag:yaml.org,2002:str"


def _simple_scalar(value, nan: str, inf: str) -> str | None:
    """Raw text, a boolean or a number as YAML and TOML write them (``nan``, ``inf``:
    their spellings of those floats); None for any other value."""
    if isinstance(value, Raw):
        return value.text
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isnan(value):
            return nan
        if math.isinf(value):
            return inf if value > 0 else "-" + inf
        return repr(value)
    return None


class YamlWriter:
    """Writes a tree of dicts, lists and scalars as YAML text, in block or flow style,
    with quoting chosen per scalar by a seeded generator (so that hypothesis can
    replay it)."""

    def __init__(self, seed: int, indent: int = 2, flow_below: int = 99):
        self.random = random.Random(seed)
        self.indent = indent
        self.flow_below = flow_below  # containers this deep are written in flow style

    def scalar(self, value, flow=False) -> str:
        if value is None:
            return self.random.choice(["null", "~", ""]) if not flow else "null"
        simple = _simple_scalar(value, ".nan", ".inf")
        if simple is not None:
            return simple
        text = str(value)
        style = self.random.choice(["plain", "plain", "single", "double"])
        if style == "plain" and _plain_ok(text, flow):
            return text
        if style == "single" and re.fullmatch(r"[^\x00-\x1f\x7f-\x9f\u2028\u2029\ufeff]*", text):
            return "'" + text.replace("'", "''") + "'"
        return json.dumps(text, ensure_ascii=self.random.random() < 0.3)

    def inline(self, node) -> str:
        if isinstance(node, dict):
            items = ", ".join(f"{self.scalar(k, True)}: {self.inline(v)}" for k, v in node.items())
            return "{" + items + "}"
        if isinstance(node, list):
            return "[" + ", ".join(self.inline(v) for v in node) + "]"
        return self.scalar(node, True)

    def block(self, node, depth=0) -> list:
        pad = " " * (self.indent * depth)
        lines = []
        if isinstance(node, dict):
            for key, value in node.items():
                ks = self.scalar(key)
                if self._simple(value, depth + 1):
                    lines.append(f"{pad}{ks}: {self.inline(value)}".rstrip())
                else:
                    lines.append(f"{pad}{ks}:")
                    lines += self.block(value, depth + 1)
        elif isinstance(node, list):
            for value in node:
                if self._simple(value, depth + 1):
                    lines.append(f"{pad}- {self.inline(value)}".rstrip())
                else:
                    lines.append(f"{pad}-")
                    lines += self.block(value, depth + 1)
        else:
            lines.append(pad + self.scalar(node))
        return lines

    def _simple(self, value, depth) -> bool:
        if not isinstance(value, (dict, list)) or not value:
            return True
        return depth >= self.flow_below or self.random.random() < 0.15

    def document(self, tree) -> str:
        if not isinstance(tree, (dict, list)) or not tree:
            return self.inline(tree) + "\n"
        return "\n".join(self.block(tree)) + "\n"


@st.composite
def yaml_writer(draw) -> YamlWriter:
    return YamlWriter(
        draw(st.integers(0, 2**32 - 1)),
        draw(st.sampled_from([2, 2, 4, 1, 3])),
        draw(st.sampled_from([99, 99, 99, 1, 2])),
    )


def _paths(node, prefix=()):
    """Every (path, node) of a tree, the root included."""
    yield prefix, node
    if isinstance(node, dict):
        for key, value in node.items():
            yield from _paths(value, prefix + (key,))
    elif isinstance(node, list):
        for i, value in enumerate(node):
            yield from _paths(value, prefix + (i,))


def _set(tree, path, value):
    """The tree with the node at ``path`` replaced (a new root when path is empty)."""
    if not path:
        return value
    parent = tree
    for key in path[:-1]:
        parent = parent[key]
    parent[path[-1]] = value
    return tree


def _delete(tree, path):
    if not path:
        return tree
    parent = tree
    for key in path[:-1]:
        parent = parent[key]
    del parent[path[-1]]
    return tree


# Scalars that a calculation should refuse, or read with care.
HOSTILE_SCALARS = (
    "",
    " ",
    "~",
    "null",
    "yes",
    "no",
    "on",
    "off",
    "True",
    ".nan",
    ".inf",
    "-.inf",
    "0o17",
    "0x1F",
    "0b101",
    "1_000",
    "190:20:30",
    "2001-12-14",
    "2001-12-14t21:59:43.10-05:00",
    "1e999 cm-3",
    "nan cm-3",
    "inf K",
    "-inf K",
    "NaN K",
    "-0 K",
    "0 K",
    "1e-999 K",
    "1e308 cm-3",
    "9" * 400 + " cm-3",
    "1" + "0" * 330 + " K",
    "300",
    "300 K K",
    "300K",
    "300 degF",
    "-300 degC",
    "-273.15 degC",
    "-273.16 degC",
    "1e-300 K",
    "3000.0001 K",
    "1e17 cm^-3^2",
    "1e17 cm**-3**2",
    "1e17 (((cm)))-3",
    "1e17 furlong-3",
    "1e17 m^-3*m^0",
    "1e17 1/m^3",
    "5 kV/cm/cm*cm",
    "1 turn",
    "1 percent*K",
    "1e17 cm-3 # note",
    "1e17",
    "1.5x10^16 cm-3",
    "1.5×10¹⁶ cm⁻³",
    "３００ K",
    "٣٠٠ K",
    "300\u00a0K",
    "300\u2009K",
    "300 \u212a",
    "1e17 cm\u22123",
    "1e17 cm-3\u200b",
    "\u202e300 K",
    "\x1b[31m300 K",
    "x" * 3000,
    "P",
    "Si",
    "unknown",
    "B, P",
    "../../etc/passwd",
    "{{ temperature }}",
    "${HOME}",
    "%s%s%s%n",
    "\\u0000",
    "'",
    '"',
    "a\nb",
    "a\r\nb",
    "true",
    "false",
    "1e17 cm-3\n2e17 cm-3",
    "150 degC\t",
    "   ",
    "-",
    "- 1",
    ": x",
    "[",
    "]",
    "{",
    "}",
    "!!python/name:os.system",
    "!x",
    "&a",
    "*a",
    "<<",
    "?",
    "|",
    ">",
    "@",
    "`",
)
HOSTILE_NUMBERS = (
    0,
    -1,
    1,
    2,
    3,
    4,
    10**30,
    -(10**30),
    2**63,
    1e308,
    -1e308,
    5e-324,
    float("inf"),
    float("-inf"),
    float("nan"),
    0.5,
    -0.0,
    True,
    False,
    None,
)
RAW_VALUES = (
    "!!python/object/apply:os.system ['true']",
    "!!python/name:builtins.eval",
    "!!binary aGk=",
    "!!float 1e400",
    "!!int 0x7fffffffffffffffffffffff",
    "!!str 300 K",
    "!!str",
    "!custom 3",
    "!!timestamp 2001-12-14",
    "!!set {a, b}",
    "!!omap [a: 1]",
    "!!null ''",
    "!!bool yes",
    "!<tag:yaml.org,2002:str> 300 K",
    "&anchor 300 K",
    "*undefined",
    "&a [1, 2]",
    "!!map {a: 1}",
    "!!seq [1]",
    "[a, b",
    "{a: 1",
    "'unterminated",
    '"unterminated',
    "|\n  literal block",
    ">-\n  folded",
    "[[[[[[[[]]]]]]]]",
    "{? a: b}",
    "{a: 1, a: 2}",
    "[*a]",
    "!!python/tuple [1, 2]",
)
ODD_KEYS = (
    "temprature",
    "Temperature",
    "temperature ",
    " material",
    "tеmperature",
    "materials",
    "donor",
    "Doping",
    "stated_",
    "formula",
    "waiver",
    "option",
    "",
    "x" * 300,
    "\u202ename",
    "na\x1bme",
    "名前",
    "<<",
    "=",
    "true",
    "null",
    "1",
    "electron-density",
    "ELECTRON_DENSITY",
    "length ",
    "cross-section",
    "steps ",
    "from",
    "spacing",
    "rule",
    "reason",
    "__class__",
    "$schema",
)
RAW_KEYS = (
    "<<",
    "? [a, b]",
    "!!str key",
    "&k key",
    "*k",
    "[a, b]",
    "{a: 1}",
    "1.5",
    "null",
    "~",
    "? |\n  block key",
)


# Nesting depths of the deep-nesting values.  The long run adds depths of 3,000 to 20,000
# levels (PyYAML's scanner once took minutes on them: 20 kB files); the short run keeps
# its files smaller.
DEPTHS = (33, 40, 100, 999, 1000)
LONG_DEPTHS = (3000, 10000, 20000)
PROFILE = {"long": False}


def set_profile(long: bool) -> None:
    """Choose the long run's inputs (larger nesting depths) or the short run's."""
    PROFILE["long"] = bool(long)


@st.composite
def deep_nesting(draw):
    """A value nested far deeper than any calculation: flow text or a Python tree."""
    depth = draw(st.sampled_from(DEPTHS + (LONG_DEPTHS if PROFILE["long"] else ())))
    kind = draw(st.integers(0, 3))
    if kind == 0:
        return Raw("[" * depth + "1" + "]" * depth)
    if kind == 1:
        return Raw("{a: " * depth + "1" + "}" * depth)
    if kind == 2:
        return Raw("[" * depth)  # never closed
    node = "300 K"
    for _ in range(min(depth, 60)):
        node = {"a": node} if draw(st.booleans()) else [node]
    return node


def hostile_value():
    return st.one_of(
        st.sampled_from(HOSTILE_SCALARS),
        st.sampled_from(HOSTILE_NUMBERS),
        st.sampled_from(RAW_VALUES).map(Raw),
        quantity_text(),
        st.text(max_size=30),
        st.lists(st.sampled_from(HOSTILE_SCALARS), max_size=3),
        st.dictionaries(st.sampled_from(ODD_KEYS), st.sampled_from(HOSTILE_SCALARS), max_size=3),
        deep_nesting(),
    )


@st.composite
def mutated_tree(draw, tree, rounds=(1, 3)):
    """``tree`` with a few mutations: a value, a key, a type, a deletion, a raw token."""
    for _ in range(draw(st.integers(*rounds))):
        paths = list(_paths(tree))
        path, node = draw(st.sampled_from(paths))
        op = draw(
            st.sampled_from(["value", "value", "value", "key", "delete", "raw", "rawkey", "wrap"])
        )
        if op == "value":
            tree = _set(tree, path, draw(hostile_value()))
        elif op == "key" and isinstance(node, dict):
            node[draw(st.sampled_from(ODD_KEYS + tuple(node)))] = draw(hostile_value())
        elif op == "rawkey" and isinstance(node, dict):
            node[Raw(draw(st.sampled_from(RAW_KEYS)))] = draw(st.sampled_from(HOSTILE_SCALARS))
        elif op == "delete":
            tree = _delete(tree, path)
        elif op == "raw":
            tree = _set(tree, path, Raw(draw(st.sampled_from(RAW_VALUES))))
        elif op == "wrap":
            tree = _set(tree, path, draw(st.sampled_from([[node], {"value": node}, [node, node]])))
    return tree


# --- text-level mutations ---------------------------------------------------------------

RAW_LINES = (
    "%YAML 1.1",
    "%YAML 9.9",
    "%TAG ! tag:example.com,2000:",
    "---",
    "...",
    "--- !!map",
    "- item",
    "? key",
    ": value",
    "\tmaterial: Si",
    "material: Si",
    "material: Ge",
    "temperature: 300 K",
    "<<: {temperature: 300 K}",
    "<<: *x",
    "x: &x {a: 1}",
    "key: [",
    "key: {",
    "'",
    '"',
    "|",
    "# comment \u202e",
    "#" * 2000,
    "a: b: c",
    "stated: {electron_density: 1e17 cm-3, electron_density: 2e17 cm-3}",
    "formulas: [n = N_D, 'D = mu*V_T']",
    "waivers: [{rule: STAT01}]",
    "- - - - -",
    "doping: {donors: {P: {from: 1e14 cm-3, to: 1e19 cm-3, steps: 99999}}}",
    "temperature: {from: 1 K, to: 3000 K, steps: 100000}",
    "material: {name: X}",
    "\ufeffmaterial: Si",
    "name: " + "é" * 500,
)
CONTROL = (
    "\x00",
    "\x01",
    "\x07",
    "\x08",
    "\x0b",
    "\x0c",
    "\x1b",
    "\x1b[2J",
    "\x7f",
    "\x85",
    "\u2028",
    "\u2029",
    "\ufeff",
    "\ufffe",
    "\uffff",
    "\ud800",
    "\u202e",
    "\u200b",
    "\r",
    "\t",
    "\x9b",
)
LINE_ENDINGS = ("\n", "\r\n", "\r", "\u2028", "\x85", "\n\r", "\x0c\n")


@st.composite
def text_mutations(draw, text: str, lines_pool=RAW_LINES, rounds=(0, 0, 1, 2)) -> bytes:
    """``text`` with a few (``rounds``: the choices of their number) edits of its
    lines, characters, line endings or encoding."""
    for _ in range(draw(st.sampled_from(rounds))):
        lines = text.split("\n")
        op = draw(
            st.sampled_from(
                ["insert", "duplicate", "drop", "char", "endings", "truncate", "tabs", "repeat"]
            )
        )
        i = draw(st.integers(0, max(len(lines) - 1, 0)))
        if op == "insert":
            lines.insert(i, draw(st.sampled_from(lines_pool)))
        elif op == "duplicate" and lines:
            lines.insert(i, lines[i])
        elif op == "drop" and lines:
            del lines[i]
        elif op == "char":
            joined = "\n".join(lines)
            at = draw(st.integers(0, len(joined)))
            lines = (joined[:at] + draw(st.sampled_from(CONTROL)) + joined[at:]).split("\n")
        elif op == "endings":
            lines = ["\n".join(lines).replace("\n", draw(st.sampled_from(LINE_ENDINGS)))]
        elif op == "truncate":
            joined = "\n".join(lines)
            lines = [joined[: draw(st.integers(0, len(joined)))]]
        elif op == "tabs":
            lines = [
                re.sub(r"^(  )+", lambda m: "\t" * (len(m.group(0)) // 2), line) for line in lines
            ]
        elif op == "repeat":
            lines = lines * draw(st.integers(2, 5))
        text = "\n".join(lines)
    return draw(encoded(text))


@st.composite
def encoded(draw, text: str) -> bytes:
    """UTF-8 mostly; sometimes with a BOM, in UTF-16, Latin-1, or with a broken byte."""
    how = draw(st.sampled_from(["utf-8"] * 12 + ["bom", "utf-16", "latin-1", "broken", "nul-tail"]))
    raw = text.encode("utf-8", errors="surrogatepass")
    if how == "bom":
        return b"\xef\xbb\xbf" + raw
    if how == "utf-16":
        return text.encode("utf-16", errors="surrogatepass")
    if how == "latin-1":
        return text.encode("latin-1", errors="replace") + "é".encode("latin-1")
    if how == "broken":
        at = draw(st.integers(0, len(raw)))
        return (
            raw[:at]
            + draw(st.sampled_from([b"\xff", b"\xc3", b"\xed\xa0\x80", b"\x80"]))
            + raw[at:]
        )
    if how == "nul-tail":
        return raw + b"\x00" * draw(st.integers(1, 8))
    return raw


# --- calculations -----------------------------------------------------------------------

GOOD_FORMULAS = (
    "n = N_D",
    "p = N_A",
    "rho = 1/(q*n*mu_n)",
    "D_n = mu_n*V_T",
    "D_p = mu_p*k*T/q",
    "R = rho*L/(W*t)",
    "sigma = q*n*mu_n + q*p*mu_p",
    "E_v - E_F = k*T*ln(N_A/N_v)",
    "n = N_c*exp((E_F - E_c)/(k*T))",
    "p = n_i^2/N_D",
    "v = mu*E",
    "n_i = sqrt(N_c*N_v)*exp(-E_g/(2*k*T))",
    "n = N_c*F(1/2, eta_n)",
    "D = mu*V_T",
    "R_s = rho/t",
    "lambda = 2*D/v",
)


@st.composite
def names(draw) -> str:
    return draw(
        st.one_of(
            st.sampled_from(
                [
                    "LD-310 resistor",
                    "hot corner",
                    "",
                    "x" * 200,
                    "\x1b[31mred",
                    "\u202eevil",
                    "<script>alert(1)</script>",
                    "a & b < c",
                    "]]>",
                    "name with 'quotes' and \"doubles\"",
                    "`code` *bold* | pipe",
                    "line\nbreak",
                    "\ud83d\ude00 emoji",
                    "名前",
                    "\\x1b",
                    "{value}",
                    "%(name)s",
                    "--format html",
                ]
            ),
            st.text(max_size=40),
        )
    )


@st.composite
def sweep(draw, value, steps=(2, 12)):
    spec = {"from": draw(value), "to": draw(value), "steps": draw(st.integers(*steps))}
    if draw(st.booleans()):
        spec["spacing"] = draw(st.sampled_from(["linear", "log"]))
    return spec


def material_mapping(name: str) -> dict:
    """A built-in material's data file as a tree: the form of a user-defined material
    given inline in a calculation."""
    import copy

    if name not in _MATERIAL_DATA:
        import yaml

        import checker

        folder = Path(checker.__file__).parent / "data" / "materials"
        path = folder / f"{name}.yaml"
        _MATERIAL_DATA[name] = (
            yaml.safe_load(path.read_text(encoding="utf-8")) if path.is_file() else name
        )
    return copy.deepcopy(_MATERIAL_DATA[name])


_MATERIAL_DATA = {}


@st.composite
def calculation_tree(draw, allow_sweep=True, formulas=None, inline_material=False) -> dict:
    """A valid calculation as a tree: a built-in material (or, with ``inline_material``,
    sometimes its whole data mapping given inline), temperature, doping of its own
    species, and a random share of the optional blocks."""
    material = draw(st.sampled_from(sorted(MATERIALS)))
    donors, acceptors = MATERIALS[material]
    swept = 0
    tree = {}
    if draw(st.booleans()):
        tree["name"] = draw(names())
    tree["material"] = material
    if inline_material and draw(st.integers(0, 4)) == 0:
        tree["material"] = material_mapping(material)
    if allow_sweep and draw(st.integers(0, 6)) == 0:
        tree["temperature"] = draw(sweep(valid_temperature()))
        swept += 1
    else:
        tree["temperature"] = draw(valid_temperature())
    doping = {}
    for group, species in (("donors", donors), ("acceptors", acceptors)):
        if draw(st.integers(0, 2)):
            chosen = draw(st.lists(st.sampled_from(species), min_size=1, max_size=2, unique=True))
            entry = {}
            for sp in chosen:
                if allow_sweep and swept < 2 and draw(st.integers(0, 8)) == 0:
                    entry[sp] = draw(sweep(valid_quantity("density")))
                    swept += 1
                else:
                    entry[sp] = draw(valid_quantity("density"))
            doping[group] = entry
    if doping or draw(st.booleans()):
        tree["doping"] = doping
    if draw(st.integers(0, 2)) == 0:
        keys = draw(
            st.lists(
                st.sampled_from(sorted(STRUCTURE) + ["dimensionality"]), max_size=4, unique=True
            )
        )
        tree["structure"] = {
            k: (
                draw(st.sampled_from(["3", "2", "1", 3]))
                if k == "dimensionality"
                else draw(valid_quantity(STRUCTURE[k]))
            )
            for k in keys
        }
    if draw(st.booleans()):
        keys = draw(st.lists(st.sampled_from(sorted(STATED)), min_size=1, max_size=5, unique=True))
        tree["stated"] = {
            k: draw(valid_quantity(STATED[k], signed=k.startswith("ef_"))) for k in keys
        }
    if draw(st.integers(0, 3)) == 0:
        tree["assumes"] = draw(st.lists(st.sampled_from(ASSUMPTION_WORDS), max_size=3))
    if formulas is not None:
        tree["formulas"] = draw(formulas)
    elif draw(st.integers(0, 3)) == 0:
        tree["formulas"] = draw(st.lists(st.sampled_from(GOOD_FORMULAS), min_size=1, max_size=3))
    if draw(st.integers(0, 5)) == 0:
        tree["waivers"] = [
            {
                "rule": draw(st.sampled_from(RULE_IDS)),
                "reason": draw(
                    st.sampled_from(
                        ["measured by Hall", "accepted", "see lab report LR-2231", "ok"]
                    )
                ),
            }
        ]
    if draw(st.integers(0, 5)) == 0:
        options = {}
        if draw(st.booleans()):
            options["band_gap_narrowing"] = draw(st.sampled_from([True, False, "true", "no"]))
        if draw(st.booleans()):
            options["hall_scattering"] = draw(st.sampled_from(HALL_SCATTERING))
        tree["options"] = options
    return tree


@st.composite
def calculation_text(draw, mutate=True, tree=None) -> str:
    """One to three YAML documents: valid calculations, some of them mutated."""
    docs = []
    count = draw(st.sampled_from([1, 1, 1, 2, 3]))
    bad = draw(st.integers(0, count - 1))
    for i in range(count):
        doc = (
            tree
            if (tree is not None and i == bad)
            else draw(calculation_tree(inline_material=True))
        )
        if mutate and i == bad:
            doc = draw(mutated_tree(doc))
        docs.append(draw(yaml_writer()).document(doc))
    head = draw(
        st.sampled_from(
            ["", "", "", "---\n", "%YAML 1.1\n---\n", "# yaml-language-server: $schema=x.json\n"]
        )
    )
    tail = draw(st.sampled_from(["", "", "", "...\n", "---\n"]))
    return head + "---\n".join(docs) + tail


# --- formulas ---------------------------------------------------------------------------


def _symbol_spellings() -> tuple:
    """Every spelling ``regimecheck symbols`` lists (a fixed list if that fails)."""
    fallback = (
        "n",
        "p",
        "N_D",
        "N_A",
        "N_c",
        "N_v",
        "n_i",
        "E_c",
        "E_v",
        "E_F",
        "E_g",
        "eta_n",
        "eta_p",
        "k",
        "T",
        "q",
        "h",
        "hbar",
        "m0",
        "mu_n",
        "mu_p",
        "D_n",
        "D_p",
        "v_n",
        "v_sat_n",
        "lambda_n",
        "sigma",
        "rho",
        "R",
        "R_s",
        "L",
        "A",
        "W",
        "t",
        "E",
        "J",
        "pi",
        "mu",
        "D",
        "v",
        "eta",
        "kT",
        "V_T",
        "f_D",
        "g_D",
    )
    try:
        from checker.cli import main

        out = io.StringIO()
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(io.StringIO()):
            if main(["symbols"]) != 0:
                return fallback
        found = []
        for line in out.getvalue().splitlines():
            match = re.search(r"\[([^\]]*)\]\s*$", line)
            if match and not line.startswith("symbol"):
                found += [s.strip() for s in match.group(1).split(",") if s.strip()]
        return tuple(dict.fromkeys(found)) or fallback
    except Exception:
        return fallback


SYMBOLS = _symbol_spellings()
NUMBERS = (
    "0",
    "1",
    "2",
    "3",
    "0.5",
    "1/2",
    "10",
    "1e300",
    "1e-300",
    "1e308",
    "1e400",
    "3.14159",
    "12345678901234567890",
    ".5",
    "5.",
    "1_000",
    "0x10",
    "64",
    "65",
    "-1",
    "1e-5",
    "2.0",
)
FUNCTIONS = ("exp", "log", "ln", "log10", "sqrt", "abs")
ODD_FUNCTIONS = ("sin", "max", "min", "F", "stated_or", "present", "less", "eval", "exp10")
ORDERS = (
    "1/2",
    "-1/2",
    "0",
    "3/2",
    "-3/2",
    "5/2",
    "7/2",
    "9/2",
    "-5/2",
    "1",
    "2",
    "-1",
    "0.25",
    "1/3",
    "100",
    "-100",
    "eta_n",
    "j",
    "1e300",
    "dim/2 - 1",
)
HOSTILE_FORMULAS = (
    "",
    "=",
    "n",
    "n ==  N_D",
    "n = = N_D",
    "n = N_D = p",
    "= N_D",
    "n =",
    "n = N_D;",
    "__import__('os').system('true') = n",
    "n = (lambda: 0)()",
    "n = [1, 2]",
    "n = 'N_D'",
    "n = N_D if p else q",
    "n = mu_n.real",
    "n = N_D[0]",
    "n = exp(x=1)",
    "n = 2N_D",
    "n = N_D mu_n",
    "n = ∑N_D",
    "µ_n = mu_n",
    "n = N_D²",
    "n = ＮD",
    "n = 9**9**9",
    "n = (N_D^8)^16",
    "n = exp(exp(exp(1000)))",
    "n = F(1/2)",
    "n = F(1/2, eta, 3)",
    "n = sqrt()",
    "n = " + "(" * 200 + "N_D" + ")" * 200,
    "n = " + "N_D+" * 500 + "N_D",
    "n = " + "exp(" * 50 + "1" + ")" * 50,
    "n = N_D^N_D",
    "n = N_D^(1/0)",
    "n = 1/0",
    "n = 0^-1",
    "n = log(0)",
    "n = sqrt(-1)",
    "n = (-1)^(1/2)",
    "n = N_D^1e300",
    "n = N_D ^ 64.0000001",
    "n = 2^1000",
    "n = 10^-400",
    "n = 1e999",
    "n = nan",
    "n = inf",
    "n = N_D\x00",
    "n = N_D\n+ p",
    "n = N_D # comment",
    "n = N_D  \u202e",
    "n := N_D",
    "n = N_D !",
    "n = @N_D",
    "n = N_D @ p",
    "n = N_D % 2",
    "n = N_D // 2",
    "n = ~N_D",
    "n = N_D << 2",
    "n = N_D and p",
    "n = not p",
    "n = N_D < p",
    "n = {N_D}",
    "n = ...",
    "n = f'x'",
    "n = b'x'",
    "n = N_D.__class__",
    "n = (yield)",
    "n = await p",
    "x" * 5000 + " = n",
    "n = F(eta_n, 1/2)",
    "n = F(1/2, N_D)",
    "n = exp(N_D)",
    "n = log(mu_n)",
    "k = k",
    "T = T",
    "pi = 3",
    "n = n",
    "0 = 0",
    "1 = 2",
    "n = -n",
)


def _formula_leaf():
    return st.one_of(st.sampled_from(SYMBOLS), st.sampled_from(SYMBOLS), st.sampled_from(NUMBERS))


@st.composite
def _binary(draw, children):
    a, b = draw(children), draw(children)
    op = draw(st.sampled_from(["+", "-", "*", "/", "^", "**", "*", "/"]))
    space = draw(st.sampled_from(["", " "]))
    text = f"{a}{space}{op}{space}{b}"
    return f"({text})" if draw(st.integers(0, 2)) else text


@st.composite
def _call(draw, children):
    inner = draw(children)
    which = draw(st.integers(0, 9))
    if which < 6:
        return f"{draw(st.sampled_from(FUNCTIONS))}({inner})"
    if which < 9:
        return f"F({draw(st.sampled_from(ORDERS))}, {inner})"
    name = draw(st.sampled_from(ODD_FUNCTIONS))
    args = ", ".join([inner] * draw(st.integers(0, 3)))
    return f"{name}({args})"


def expression():
    """A random expression tree over the trade symbols, written as text."""
    return st.recursive(
        _formula_leaf(),
        lambda children: st.one_of(
            _binary(children),
            _call(children),
            children.map(lambda c: f"-{c}"),
            children.map(lambda c: f"({c})"),
        ),
        max_leaves=16,
    )


_TOKEN = re.compile(r"[A-Za-z_][A-Za-z_0-9]*|[0-9]+\.?[0-9]*(?:e-?[0-9]+)?|\*\*|\S")
_OPERATORS = ("+", "-", "*", "/", "^", "**")


@st.composite
def mutated_formula(draw) -> str:
    """A recognised formula with a symbol, number or operator changed, a power or a
    function added: near misses of the exact relations (sign errors, wrong exponents,
    N_c in place of sqrt(N_c*N_v))."""
    tokens = _TOKEN.findall(draw(st.sampled_from(GOOD_FORMULAS)))
    for _ in range(draw(st.integers(1, 3))):
        i = draw(st.integers(0, len(tokens) - 1))
        token = tokens[i]
        op = draw(st.integers(0, 4))
        if token[0].isalpha() and token not in FUNCTIONS and op < 3:
            tokens[i] = draw(st.sampled_from(SYMBOLS))
        elif token[0].isdigit():
            tokens[i] = draw(st.sampled_from(NUMBERS))
        elif token in _OPERATORS:
            tokens[i] = draw(st.sampled_from(_OPERATORS))
        elif token[0].isalpha() and op == 3 and i + 1 < len(tokens) and tokens[i + 1] != "(":
            tokens[i] = f"{draw(st.sampled_from(FUNCTIONS))}({token})"
        elif (token[0].isalpha() and token not in FUNCTIONS) or token == ")":
            tokens[i] = f"{token}^{draw(st.sampled_from(['2', '(1/2)', '(3/2)', '-1', '3']))}"
    return " ".join(tokens)


@st.composite
def formula_text(draw) -> str:
    kind = draw(st.integers(0, 11))
    if kind < 2:
        return draw(st.sampled_from(GOOD_FORMULAS))
    if kind >= 10:
        return draw(mutated_formula())
    if kind < 4:
        return draw(st.sampled_from(HOSTILE_FORMULAS))
    left = draw(st.sampled_from(SYMBOLS)) if kind < 8 else draw(expression())
    return f"{left} = {draw(expression())}"


def formula_list():
    return st.lists(formula_text(), min_size=1, max_size=4)


# --- CSV tables -------------------------------------------------------------------------

# our key -> header spellings (with and without units) and a strategy of a good cell
TABLE_HEADERS = {
    "name": ("name", "label", "sample", "Name"),
    "material": ("material", "Material", " MATERIAL "),
    "dopant": ("dopant", "species", "impurity", "Dopant"),
    "density": (
        "density [cm-3]",
        "density",
        "doping (cm^-3)",
        "concentration [cm-3]",
        "dopant density [1/cm^3]",
        "density [m^-3]",
    ),
    "temperature": ("temperature", "temp", "T", "Temperature"),
    "resistivity": ("resistivity [ohm*cm]", "rho (ohm cm)", "resistivity", "Rho [Ω·cm]"),
    "sheet_resistance": ("sheet_resistance [ohm/sq]", "rsh", "sheet resistance [ohm/sq]"),
    "thickness": ("thickness [um]", "thick (nm)", "thickness"),
    "mobility": ("mobility [cm^2/(V*s)]", "mu", "hall mobility (cm2/Vs)"),
    "hall_density": ("hall_density [cm-3]", "n_hall", "hall concentration [cm-3]"),
    "diffusivity": ("diffusivity [cm^2/s]", "D", "diffusion coefficient (cm^2/s)"),
    "hall_scattering": ("hall_scattering", "scattering"),
    "notes": ("notes", "comment", "Remarks"),
}
ODD_HEADERS = (
    "Supplier",
    "",
    " ",
    "density [cm-3",
    "density [[cm-3]]",
    "density [furlong]",
    "density [K]",
    "density (cm^(-3))",
    "mobility [cm^2/(V*s)",
    "rho ((ohm)(cm))",
    "density []",
    "[cm-3]",
    "()",
    "\ufeffmaterial",
    "mat\x00erial",
    "dens ity",
    "temperature [K]",
    "temperature [degC]",
    "x" * 300,
    "density [cm-3] [m-3]",
    "density [1e17 cm-3]",
    "\u202edensity",
    "resistivity [ohm*cm*cm]",
)
ODD_CELLS = (
    "",
    " ",
    "nan",
    "NaN",
    "inf",
    "-inf",
    "-1",
    "0",
    "1e999",
    "1e-999",
    "1,5",
    '"',
    '""',
    "a\nb",
    "a\r\nb",
    "\r",
    "\x00",
    "=1+1",
    "@SUM(A1)",
    "1e17 cm-3",
    "300",
    "300 degF",
    "Si ",
    "si",
    "SI",
    "P,B",
    "x" * 500,
    "\u202e300 K",
    "\x1b[31m",
    "1e17 cm-3 cm-3",
    "١٠٠",
    "3e17 /cm^3",
    "0 K",
    "1e30",
    "-300 degC",
    "1e17 m-2",
    "acoustic",
    "2.5",
    "-1.5",
    "3",
    "ionized impurity",
    "#comment",
    "'",
    "\t",
)


def _good_cell(key, material, species, with_unit):
    """A strategy of a good cell of column ``key`` for a row of ``material``."""
    if key == "name":
        return names().map(lambda s: s.replace("\x00", ""))
    if key == "material":
        return st.just(material)
    if key == "dopant":
        return st.sampled_from(species)
    if key == "temperature":
        return valid_temperature()
    if key == "hall_scattering":
        return st.sampled_from(HALL_SCATTERING + ("",))
    if key == "notes":
        return st.sampled_from(["", "from lot sheet", "a, b", "line1\nline2"])
    dimension = TABLE_DIMENSIONS[key]
    if with_unit:
        return valid_quantity(dimension)
    (low, high), units = QUANTITY_UNITS[dimension]
    return st.floats(low, high).map(lambda e: _number_text(10**e))


@st.composite
def table_bytes(draw) -> bytes:
    """A CSV table: a header of known columns (units in brackets or in the cells), a few
    rows, then odd headers, odd cells, quoting, line endings and encodings."""
    import csv

    columns = ["material", "dopant", "density", "temperature"]
    columns += draw(
        st.lists(
            st.sampled_from(
                ["resistivity", "sheet_resistance", "mobility", "hall_density", "diffusivity"]
            ),
            min_size=1,
            max_size=3,
            unique=True,
        )
    )
    columns += draw(
        st.lists(
            st.sampled_from(["name", "thickness", "hall_scattering", "notes"]),
            max_size=2,
            unique=True,
        )
    )
    columns = draw(st.permutations(columns))
    headers = [draw(st.sampled_from(TABLE_HEADERS[key])) for key in columns]
    if draw(st.integers(0, 5)) == 0:  # a unit of any spelling
        at = draw(st.integers(0, len(headers) - 1))
        headers[at] = f"{headers[at].split('[')[0].split('(')[0].strip()} [{draw(unit_text())}]"
    for _ in range(draw(st.sampled_from([0, 0, 0, 1, 2]))):  # odd or missing headers
        if draw(st.booleans()) and headers:
            headers[draw(st.integers(0, len(headers) - 1))] = draw(st.sampled_from(ODD_HEADERS))
        else:
            headers.append(draw(st.sampled_from(ODD_HEADERS)))
    rows = []
    for _ in range(draw(st.sampled_from([1, 1, 2, 3, 4, 0]))):
        material = draw(st.sampled_from(sorted(MATERIALS)))
        donors, acceptors = MATERIALS[material]
        row = []
        for key, header in zip(columns, headers):
            has_unit = header.rstrip().endswith(("]", ")"))
            row.append(draw(_good_cell(key, material, donors + acceptors, not has_unit)))
        row += [""] * (len(headers) - len(row))
        for _ in range(draw(st.sampled_from([0, 0, 0, 1, 2]))):  # odd cells, short/long rows
            op = draw(st.integers(0, 5))
            if op <= 3 and row:
                row[draw(st.integers(0, len(row) - 1))] = draw(
                    st.one_of(st.sampled_from(ODD_CELLS), quantity_text())
                )
            elif op == 4 and row:
                row = row[: draw(st.integers(0, len(row) - 1))]
            else:
                row += draw(st.lists(st.sampled_from(ODD_CELLS), min_size=1, max_size=3))
        rows.append(row)
    out = io.StringIO()
    quoting = draw(
        st.sampled_from([csv.QUOTE_MINIMAL, csv.QUOTE_MINIMAL, csv.QUOTE_ALL, csv.QUOTE_NONNUMERIC])
    )
    writer = csv.writer(
        out,
        quoting=quoting,
        lineterminator=draw(st.sampled_from(["\r\n", "\n", "\n", "\r"])),
        delimiter=draw(st.sampled_from([",", ",", ",", ",", ";", "\t"])),
    )
    for line in draw(st.lists(st.sampled_from(["# lot sheet LT-9", "#", "", "  # x"]), max_size=2)):
        out.write(line + "\n")
    writer.writerow(headers)
    writer.writerows(rows)
    lines = (
        '"unterminated',
        ",,,,",
        "a,b,c",
        '"a""b",c',
        "\x00,\x00",
        "#,#",
        ",".join(["1e17"] * 50),
        "material,dopant,density,temperature",
    )
    return draw(text_mutations(out.getvalue(), lines, rounds=(0, 0, 0, 1, 2)))


# --- memos ------------------------------------------------------------------------------

INFO_STRINGS = (
    "regimecheck",
    "regimecheck",
    "regimecheck",
    "REGIMECHECK",
    "RegimeCheck",
    "regimecheck yaml",
    "regimecheck{.x}",
    "regimecheck\t",
    " regimecheck",
    "yaml regimecheck",
    "yaml",
    "regimecheck`x",
    "regimecheck ```",
    "",
)
PROSE = (
    "Some prose about the resistor.",
    "# Heading",
    "Setext heading\n===",
    "***",
    "<!-- ```regimecheck -->",
    "<div>\n```regimecheck\n</div>",
    "    indented code",
    "| a | b |\n|---|---|",
    "[link](http://x)",
    "---\ntitle: front\n---",
    "",
    "> a quote",
    "- a list item",
    "1. numbered",
    "```",
    "~~~",
    "\\```regimecheck",
    "`` ```regimecheck ``",
    "text\u2028more",
    "\x00",
    "\ufeff",
)


@st.composite
def fenced_block(draw) -> list:
    """The lines of one fenced block, maybe inside list items and block quotes."""
    char = draw(st.sampled_from(["`", "`", "~"]))
    length = draw(st.sampled_from([3, 3, 4, 5]))
    info = draw(st.sampled_from(INFO_STRINGS))
    if draw(st.integers(0, 2)):
        content = draw(calculation_text(mutate=draw(st.booleans())))
    else:
        content = draw(
            st.sampled_from(
                ["", "\n", "material: Si\n", "just text\n", "```\n", "~~~\n", "- a\n- b\n"]
            )
        )
    lines = [char * length + info] + content.rstrip("\n").split("\n")
    closing = draw(
        st.sampled_from(["same", "same", "same", "none", "short", "long", "other", "indented"])
    )
    if closing == "same":
        lines.append(char * length)
    elif closing == "short":
        lines.append(char * (length - 1))
    elif closing == "long":
        lines.append(char * (length + 2))
    elif closing == "other":
        lines.append(("~" if char == "`" else "`") * length)
    elif closing == "indented":
        lines.append("    " + char * length)
    indent = " " * draw(st.sampled_from([0, 0, 0, 1, 2, 3, 4]))
    lines = [indent + line for line in lines]
    for _ in range(draw(st.integers(0, 3))):  # containers, innermost first
        container = draw(st.sampled_from(["- ", "* ", "1. ", "10) ", "> ", ">", "> > "]))
        if container.startswith(">"):
            lazy = draw(st.integers(0, 4)) == 0
            lines = [
                container + line if not lazy or i == 0 else line for i, line in enumerate(lines)
            ]
        else:
            pad = " " * len(container)
            lines = [container + lines[0]] + [pad + line if line else line for line in lines[1:]]
    return lines


@st.composite
def memo_bytes(draw) -> bytes:
    """A Markdown memo: prose and fenced blocks (in lists and quotes), joined by a line
    separator that may not be a newline, then the usual text mutations."""
    lines = []
    for _ in range(draw(st.integers(1, 5))):
        if draw(st.integers(0, 2)):
            lines += draw(fenced_block())
        else:
            lines += draw(st.sampled_from(PROSE)).split("\n")
    separator = draw(
        st.sampled_from(
            ["\n"] * 6 + ["\r\n", "\r", "\u2028", "\x85", "\u2029", "\n\n", "\x0c\n", "\x0b"]
        )
    )
    return draw(text_mutations(separator.join(lines) + separator, RAW_LINES + PROSE))


# --- configuration (TOML) ---------------------------------------------------------------

LEVELS = ("info", "warning", "error")
TOLERANCE_NAMES = ("resistivity", "hall_density", "diffusivity", "mobility")
TABLE_KEYS = (
    "material",
    "dopant",
    "density",
    "temperature",
    "resistivity",
    "sheet_resistance",
    "mobility",
    "hall_density",
    "diffusivity",
    "name",
    "thickness",
    "hall_scattering",
)
HOSTILE_TOML = (
    "",
    " ",
    "INFO",
    "Warning",
    "fatal",
    0,
    -1,
    1.5,
    1e308,
    float("inf"),
    float("nan"),
    float("-inf"),
    10**30,
    -(10**30),
    True,
    False,
    Raw("1979-05-27T07:32:00Z"),
    Raw("07:32:00"),
    Raw("1979-05-27"),
    [],
    [[]],
    {},
    "STAT",
    "stat01",
    "STAT1",
    "XXX99",
    "*",
    "**",
    "[",
    "../*",
    "/*",
    "\x1b[31m",
    "\u202e",
    "x" * 400,
    "é",
    [1, "a"],
    ["STAT01"],
    {"a": {"b": {"c": 1}}},
    Raw("0x7fffffffffffffffffffffff"),
    Raw("1_000"),
    Raw("+inf"),
    Raw("-nan"),
    Raw("'''multi\nline'''"),
    Raw('"""\\u0000"""'),
    Raw('"\\ud800"'),
)
ODD_CONFIG_KEYS = (
    "fail_level",
    "Fail-Level",
    "failLevel",
    "only ",
    "skips",
    "rules",
    "threshold.STAT01",
    "columns.x",
    "",
    "é",
    "tool",
    "regimecheck",
    "waiver",
    "x" * 200,
    "\u202ekey",
    "fail-level\x00",
)


def toml_value(value) -> str:
    simple = _simple_scalar(value, "nan", "inf")
    if simple is not None:
        return simple
    if isinstance(value, list):
        return "[" + ", ".join(toml_value(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{" + ", ".join(f"{toml_key(k)} = {toml_value(v)}" for k, v in value.items()) + "}"
    if value is None:
        return '""'
    return json.dumps(str(value), ensure_ascii=False)


def toml_key(key) -> str:
    if isinstance(key, Raw):
        return key.text
    key = str(key)
    return key if re.fullmatch(r"[A-Za-z0-9_-]+", key) else json.dumps(key, ensure_ascii=False)


@st.composite
def config_tree(draw) -> dict:
    """A valid [tool.regimecheck] table as a tree."""
    rule = st.sampled_from(RULE_IDS)
    prefix = st.sampled_from(sorted({re.sub(r"[0-9]+$", "", r) for r in RULE_IDS}))
    tree = {}
    if draw(st.booleans()):
        tree["fail-level"] = draw(st.sampled_from(LEVELS))
    if draw(st.integers(0, 3)) == 0:
        tree["only"] = draw(st.lists(st.one_of(rule, prefix), min_size=1, max_size=3))
    if draw(st.integers(0, 3)) == 0:
        tree["skip"] = draw(st.lists(st.one_of(rule, prefix), max_size=3))
    if draw(st.integers(0, 4)) == 0:
        tree["file-patterns"] = draw(
            st.lists(
                st.sampled_from(["*.yaml", "*.yml", "*.md", "*.csv", "*", "*.YAML"]),
                min_size=1,
                max_size=3,
            )
        )
    if draw(st.integers(0, 4)) == 0:
        tree["exclude-patterns"] = draw(
            st.lists(st.sampled_from(["drafts/*", "*.csv", "x*", "[!a]*", "**"]), max_size=2)
        )
    if draw(st.booleans()):
        tree["severity"] = draw(st.dictionaries(rule, st.sampled_from(LEVELS), max_size=3))
    if draw(st.booleans()):
        tree["threshold"] = draw(
            st.dictionaries(
                st.sampled_from(
                    [
                        "STAT01",
                        "STAT02",
                        "CARR01",
                        "ION01",
                        "ION02",
                        "TRAN01",
                        "CONST01",
                        "MOB02",
                        "FORM03",
                    ]
                ),
                st.floats(-10, 10, allow_nan=False).map(lambda v: round(v, 3)),
                max_size=3,
            )
        )
    if draw(st.integers(0, 2)) == 0:
        tree["tolerance"] = draw(
            st.dictionaries(
                st.sampled_from(TOLERANCE_NAMES),
                st.floats(0, 3).map(lambda v: round(v, 3)),
                max_size=2,
            )
        )
    if draw(st.integers(0, 3)) == 0:
        columns = draw(
            st.dictionaries(
                st.sampled_from(TABLE_KEYS),
                st.sampled_from(["Rho (ohm cm)", "Supplier", "Lot", "density [cm-3]", "T"]),
                max_size=2,
            )
        )
        if draw(st.booleans()):
            columns["ignore"] = draw(
                st.lists(st.sampled_from(["Supplier", "Lot", "x"]), max_size=2)
            )
        tree["columns"] = columns
    if draw(st.integers(0, 2)) == 0:
        tree["waive"] = [
            {
                "path": draw(
                    st.sampled_from(
                        [
                            "*.yaml",
                            "calc.yaml",
                            "*",
                            "**/*",
                            "sentinel.yaml",
                            "[",
                            "/abs/*",
                            "../x",
                            "lots.csv",
                        ]
                    )
                ),
                "rule": draw(rule),
                "reason": draw(st.sampled_from(["Hall-measured", "checked"])),
            }
            for _ in range(draw(st.integers(1, 2)))
        ]
    return tree


class TomlWriter:
    """Writes keys, table headers and values in one of the many spellings TOML allows
    (quoted parts, spaces inside brackets, multi-line arrays with comments and trailing
    commas), chosen per item by a seeded generator."""

    def __init__(self, seed: int):
        self.random = random.Random(seed)

    def part(self, name) -> str:
        text = toml_key(name)
        if text == str(name) and self.random.random() < 0.15:
            return self.random.choice([json.dumps(str(name)), f"'{name}'"])
        return text

    def dotted(self, names) -> str:
        join = self.random.choice([".", ".", ".", " . ", ". "])
        return join.join(self.part(n) for n in names)

    def header(self, names, array=False) -> str:
        pad = self.random.choice(["", "", "", " "])
        inside = f"{pad}{self.dotted(names)}{pad}"
        line = f"[[{inside}]]" if array else f"[{inside}]"
        return line + self.random.choice(["", "", "", "  # table", "\t"])

    def value(self, value) -> str:
        if isinstance(value, list) and value and self.random.random() < 0.3:
            items = [
                f"  {toml_value(v)}," + self.random.choice(["", " # item [x] = y"]) for v in value
            ]
            return "[\n" + "\n".join(items) + "\n]"
        return toml_value(value)

    def assign(self, key, value) -> str:
        return f"{self.part(key)}{self.random.choice([' = ', '=', '  =  '])}{self.value(value)}"


@st.composite
def config_text(draw, tree, pyproject: bool) -> str:
    """The tree written as TOML: in [tool.regimecheck] (always for a pyproject.toml),
    at the top level, or inline; keys, headers and arrays in varied spellings."""
    out = TomlWriter(draw(st.integers(0, 2**32 - 1)))
    layout = "tool" if pyproject else draw(st.sampled_from(["tool", "top", "inline"]))
    base = ("tool", "regimecheck") if layout == "tool" else ()
    head, tables = [], []
    for key, value in tree.items():
        if (
            layout == "inline"
            or not isinstance(value, (dict, list))
            or (isinstance(value, list) and not all(isinstance(v, dict) for v in value))
            or draw(st.integers(0, 3)) == 0
        ):
            head.append(out.assign(key, value))
        elif isinstance(value, dict):
            tables.append(out.header(base + (key,)))
            tables += [out.assign(k, v) for k, v in value.items()]
        else:
            for item in value:
                tables.append(out.header(base + (key,), array=True))
                tables += [out.assign(k, v) for k, v in item.items()]
    lines = ([out.header(base)] if base else []) + head + tables
    if pyproject and draw(st.booleans()):
        lines = [
            "[project]",
            'name = "x"',
            'description = """a [tool.regimecheck] note',
            '"""',
            "",
        ] + lines
    return "\n".join(lines) + "\n"


TOML_LINES = (
    "[tool.regimecheck]",
    "[tool]",
    "[[tool.regimecheck.waive]]",
    "[severity]",
    'fail-level = "info"',
    "fail-level = ",
    "= 1",
    "only = [",
    "a = 1\na = 2",
    "[tool.regimecheck.threshold]\nSTAT01 = nan",
    "x = " + "[" * 2000,
    "x = " + "{a = " * 500 + "1" + "}" * 500,
    "threshold = {STAT01 = inf}",
    "'''",
    '"""',
    'key = "\\x00"',
    "\x00",
    "# comment",
    "[[waive]]\npath = 1",
)


@st.composite
def config_bytes(draw, pyproject: bool) -> bytes:
    tree = draw(config_tree())
    if tree and draw(st.booleans()):
        tree = draw(mutated_toml(tree))
    text = draw(config_text(tree, pyproject))
    if draw(st.integers(0, 3)):
        return text.encode("utf-8", errors="surrogatepass")
    return draw(text_mutations(text, TOML_LINES))


def hostile_toml():
    """One of HOSTILE_TOML, copied: a later mutation must not change the shared value
    (hypothesis replays draws and needs them to come out the same)."""
    import copy

    return st.sampled_from(HOSTILE_TOML).map(copy.deepcopy)


@st.composite
def mutated_toml(draw, tree):
    for _ in range(draw(st.integers(1, 2))):
        path, node = draw(st.sampled_from(list(_paths(tree))))
        op = draw(st.sampled_from(["value", "value", "key", "delete", "deep"]))
        if op == "value" and path:
            _set(tree, path, draw(st.one_of(hostile_toml(), st.text(max_size=20))))
        elif op == "key" and isinstance(node, dict):
            node[draw(st.sampled_from(ODD_CONFIG_KEYS + tuple(node)))] = draw(hostile_toml())
        elif op == "delete" and path:
            _delete(tree, path)
        elif op == "deep" and path:
            depth = draw(
                st.sampled_from((3, 10, 100, 998, 1000) + ((5000,) if PROFILE["long"] else ()))
            )
            _set(
                tree,
                path,
                Raw(
                    "[" * depth + "1" + "]" * depth
                    if draw(st.booleans())
                    else "{a = " * depth + "1" + "}" * depth
                ),
            )
    return tree


# --- cases ------------------------------------------------------------------------------


@dataclasses.dataclass
class Case:
    """Input files (name -> bytes), the options after the paths, and which files are
    named on the command line (None: every file not used as an option's value)."""

    kind: str
    files: dict
    argv_extra: tuple = ()
    paths: tuple | None = None
    sentinel: bool = True

    def run(self, timeout: float = DEFAULT_TIMEOUT, debug: bool = False) -> Outcome:
        return run_case(
            self.files,
            self.argv_extra,
            paths=self.paths,
            timeout=timeout,
            sentinel=SENTINEL_NAME if self.sentinel else None,
            debug=debug,
        )

    def describe(self, limit: int = 1500) -> str:
        out = [
            f"kind: {self.kind}",
            f"argv: {command_line(self.files, self.argv_extra, self.paths)}",
        ]
        for name, data in self.files.items():
            if name == SENTINEL_NAME and data == SENTINEL:
                continue
            shown = repr(data[:limit]) + (" ..." if len(data) > limit else "")
            out.append(f"--- {name!r} ({len(data)} bytes)\n{shown}")
        return "\n".join(out)


@st.composite
def report_options(draw, formats=FORMAT_CHOICES) -> tuple:
    options = ["--format", draw(st.sampled_from(formats))]
    if draw(st.integers(0, 4)) == 0:
        options += ["--fail-on", draw(st.sampled_from(LEVELS))]
    if draw(st.integers(0, 6)) == 0:
        options.append("--exit-zero")
    if draw(st.integers(0, 6)) == 0:
        options.append("--skip-unrelated")
    return tuple(options)


@st.composite
def _file_name(draw, stem: str, suffix: str) -> str:
    odd = draw(st.integers(0, 19))
    if odd == 0:
        return draw(
            st.sampled_from(
                [
                    f"{stem} with space{suffix}",
                    f"ç{stem}{suffix}",
                    f"{stem}{suffix.upper()}",
                    f"-{stem}{suffix}",
                    f"{stem}\x1b[2J{suffix}",
                    f"{stem}\u202e{suffix}",
                    f"sub/dir/{stem}{suffix}",
                    f"{stem}'\"{suffix}",
                    f"{stem}<&>{suffix}",
                    f"{stem}\n{suffix}",
                ]
            )
        )
    return stem + suffix


@st.composite
def _with_sentinel(draw, kind, files, formats=FORMAT_CHOICES, extra=()) -> Case:
    files = dict(files)
    files[SENTINEL_NAME] = SENTINEL
    options = draw(report_options(formats)) + tuple(extra)
    walk = draw(st.integers(0, 9)) == 0
    return Case(kind, files, options, paths=(".",) if walk else None)


@st.composite
def calculation_cases(draw, formats=FORMAT_CHOICES) -> Case:
    text = draw(calculation_text())
    name = draw(_file_name("calc", draw(st.sampled_from([".yaml", ".yaml", ".yml"]))))
    return draw(_with_sentinel("calculation", {name: draw(text_mutations(text))}, formats))


# Other spellings of each dimension's units (most read by pint, some refused).
ALTERNATE_UNITS = {
    "density": (
        "cm**-3",
        "1/cm**3",
        "1/m**3",
        "mm^-3",
        "um^-3",
        "1/(cm*cm*cm)",
        "cm^-2/cm",
        "m-3",
        "/m^3",
        "cm^-3 ",
        "CM-3",
        "cm^-2",
        "nm^-3",
        "1/cc",
    ),
    "temperature": ("K", "degC", "°C", "℃", "C", "kelvin", "degK", "mK", "°K", "F", "degF"),
    "length": (
        "micrometer",
        "micron",
        "angstrom",
        "Å",
        "mil",
        "inch",
        "km",
        "pm",
        "nanometer",
        "um",
        "µ",
        "u",
    ),
    "area": ("um**2", "micrometer^2", "mm^2", "m^2", "um*um", "nm*um", "um2", "cm2"),
    "field": ("V/um", "MV/m", "kV/mm", "V/nm", "mV/um", "V*cm^-1", "kV/cm/s"),
    "voltage": ("kV", "uV", "volt", "millivolt", "V*s/s", "J/C"),
    "mobility": (
        "cm^2/V/s",
        "cm**2/(V*s)",
        "m^2/V/s",
        "cm^2*V^-1*s^-1",
        "cm2 V-1 s-1",
        "cm^2/(V s)",
        "cm²/(V·s)",
        "cm^2/Vs",
    ),
    "diffusivity": ("cm**2/s", "um^2/ns", "mm^2/s", "cm^2*s^-1", "cm²/s", "m2/s"),
    "velocity": ("um/ps", "km/s", "cm*s^-1", "mm/ns", "cm/us", "m/s/s"),
    "conductivity": ("mS/cm", "1/(ohm*cm)", "siemens/cm", "ohm^-1*cm^-1", "S*cm^-1", "S/cm2"),
    "resistivity": ("mohm*cm", "ohm*um", "Ω*cm", "ohm cm", "ohm·cm", "kohm*cm", "Ω-cm", "ohm/cm"),
    "sheet resistance": (
        "ohm/sq",
        "Ω/sq",
        "kohm/sq",
        "ohms/sq",
        "Ω/□",
        "ohm/square",
        "ohm",
        "ohm/sq/sq",
    ),
    "resistance": ("Mohm", "mohm", "MΩ", "kΩ", "ohms", "V/A", "ohm/sq"),
    "energy": ("meV", "J", "zJ", "erg", "eV/K", "keV", "mV"),
}
ODD_NUMBERS = (
    "1.5x10^16",
    "1.5×10¹⁶",
    "1.5e+16",
    "+1.5E16",
    "15e15",
    ".15e17",
    "1.5 × 10^16",
    "1.5·10^16",
    "−2",
    "1.5*10^-3",
    "3",
    "300",
    "0.0259",
    "1e-3",
    "2.5",
    "1e5",
    "4e17",
    "27",
)


@st.composite
def slot_quantity(draw, dimension: str) -> str:
    """For a slot of ``dimension``: a good value, the same in another spelling of its
    unit or number, or any quantity text at all."""
    how = draw(st.integers(0, 5))
    if how == 0:
        return draw(
            valid_temperature() if dimension == "temperature" else valid_quantity(dimension)
        )
    if how <= 2:
        number = draw(st.sampled_from(ODD_NUMBERS))
        space = draw(st.sampled_from([" ", "", " ", "\u00a0"]))
        return number + space + draw(st.sampled_from(ALTERNATE_UNITS[dimension]))
    return draw(quantity_text())


@st.composite
def units_cases(draw, formats=FORMAT_CHOICES) -> Case:
    tree = draw(calculation_tree(allow_sweep=False))
    for _ in range(draw(st.sampled_from([1, 1, 1, 2, 3]))):
        slot = draw(
            st.sampled_from(["temperature", "donor", "acceptor", "structure", "stated", "sweep"])
        )
        if slot == "temperature":
            tree["temperature"] = draw(slot_quantity("temperature"))
        elif slot in ("donor", "acceptor"):
            species = MATERIALS[tree["material"]][slot == "acceptor"]
            tree.setdefault("doping", {}).setdefault(slot + "s", {})[
                draw(st.sampled_from(species))
            ] = draw(slot_quantity("density"))
        elif slot == "structure":
            key = draw(st.sampled_from(sorted(STRUCTURE)))
            tree.setdefault("structure", {})[key] = draw(slot_quantity(STRUCTURE[key]))
        elif slot == "stated":
            key = draw(st.sampled_from(sorted(STATED)))
            tree.setdefault("stated", {})[key] = draw(slot_quantity(STATED[key]))
        else:
            dimension = draw(st.sampled_from(["temperature", "density"]))
            ends = {
                "from": draw(slot_quantity(dimension)),
                "to": draw(slot_quantity(dimension)),
                "steps": 3,
            }
            if dimension == "temperature":
                tree["temperature"] = ends
            else:
                species = MATERIALS[tree["material"]][0][0]
                tree.setdefault("doping", {}).setdefault("donors", {})[species] = ends
    text = draw(yaml_writer()).document(tree)
    return draw(
        _with_sentinel("units", {"calc.yaml": text.encode("utf-8", "surrogatepass")}, formats)
    )


@st.composite
def formula_cases(draw, formats=FORMAT_CHOICES) -> Case:
    tree = draw(calculation_tree(allow_sweep=draw(st.integers(0, 9)) == 0, formulas=formula_list()))
    text = draw(yaml_writer()).document(tree)
    return draw(
        _with_sentinel("formulas", {"calc.yaml": text.encode("utf-8", "surrogatepass")}, formats)
    )


@st.composite
def table_cases(draw, formats=FORMAT_CHOICES) -> Case:
    name = draw(_file_name("lots", draw(st.sampled_from([".csv", ".csv", ".CSV"]))))
    return draw(_with_sentinel("table", {name: draw(table_bytes())}, formats))


@st.composite
def memo_cases(draw, formats=FORMAT_CHOICES) -> Case:
    name = draw(_file_name("memo", draw(st.sampled_from([".md", ".md", ".markdown"]))))
    return draw(_with_sentinel("memo", {name: draw(memo_bytes())}, formats))


CONFIG_CALCULATION = (
    b"name: hot corner\nmaterial: Si\ntemperature: 150 degC\n"
    b"doping:\n  donors: {P: 3e17 cm-3}\n  acceptors: {B: 2e16 cm-3}\n"
    b"stated:\n  electron_density: 3e17 cm-3\n  electron_mobility: 700 cm^2/(V*s)\n"
    b"  thermal_voltage: 0.0259 V\nformulas:\n  - n = N_D\n"
)
CONFIG_TABLE = (
    b"name,material,dopant,density [cm-3],temperature,Rho (ohm cm)\n"
    b"lot A,Si,P,1e16,300 K,4.8\nlot B,Si,B,5e16,300 K,0.127\n"
)


@st.composite
def config_cases(draw, formats=FORMAT_CHOICES) -> Case:
    pyproject = draw(st.integers(0, 3)) == 0
    name = (
        "pyproject.toml"
        if pyproject
        else draw(st.sampled_from(["settings.toml", "regimecheck.toml", "settings.cfg"]))
    )
    files = {
        "calc.yaml": CONFIG_CALCULATION,
        "lots.csv": CONFIG_TABLE,
        name: draw(config_bytes(pyproject)),
        SENTINEL_NAME: SENTINEL,
    }
    options = draw(report_options(formats)) + ("--config", name)
    walk = draw(st.integers(0, 9)) == 0
    paths = (".",) if walk else ("calc.yaml", "lots.csv", SENTINEL_NAME)
    return Case("config", files, options, paths=paths, sentinel=False)


STRATEGIES = {
    "calculation": calculation_cases,
    "units": units_cases,
    "formulas": formula_cases,
    "table": table_cases,
    "memo": memo_cases,
    "config": config_cases,
}


def cases(kind: str, formats=FORMAT_CHOICES):
    """The strategy of cases of one kind (see KINDS)."""
    return STRATEGIES[kind](formats)


# --- the harness ------------------------------------------------------------------------


@dataclasses.dataclass
class Failure:
    cls: str  # one of FAILURE_CLASSES
    detail: str

    def __str__(self):
        return f"{self.cls}: {self.detail}"


@dataclasses.dataclass
class Outcome:
    argv: list
    code: int | None
    stdout: str
    stderr: str
    modified: list
    hang: bool
    elapsed: float
    fmt: str
    escaped: str | None = None  # an exception that left main(), formatted
    stack: str | None = None  # where a hung case was when the bound ran out
    sentinel: str | None = None
    debug_traceback: str | None = None

    def failures(self) -> list:
        found = []
        if self.hang:
            found.append(Failure("hang", f"no answer within the bound; stack:\n{self.stack}"))
        if self.escaped:
            found.append(Failure("traceback", f"exception escaped main():\n{self.escaped}"))
        if self.code is not None and self.code not in (0, 1, 2):
            found.append(Failure("exit3", f"exit code {self.code}: {_last_line(self.stderr)}"))
        elif "regimecheck: internal error" in self.stderr:
            found.append(
                Failure("exit3", f"internal error with exit {self.code}: {_last_line(self.stderr)}")
            )
        for stream, text in (("stderr", self.stderr), ("stdout", self.stdout)):
            if "Traceback (most recent call last)" in text:
                found.append(Failure("traceback", f"on {stream}: {_tail(text)}"))
        if self.modified:
            found.append(Failure("input-modified", f"changed: {self.modified}"))
        if not self.hang and self.code in (0, 1, 2):
            problem = output_problem(self.fmt, self.stdout, self.stderr, self.code)
            if problem:
                found.append(Failure("malformed-output", problem))
            if self.sentinel and self.sentinel not in self.stdout:
                found.append(
                    Failure(
                        "lost-calculation",
                        f"{self.sentinel} is not in the report (exit {self.code}): "
                        f"{_tail(self.stderr)}",
                    )
                )
        return found

    def signature(self, failure: Failure) -> str:
        """Class and what kind of error, to tell distinct bugs apart."""
        detail = failure.detail
        if failure.cls == "exit3":
            frame = last_frame(self.debug_traceback) if self.debug_traceback else ""
            match = re.search(r"internal error \((\w+)", detail)
            kind = match.group(1) if match else detail[:40]
            return f"exit3 {kind} {frame}".strip()
        if failure.cls == "traceback":
            return f"traceback {_last_line(detail)[:60]}"
        if failure.cls == "malformed-output":
            return f"malformed-output {self.fmt} {detail.split(':')[0][:60]}"
        if failure.cls == "hang":  # the line moves while it runs: file and function
            return f"hang {re.sub(r':[0-9]+ in ', ' in ', last_frame(self.stack or ''))}"
        return failure.cls


def _last_line(text: str) -> str:
    lines = [line for line in (text or "").strip().splitlines() if line.strip()]
    return lines[-1][:400] if lines else ""


def _tail(text: str, size: int = 600) -> str:
    return text[-size:]


def last_frame(text: str) -> str:
    """'file:line in function' of the last frame of a formatted traceback or stack."""
    frames = re.findall(r'File "([^"]+)", line (\d+), in (\S+)', text or "")
    if not frames:
        return ""
    path, line, function = frames[-1]
    short = path.split("/checker/", 1)[-1] if "/checker/" in path else Path(path).name
    return f"{short}:{line} in {function}"


# Characters no report may print raw (the project's safe_text promise): C0/C1 controls
# other than tab and newline, the bidirectional overrides and isolates.
_UNSAFE = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]")


def output_problem(fmt: str, stdout: str, stderr: str, code: int) -> str | None:
    """Why the report is not what its format promises (None: it is)."""
    for stream, text in (("stdout", stdout), ("stderr", stderr)):
        bad = _UNSAFE.search(text)
        if bad:
            at = bad.start()
            return (
                f"raw character U+{ord(bad.group(0)):04X} on {stream}: "
                f"{text[max(0, at - 60) : at + 20]!r}"
            )
    if not stdout.strip():
        if code == 2:
            return None  # refused before any report (settings, usage)
        return f"no report printed (exit {code})"
    if fmt in ("json", "sarif"):

        def constant(name):
            raise ValueError(f"non-standard JSON constant {name}")

        try:
            data = json.loads(stdout, parse_constant=constant)
        except ValueError as exc:
            return f"{fmt} report is not strict JSON: {exc}"
        if fmt == "json":
            summary = data.get("summary", {}) if isinstance(data, dict) else {}
            if summary.get("exit_code") != code:
                return f"JSON summary exit_code {summary.get('exit_code')!r} but exit {code}"
            if (summary.get("input_errors") or data.get("input_errors")) and code != 2:
                return f"JSON lists input errors but exit {code}"
        elif not (
            isinstance(data, dict)
            and data.get("version") == "2.1.0"
            and isinstance(data.get("runs"), list)
        ):
            return "SARIF without version 2.1.0 and runs"
    elif fmt in ("junit", "html"):
        text = stdout
        if fmt == "html":
            start = text.find("<html")
            if start < 0:
                return "HTML report without <html"
            text = text[start:]
        try:
            ET.fromstring(text.encode("utf-8", errors="surrogateescape"))
        except ET.ParseError as exc:
            return f"{fmt} report is not well-formed XML: {exc}"
        except ValueError as exc:
            return f"{fmt} report cannot be encoded: {exc}"
    return None


def _hashes(root: Path) -> dict:
    out = {}
    for path in sorted(root.rglob("*")):
        if path.is_file() and not path.is_symlink():
            out[path.relative_to(root).as_posix()] = hashlib.sha256(path.read_bytes()).hexdigest()
    return out


def _argv(files: dict, argv_extra, paths, folder: str) -> list:
    named = {a for a in argv_extra if a in files}
    if paths is None:
        paths = [name for name in files if name not in named]
    resolve = lambda name: folder if name == "." else os.path.join(folder, name)
    argv = ["check"] + [resolve(p) for p in paths]
    argv += [resolve(a) if a in files else a for a in argv_extra]
    return argv


def command_line(files: dict, argv_extra=(), paths=None) -> str:
    """The command as run from the folder that holds the files."""
    import shlex

    argv = _argv(files, argv_extra, paths, ".")
    return "regimecheck " + " ".join(shlex.quote(a) for a in argv)


_RUN_LOCK = threading.Lock()
_THREAD_NAME = "regimecheck-fuzz-case"


def runaway_threads() -> int:
    """How many cases that overran their bound are still running in this process."""
    return sum(1 for t in threading.enumerate() if t.name == _THREAD_NAME and t.is_alive())


def run_case(
    files: dict,
    argv_extra=(),
    *,
    paths=None,
    timeout: float = DEFAULT_TIMEOUT,
    sentinel: str | None = None,
    debug: bool = False,
) -> Outcome:
    """Write ``files`` (name -> bytes; names may hold '/') into a fresh temporary folder,
    run ``check <files> <argv_extra>`` in-process in a worker thread, and report.

    ``paths``: the names given as paths (default: every file not named in
    ``argv_extra``; "." is the folder itself).  A name in ``argv_extra`` is replaced by
    its full path.  ``sentinel``: a file name that every report must mention.
    ``debug``: run with REGIMECHECK_DEBUG=1 and keep the traceback of an internal error.
    """
    from checker.cli import main

    folder = Path(tempfile.mkdtemp(prefix="regimecheck-fuzz-"))
    try:
        for name, data in files.items():
            target = folder / name
            target.parent.mkdir(parents=True, exist_ok=True)
            target.write_bytes(data)
        before = _hashes(folder)
        argv = _argv(files, argv_extra, paths, str(folder))
        fmt = argv[argv.index("--format") + 1] if "--format" in argv else "console"
        out_bytes, err_bytes = io.BytesIO(), io.BytesIO()
        out = io.TextIOWrapper(out_bytes, encoding="utf-8", errors="strict", write_through=True)
        err = io.TextIOWrapper(err_bytes, encoding="utf-8", errors="strict", write_through=True)
        box = {}

        def target():
            try:
                box["code"] = main(list(argv))
            except SystemExit as exc:
                box["code"] = (
                    exc.code if isinstance(exc.code, int) else (0 if exc.code is None else 1)
                )
            except BaseException as exc:  # noqa: BLE001 - the property under test
                box["escaped"] = "".join(traceback.format_exception(exc))

        with _RUN_LOCK:
            saved = sys.stdout, sys.stderr, os.environ.get("REGIMECHECK_DEBUG")
            if debug:
                os.environ["REGIMECHECK_DEBUG"] = "1"
            else:
                os.environ.pop("REGIMECHECK_DEBUG", None)
            sys.stdout, sys.stderr = out, err
            start = time.monotonic()
            worker = threading.Thread(target=target, name=_THREAD_NAME, daemon=True)
            try:
                worker.start()
                worker.join(timeout)
            finally:
                elapsed = time.monotonic() - start
                sys.stdout, sys.stderr = saved[0], saved[1]
                if saved[2] is None:
                    os.environ.pop("REGIMECHECK_DEBUG", None)
                else:
                    os.environ["REGIMECHECK_DEBUG"] = saved[2]
        hang = worker.is_alive()
        stack = None
        if hang:
            frame = sys._current_frames().get(worker.ident)
            stack = "".join(traceback.format_stack(frame)) if frame else "(no frame)"
        with contextlib.suppress(ValueError):
            out.flush()
            err.flush()
        stdout = out_bytes.getvalue().decode("utf-8", errors="replace")
        stderr = err_bytes.getvalue().decode("utf-8", errors="replace")
        escaped = box.get("escaped")
        debug_tb = None
        if debug and escaped:
            debug_tb, escaped = escaped, None
        after = _hashes(folder)
        modified = sorted(name for name, digest in before.items() if after.get(name) != digest)
        modified += sorted(f"{name} (new file)" for name in set(after) - set(before))
        return Outcome(
            argv=argv,
            code=box.get("code"),
            stdout=stdout,
            stderr=stderr,
            modified=modified,
            hang=hang,
            elapsed=elapsed,
            fmt=fmt,
            escaped=escaped,
            stack=stack,
            sentinel=sentinel,
            debug_traceback=debug_tb,
        )
    finally:
        shutil.rmtree(folder, ignore_errors=True)


def debug_traceback(case: Case, timeout: float = DEFAULT_TIMEOUT) -> str | None:
    """The traceback of an internal error, from a run with REGIMECHECK_DEBUG=1."""
    return case.run(timeout=timeout, debug=True).debug_traceback


# --- reduction of a failing case --------------------------------------------------------


def examine(case: Case, timeout: float = DEFAULT_TIMEOUT) -> Outcome:
    """Run a case; after an internal error run it again with REGIMECHECK_DEBUG=1 and
    keep the traceback (its last frame is part of the failure's signature)."""
    outcome = case.run(timeout)
    if any(f.cls == "exit3" for f in outcome.failures()):
        outcome.debug_traceback = case.run(timeout, debug=True).debug_traceback
    return outcome


def _option_variants(case: Case):
    """The case with one option (and its value) fewer, or without the folder walk."""
    extra = list(case.argv_extra)
    i = 0
    while i < len(extra):
        width = 2 if extra[i] in ("--format", "--fail-on") else 1
        if extra[i] != "--config":
            yield dataclasses.replace(case, argv_extra=tuple(extra[:i] + extra[i + width :]))
        i += 2 if extra[i] in ("--format", "--fail-on", "--config") else 1
    if case.paths == (".",):
        yield dataclasses.replace(case, paths=None)


def minimize(
    case: Case, signature: str, budget: int = 300, timeout: float = DEFAULT_TIMEOUT, progress=None
) -> Case:
    """A smaller case that still fails with ``signature``: options dropped, other files
    dropped, then lines and (for small files) single bytes of each file removed (delta
    debugging).  ``budget``: the most runs to spend; ``progress()`` is called after each."""
    runs = [0]

    def holds(trial: Case) -> bool:
        if runs[0] >= budget or runaway_threads():
            return False
        runs[0] += 1
        outcome = examine(trial, timeout)
        if progress:
            progress()
        return any(outcome.signature(f) == signature for f in outcome.failures())

    shrinking = True
    while shrinking:  # options, one at a time, greedily
        shrinking = False
        for trial in _option_variants(case):
            if holds(trial):
                case, shrinking = trial, True
                break
    for name in list(case.files):
        if len(case.files) == 1 or name in case.argv_extra:
            continue
        paths = case.paths
        if paths not in (None, (".",)):
            paths = tuple(p for p in paths if p != name)
            if not paths:
                continue
        trial = dataclasses.replace(
            case,
            files={k: v for k, v in case.files.items() if k != name},
            paths=paths,
            sentinel=case.sentinel and name != SENTINEL_NAME,
        )
        if holds(trial):
            case = trial
    for name in list(case.files):
        if name == SENTINEL_NAME and case.files[name] == SENTINEL:
            continue
        for unit in (b"\n", b",", None):  # lines, flow items, then single bytes
            parts = _split(case.files[name], unit)
            chunk = max(len(parts) // 2, 1)
            while chunk >= 1 and runs[0] < budget:
                i, changed = 0, False
                while i < len(parts) and runs[0] < budget:
                    trial_parts = parts[:i] + parts[i + chunk :]
                    trial = dataclasses.replace(
                        case, files={**case.files, name: b"".join(trial_parts)}
                    )
                    if holds(trial):
                        parts, case, changed = trial_parts, trial, True
                    else:
                        i += chunk
                if not changed:
                    chunk //= 2
            if unit == b"," and len(case.files[name]) > 400:
                break  # bytes one by one: small files only
    return case


def _split(data: bytes, unit) -> list:
    if unit is None:
        return [data[i : i + 1] for i in range(len(data))]
    if unit == b",":  # after each , { } [ ] of flow style
        return [piece for piece in re.split(rb"(?<=[,{}\[\]])", data) if piece]
    pieces = data.split(unit)
    return [piece + unit for piece in pieces[:-1]] + ([pieces[-1]] if pieces[-1] else [])


# --- reproductions on disk --------------------------------------------------------------


def save_case(case: Case, folder, outcome: Outcome | None = None, note: str = "") -> Path:
    """Write a case as a folder a person can re-run: files/ (the inputs as written),
    case.json (kind, options, paths), command.txt, and the outcome's streams."""
    folder = Path(folder)
    files = folder / "files"
    files.mkdir(parents=True, exist_ok=True)
    for name, data in case.files.items():
        target = files / name
        target.parent.mkdir(parents=True, exist_ok=True)
        target.write_bytes(data)
    meta = {
        "kind": case.kind,
        "argv_extra": list(case.argv_extra),
        "paths": None if case.paths is None else list(case.paths),
        "sentinel": case.sentinel,
        "files": list(case.files),
    }
    (folder / "case.json").write_text(json.dumps(meta, indent=1, ensure_ascii=True) + "\n")
    (folder / "command.txt").write_text(
        f"cd {files} && REGIMECHECK_DEBUG=1 python -m checker "
        + command_line(case.files, case.argv_extra, case.paths)[len("regimecheck ") :]
        + "\n",
        errors="backslashreplace",
    )
    if outcome is not None:
        (folder / "stdout.txt").write_text(outcome.stdout[:20000], errors="backslashreplace")
        (folder / "stderr.txt").write_text(outcome.stderr[:20000], errors="backslashreplace")
        report = [f"exit code: {outcome.code}", f"elapsed: {outcome.elapsed:.2f} s", note]
        report += [str(f) for f in outcome.failures()]
        if outcome.debug_traceback:
            report.append("traceback with REGIMECHECK_DEBUG=1:\n" + outcome.debug_traceback)
        (folder / "outcome.txt").write_text("\n".join(report) + "\n", errors="backslashreplace")
    return folder


def load_case(folder) -> Case:
    folder = Path(folder)
    meta = json.loads((folder / "case.json").read_text())
    files = {name: (folder / "files" / name).read_bytes() for name in meta["files"]}
    return Case(
        meta["kind"],
        files,
        tuple(meta["argv_extra"]),
        None if meta["paths"] is None else tuple(meta["paths"]),
        meta["sentinel"],
    )
