"""Calculation files: YAML documents describing one calculation each, with source positions.

Keys (all optional except material and temperature):

    name: <text>
    material: <built-in name> | <mapping in the material data-file form>
    temperature: "<number> K" | "<number> degC" | {from, to, steps[, spacing]} (a sweep)
    doping:
      donors:    {<species>: "<density>" | {from, to, steps[, spacing]}, ...}
      acceptors: {<species>: "<density>", ...}
    structure:   dimensionality (3/2/1), length, cross_section | thickness + width,
                 field | voltage
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

import difflib
from dataclasses import dataclass, field
from pathlib import Path

import yaml

from ..errors import InputError
from ..physics.materials import Material
from .material_catalog import resolve_material
from .quantities import check_plausible, parse_quantity, parse_temperature
from .yaml_source import _StrictLoader

TOP_KEYS = ("name", "material", "temperature", "doping", "structure", "stated", "assumes",
            "formulas", "waivers", "options")
DOPING_KEYS = ("donors", "acceptors")
OPTION_KEYS = ("band_gap_narrowing", "hall_scattering")
# YAML key -> (engine quantity name, dimension)
STRUCTURE_KEYS = {
    "dimensionality": ("dim", "dimensionless"),
    "length": ("L", "length"),
    "cross_section": ("A", "area"),
    "thickness": ("thickness", "length"),
    "width": ("width", "length"),
    "field": ("field", "field"),
    "voltage": ("voltage", "voltage"),
}
STATED_KEYS = {
    "electron_density": ("stated_dens_n", "density"),
    "hole_density": ("stated_dens_p", "density"),
    "ef_minus_ec": ("stated_ef_minus_ec", "energy"),
    "ef_minus_ev": ("stated_ef_minus_ev", "energy"),
    "electron_mobility": ("stated_mu_n", "mobility"),
    "hole_mobility": ("stated_mu_p", "mobility"),
    "electron_diffusivity": ("stated_D_n", "diffusivity"),
    "hole_diffusivity": ("stated_D_p", "diffusivity"),
    "electron_velocity": ("stated_v_n", "velocity"),
    "hole_velocity": ("stated_v_p", "velocity"),
    "conductivity": ("stated_sigma", "conductivity"),
    "resistivity": ("stated_rho", "resistivity"),
    "sheet_resistance": ("stated_Rsh", "sheet resistance"),
    "resistance": ("stated_R", "resistance"),
    "thermal_voltage": ("stated_kT_q", "voltage"),
    "intrinsic_density": ("stated_ni", "density"),
    "conduction_dos": ("stated_Nband_n", "density"),
    "valence_dos": ("stated_Nband_p", "density"),
    "mean_free_path": ("stated_lambda", "length"),
    "hall_density": ("stated_hall", "density"),
}
# The trade words an author may declare; a few common spellings map onto them.
ASSUMPTIONS = ("non-degenerate", "full-ionization", "no-compensation", "single-carrier",
               "extrinsic", "einstein-relation", "diffusive", "low-field")
ASSUMPTION_SPELLINGS = {
    "nondegenerate": "non-degenerate", "boltzmann": "non-degenerate",
    "complete-ionization": "full-ionization", "fully-ionized": "full-ionization",
    "uncompensated": "no-compensation", "one-carrier": "single-carrier",
    "einstein": "einstein-relation", "drift-diffusion": "diffusive", "ohmic": "low-field",
}
SIGNED_KEYS = ("ef_minus_ec", "ef_minus_ev")   # the only quantities that may be negative


@dataclass
class Located:
    """A plain value tree plus the (line, column) of every node, 1-based."""

    value: object
    positions: dict = field(default_factory=dict)


@dataclass
class Calculation:
    name: str
    source: str          # file path
    line: int
    material: Material
    temperature: float   # K
    donors: dict         # species -> m^-3
    acceptors: dict
    band_gap_narrowing: bool = False
    hall_exponent: float = -0.5    # r of tau ∝ E^r for the Hall factor (acoustic phonons)
    structure: dict = field(default_factory=dict)    # engine name -> SI value
    stated: dict = field(default_factory=dict)       # engine name -> SI value
    assumes: dict = field(default_factory=dict)      # word -> line
    waivers: dict = field(default_factory=dict)      # rule id -> (reason, line)
    lines: dict = field(default_factory=dict)        # engine name -> line of its key
    formulas: list = field(default_factory=list)     # (text, "file:line:col", line)
    columns: dict = field(default_factory=dict)      # engine name -> table column header
    sweep: list = field(default_factory=list)        # Axis objects (empty: one point)

    @property
    def majority(self) -> str:
        """The carrier the doping gives ("n" when undoped): what an unsubscripted mu means."""
        return "p" if sum(self.acceptors.values()) > sum(self.donors.values()) else "n"


@dataclass
class FileResult:
    path: str
    calculations: list
    errors: list         # InputError messages (each names file:line:column)


def _plain(node, path, positions):
    positions[path] = (node.start_mark.line + 1, node.start_mark.column + 1)
    if isinstance(node, yaml.MappingNode):
        out = {}
        for key_node, value_node in node.value:
            key = str(key_node.value)
            out[key] = _plain(value_node, path + (key,), positions)
        return out
    if isinstance(node, yaml.SequenceNode):
        return [_plain(child, path + (i,), positions) for i, child in enumerate(node.value)]
    return node.value  # scalar text, parsed later by us


def read_documents(text: str, name: str) -> list[Located]:
    """Compose all documents (strict: no aliases, no duplicate keys)."""
    loader = _StrictLoader(text)
    loader.name = name
    docs = []
    try:
        while loader.check_node():
            node = loader.get_node()
            if node is None:
                continue
            loader.construct_document(node)  # runs the duplicate-key check
            positions = {}
            docs.append(Located(_plain(node, (), positions), positions))
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark
        where = f"{name}:{mark.line + 1}:{mark.column + 1}" if mark else name
        raise InputError(f"{where}: malformed YAML: {exc.problem}") from None
    finally:
        loader.dispose()
    return docs


class _Where:
    def __init__(self, path: str, positions: dict):
        self.path, self.positions = path, positions

    def __call__(self, *keys) -> str:
        for cut in range(len(keys), -1, -1):
            if keys[:cut] in self.positions:
                line, col = self.positions[keys[:cut]]
                return f"{self.path}:{line}:{col}"
        return self.path

    def line(self, *keys) -> int:
        for cut in range(len(keys), -1, -1):
            if keys[:cut] in self.positions:
                return self.positions[keys[:cut]][0]
        return 0


def _unknown_keys(mapping: dict, allowed, where: str, what: str, locate=None):
    for key in mapping:
        if key not in allowed:
            where = locate(key) if locate else where
            close = difflib.get_close_matches(key, allowed, n=1)
            hint = f"; did you mean {close[0]!r}?" if close else f"; allowed: {', '.join(allowed)}"
            raise InputError(f"{where}: unknown {what} key {key!r}{hint}")


def _to_bool(text, where):
    value = str(text).strip().lower()
    if value in ("true", "yes", "on"):
        return True
    if value in ("false", "no", "off"):
        return False
    raise InputError(f"{where}: expected true or false, got {text!r}")


def parse_calculation(doc: Located, path: str) -> Calculation:
    where = _Where(path, doc.positions)
    data = doc.value
    if not isinstance(data, dict):
        raise InputError(f"{where()}: a calculation must be a mapping with keys "
                         f"{', '.join(TOP_KEYS)}")
    _unknown_keys(data, TOP_KEYS, where(), "calculation", lambda k: where(k))
    for key in ("material", "temperature"):
        if key not in data:
            raise InputError(f"{where()}: missing {key!r}; add e.g. "
                             + ("material: Si" if key == "material" else "temperature: 300 K"))
    try:
        material = resolve_material(data["material"])
    except InputError as exc:
        raise InputError(f"{where('material')}: {exc}") from None
    axes = []
    if isinstance(data["temperature"], dict):
        axes.append(_axis(data["temperature"], "temperature", "T", where, ("temperature",)))
        temperature = float(axes[-1].values[0])
    else:
        temperature = check_plausible(parse_temperature(data["temperature"],
                                                        where("temperature")),
                                      "temperature", data["temperature"], where("temperature"))
    doping = data.get("doping") or {}
    if not isinstance(doping, dict):
        raise InputError(f"{where('doping')}: doping must map 'donors' and/or 'acceptors' "
                         "to {species: density}")
    _unknown_keys(doping, DOPING_KEYS, where("doping"), "doping")
    groups = {}
    for group in DOPING_KEYS:
        entries = doping.get(group) or {}
        if not isinstance(entries, dict):
            raise InputError(f"{where('doping', group)}: write {group} as {{species: density}}, "
                             "e.g. {P: 1e17 cm-3}")
        values = {}
        for species, text in entries.items():
            here = where("doping", group, species)
            try:
                dopant = material.dopant(species)
            except InputError as exc:
                raise InputError(f"{here}: {exc}") from None
            expected = group[:-1]
            if dopant.kind != expected:
                raise InputError(f"{here}: {species} is a {dopant.kind} in {material.name}; "
                                 f"move it under {dopant.kind}s")
            if isinstance(text, dict):
                axes.append(_axis(text, "density", (group, species), where,
                                  ("doping", group, species)))
                values[species] = float(axes[-1].values[0])
                continue
            density = parse_quantity(text, "density", here)
            if density < 0:
                raise InputError(f"{here}: density {text!r} is negative; give a value >= 0")
            values[species] = check_plausible(density, "density", text, here)
        groups[group] = values
    options = data.get("options") or {}
    if not isinstance(options, dict):
        raise InputError(f"{where('options')}: options must be a mapping")
    _unknown_keys(options, OPTION_KEYS, where("options"), "option")
    bgn = _to_bool(options["band_gap_narrowing"], where("options", "band_gap_narrowing")) \
        if "band_gap_narrowing" in options else False
    hall = _hall_exponent(options["hall_scattering"], where("options", "hall_scattering")) \
        if "hall_scattering" in options else -0.5
    line = doc.positions.get((), (1, 1))[0]
    calc = Calculation(name=str(data.get("name", f"{Path(path).name}:{line}")), source=path,
                       line=line, material=material, temperature=temperature,
                       donors=groups["donors"], acceptors=groups["acceptors"],
                       band_gap_narrowing=bgn, hall_exponent=hall)
    calc.structure = _quantities(data, "structure", STRUCTURE_KEYS, where, calc.lines)
    if "dim" in calc.structure and calc.structure["dim"] not in (1.0, 2.0, 3.0):
        raise InputError(f"{where('structure', 'dimensionality')}: dimensionality must be 3, 2 or 1")
    calc.stated = _quantities(data, "stated", STATED_KEYS, where, calc.lines)
    calc.assumes = _assumptions(data.get("assumes"), where)
    calc.waivers = _waivers(data.get("waivers"), where)
    calc.formulas = _formulas(data.get("formulas"), where)
    if len(axes) > 2:
        raise InputError(f"{where()}: a sweep has at most two axes (temperature and one "
                         f"density, or two densities); this one has {len(axes)}")
    if len(axes) == 2 and len(axes[0].values) * len(axes[1].values) > MAX_SWEEP_POINTS:
        raise InputError(f"{where()}: the sweep has {len(axes[0].values) * len(axes[1].values)} "
                         f"points; the limit is {MAX_SWEEP_POINTS}")
    calc.sweep = axes
    return calc


@dataclass
class Axis:
    """One swept input: temperature (key "T") or a density ((group, species))."""

    key: object
    dimension: str
    values: object       # numpy array, SI
    spacing: str         # "linear" | "log"
    line: int


SWEEP_KEYS = ("from", "to", "steps", "spacing")
MAX_SWEEP_STEPS = 100_000
MAX_SWEEP_POINTS = 4_000_000


def _axis(spec: dict, dimension: str, key, where, path) -> Axis:
    """A range {from, to, steps, spacing} as an array of SI values."""
    import numpy as np

    here = where(*path)
    _unknown_keys(spec, SWEEP_KEYS, here, "sweep")
    for needed in ("from", "to", "steps"):
        if needed not in spec:
            raise InputError(f"{here}: a sweep needs from, to and steps, e.g. "
                             "{from: 1e15 cm-3, to: 1e19 cm-3, steps: 41}")
    ends = []
    for end in ("from", "to"):
        text = spec[end]
        at = where(*path, end)
        value = parse_temperature(text, at) if dimension == "temperature" \
            else parse_quantity(text, dimension, at)
        ends.append(check_plausible(value, dimension, text, at))
    try:
        steps = int(str(spec["steps"]).strip())
    except ValueError:
        steps = 0
    if not 2 <= steps <= MAX_SWEEP_STEPS:
        raise InputError(f"{where(*path, 'steps')}: steps must be a whole number from 2 to "
                         f"{MAX_SWEEP_STEPS}, got {spec['steps']!r}")
    spacing = str(spec.get("spacing", "linear" if dimension == "temperature" else "log"))
    if spacing not in ("linear", "log"):
        raise InputError(f"{where(*path, 'spacing')}: spacing is linear or log")
    if spacing == "log" and min(ends) <= 0:
        raise InputError(f"{here}: a log sweep needs both ends above zero")
    values = np.geomspace(*ends, steps) if spacing == "log" else np.linspace(*ends, steps)
    return Axis(key, dimension, values, spacing, where.line(*path))


def _formulas(entries, where) -> list:
    if entries is None:
        return []
    if isinstance(entries, str):
        entries = [entries]
    if not isinstance(entries, list):
        raise InputError(f"{where('formulas')}: formulas must be a list of texts such as "
                         "['D_n = mu_n*k*T/q', 'n = N_D']")
    out = []
    for i, text in enumerate(entries):
        if not isinstance(text, str) or not text.strip():
            raise InputError(f"{where('formulas', i)}: write each formula as text "
                             "'<left side> = <right side>'")
        out.append((text.strip(), where("formulas", i), where.line("formulas", i)))
    return out


def _hall_exponent(text, where) -> float:
    """The exponent r of tau ∝ E^r: a mechanism name or a number from -1.5 to 2.5."""
    from ..physics.hall import SCATTERING_EXPONENTS

    word = str(text).strip().lower().replace("_", "-").replace(" ", "-")
    if word in SCATTERING_EXPONENTS:
        return SCATTERING_EXPONENTS[word]
    try:
        value = float(word)
    except ValueError:
        value = None
    if value is None or value * 2 != int(value * 2) or not -1.5 <= value <= 2.5:
        raise InputError(f"{where}: hall_scattering must be one of "
                         f"{', '.join(SCATTERING_EXPONENTS)} or an exponent r (tau ∝ E^r) "
                         f"in half steps from -1.5 to 2.5, got {text!r}")
    return value


def _quantities(data, section, keys, where, lines) -> dict:
    block = data.get(section) or {}
    if not isinstance(block, dict):
        raise InputError(f"{where(section)}: {section} must be a mapping of "
                         f"{', '.join(keys)} to quantities")
    _unknown_keys(block, tuple(keys), where(section), section, lambda k: where(section, k))
    out = {}
    for key, text in block.items():
        name, dimension = keys[key]
        here = where(section, key)
        value = parse_quantity(text, dimension, here)
        if value < 0 and key not in SIGNED_KEYS:
            raise InputError(f"{here}: {key} {text!r} is negative; give a value >= 0")
        check_plausible(value, dimension, text, here)
        if value == 0 and dimension in ("length", "area", "density") and section == "structure":
            raise InputError(f"{here}: {key} must be larger than zero")
        out[name] = value
        lines[name] = where.line(section, key)
    return out


def _assumptions(entries, where) -> dict:
    if entries is None:
        return {}
    if isinstance(entries, str):
        entries = [entries]
    if not isinstance(entries, list):
        raise InputError(f"{where('assumes')}: assumes must be a list of words such as "
                         "[non-degenerate, full-ionization]")
    out = {}
    for i, word in enumerate(entries):
        here = where("assumes", i)
        text = str(word).strip().lower().replace("_", "-").replace(" ", "-")
        text = ASSUMPTION_SPELLINGS.get(text, text)
        if text not in ASSUMPTIONS:
            close = difflib.get_close_matches(text, ASSUMPTIONS, n=1)
            hint = f"did you mean {close[0]!r}?" if close else f"known: {', '.join(ASSUMPTIONS)}"
            raise InputError(f"{here}: unknown assumption {word!r}; {hint}")
        out[text] = where.line("assumes", i)
    return out


def _waivers(entries, where) -> dict:
    if entries is None:
        return {}
    if not isinstance(entries, list):
        raise InputError(f"{where('waivers')}: waivers must be a list of "
                         "{rule: <id>, reason: <text>}")
    out = {}
    for i, entry in enumerate(entries):
        here = where("waivers", i)
        if not isinstance(entry, dict):
            raise InputError(f"{here}: write a waiver as {{rule: <id>, reason: <text>}}")
        _unknown_keys(entry, ("rule", "reason"), here, "waiver")
        if not entry.get("rule"):
            raise InputError(f"{here}: the waiver names no rule; add rule: <id>")
        reason = str(entry.get("reason") or "").strip()
        if len(reason) < 3:
            raise InputError(f"{here}: the waiver of {entry['rule']} has no reason; add "
                             "reason: <why this finding does not apply>")
        out[str(entry["rule"]).strip().upper()] = (reason, where.line("waivers", i))
    return out


def _looks_like_calculation(text: str, path: str) -> bool:
    try:
        docs = read_documents(text, path)
    except InputError:
        return True            # broken YAML is reported when parsed
    return any(isinstance(doc.value, dict) and "material" in doc.value for doc in docs)


def read_text_file(path: str):
    """(text, error message or None) of a UTF-8 input file."""
    try:
        return Path(path).read_text(encoding="utf-8"), None
    except OSError as exc:
        return None, f"{path}: cannot read the file ({exc.strerror})"
    except UnicodeDecodeError:
        return None, f"{path}: not UTF-8 text; save it as UTF-8"


def parse_calculations(text: str, path: str) -> FileResult:
    """Every calculation of a YAML text; a bad one is an error, the others still load.
    Line numbers are those of ``text`` (a memo pads its blocks to keep its own)."""
    try:
        docs = read_documents(text, path)
    except InputError as exc:
        return FileResult(path, [], [str(exc)])
    calculations, errors = [], []
    for doc in docs:
        try:
            calculations.append(parse_calculation(doc, path))
        except InputError as exc:
            errors.append(str(exc))
    return FileResult(path, calculations, errors)


def read_calculation_file(path, explicit: bool = True) -> FileResult:
    """Read every calculation of a YAML file; a bad one is an error, the others still load.
    Not ``explicit`` (found by a walk, or --skip-unrelated): a YAML file none of whose
    documents has a ``material`` key is some other YAML (CI settings …) and is skipped."""
    path = str(path)
    text, error = read_text_file(path)
    if error:
        return FileResult(path, [], [error])
    if not explicit and not _looks_like_calculation(text, path):
        return FileResult(path, [], [])
    result = parse_calculations(text, path)
    if not result.calculations and not result.errors:
        result.errors.append(f"{path}: the file holds no calculation")
    return result
