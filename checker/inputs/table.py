"""Datasheet and process tables (CSV): one operating point and its measured numbers per row.

Header convention (case and spaces do not matter; a unit may follow in brackets or
parentheses, ``density [cm-3]``, ``mobility (cm^2/(V*s))``, and then applies to bare
numbers in that column):

    material      built-in material name             (required)
    dopant        dopant species, e.g. P, B, Mg      (required)
    density       dopant density                     (required)
    temperature   e.g. 300 K, 25 degC                (required)
    name          a label for the row                (optional)
    resistivity, sheet_resistance (with thickness), mobility (of the majority
    carrier the dopant gives), hall_density, diffusivity     (any of them)
    line_density  a 1D wire's carriers per length, e.g. 2e6 cm-1: the row is then a
                  wire (dimensionality 1) of the dopant's carrier (donor: electrons,
                  acceptor: holes) and leaves density empty
    hall_scattering   acoustic | ionized-impurity | neutral-impurity | exponent r
    notes, comment, remarks   free text, not read

A few other spellings are accepted (see ``ALIASES``); any other header can be mapped
with ``[tool.regimecheck.columns]`` (``resistivity = "Rho (ohm cm)"``) or left out with
``ignore = ["Supplier"]`` there.  A header that is none of these is an input error
naming the column (the other columns are still checked).  Each row becomes a
calculation whose stated numbers the rules check; a finding names the physical line
where the row starts and the column.  A bad cell is an input error naming file, line
and column, and only that row is skipped.

Tables are read as a stream; a table of more than ``MAX_TABLE_ROWS`` rows or
``MAX_TABLE_BYTES`` bytes is refused as a whole (every row is kept in memory until the
run is reported, about 5 kB a row).
"""

from __future__ import annotations

import itertools
import os
import re

from ..close_words import close_matches
from ..errors import InputError, RegimecheckError
from .calculation_file import Calculation, FileResult, _hall_exponent
from .material_catalog import resolve_material
from .quantities import check_plausible, parse_quantity, parse_temperature
from .text_bytes import undecodable

TABLE_SUFFIXES = (".csv",)
MAX_TABLE_ROWS = 100_000
MAX_TABLE_BYTES = 64 * 1024 * 1024
MAX_UNKNOWN_REPORTED = 10  # headers the reader cannot map, each named in an error
REQUIRED = ("material", "dopant", "density", "temperature")
# our column key -> (stated engine name for donors, for acceptors, dimension)
MEASURED = {
    "resistivity": ("stated_rho", "stated_rho", "resistivity"),
    "sheet_resistance": ("stated_Rsh", "stated_Rsh", "sheet resistance"),
    "mobility": ("stated_mu_n", "stated_mu_p", "mobility"),
    "hall_density": ("stated_hall", "stated_hall", "density"),
    "diffusivity": ("stated_D_n", "stated_D_p", "diffusivity"),
}
OPTIONAL = ("name", "thickness", "hall_scattering", "line_density")
# a wire row: its carriers per length, of the dopant kind's carrier (no volume doping)
WIRE_STATED = {True: "stated_nl_n", False: "stated_nl_p"}
KEYS = REQUIRED + tuple(MEASURED) + OPTIONAL
# columns whose unit is checked once, on the header, rather than on every row
DIMENSIONS = {
    "density": "density",
    "thickness": "length",
    "line_density": "line density",
    **{key: spec[2] for key, spec in MEASURED.items()},
}
ALIASES = {
    "species": "dopant",
    "impurity": "dopant",
    "doping": "density",
    "dopant_density": "density",
    "concentration": "density",
    "temp": "temperature",
    "t": "temperature",
    "rho": "resistivity",
    "rsh": "sheet_resistance",
    "r_sheet": "sheet_resistance",
    "sheet": "sheet_resistance",
    "mu": "mobility",
    "hall_mobility": "mobility",
    "n_hall": "hall_density",
    "p_hall": "hall_density",
    "hall_concentration": "hall_density",
    "d": "diffusivity",
    "diffusion_coefficient": "diffusivity",
    "label": "name",
    "sample": "name",
    "thick": "thickness",
    "n_l": "line_density",
    "linear_density": "line_density",
    "scattering": "hall_scattering",
}
NOTE_COLUMNS = ("note", "notes", "comment", "comments", "remark", "remarks")
IGNORE = "ignore"  # the key of [tool.regimecheck.columns] listing headers left out
_NUMBER = re.compile(r"[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?")
_CLOSING = {"]": "[", ")": "("}


def split_header(raw: str) -> tuple[str, str | None]:
    """(name, unit or None) of a header such as ``mobility [cm^2/(V*s)]``: the unit is
    the balanced bracket or parenthesis group that ends the header."""
    text = raw.strip()
    if not text or text[-1] not in _CLOSING:
        return text, None
    close, opening, depth = text[-1], _CLOSING[text[-1]], 0
    for index in range(len(text) - 1, -1, -1):
        depth += (text[index] == close) - (text[index] == opening)
        if depth == 0:
            name = text[:index].strip()
            if name and all(name.count(o) == name.count(c) for c, o in _CLOSING.items()):
                return name, text[index + 1 : -1].strip()
            break
    return text, None  # no name, or unbalanced: the whole text is the name


def _normal(text: str) -> str:
    return re.sub(r"[\s\-]+", "_", text.strip().lower())


def _known_header(raw: str, mapped: dict, ignored: set):
    """Our key for a header, "" for a column left out, None when it is unknown."""
    name, unit = split_header(raw)
    for candidate in (_normal(raw), _normal(name)):
        if candidate in ignored or candidate in NOTE_COLUMNS:
            return "", unit
        if candidate in mapped:
            return mapped[candidate], unit
    key = ALIASES.get(_normal(name), _normal(name))
    return (key if key in KEYS else None), unit


def _unknown_column(raw: str, position: int, where: str) -> str:
    close = close_matches(
        _normal(split_header(raw)[0]), list(KEYS) + list(ALIASES), n=3, cutoff=0.6
    )
    hint = (
        f"; closest known names: {', '.join(close)}"
        if close
        else f"; known names: {', '.join(KEYS)}"
    )
    ours = ALIASES.get(close[0], close[0]) if close else "<our name>"
    return (
        f"{where}: column {position} {raw.strip()!r} is not a column regimecheck "
        f"reads{hint}. Rename it, map it in [tool.regimecheck.columns] "
        f"({ours} = {raw.strip()!r}), or leave it out with "
        f"{IGNORE} = [{raw.strip()!r}] there"
    )


def _lacking(missing: list, header: list, where: str) -> str:
    """The message for required columns the header lacks, with look-alike headers."""
    names = {_normal(split_header(h)[0]): h.strip() for h in header if h and h.strip()}
    guesses = [
        f"{names[close[0]]!r} for {key}"
        for key in missing
        for close in [close_matches(key, list(names), n=1, cutoff=0.6)]
        if close
    ]
    hint = f"; is {', '.join(guesses)} misspelt?" if guesses else ""
    return (
        f"{where}: the header lacks {', '.join(missing)}{hint} Columns are "
        f"{', '.join(h.strip() for h in header)} (name them as in the README table, or "
        "map them in [tool.regimecheck.columns])"
    )


def _columns(header: list, where: str, mapping: dict) -> tuple[dict, list]:
    """(our key -> (column index, header text, unit or None), errors for headers the
    reader cannot map).  A missing required column or a bad unit refuses the table."""
    mapping = dict(mapping or {})
    ignored = {_normal(h) for h in mapping.pop(IGNORE, ())}
    mapped = {_normal(theirs): ours for ours, theirs in mapping.items()}
    out: dict[str, tuple[int, str, str | None]] = {}
    unknown: list[str] = []
    for index, raw in enumerate(header):
        if not (raw or "").strip():
            continue  # spreadsheet exports end rows with separators
        key, unit = _known_header(raw, mapped, ignored)
        if key is None:
            unknown.append(_unknown_column(raw, index + 1, where))
            continue
        if not key:
            continue
        if key in out:
            raise InputError(
                f"{where}: two columns give {key!r} ({out[key][1]!r} and "
                f"{raw.strip()!r}); keep one or map them"
            )
        # "ohm cm" in a header means ohm*cm
        unit = re.sub(r"(?<=[\w)])\s+(?=[\w(])", "*", unit or "") or None
        if unit and key in DIMENSIONS:
            parse_quantity(f"1 {unit}", DIMENSIONS[key], f"{where}: column {raw.strip()!r}")
        out[key] = (index, raw.strip(), unit)
    missing = [k for k in REQUIRED if k not in out]
    if len(unknown) > MAX_UNKNOWN_REPORTED:
        unknown[MAX_UNKNOWN_REPORTED:] = [
            f"{where}: and {len(unknown) - MAX_UNKNOWN_REPORTED} "
            "more columns regimecheck does not read"
        ]
    if missing:
        raise InputError(_lacking(missing, header, where))
    if not any(k in out for k in MEASURED):
        raise InputError(
            f"{where}: no measured column to check; give at least one of {', '.join(MEASURED)}"
        )
    return out, unknown


def _cell(row, column):
    index, header, unit = column
    text = row[index].strip() if index < len(row) else ""
    if text and unit and _NUMBER.fullmatch(text):
        text = f"{text} {unit}"
    return text


class _CountedLines:
    """The lines of a file, counted, so that a row's first physical line is known even
    when a quoted cell spans several lines."""

    def __init__(self, handle):
        self.handle, self.count = handle, 0

    def __iter__(self):
        return self

    def __next__(self):
        line = next(self.handle)
        self.count += 1
        return line

    def header(self):
        """The first line that is neither blank nor a # comment (None: no such line)."""
        for line in self:
            if line.strip() and not line.lstrip().startswith("#"):
                return line
        return None


def read_table(path, mapping=None) -> FileResult:
    """Every row of a CSV table as a calculation; bad rows are errors, the others load."""
    path = str(path)
    try:
        size = os.stat(path).st_size
        if size > MAX_TABLE_BYTES:
            return FileResult(
                path,
                [],
                [
                    f"{path}: the table has {size:,} bytes, more than the limit of "
                    f"{MAX_TABLE_BYTES:,} bytes for one table; split it into smaller tables"
                ],
            )
        with open(path, encoding="utf-8-sig", newline="") as handle:
            return _read_rows(path, _CountedLines(handle), mapping)
    except OSError as exc:
        return FileResult(path, [], [f"{path}: cannot read the file ({exc.strerror})"])


def _read_rows(path, lines: _CountedLines, mapping) -> FileResult:
    import csv  # here: a run without tables does not pay for the module

    line = 1  # where a malformed header is reported
    try:
        first = lines.header()
        if first is None:
            return FileResult(path, [], [f"{path}: the table is empty"])
        header_line = line = lines.count
        try:
            dialect = csv.Sniffer().sniff(first, delimiters=",;\t")
        except csv.Error:
            dialect = csv.excel
        rows = csv.reader(itertools.chain([first], lines), dialect, strict=True)
        header = next(rows)
        try:
            columns, errors = _columns(header, f"{path}:{header_line}", mapping)
        except InputError as exc:
            return FileResult(path, [], [str(exc)])
        calculations, count, line = [], 0, header_line
        while True:
            line = lines.count + 1  # where the next row starts
            row = next(rows, None)
            if row is None:
                break
            if not any(cell.strip() for cell in row) or row[0].lstrip().startswith("#"):
                continue
            count += 1
            if count > MAX_TABLE_ROWS:
                return FileResult(
                    path,
                    [],
                    [
                        f"{path}:{line}: the table has more than {MAX_TABLE_ROWS:,} rows, the "
                        "limit of one table; split it into files of at most "
                        f"{MAX_TABLE_ROWS:,} rows"
                    ],
                )
            if any(cell.strip() for cell in row[len(header) :]):
                # a separator inside an unquoted name or number shifts every later cell
                errors.append(
                    f"{path}:{line}: the row has {len(row)} fields where the header has "
                    f'{len(header)}; quote a field that holds a separator ("a, b") or '
                    "remove the extra one"
                )
                continue
            try:
                calculations.append(_row(row, columns, path, line))
            except InputError as exc:
                errors.append(str(exc))
    except csv.Error as exc:
        return FileResult(
            path,
            [],
            [f"{path}:{line}: malformed CSV ({exc}); check quotes and separators from this row on"],
        )
    except UnicodeDecodeError:
        return FileResult(path, [], [_not_utf8(path)])
    if not calculations and not errors:
        errors.append(f"{path}: the table has a header but no rows")
    return FileResult(path, calculations, errors)


def _not_utf8(path: str) -> str:
    """The message for a table that is not UTF-8, naming the first bad byte's place
    (read again as bytes: the text reader's position is a buffer's, not a line's)."""
    try:
        with open(path, "rb") as handle:
            where = undecodable(handle)
    except OSError as exc:
        return f"{path}: cannot read the file ({exc.strerror})"
    return f"{path}:{where or ' not UTF-8 text'}; save the table as UTF-8"


def _row(row, columns, path, line) -> Calculation:
    def where(key):
        return f"{path}:{line}: column {columns[key][1]!r}"

    def cell(key):
        return _cell(row, columns[key]) if key in columns else ""

    def positive(key, dimension):
        value = parse_quantity(cell(key), dimension, where(key))
        if value <= 0:
            raise InputError(f"{where(key)}: {cell(key)!r} must be larger than zero")
        return check_plausible(value, dimension, cell(key), where(key))

    wire = bool(cell("line_density"))
    for key in REQUIRED:
        if not cell(key) and not (wire and key == "density"):
            raise InputError(f"{where(key)}: empty; every row needs {', '.join(REQUIRED)}")
    if wire and cell("density"):
        raise InputError(
            f"{where('density')}: a wire row (line_density given) takes its carriers from "
            "the line density; leave density empty, or line_density for a doped crystal"
        )
    try:
        material = resolve_material(cell("material"))
    except InputError as exc:
        raise InputError(f"{where('material')}: {exc}") from None
    try:
        dopant = material.dopant(cell("dopant"))
    except InputError as exc:
        raise InputError(f"{where('dopant')}: {exc}") from None
    density = (
        0.0
        if wire
        else check_plausible(
            parse_quantity(cell("density"), "density", where("density")),
            "density",
            cell("density"),
            where("density"),
        )
    )
    temperature = check_plausible(
        parse_temperature(cell("temperature"), where("temperature")),
        "temperature",
        cell("temperature"),
        where("temperature"),
    )
    donor = dopant.kind == "donor"
    species = {} if wire else {dopant.name: density}
    calc = Calculation(
        name=cell("name") or f"{path.rsplit('/', 1)[-1]} line {line}",
        source=path,
        line=line,
        material=material,
        temperature=temperature,
        donors=species if donor else {},
        acceptors={} if donor else species,
    )
    if cell("hall_scattering"):
        calc.hall_exponent = _hall_exponent(cell("hall_scattering"), where("hall_scattering"))
    if cell("thickness"):
        calc.structure["thickness"] = positive("thickness", "length")
    if wire:
        _wire_row(calc, donor, positive("line_density", "line density"), where("line_density"))
        calc.lines[WIRE_STATED[donor]] = line
        calc.columns[WIRE_STATED[donor]] = columns["line_density"][1]
    for key, (for_donors, for_acceptors, dimension) in MEASURED.items():
        if not cell(key):
            continue
        name = for_donors if donor else for_acceptors
        calc.stated[name] = positive(key, dimension)
        calc.lines[name] = line
        calc.columns[name] = columns[key][1]
    if wire and "stated_Rsh" in calc.stated:
        raise InputError(
            f"{where('sheet_resistance')}: a wire (line_density given) has no sheet "
            "resistance; leave one of the two empty"
        )
    if "stated_Rsh" in calc.stated and "thickness" not in calc.structure:
        raise InputError(
            f"{where('sheet_resistance')}: a sheet resistance needs the layer "
            "thickness (add a thickness column)"
        )
    return calc


def _wire_row(calc: Calculation, donor: bool, density: float, where: str) -> None:
    """Make ``calc`` a 1D wire holding ``density`` (m^-1) of the dopant kind's carrier."""
    carrier = "electron" if donor else "hole"
    try:
        calc.material.bands(carrier, 1)
    except RegimecheckError as exc:
        raise InputError(f"{where}: a wire needs 1D {carrier} bands: {exc}") from None
    calc.structure["dim"] = 1.0
    calc.stated[WIRE_STATED[donor]] = density
