"""Calculation files: YAML documents describing one calculation each, with source positions.

Keys (all optional except material and temperature):

    name: <text>
    material: <built-in name> | <mapping in the material data-file form>
    temperature: "<number> K" | "<number> degC" | {from, to, steps[, spacing]} (a sweep)
    doping:
      donors:    {<species>: "<density>" | {from, to, steps[, spacing]}, ...}
      acceptors: {<species>: "<density>", ...}
    structure:   dimensionality (3/2/1), length, cross_section | thickness + width,
                 field | voltage, subband_energies (a 2D gas or a 1D wire: [<energy>, ...]
                 from the band edge)
    stated:      the numbers the author gives (see STATED_KEYS)
    assumes:     [trade words of ASSUMPTIONS]
    formulas:    ["<lhs> = <rhs>", ...] in trade symbols (analysed by the engine)
    waivers:     [{rule: <id>, reason: <text>}, ...]
    options:
      band_gap_narrowing: true | false
      hall_scattering: acoustic | ionized-impurity | neutral-impurity | <exponent r>

Scalars are kept as text and parsed by us (PyYAML would read 1e17 as a
string and 1.0e17 as a float).  Aliases and duplicate keys are refused.
"""

from __future__ import annotations

import re
from pathlib import Path
from typing import TypeAlias

from ..close_words import close_matches, did_you_mean
from ..errors import InputError, RegimecheckError
from ..physics.arrays import FloatArray
from ..physics.constants import EV
from ..physics.materials import Material
from ..quantity_registry.registry import QUANTITIES, file_keys
from ..records import Record, field
from ..vocabulary_words import ASSUMPTIONS
from .material_catalog import resolve_material
from .plain_yaml import plain_documents
from .problems import Problems
from .quantities import check_plausible, parse_quantity, parse_temperature, read_number
from .text_bytes import read_text_file

TOP_KEYS = (
    "name",
    "material",
    "temperature",
    "doping",
    "structure",
    "stated",
    "assumes",
    "formulas",
    "waivers",
    "options",
)
_TOP_KEY_SET = frozenset(TOP_KEYS)
DOPING_KEYS = ("donors", "acceptors")
OPTION_KEYS = ("band_gap_narrowing", "hall_scattering")
# YAML key -> (engine quantity name, dimension read as): views of the quantity registry
STRUCTURE_KEYS = file_keys("structure")
STATED_KEYS = file_keys("stated")
# a structure key that is a list, not one quantity: the subband bottoms of a 2D gas
SUBBAND_KEY = "subband_energies"
MAX_SUBBANDS = 20
# stated keys only a sheet (a 2D calculation) has: its densities are per area
SHEET_KEYS = tuple(key for q in QUANTITIES if q.unit == "cm^-2" for key in q.keys)
# stated keys only a wire (a 1D calculation) has: its densities are per length
WIRE_KEYS = tuple(key for q in QUANTITIES if q.unit == "cm^-1" and q.section for key in q.keys)
# their engine names (a calculation's stated numbers are kept under those)
_SHEET_NAMES = frozenset(STATED_KEYS[key][0] for key in SHEET_KEYS)
_WIRE_NAMES = frozenset(STATED_KEYS[key][0] for key in WIRE_KEYS)
# A few common spellings of the trade words an author may declare (ASSUMPTIONS).
ASSUMPTION_SPELLINGS = {
    "nondegenerate": "non-degenerate",
    "boltzmann": "non-degenerate",
    "complete-ionization": "full-ionization",
    "fully-ionized": "full-ionization",
    "uncompensated": "no-compensation",
    "one-carrier": "single-carrier",
    "einstein": "einstein-relation",
    "drift-diffusion": "diffusive",
    "ohmic": "low-field",
}
# the only quantities that may be negative
SIGNED_KEYS = tuple(key for q in QUANTITIES if q.signed for key in q.keys)


class Located(Record):
    """A plain value tree plus the (line, column) of every node, 1-based."""

    value: object
    positions: dict = field(default_factory=dict)


class Calculation(Record):
    name: str
    source: str  # file path
    line: int
    material: Material
    temperature: float  # K
    donors: dict  # species -> m^-3
    acceptors: dict
    band_gap_narrowing: bool = False
    hall_exponent: float = -0.5  # r of tau ∝ E^r for the Hall factor (acoustic phonons)
    structure: dict = field(default_factory=dict)  # engine name -> SI value
    stated: dict = field(default_factory=dict)  # engine name -> SI value
    assumes: dict = field(default_factory=dict)  # word -> line
    waivers: dict = field(default_factory=dict)  # rule id -> (reason, line)
    lines: dict = field(default_factory=dict)  # engine name -> line of its key
    formulas: list = field(default_factory=list)  # (text, "file:line:col", line)
    columns: dict = field(default_factory=dict)  # engine name -> table column header
    sweep: list = field(default_factory=list)  # Axis objects (empty: one point)
    subband_energies: tuple = ()  # J above the band edge (a 2D gas); () for one at 0

    @property
    def majority(self) -> str:
        """The carrier the doping gives ("n" when undoped): what an unsubscripted mu means."""
        return "p" if sum(self.acceptors.values()) > sum(self.donors.values()) else "n"


class FileResult(Record):
    path: str
    calculations: list
    errors: list  # InputError messages (each names file:line:column)


def _plain(node, path, positions):
    import yaml  # the composer's nodes: only texts the line reader leaves to it

    mark = node.start_mark
    positions[path] = (mark.line + 1, mark.column + 1)
    if isinstance(node, yaml.MappingNode):
        # keys are plain scalars: the strict loader refuses any other; a scalar value
        # (most of them) is taken here, without a call
        out = {}
        for key, value in node.value:
            here = path + (key.value,)
            if type(value) is yaml.ScalarNode:
                mark = value.start_mark
                positions[here] = (mark.line + 1, mark.column + 1)
                out[key.value] = value.value
            else:
                out[key.value] = _plain(value, here, positions)
        return out
    if isinstance(node, yaml.SequenceNode):
        return [_plain(child, path + (i,), positions) for i, child in enumerate(node.value)]
    return node.value  # scalar text, parsed later by us


def read_documents(text: str, name: str) -> tuple[list[Located], list[str]]:
    """Every sound document as plain text values with positions, and the errors of the
    others (strict YAML, see yaml_source; the usual file is read by plain_yaml)."""
    plain = plain_documents(text)
    if plain is not None:
        return [Located(value, positions) for value, positions in plain], []
    from .yaml_source import compose_documents

    nodes, errors = compose_documents(text, name)
    docs = []
    for node in nodes:
        positions: dict[tuple[object, ...], tuple[int, int]] = {}
        docs.append(Located(_plain(node, (), positions), positions))
    return docs, errors


class _Where:
    def __init__(self, path: str, positions: dict):
        self.path, self.positions = path, positions

    def __call__(self, *keys) -> str:
        found = self.positions.get(keys)  # the key itself, nearly always
        if found is None:
            for cut in range(len(keys) - 1, -1, -1):
                if keys[:cut] in self.positions:
                    found = self.positions[keys[:cut]]
                    break
            else:
                return self.path
        return f"{self.path}:{found[0]}:{found[1]}"

    def key(self, *keys) -> str:
        """file:line:column and the key path, e.g. 'f.yaml:7:3: structure.voltage'."""
        return f"{self(*keys)}: {'.'.join(map(str, keys))}"

    def line(self, *keys) -> int:
        found = self.positions.get(keys)
        if found is not None:
            return found[0]
        for cut in range(len(keys) - 1, -1, -1):
            if keys[:cut] in self.positions:
                return self.positions[keys[:cut]][0]
        return 0


def _placed(error: InputError, where, *keys) -> InputError:
    """``error`` led by 'file:line:column: key.path' (a value's place is written only
    where it is refused: most are read without one)."""
    return InputError(f"{where.key(*keys)}: {error}")


def _unknown_keys(mapping: dict, allowed, where, what: str, section=()):
    """An error for every key of ``mapping`` outside ``allowed``."""
    unknown = [key for key in mapping if key not in allowed]
    if not unknown:  # (the usual mapping)
        return
    problems = Problems()
    for key in unknown:
        hint = did_you_mean(key, allowed) or f"allowed: {', '.join(allowed)}"
        problems.add(InputError(f"{where(*section, key)}: unknown {what} key {key!r}; {hint}"))
    problems.raise_any()


def _to_bool(text, where):
    value = str(text).strip().lower()
    if value in ("true", "yes", "on"):
        return True
    if value in ("false", "no", "off"):
        return False
    raise InputError(f"{where}: expected true or false, got {text!r}")


def _mapping(data, key, where, form: str) -> dict:
    block = data.get(key)
    if block in (None, ""):  # an empty key: nothing given
        return {}
    if not isinstance(block, dict):
        raise InputError(f"{where.key(key)} must be a mapping {form}, got {block!r}")
    return block


def parse_calculation(doc: Located, path: str) -> Calculation:
    """One calculation document; every problem found is reported at once (InputErrors)."""
    where = _Where(path, doc.positions)
    data = doc.value
    if not isinstance(data, dict):
        raise InputError(
            f"{where()}: a calculation must be a mapping with keys {', '.join(TOP_KEYS)}"
        )
    problems = Problems()
    misspelt: set[str] = set()
    if not data.keys() <= _TOP_KEY_SET:  # (the usual calculation names none other)
        problems.run(_unknown_keys, data, TOP_KEYS, where, "calculation")
        misspelt = {
            close
            for key in data
            if key not in TOP_KEYS
            for close in close_matches(key, TOP_KEYS, n=1)
        }
    for key in ("material", "temperature"):
        if key not in data and key not in misspelt:  # else 'did you mean' says it
            problems.add(
                InputError(
                    f"{where()}: missing {key!r}; add e.g. "
                    + ("material: Si" if key == "material" else "temperature: 300 K")
                )
            )
    material = problems.run(_material, data, where) if "material" in data else None
    axes: list[Axis] = []
    temperature = problems.run(_temperature, data, where, axes) if "temperature" in data else None
    groups = (
        problems.run(_doping, data, material, where, axes, default={})
        if material is not None
        else {}
    )
    options = problems.run(_options, data, where, default=(False, -0.5))
    name = problems.run(_name, data, where)
    lines: dict[str, int] = {}
    structure = problems.run(_structure, data, where, lines, default={})
    subbands = problems.run(_subband_energies, data, where, default=())
    known = len(problems.messages)
    stated = problems.run(_quantities, data, "stated", STATED_KEYS, where, lines, default={})
    # a stated section that could not be read says so itself: judging the sheet's inputs
    # from what is left would only add "state a sheet density" beside a refused one
    stated_read = len(problems.messages) == known
    if material is not None and structure is not None and stated is not None and stated_read:
        problems.run(_sheet_fit, material, structure, stated, groups or {}, subbands, where)
    assumes = problems.run(_assumptions, data.get("assumes"), where, default={})
    waivers = problems.run(_waivers, data.get("waivers"), where, default={})
    formulas = problems.run(_formulas, data.get("formulas"), where, default=[])
    if axes:  # (a sweep)
        problems.run(_check_sweep_size, axes, where)
    problems.messages.sort(key=lambda message: _position(message, path))
    problems.raise_any()
    # both were read: a missing or unreadable one is a problem, raised above
    assert material is not None and temperature is not None
    line = doc.positions.get((), (1, 1))[0]
    calc = Calculation(
        name=name or f"{Path(path).name}:{line}",
        source=path,
        line=line,
        material=material,
        temperature=temperature,
        donors=groups.get("donors", {}),
        acceptors=groups.get("acceptors", {}),
        band_gap_narrowing=options[0],
        hall_exponent=options[1],
        structure=structure,
        stated=stated,
        assumes=assumes,
        waivers=waivers,
        lines=lines,
        formulas=formulas,
        sweep=axes,
        subband_energies=subbands or (),
    )
    return calc


def _position(message: str, path: str) -> tuple:
    """(line, column) a message names after ``path``, for listing errors in file order."""
    found = re.match(r":(\d+):(\d+)", message[len(path) :]) if message.startswith(path) else None
    return (int(found[1]), int(found[2])) if found else (0, 0)


def _name(data, where):
    if "name" not in data:
        return None
    if isinstance(data["name"], (dict, list)):
        raise InputError(f"{where.key('name')} must be a text, e.g. name: n-well resistor")
    return str(data["name"])


def _material(data, where):
    value = data["material"]
    if isinstance(value, dict):
        return resolve_material(value, locate=lambda *keys: where("material", *keys))
    if not isinstance(value, str) or not value.strip():
        raise InputError(
            f"{where.key('material')} must be a built-in name such as Si, or a "
            f"mapping of the material's parameters; got {value!r}"
        )
    try:
        return resolve_material(value)
    except InputError as exc:
        raise InputError(f"{where.key('material')}: {exc}") from None


def _temperature(data, where, axes):
    if isinstance(data["temperature"], dict):
        axes.append(_axis(data["temperature"], "temperature", "T", where, ("temperature",)))
        return float(axes[-1].values[0])
    text = data["temperature"]
    try:
        return check_plausible(parse_temperature(text), "temperature", text)
    except InputError as exc:
        raise _placed(exc, where, "temperature") from None


def _doping(data, material, where, axes) -> dict:
    doping = _mapping(data, "doping", where, "of 'donors' and/or 'acceptors' to {species: density}")
    problems = Problems()
    problems.run(_unknown_keys, doping, DOPING_KEYS, where, "doping", ("doping",))
    groups: dict[str, dict[str, float]] = {}
    for group in DOPING_KEYS:
        entries = doping.get(group) or {}
        if not isinstance(entries, dict):
            problems.add(
                InputError(
                    f"{where.key('doping', group)}: write {group} as "
                    "{species: density}, e.g. {P: 1e17 cm-3}"
                )
            )
            continue
        groups[group] = {}
        for species, text in entries.items():
            value = problems.run(_density, material, group, species, text, where, axes)
            if value is not None:
                groups[group][species] = value
    problems.raise_any()
    return groups


def _density(material, group, species, text, where, axes) -> float:
    try:
        dopant = material.dopant(species)
        if dopant.kind != group[:-1]:
            raise InputError(
                f"{species} is a {dopant.kind} in {material.name}; move it under {dopant.kind}s"
            )
        if not isinstance(text, dict):
            density = parse_quantity(text, "density")
            if density < 0:
                raise InputError(f"density {text!r} is negative; give a value >= 0")
            return check_plausible(density, "density", text)
    except InputError as exc:
        raise _placed(exc, where, "doping", group, species) from None
    axes.append(_axis(text, "density", (group, species), where, ("doping", group, species)))
    return float(axes[-1].values[0])


def _options(data, where) -> tuple:
    if data.get("options") in (None, ""):  # none given (most calculations)
        return False, -0.5
    options = _mapping(data, "options", where, "of " + ", ".join(OPTION_KEYS))
    _unknown_keys(options, OPTION_KEYS, where, "option", ("options",))
    bgn = (
        _to_bool(options["band_gap_narrowing"], where.key("options", "band_gap_narrowing"))
        if "band_gap_narrowing" in options
        else False
    )
    hall = (
        _hall_exponent(options["hall_scattering"], where.key("options", "hall_scattering"))
        if "hall_scattering" in options
        else -0.5
    )
    return bgn, hall


def _check_sweep_size(axes, where):
    if len(axes) > 2:
        raise InputError(
            f"{where()}: a sweep has at most two axes (temperature and one "
            f"density, or two densities); this one has {len(axes)}"
        )
    if len(axes) == 2 and len(axes[0].values) * len(axes[1].values) > MAX_SWEEP_POINTS:
        raise InputError(
            f"{where()}: the sweep has {len(axes[0].values) * len(axes[1].values)} "
            f"points; the limit is {MAX_SWEEP_POINTS}"
        )


# "T" for the temperature, or (group, species) of a density, e.g. ("donors", "P")
AxisKey: TypeAlias = str | tuple[str, str]


class Axis(Record):
    """One swept input: temperature (key "T") or a density ((group, species))."""

    key: AxisKey  # "T", or (group, species) of a density, e.g. ("donors", "P")
    dimension: str
    values: FloatArray  # SI, in the order of the grid
    spacing: str  # "linear" | "log"
    line: int


SWEEP_KEYS = ("from", "to", "steps", "spacing")
MAX_SWEEP_STEPS = 100_000
MAX_SWEEP_POINTS = 4_000_000


def _axis(spec: dict, dimension: str, key, where, path) -> Axis:
    """A range {from, to, steps, spacing} as an array of SI values."""
    import numpy as np

    here = where(*path)
    _unknown_keys(spec, SWEEP_KEYS, where, "sweep", path)
    for needed in ("from", "to", "steps"):
        if needed not in spec:
            raise InputError(
                f"{here}: a sweep needs from, to and steps, e.g. "
                "{from: 1e15 cm-3, to: 1e19 cm-3, steps: 41}"
            )
    ends = []
    for end in ("from", "to"):
        text = spec[end]
        at = where.key(*path, end)
        value = (
            parse_temperature(text, at)
            if dimension == "temperature"
            else parse_quantity(text, dimension, at)
        )
        ends.append(check_plausible(value, dimension, text, at))
    steps_text = str(spec["steps"]).strip()
    if not re.fullmatch(r"[0-9]{1,6}", steps_text) or not 2 <= int(steps_text) <= MAX_SWEEP_STEPS:
        raise InputError(
            f"{where.key(*path, 'steps')}: steps must be a whole number from 2 to "
            f"{MAX_SWEEP_STEPS}, got {spec['steps']!r}"
        )
    steps = int(steps_text)
    spacing = str(spec.get("spacing", "linear" if dimension == "temperature" else "log"))
    if spacing not in ("linear", "log"):
        raise InputError(f"{where(*path, 'spacing')}: spacing is linear or log")
    if spacing == "log" and min(ends) <= 0:
        raise InputError(f"{here}: a log sweep needs both ends above zero")
    start, stop = ends
    values = (
        np.geomspace(start, stop, steps) if spacing == "log" else np.linspace(start, stop, steps)
    )
    return Axis(key, dimension, values, spacing, where.line(*path))


def _formulas(entries, where) -> list:
    if entries is None:
        return []
    if isinstance(entries, str):
        entries = [entries]
    if not isinstance(entries, list):
        raise InputError(
            f"{where('formulas')}: formulas must be a list of texts such as "
            "['D_n = mu_n*k*T/q', 'n = N_D']"
        )
    out = []
    for i, text in enumerate(entries):
        if not isinstance(text, str) or not text.strip():
            raise InputError(
                f"{where('formulas', i)}: write each formula as text '<left side> = <right side>'"
            )
        out.append((text.strip(), where("formulas", i), where.line("formulas", i)))
    return out


def _hall_exponent(text, where) -> float:
    """The exponent r of tau ∝ E^r: a mechanism name or a number from -1.5 to 2.5."""
    from ..physics.hall import SCATTERING_EXPONENTS

    word = normal_word(text)
    if word in SCATTERING_EXPONENTS:
        return SCATTERING_EXPONENTS[word]
    value = read_number(word) if re.fullmatch(HALL_EXPONENT, word) else None
    if value is None or not -1.5 <= value <= 2.5:
        raise InputError(
            f"{where}: hall_scattering must be one of "
            f"{', '.join(SCATTERING_EXPONENTS)} or an exponent r (tau ∝ E^r) "
            f"in half steps from -1.5 to 2.5, got {text!r}"
        )
    return value


# a number in half steps (the reader also bounds it to -1.5 .. 2.5); the schema uses it too
HALL_EXPONENT = r"[-+]?[0-9]{1,2}(\.[05]0*)?"


def normal_word(text) -> str:
    """A trade word as the tables spell it: lower case, '-' between parts."""
    return str(text).strip().lower().replace("_", "-").replace(" ", "-")


def _quantities(data, section, keys, where, lines, lists=()) -> dict:
    """The quantities of a section (``lists``: allowed keys read elsewhere)."""
    block = data.get(section)
    if not isinstance(block, dict):  # (its form worded only here: forty keys joined)
        block = _mapping(data, section, where, f"of {', '.join(keys)} to quantities")
    problems = Problems()
    if not all(key in keys or key in lists for key in block):
        problems.run(_unknown_keys, block, tuple(keys) + tuple(lists), where, section, (section,))
    out = {}
    for key, text in block.items():
        if key in keys:
            value = problems.run(_quantity, section, key, keys[key][1], text, where)
            if value is not None:
                out[keys[key][0]] = value
                lines[keys[key][0]] = where.line(section, key)
    problems.raise_any()
    return out


def _quantity(section, key, dimension, text, where) -> float:
    try:
        if key == "dimensionality":
            if str(text).strip() not in ("1", "2", "3"):
                raise InputError(f"dimensionality must be 3, 2 or 1, got {text!r}")
            return float(str(text))
        value = parse_quantity(text, dimension)
        if value < 0 and key not in SIGNED_KEYS:
            raise InputError(f"{text!r} is negative; give a value >= 0")
        check_plausible(value, dimension, text)
        if value == 0 and dimension in ("length", "area", "density") and section == "structure":
            raise InputError("must be larger than zero")
        return value
    except InputError as exc:
        raise _placed(exc, where, section, key) from None


# structure.modes: more modes than a square millimetre of a metal carries is a typo
MAX_MODES = 1e12
# Two ways of giving the same number must agree to this fraction (rounded trade
# numbers; common practice (no source)).
AGREEMENT = 0.01


def _structure(data, where, lines) -> dict:
    """The structure block; a field or area given twice over must agree."""
    if data.get("structure") in (None, ""):  # none given (most calculations)
        return {}
    structure = _quantities(data, "structure", STRUCTURE_KEYS, where, lines, (SUBBAND_KEY,))
    given = _mapping(data, "structure", where, "")
    problems = Problems()
    if "voltage" in structure and "L" not in structure:
        problems.add(
            InputError(
                f"{where.key('structure', 'voltage')} needs structure.length "
                "(the field is voltage / length); add length, or give field "
                "instead of voltage"
            )
        )
    elif "voltage" in structure and "field" in structure:
        from_voltage = structure["voltage"] / structure["L"]
        if not _agree(from_voltage, structure["field"]):
            problems.add(
                InputError(
                    f"{where.key('structure', 'field')} ({given['field']}) disagrees with "
                    f"structure.voltage / structure.length = {from_voltage * 1e-5:.4g} kV/cm; "
                    "give field or voltage, not both"
                )
            )
    if "A" in structure and "thickness" in structure and "width" in structure:
        product = structure["thickness"] * structure["width"]
        if not _agree(product, structure["A"]):
            problems.add(
                InputError(
                    f"{where.key('structure', 'cross_section')} ({given['cross_section']}) "
                    f"disagrees with structure.thickness x structure.width = {product * 1e12:.4g} "
                    "um^2; give cross_section or thickness and width, not both"
                )
            )
    modes = structure.get("modes_given")  # a stated mode count bounds G by 2q^2/h per mode
    if modes is not None and not 0 < modes <= MAX_MODES:
        problems.add(
            InputError(
                f"{where.key('structure', 'modes')}: {given['modes']!r} is not a number of "
                f"conducting modes; give a count above 0 and at most {MAX_MODES:.0e} (a bulk "
                "wire of 1 um^2 has some thousands), e.g. modes: 2"
            )
        )
    problems.raise_any()
    return structure


def _agree(a: float, b: float) -> bool:
    return abs(a - b) <= AGREEMENT * max(abs(a), abs(b))


def _assumptions(entries, where) -> dict:
    if entries is None:
        return {}
    if isinstance(entries, str):
        entries = [entries]
    if not isinstance(entries, list):
        raise InputError(
            f"{where('assumes')}: assumes must be a list of words such as "
            "[non-degenerate, full-ionization]"
        )
    out = {}
    for i, word in enumerate(entries):
        text = _ASSUMPTION_WORDS.get(word) if type(word) is str else None
        if text is None:
            text = normal_word(word)
            text = ASSUMPTION_SPELLINGS.get(text, text)
        if text not in ASSUMPTIONS:
            hint = did_you_mean(text, ASSUMPTIONS) or f"known: {', '.join(ASSUMPTIONS)}"
            raise InputError(f"{where('assumes', i)}: unknown assumption {word!r}; {hint}")
        out[text] = where.line("assumes", i)
        if type(word) is str and len(_ASSUMPTION_WORDS) < 1024:
            _ASSUMPTION_WORDS[word] = text
    return out


# an assumption as written -> the word it names (normal_word, then the spellings), for the
# few spellings a file repeats in every calculation; only words that name an assumption
_ASSUMPTION_WORDS: dict[str, str] = {}


def _waivers(entries, where) -> dict:
    if entries is None:
        return {}
    if not isinstance(entries, list):
        raise InputError(
            f"{where('waivers')}: waivers must be a list of {{rule: <id>, reason: <text>}}"
        )
    out = {}
    for i, entry in enumerate(entries):
        here = where("waivers", i)
        if not isinstance(entry, dict):
            raise InputError(f"{here}: write a waiver as {{rule: <id>, reason: <text>}}")
        _unknown_keys(entry, ("rule", "reason"), where, "waiver", ("waivers", i))
        if any(isinstance(v, (dict, list)) for v in entry.values()):
            raise InputError(f"{here}: rule and reason are texts: {{rule: <id>, reason: <text>}}")
        if not entry.get("rule"):
            raise InputError(f"{here}: the waiver names no rule; add rule: <id>")
        reason = str(entry.get("reason") or "").strip()
        if len(reason) < 3:
            raise InputError(
                f"{here}: the waiver of {entry['rule']} has no reason; add "
                "reason: <why this finding does not apply>"
            )
        out[str(entry["rule"]).strip().upper()] = (reason, where.line("waivers", i))
    return out


def _looks_like_calculation(docs: list[Located], errors: list[str]) -> bool:
    if errors:
        return True  # broken YAML is reported when parsed
    return any(isinstance(doc.value, dict) and "material" in doc.value for doc in docs)


def parse_calculations(text: str, path: str) -> FileResult:
    """Every calculation of a YAML text; a bad one is an error, the others still load.
    Line numbers are those of ``text`` (a memo pads its blocks to keep its own)."""
    return _calculations_of(*read_documents(text, path), path)


def _calculations_of(docs: list[Located], errors: list[str], path: str) -> FileResult:
    calculations, problems = [], Problems()
    problems.messages += errors
    for doc in docs:
        calculation = problems.run(parse_calculation, doc, path)
        if calculation is not None:
            calculations.append(calculation)
    return FileResult(path, calculations, problems.messages)


def read_calculation_file(path, explicit: bool = True) -> FileResult:
    """Read every calculation of a YAML file; a bad one is an error, the others still load.
    Not ``explicit`` (found by a walk, or --skip-unrelated): a YAML file none of whose
    documents has a ``material`` key is some other YAML (CI settings …) and is skipped."""
    path = str(path)
    text, error = read_text_file(path)
    if error:
        return FileResult(path, [], [error])
    docs, errors = read_documents(text, path)  # read once: a walk decides on the same
    if not explicit and not _looks_like_calculation(docs, errors):
        return FileResult(path, [], [])
    result = _calculations_of(docs, errors, path)
    if not result.calculations and not result.errors:
        result.errors.append(f"{path}: the file holds no calculation")
    return result


def _subband_energies(data, where) -> tuple:
    """structure.subband_energies: the subband bottoms of a 2D gas or a 1D wire (J), from
    the band edge."""
    block = data.get("structure")
    if not isinstance(block, dict) or SUBBAND_KEY not in block:
        return ()
    entries = block[SUBBAND_KEY]
    here = where.key("structure", SUBBAND_KEY)
    if isinstance(entries, str):
        entries = [entries]
    if not isinstance(entries, list) or not 1 <= len(entries) <= MAX_SUBBANDS:
        raise InputError(
            f"{here} must be a list of 1 to {MAX_SUBBANDS} energies from the band edge, "
            "e.g. [0 meV, 45 meV]"
        )
    problems = Problems()
    energies = []
    for i, text in enumerate(entries):
        at = where.key("structure", SUBBAND_KEY, i)
        value = problems.run(parse_quantity, text, "energy", at)
        if value is not None and not 0 <= value <= 2 * EV:
            problems.add(
                InputError(
                    f"{at}: a subband bottom lies 0 to 2 eV above the band edge, got {text!r}"
                )
            )
        elif value is not None:
            energies.append(value)
    problems.raise_any()
    return tuple(sorted(energies))


def _sheet_fit(material, structure, stated, groups, subbands, where) -> None:
    """A sheet (2D) or wire (1D) calculation and its inputs fit together: sheet densities
    only in 2D, line densities only in 1D, a 2D material never solved as bulk, and
    something that fixes a sheet's or a wire's Fermi level."""
    problems = Problems()
    dim = int(structure.get("dim", material.dimensionality))
    if dim == 1 or not _WIRE_NAMES.isdisjoint(stated):
        problems.run(_wire_fit, material, dim, stated, groups, subbands, where)
        problems.raise_any()
        if dim == 1:
            return
    sheet_keys = (
        []
        if _SHEET_NAMES.isdisjoint(stated)
        else [k for k in SHEET_KEYS if STATED_KEYS[k][0] in stated]
    )
    if material.dimensionality == 2 and dim == 3:
        problems.add(
            InputError(
                f"{where.key('structure', 'dimensionality')}: {material.name} is a 2D "
                "material (a sheet or channel); write dimensionality: 2 (or 1 for a wire) "
                "or leave it out"
            )
        )
    for key in sheet_keys if dim != 2 else ():
        problems.add(
            InputError(
                f"{where.key('stated', key)}: a sheet density (cm-2) belongs to a 2D "
                "calculation; add structure: {dimensionality: 2} (or choose a 2D material), "
                "or state the volume density, e.g. electron_density: 1e17 cm-3"
            )
        )
    if subbands and dim != 2:
        problems.add(
            InputError(
                f"{where.key('structure', SUBBAND_KEY)}: subbands belong to a 2D gas; add "
                "dimensionality: 2 or remove subband_energies"
            )
        )

    def linear() -> bool:  # (asked only where it decides something)
        return material.band_shape("electron").model == "linear"

    if subbands and linear():
        problems.add(
            InputError(
                f"{where.key('structure', SUBBAND_KEY)}: {material.name} has linear bands "
                "without a subband ladder; remove subband_energies"
            )
        )
    if "stated_net_sheet" in stated and not linear():
        problems.add(
            InputError(
                f"{where.key('stated', 'net_sheet_density')}: the net sheet density n - p "
                "fixes the Fermi level of a zero-gap sheet (graphene); for a 2D gas state "
                "electron_sheet_density or hole_sheet_density"
            )
        )
    for key, carrier in (("electron_sheet_density", "electron"), ("hole_sheet_density", "hole")):
        if key in sheet_keys and dim == 2:
            try:
                material.bands(carrier, 2, subbands or None)
            except RegimecheckError as exc:
                problems.add(InputError(f"{where.key('stated', key)}: {exc}"))
    is_sheet = dim == 2 and (material.dimensionality == 2 or sheet_keys)
    fixes = sheet_keys + [k for k in ("ef_minus_ec", "ef_minus_ev") if STATED_KEYS[k][0] in stated]
    if is_sheet and not fixes:
        problems.add(
            InputError(
                f"{where.key('stated')}: a 2D gas or sheet takes its carriers from the "
                "stated sheet density; add e.g. electron_sheet_density: 1e12 cm-2 "
                + ("(or net_sheet_density, the gate-induced n - p) " if linear() else "")
                + "under stated:"
            )
        )
    if is_sheet and any(groups.values()):
        problems.add(
            InputError(
                f"{where.key('doping')}: a 2D gas or sheet has no dopants in its channel; "
                "remove doping and state the sheet density it gives instead"
            )
        )
    if is_sheet:
        structure.setdefault("dim", 2.0)
    problems.raise_any()


def _wire_fit(material, dim, stated, groups, subbands, where) -> None:
    """A wire (1D) calculation and its inputs fit together: line densities only in 1D, no
    sheet densities there, a line density or Fermi level fixing the wire's carriers (a 2D
    material, or a wire without dopants), and bands for the carrier stated."""
    problems = Problems()
    wire_keys = [key for key in WIRE_KEYS if STATED_KEYS[key][0] in stated]
    for key in wire_keys if dim != 1 else ():
        problems.add(
            InputError(
                f"{where.key('stated', key)}: a line density (cm-1) belongs to a 1D "
                "calculation (a nanowire or quantum wire); add structure: "
                "{dimensionality: 1}, or state the density of this calculation's "
                "dimensionality (cm-3 in 3D, cm-2 in 2D)"
            )
        )
    if dim != 1:
        problems.raise_any()
        return
    sheet_keys = [key for key in SHEET_KEYS if STATED_KEYS[key][0] in stated]
    for key in sheet_keys:
        problems.add(
            InputError(
                f"{where.key('stated', key)}: a sheet density (cm-2) belongs to a 2D "
                "calculation; a 1D wire takes its line density, e.g. "
                "electron_line_density: 2e6 cm-1"
            )
        )
    if material.band_shape("electron").model == "linear":
        problems.add(
            InputError(
                f"{where.key('structure', 'dimensionality')}: {material.name} has linear "
                "zero-gap bands of a sheet, without 1D bands; write dimensionality: 2"
            )
        )
        problems.raise_any()
    for key, carrier in (("electron_line_density", "electron"), ("hole_line_density", "hole")):
        if key in wire_keys:
            try:
                material.bands(carrier, 1, subbands or None)
            except RegimecheckError as exc:
                problems.add(InputError(f"{where.key('stated', key)}: {exc}"))
    doped = any(groups.values())
    if wire_keys and doped:
        problems.add(
            InputError(
                f"{where.key('doping')}: a wire whose line density is stated takes its "
                "carriers from it; remove doping (or the line density, for a doped bulk "
                "crystal with 1D ratios)"
            )
        )
    if not wire_keys and not sheet_keys and (material.dimensionality == 2 or not doped):
        problems.add(
            InputError(
                f"{where.key('stated')}: a 1D wire takes its carriers from the stated line "
                "density; add e.g. electron_line_density: 2e6 cm-1 under stated:"
            )
        )
    problems.raise_any()
