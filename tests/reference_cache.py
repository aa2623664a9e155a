"""Cached multiple-precision references for the slow mpmath tests.

``tests/data/reference_values.json`` is written by ``python tools/make_reference_values.py``
with the computations below: the normalized Fermi–Dirac integrals from mpmath (NIST DLMF
25.12.16: F_j(eta) = -Li_{j+1}(-e^eta)), the 40-digit bisection neutrality solve of
tests/reference.py, and mpmath roots of F_1/2(eta) = u.  The tests read the cached values
instead of recomputing them; ``test_reference_cache_matches_mpmath`` (tests/test_fermi_dirac.py)
recomputes a sample with these same functions to show the file still matches mpmath.

Each equilibrium entry carries the material numbers its solve used (band gap, N_c, N_v
at T and every dopant parameter of the statistics); where a material's data have changed
since the file was written, the reference is recomputed with mpmath during the test and
a warning asks for the file to be regenerated.
"""

from __future__ import annotations

import dataclasses
import json
import math
import warnings
from functools import lru_cache
from pathlib import Path

import mpmath as mp
import numpy as np
from conftest import fd_reference
from reference import K_B, kane_alpha, mp_electron_half, reference_solve

from checker.records import FrozenRecord, record_fields

PATH = Path(__file__).resolve().parent / "data" / "reference_values.json"
REGENERATE = (
    "run `python tools/make_reference_values.py` and commit tests/data/reference_values.json"
)
PER_CM3 = 1e6

FD_ORDERS = [-1.5, -1, -0.5, 0, 0.5, 1, 1.5, 2, 2.5, 3, 3.5]

# material, T, donors {species: cm^-3}, acceptors, regime (the independent-solve cases of
# tests/test_equilibrium.py)
EQUILIBRIUM_CASES = [
    ("Si", 300, {"P": 1e15}, {}, "extrinsic"),
    ("Si", 300, {"P": 1e17}, {}, "extrinsic"),
    ("Si", 300, {"P": 1e18}, {}, "partial ionization"),
    ("Si", 300, {"P": 1e19}, {}, "metallic, degenerate"),
    ("Si", 300, {"As": 5e19}, {}, "metallic, degenerate"),
    ("Si", 300, {}, {"B": 1e16}, "extrinsic p"),
    ("Si", 300, {}, {"B": 3e18}, "partial ionization p"),
    ("Si", 77, {"P": 1e16}, {}, "freeze-out onset"),
    ("Si", 30, {"P": 1e16}, {}, "freeze-out"),
    ("Si", 10, {"P": 1e15}, {"B": 1e13}, "compensated freeze-out"),
    ("Si", 1, {"P": 1e16}, {"B": 1e14}, "deep freeze-out"),
    ("Si", 600, {"P": 1e14}, {}, "intrinsic"),
    ("Si", 1000, {}, {}, "intrinsic, undoped"),
    ("Si", 1500, {}, {"B": 1e16}, "intrinsic, hot"),
    ("Si", 300, {"P": 1e17}, {"B": 1e17}, "exactly compensated"),
    ("Si", 300, {"P": 1e17}, {"B": 9.9e16}, "compensated"),
    ("Si", 300, {}, {"In": 1e17}, "deep acceptor"),
    ("Si", 300, {"P": 1e16, "As": 1e16}, {"B": 5e15}, "several species"),
    ("Si", 300, {"P": 1e22}, {}, "extreme doping"),
    ("Ge", 300, {"Sb": 1e15}, {}, "extrinsic Ge"),
    ("GaAs", 300, {"Si": 1e18}, {}, "metallic, degenerate GaAs"),
    ("GaN", 300, {"Si": 1e17}, {"Mg": 1e19}, "deep acceptor, compensated"),
    ("4H-SiC", 300, {}, {"Al": 1e18}, "deep acceptor SiC"),
    ("4H-SiC", 600, {"N": 1e17}, {}, "hot SiC"),
    ("InAs", 300, {"S": 1e17}, {}, "narrow gap, degenerate"),
    ("InP", 77, {}, {"Zn": 1e17}, "cold InP"),
]

INVERSE_U = [float(u) for u in np.logspace(-300, 8, 120)]


def fd_points() -> list:
    """The eta points of the Fermi–Dirac accuracy test: 1,300 uniform in [-60, 120],
    700 in the hard band [-1, 5] of the approximations, the interval edges of the
    tables and the float just below each (seeded; the values are stored in the file)."""
    rng = np.random.default_rng(20240613)
    wide = rng.uniform(-60.0, 120.0, 1300)
    hard = rng.uniform(-1.0, 5.0, 700)
    edges = np.array([-38.0, -2.0, 0.0, 2.0, 4.5, 9.5, 20.0, 40.0, 50.0])
    return [float(x) for x in np.concatenate([wide, hard, edges, np.nextafter(edges, -np.inf)])]


def fd_value(j, eta) -> float:
    """F_j(eta) from mpmath (22 digits), rounded to float."""
    return float(fd_reference(j, eta, dps=22))


def case_key(name, T, donors, acceptors) -> str:
    part = lambda group: ",".join(f"{k}={v:g}" for k, v in sorted(group.items()))  # noqa: E731
    return f"{name}|{T:g} K|{part(donors)}|{part(acceptors)}"


def _numbers(obj) -> list:
    """The numbers of a model object (dataclass or record fields, recursively; text left
    out)."""
    if obj is None:
        return []
    if dataclasses.is_dataclass(obj):
        return [x for f in dataclasses.fields(obj) for x in _numbers(getattr(obj, f.name))]
    if isinstance(obj, FrozenRecord):
        return [x for _, value in record_fields(obj) for x in _numbers(value)]
    if isinstance(obj, (tuple, list)):
        return [x for item in obj for x in _numbers(item)]
    if isinstance(obj, (int, float)) and not isinstance(obj, bool):
        return [float(obj)]
    return []


def material_inputs(material, T, species) -> dict:
    """The material numbers the reference solve reads: E_g, N_c, N_v at T and, per
    species, its levels, lowering and band-tail share (the data, not the statistics)."""
    out = {
        "Eg": float(material.band_gap(T)),
        "Nc": float(material.Nc(T)),
        "Nv": float(material.Nv(T)),
    }
    if kane_alpha(material) > 0:  # a Kane conduction band enters the electron density
        out["alpha"] = kane_alpha(material)
    for name in sorted(species):
        dopant = material.dopant(name)
        out[name] = (
            _numbers(dopant.bound_levels())
            + _numbers(dopant.lowering)
            + _numbers(dopant.share_model())
        )
    return out


def equilibrium_value(material, T, donors, acceptors) -> dict:
    """eta_n of the 40-digit reference solve and n = N_c F_1/2(eta_n) (densities cm^-3)."""
    d = {k: v * PER_CM3 for k, v in donors.items()}
    a = {k: v * PER_CM3 for k, v in acceptors.items()}
    eta = reference_solve(material, float(T), d, a)
    with mp.workdps(30):
        kT = mp.mpf(K_B) * float(T)
        n = float(material.Nc(float(T))) * float(mp_electron_half(material, mp.mpf(eta), kT))
    return {"eta_n": eta, "n": n}


def inverse_value(u) -> float:
    """The root of F_1/2(eta) = u from mpmath (30 digits)."""
    with mp.workdps(30):
        f = lambda x: -mp.re(mp.polylog(mp.mpf(1.5), -mp.exp(x))) - mp.mpf(float(u))  # noqa: E731
        guess = mp.log(u) if u < 1 else mp.mpf((0.75 * math.sqrt(math.pi) * u) ** (2 / 3))
        return float(mp.findroot(f, guess))


@lru_cache(maxsize=1)
def load() -> dict:
    return json.loads(PATH.read_text(encoding="utf-8"))


def equilibrium_entry(material, name, T, donors, acceptors) -> dict:
    """The cached reference of a case.  Where the material numbers it was computed with
    are no longer the material's (its data file changed), the reference is recomputed
    with mpmath here, and a warning asks for the file to be regenerated."""
    key = case_key(name, T, donors, acceptors)
    entry = load()["equilibrium"].get(key)
    now = material_inputs(material, float(T), {**donors, **acceptors})
    if entry is not None and entry["material"] == now:
        return entry
    warnings.warn(
        f"reference for {key} {'missing' if entry is None else 'out of date'} "
        f"(computed afresh): {REGENERATE}",
        stacklevel=2,
    )
    return equilibrium_value(material, T, donors, acceptors)
