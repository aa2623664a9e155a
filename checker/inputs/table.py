"""Datasheet and process tables (CSV): one operating point and its measured numbers per row.

Header convention (case and spaces do not matter; a unit may follow in brackets,
``density [cm-3]``, and then applies to bare numbers in that column):

    material      built-in material name             (required)
    dopant        dopant species, e.g. P, B, Mg      (required)
    density       dopant density                     (required)
    temperature   e.g. 300 K, 25 degC                (required)
    name          a label for the row                (optional)
    resistivity, sheet_resistance (with thickness), mobility (of the majority
    carrier the dopant gives), hall_density, diffusivity     (any of them)
    hall_scattering   acoustic | ionized-impurity | neutral-impurity | exponent r

A few other spellings are accepted (see ``ALIASES``); any other header can be mapped
with ``[tool.regimecheck.columns]`` (``resistivity = "Rho (ohm cm)"``).  Each row
becomes a calculation whose stated numbers the rules check; a finding names the row's
line and the column.  A bad cell is an input error naming file, line and column, and
only that row is skipped.
"""
from __future__ import annotations

import csv
import io
import re

from ..errors import InputError
from .calculation_file import Calculation, FileResult, _hall_exponent, read_text_file
from .material_catalog import resolve_material
from .quantities import check_plausible, parse_quantity, parse_temperature

TABLE_SUFFIXES = (".csv",)
REQUIRED = ("material", "dopant", "density", "temperature")
# our column key -> (stated engine name for donors, for acceptors, dimension)
MEASURED = {
    "resistivity": ("stated_rho", "stated_rho", "resistivity"),
    "sheet_resistance": ("stated_Rsh", "stated_Rsh", "sheet resistance"),
    "mobility": ("stated_mu_n", "stated_mu_p", "mobility"),
    "hall_density": ("stated_hall", "stated_hall", "density"),
    "diffusivity": ("stated_D_n", "stated_D_p", "diffusivity"),
}
OPTIONAL = ("name", "thickness", "hall_scattering")
KEYS = REQUIRED + tuple(MEASURED) + OPTIONAL
ALIASES = {
    "species": "dopant", "impurity": "dopant", "doping": "density",
    "dopant_density": "density", "concentration": "density", "temp": "temperature",
    "t": "temperature", "rho": "resistivity", "rsh": "sheet_resistance",
    "r_sheet": "sheet_resistance", "sheet": "sheet_resistance", "mu": "mobility",
    "hall_mobility": "mobility", "n_hall": "hall_density", "p_hall": "hall_density",
    "hall_concentration": "hall_density", "d": "diffusivity",
    "diffusion_coefficient": "diffusivity", "label": "name", "sample": "name",
    "thick": "thickness", "scattering": "hall_scattering",
}
_HEADER = re.compile(r"^\s*(?P<name>[^\[\(]*?)\s*(?:[\[\(](?P<unit>[^\]\)]*)[\]\)])?\s*$")


def _normal(text: str) -> str:
    return re.sub(r"[\s\-]+", "_", text.strip().lower())


def _columns(header: list, where: str, mapping: dict) -> dict:
    """our key -> (column index, header text, unit or None)."""
    mapped = {_normal(theirs): ours for ours, theirs in (mapping or {}).items()}
    out = {}
    for index, raw in enumerate(header):
        match = _HEADER.match(raw or "")
        name = _normal(match["name"]) if match else _normal(raw or "")
        key = mapped.get(_normal(raw or ""), mapped.get(name, ALIASES.get(name, name)))
        if key in KEYS:
            if key in out:
                raise InputError(f"{where}: two columns give {key!r} ({out[key][1]!r} and "
                                 f"{raw!r}); keep one or map them")
            # "ohm cm" in a header means ohm*cm
            unit = re.sub(r"(?<=[\w)])\s+(?=[\w(])", "*", (match["unit"] or "").strip())
            out[key] = (index, raw.strip(), unit or None)
    missing = [k for k in REQUIRED if k not in out]
    if missing:
        raise InputError(f"{where}: the header lacks {', '.join(missing)}; columns are "
                         f"{', '.join(h.strip() for h in header)} (name them as in the README "
                         "table, or map them in [tool.regimecheck.columns])")
    if not any(k in out for k in MEASURED):
        raise InputError(f"{where}: no measured column to check; give at least one of "
                         f"{', '.join(MEASURED)}")
    return out


def _cell(row, column):
    index, header, unit = column
    text = row[index].strip() if index < len(row) else ""
    if text and unit and re.fullmatch(r"[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?", text):
        text = f"{text} {unit}"
    return text


def read_table(path, mapping=None) -> FileResult:
    """Every row of a CSV table as a calculation; bad rows are errors, the others load."""
    path = str(path)
    text, error = read_text_file(path)
    if error:
        return FileResult(path, [], [error])
    text = text.lstrip("\ufeff")
    lines = text.splitlines()
    first = next((i for i, line in enumerate(lines) if line.strip()
                  and not line.lstrip().startswith("#")), None)
    if first is None:
        return FileResult(path, [], [f"{path}: the table is empty"])
    try:
        dialect = csv.Sniffer().sniff(lines[first], delimiters=",;\t")
    except csv.Error:
        dialect = csv.excel
    try:
        rows = list(csv.reader(io.StringIO("\n".join(lines[first:])), dialect, strict=True))
    except csv.Error as exc:
        return FileResult(path, [], [f"{path}: malformed CSV ({exc}); check quotes and "
                                     "separators"])
    try:
        columns = _columns(rows[0], f"{path}:{first + 1}", mapping)
    except InputError as exc:
        return FileResult(path, [], [str(exc)])
    calculations, errors = [], []
    for offset, row in enumerate(rows[1:], start=1):
        line = first + offset + 1
        if not any(cell.strip() for cell in row) or row[0].lstrip().startswith("#"):
            continue
        try:
            calculations.append(_row(row, columns, path, line))
        except InputError as exc:
            errors.append(str(exc))
    if not calculations and not errors:
        errors.append(f"{path}: the table has a header but no rows")
    return FileResult(path, calculations, errors)


def _row(row, columns, path, line) -> Calculation:
    def where(key):
        return f"{path}:{line}: column {columns[key][1]!r}"

    def cell(key):
        return _cell(row, columns[key]) if key in columns else ""

    for key in REQUIRED:
        if not cell(key):
            raise InputError(f"{where(key)}: empty; every row needs {', '.join(REQUIRED)}")
    try:
        material = resolve_material(cell("material"))
    except InputError as exc:
        raise InputError(f"{where('material')}: {exc}") from None
    try:
        dopant = material.dopant(cell("dopant"))
    except InputError as exc:
        raise InputError(f"{where('dopant')}: {exc}") from None
    density = check_plausible(parse_quantity(cell("density"), "density", where("density")),
                              "density", cell("density"), where("density"))
    temperature = check_plausible(parse_temperature(cell("temperature"), where("temperature")),
                                  "temperature", cell("temperature"), where("temperature"))
    donor = dopant.kind == "donor"
    species = {dopant.name: density}
    calc = Calculation(
        name=cell("name") or f"{path.rsplit('/', 1)[-1]} line {line}", source=path, line=line,
        material=material, temperature=temperature,
        donors=species if donor else {}, acceptors={} if donor else species)
    if cell("hall_scattering"):
        calc.hall_exponent = _hall_exponent(cell("hall_scattering"), where("hall_scattering"))
    if cell("thickness"):
        calc.structure["thickness"] = parse_quantity(cell("thickness"), "length",
                                                     where("thickness"))
    for key, (for_donors, for_acceptors, dimension) in MEASURED.items():
        if not cell(key):
            continue
        value = parse_quantity(cell(key), dimension, where(key))
        if value <= 0:
            raise InputError(f"{where(key)}: {cell(key)!r} must be larger than zero")
        check_plausible(value, dimension, cell(key), where(key))
        name = for_donors if donor else for_acceptors
        calc.stated[name] = value
        calc.lines[name] = line
        calc.columns[name] = columns[key][1]
    if "stated_Rsh" in calc.stated and "thickness" not in calc.structure:
        raise InputError(f"{where('sheet_resistance')}: a sheet resistance needs the layer "
                         "thickness (add a thickness column)")
    return calc
