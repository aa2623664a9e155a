"""The trade units quantities are shown in (SI inside), and what each one measures."""

from __future__ import annotations

from ..physics.constants import ELECTRON_MASS, EV

# display unit -> factor from SI
DISPLAY_UNITS = {
    "1": 1.0,
    "%": 100.0,
    "K": 1.0,
    "eV": 1.0 / EV,
    "V": 1.0,
    "cm^-3": 1e-6,
    "cm^2/(V*s)": 1e4,
    "cm^2/s": 1e4,
    "cm/s": 100.0,
    "kV/cm": 1e-5,
    "ohm*cm": 100.0,
    "S/cm": 0.01,
    "ohm": 1.0,
    "ohm/sq": 1.0,
    "nm": 1e9,
    "um": 1e6,
    "cm^-2": 1e-4,
    "cm^-1": 1e-2,
    "cm^-6": 1e-12,
    "cm^-4": 1e-8,
    "um^2": 1e12,
    "A/cm^2": 1e-4,
    "S": 1.0,
    "m0": 1.0 / ELECTRON_MASS,
    "ohm*cm^2": 1e4,
    "ns": 1e9,
}

# display unit of a quantity a calculation file may give -> the dimension the reader
# parses its text in (a key of inputs/quantities.DIMENSIONS)
UNIT_KINDS = {
    "1": "dimensionless",
    "K": "temperature",
    "eV": "energy",
    "V": "voltage",
    "cm^-3": "density",
    "cm^2/(V*s)": "mobility",
    "cm^2/s": "diffusivity",
    "cm/s": "velocity",
    "kV/cm": "field",
    "ohm*cm": "resistivity",
    "S/cm": "conductivity",
    "ohm": "resistance",
    "ohm/sq": "sheet resistance",
    "S": "conductance",
    "nm": "length",
    "um": "length",
    "um^2": "area",
}

# units of a bulk (3D) quantity: the solve is of a crystal, so these values are no sheet
# or line densities (nor their conductivities)
BULK_UNITS = ("cm^-3", "S/cm", "ohm*cm")
