"""The exact relations stated formulas are compared with, and the named limits.

Every trade symbol that is not an independent input is *defined* by the relation the
physics core computes (Fermi–Dirac densities with F_j, the generalized Einstein
relation for the dimensionality, two-carrier conductivity, charge neutrality with
partial ionization, n_i, the short-conductor resistance, the Caughey–Thomas drift
velocity, ...).  The definitions are written once, in sympy, in
:mod:`checker.engine.formulas.relation_table`; ``tools/generate_relations.py`` writes
them as text (``expressions/_relation_texts.py``), which is parsed here -- no sympy at
run time.  A *limit* is a symbolic substitution on these definitions: F_j(eta) ->
e^eta, a switch set to zero (holes neglected beside electrons, lambda/L -> 0,
mu E/v_sat -> 0), an ionized fraction set to one.  A stated formula embodies
a set of limits when it is an identity of the definitions with those limits
applied (see :mod:`checker.engine.formulas.match`).

Charge neutrality n + N_A- = p + N_D+ has no explicit form for n, so it is
written for the dopant instead: in the *donor world* N_D is defined from
(E_F, N_A, ...), in the *acceptor world* N_A is.  A formula is tried in the
world(s) its dopant symbols call for.

References
----------
J. S. Blakemore, Semiconductor Statistics (Pergamon, 1962): F_j densities,
  ionization statistics, degenerate limit F_j(eta) ~ eta^(j+1)/Gamma(j+2).
S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (2007),
  ch. 1: neutrality, n_i, generalized Einstein relation.
M. Lundstrom and C. Jeong, Near-Equilibrium Transport (2012): R = rho(L+lambda)/A.
D. M. Caughey and R. E. Thomas, Proc. IEEE 55, 2192 (1967): drift velocity.
W. Shockley, Electrons and Holes in Semiconductors (Van Nostrand, 1950): the
  diffusion length L = sqrt(D tau) (from memory).
"""

from __future__ import annotations

import math
from collections.abc import Collection, Iterable, Mapping
from dataclasses import dataclass, field
from functools import cache, lru_cache
from typing import TYPE_CHECKING, Any

from ..expressions import _relation_texts
from ..expressions.parser import names_in as _names_in
from ..expressions.parser import parse
from ..expressions.tree import CALL, NAME, Node, binary, call, fold, num, transform
from ..expressions.tree import name as name_node

if TYPE_CHECKING:
    import numpy as np

# definitions are hashable and reused: remember the names each one uses (bounded: the
# definitions are a few hundred trees, stated formulas add theirs per process)
names_in = lru_cache(maxsize=4096)(_names_in)

# Gamma(j + 2) for the Fermi–Dirac orders that occur (j = d/2 - 1 and j - 1)
_GAMMA_TEXT = {
    3.0: "2",
    2.5: "0.75*sqrt(pi)",
    2.0: "1",
    1.5: "0.5*sqrt(pi)",
    1.0: "1",
    0.5: "sqrt(pi)",
}
# a Kane band's relation functions -> their parabolic (alpha -> 0) form, over the eta argument
_PARABOLIC_FORMS = {
    "kane_density_factor": "F(0.5, eta)",
    "kane_einstein_ratio": "F(0.5, eta)/F(-0.5, eta)",
}


@dataclass(frozen=True)
class Limit:
    id: str
    label: str  # how the report names it
    word: str | None  # assumption word passed to the rules (None: no rule guards it)
    carrier: str | None  # "n", "p" or None (both / the conductor)
    overrides: tuple[tuple[str, float], ...] = ()  # (name, value) pairs set by the limit
    fermi: str | None = None  # "eta_n"/"eta_p": F_j of it is rewritten
    fermi_form: str | None = None  # "exp" (non-degenerate) | "power" (degenerate)
    excludes: tuple[str, ...] = ()
    parabolic: bool = False  # Kane relations -> their parabolic forms (alpha -> 0)


def limits(world: str) -> tuple[Limit, ...]:
    """The named limits, in the order they are reported."""
    carrier = "n" if world == "donor" else "p"
    other_dopant = "N_A" if world == "donor" else "N_D"
    return (
        Limit(
            "parabolic_n",
            "parabolic conduction band (α -> 0)",
            "parabolic-band",
            "n",
            parabolic=True,
        ),
        Limit(
            "nondeg_n",
            "non-degenerate electrons (F_j -> e^η)",
            "non-degenerate",
            "n",
            fermi="eta_n",
            fermi_form="exp",
            excludes=("deg_n",),
        ),
        Limit(
            "nondeg_p",
            "non-degenerate holes (F_j -> e^η)",
            "non-degenerate",
            "p",
            fermi="eta_p",
            fermi_form="exp",
            excludes=("deg_p",),
        ),
        Limit(
            "deg_n",
            "degenerate electrons (F_j -> η^(j+1)/Γ(j+2))",
            None,
            "n",
            fermi="eta_n",
            fermi_form="power",
            excludes=("nondeg_n", "deg_p"),
        ),
        Limit(
            "deg_p",
            "degenerate holes (F_j -> η^(j+1)/Γ(j+2))",
            None,
            "p",
            fermi="eta_p",
            fermi_form="power",
            excludes=("nondeg_p", "deg_n"),
        ),
        Limit(
            "holes_negligible",
            "holes neglected beside electrons",
            "single-carrier",
            "n",
            overrides=(("w_p", 0.0),),
            excludes=("electrons_negligible",),
        ),
        Limit(
            "electrons_negligible",
            "electrons neglected beside holes",
            "single-carrier",
            "p",
            overrides=(("w_n", 0.0),),
            excludes=("holes_negligible",),
        ),
        Limit(
            "full_ionization",
            "full ionization (N_D+ -> N_D, N_A- -> N_A)",
            "full-ionization",
            carrier,
            overrides=(("f_D", 1.0), ("f_A", 1.0)),
        ),
        Limit(
            "no_compensation",
            f"no compensation ({other_dopant} -> 0)",
            "no-compensation",
            carrier,
            overrides=((other_dopant, 0.0),),
        ),
        Limit(
            "diffusive",
            "diffusive transport (λ/L -> 0)",
            "diffusive",
            None,
            overrides=(("s_d", 0.0),),
        ),
        Limit(
            "low_field",
            "low field (μE/v_sat -> 0)",
            "low-field",
            None,
            overrides=(("s_fn", 0.0), ("s_fp", 0.0)),
        ),
    )


# where a limit acts inside a particular relation, the rules know it by another word
WORDS_IN = {
    "D_n": {"nondeg_n": "einstein-relation"},
    "D_p": {"nondeg_p": "einstein-relation"},
    "N_D": {"holes_negligible": "extrinsic"},
    # the T = 0 density of a linear band: its degenerate limit (n_s = E_F^2/(pi hbar^2 v_F^2))
    "n_s": {"deg_n": "zero-temperature"},
    "p_s": {"deg_p": "zero-temperature"},
    "N_A": {"electrons_negligible": "extrinsic"},
}

# what each defined symbol's relation is called in reports
RELATION_NAMES = {
    "eta_n": "reduced Fermi level",
    "eta_p": "reduced Fermi level",
    "E_g": "band gap",
    "n": "electron density (Fermi–Dirac)",
    "p": "hole density (Fermi–Dirac)",
    "n_s": "electron sheet density (Fermi–Dirac)",
    "p_s": "hole sheet density (Fermi–Dirac)",
    "N_c": "effective density of states",
    "N_v": "effective density of states",
    "n_i": "intrinsic density",
    "E_i": "intrinsic Fermi level",
    "E_D": "donor level",
    "E_A": "acceptor level",
    "f_D": "donor ionization",
    "f_A": "acceptor ionization",
    "N_D_plus": "ionized donors",
    "N_A_minus": "ionized acceptors",
    "D_n": "generalized Einstein relation",
    "D_p": "generalized Einstein relation",
    "sigma": "two-carrier conductivity",
    "rho": "resistivity",
    "v_n": "field-dependent drift velocity",
    "v_p": "field-dependent drift velocity",
    "J": "drift current density",
    "hbar": "reduced Planck constant",
    "R": "short-conductor resistance",
    "R_s": "sheet resistance",
    "m_n": "effective density of states",
    "m_p": "effective density of states",
    "N_D": "charge neutrality",
    "N_A": "charge neutrality",
    "A": "cross-section",
    "L_n": "diffusion length",
    "L_p": "diffusion length",
}

SWITCHES = ("w_n", "w_p", "s_d", "s_fn", "s_fp")


@dataclass(frozen=True)
class World:
    dim: int
    world: str  # "donor" | "acceptor"
    majority: str
    band: str  # "parabolic" | "kane" (bulk Kane conduction band) | "linear" (zero-gap sheet)
    definitions: dict[str, Node] = field(hash=False, compare=False)  # name -> tree
    order: tuple[str, ...] = ()  # defined names, dependencies first


@cache
def world(dim: int, which: str, majority: str, band: str = "parabolic") -> World:
    # the definitions are generated from relation_table.py (the one place they are written)
    texts = dict(_relation_texts.DEFINITIONS[dim, majority, band])
    texts.update(_relation_texts.NEUTRALITY[which])
    definitions = {name: parse(text) for name, text in texts.items()}
    definitions.update({name: num(1.0) for name in SWITCHES})
    return World(dim, which, majority, band, definitions, _topological(definitions))


def band_world(dim: int, kane_beta: float, linear: float) -> str:
    """The band world of an operating point: "kane" where the bulk conduction band is Kane
    (alpha kT > 0), "linear" for a zero-gap sheet, else "parabolic"."""
    if dim == 3 and kane_beta > 0:
        return "kane"
    if dim == 2 and linear > 0:
        return "linear"
    return "parabolic"


def _topological(definitions: dict[str, Node]) -> tuple[str, ...]:
    order: list[str] = []
    state: dict[str, str] = {}  # name -> "busy" | "done"

    def visit(name: str) -> None:
        if state.get(name) == "done":
            return
        if state.get(name) == "busy":
            raise ValueError(f"circular definition at {name}")
        state[name] = "busy"
        for used in names_in(definitions[name]):
            if used in definitions:
                visit(used)
        state[name] = "done"
        order.append(name)

    for name in definitions:
        visit(name)
    return tuple(order)


def closure(names: Iterable[str], definitions: Mapping[str, Node]) -> set[str]:
    """Every defined symbol the names depend on (including themselves)."""
    seen: set[str] = set()
    todo = [n for n in names if n in definitions]
    while todo:
        name = todo.pop()
        if name in seen:
            continue
        seen.add(name)
        todo.extend(n for n in names_in(definitions[name]) if n in definitions)
    return seen


def _is_fermi_of(node: Node, eta: str) -> bool:
    return node.kind == CALL and node.value == "F" and node.args[1] == name_node(eta)


def _fermi_calls(tree: Node, eta: str) -> bool:
    return fold(tree, lambda node, inner: _is_fermi_of(node, eta) or any(inner))


def _kane_calls(tree: Node, eta: str | None = None) -> bool:
    """True where the tree calls a Kane relation (of ``eta``, if given)."""

    def is_kane(node: Node) -> bool:
        return (
            node.kind == CALL
            and node.value in _PARABOLIC_FORMS
            and (eta is None or node.args[1] == name_node(eta))
        )

    return fold(tree, lambda node, inner: is_kane(node) or any(inner))


def acts_on(limit: Limit, tree: Node) -> bool:
    """True when the limit changes this (unexpanded) definition (a Kane relation's
    parabolic form has F_j of the same eta)."""
    if limit.fermi and (_fermi_calls(tree, limit.fermi) or _kane_calls(tree, limit.fermi)):
        return True
    if limit.parabolic and _kane_calls(tree):
        return True
    used = names_in(tree)
    return any(name in used for name, _ in limit.overrides)


def _rewrite_fermi(tree: Node, eta: str, form: str) -> Node:
    """F_j(eta) -> e^eta ("exp") or eta^(j+1)/Gamma(j+2) ("power")."""

    def change(node: Node) -> Node:
        if not _is_fermi_of(node, eta):
            return node
        order, argument = node.args
        if form == "exp":
            return call("exp", (argument,))
        gamma = parse(_GAMMA_TEXT[order.value + 2.0])
        return binary("/", binary("**", argument, num(order.value + 1.0)), gamma)

    return transform(tree, change)


@cache
def _parabolic_form(function: str) -> Node:
    return parse(_PARABOLIC_FORMS[function])


def _rewrite_kane(tree: Node) -> Node:
    """kane_density_factor(beta, eta) -> F(1/2, eta), kane_einstein_ratio(beta, eta) ->
    F(1/2, eta)/F(-1/2, eta): the Kane band's alpha -> 0."""

    def change(node: Node) -> Node:
        if node.kind != CALL or node.value not in _PARABOLIC_FORMS:
            return node
        return expand(_parabolic_form(node.value), {"eta": node.args[1]})

    return transform(tree, change)


@lru_cache(maxsize=256)
def _with_fermi(
    base: World, rewrites: tuple[tuple[str, str], ...], parabolic: bool = False
) -> dict[str, Node]:
    definitions = base.definitions
    if parabolic:  # first: the parabolic forms' F_j are then rewritten like any other
        definitions = {name: _rewrite_kane(tree) for name, tree in definitions.items()}
    for eta, form in rewrites:
        definitions = {name: _rewrite_fermi(tree, eta, form) for name, tree in definitions.items()}
    return definitions


def limited(base: World, chosen: Collection[Limit]) -> dict[str, Node]:
    """The definitions with the chosen limits applied (overrides and F_j rewrites)."""
    definitions = dict(
        _with_fermi(
            base,
            tuple((limit.fermi, limit.fermi_form) for limit in chosen if limit.fermi),
            any(limit.parabolic for limit in chosen),
        )
    )
    for limit in chosen:
        for name, value in limit.overrides:
            definitions[name] = num(value)
    return definitions


def expand(tree: Node, definitions: Mapping[str, Node]) -> Node:
    """The tree with every defined name replaced by its definition, recursively."""

    def change(node: Node) -> Node:
        inner = definitions.get(node.value) if node.kind == NAME else None
        return node if inner is None else expand(inner, definitions)

    return transform(tree, change)


# ---- random points for identity tests -------------------------------------------------------
_EV = 1.602176634e-19
_DENSITY_DECADES = {3: (23.0, 26.0), 2: (15.0, 18.0), 1: (7.0, 9.0)}
# primitive -> ("log", lo, hi) decades | ("lin", lo, hi) | ("scale", true value) | ("fixed", value)
_SAMPLING: dict[str, tuple[str, float] | tuple[str, float, float]] = {
    "q": ("scale", _EV),
    "h": ("scale", 6.62607015e-34),
    "m0": ("scale", 9.1093837139e-31),
    "pi": ("fixed", math.pi),
    "dE_D": ("lin", 0.005 * _EV, 0.2 * _EV),
    "dE_A": ("lin", 0.005 * _EV, 0.3 * _EV),
    "g_D": ("lin", 1.5, 4.0),
    "g_A": ("lin", 2.0, 6.0),
    "mu_n": ("log", -3.0, 0.0),
    "mu_p": ("log", -3.0, 0.0),
    "L": ("log", -8.0, -4.0),
    "A": ("log", -14.0, -8.0),
    "W": ("log", -7.0, -4.0),
    "t": ("log", -8.0, -5.0),
    "lambda_n": ("log", -9.0, -6.0),
    "lambda_p": ("log", -9.0, -6.0),
    "E": ("log", 3.0, 7.0),
    "v_sat_n": ("log", 4.5, 5.5),
    "v_sat_p": ("log", 4.5, 5.5),
    "beta_n": ("lin", 1.0, 2.5),
    "beta_p": ("lin", 1.0, 2.5),
    "m_n": ("log", -32.0, -30.0),
    "m_p": ("log", -32.0, -30.0),
    "tau_n": ("log", -10.0, -3.0),
    "tau_p": ("log", -10.0, -3.0),
    # alpha kT of a Kane band: InP at 150 K to InSb at 600 K and beyond
    "beta_kane_n": ("lin", 0.01, 0.5),
    "v_F": ("log", 5.5, 6.5),
}


def sample(
    names: Iterable[str],
    dim: int,
    degenerate: Collection[str],
    rng: np.random.Generator,
    size: int,
    band: str = "parabolic",
) -> dict[str, Any]:
    """Random values for the primitive ``names`` (and the band energies).

    Reduced Fermi levels are drawn in (-4, 4) (so F_j differs from e^eta by
    more than any rounding), or in (0.5, 6) for a carrier taken degenerate;
    the band edges follow from them, which may put E_c below E_v: the
    identities tested are algebraic and do not care.
    """
    out: dict[str, Any] = {}  # name -> array of size points (pi: a number)
    T = rng.uniform(150.0, 600.0, size)
    k = 1.380649e-23 * rng.uniform(0.7, 1.4, size)
    out["T"], out["k"] = T, k
    kT = k * T
    eta = {
        x: rng.uniform(0.5, 6.0, size) if x in degenerate else rng.uniform(-4.0, 4.0, size)
        for x in ("n", "p")
    }
    out["E_v"] = rng.uniform(-1.0, 1.0, size) * _EV
    out["E_F"] = out["E_v"] - eta["p"] * kT
    out["E_c"] = out["E_F"] - eta["n"] * kT
    if band == "linear":  # energies from the Dirac point (E_D = 0); holes at -eta_n
        out["E_F"] = (-eta["p"] if "p" in degenerate else eta["n"]) * kT
    lo, hi = _DENSITY_DECADES[dim]
    for name in sorted(names):
        if name in out:
            continue
        if name in ("N_c", "N_v", "N_D", "N_A"):
            out[name] = 10.0 ** rng.uniform(lo, hi, size)
            continue
        kind, *spec = _SAMPLING.get(name, ("log", -2.0, 2.0))
        if kind == "log":
            out[name] = 10.0 ** rng.uniform(spec[0], spec[1], size)
        elif kind == "lin":
            out[name] = rng.uniform(spec[0], spec[1], size)
        elif kind == "scale":
            out[name] = spec[0] * rng.uniform(0.7, 1.4, size)
        else:
            out[name] = spec[0]
    return out
