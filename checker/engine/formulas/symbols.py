"""The trade symbols a stated formula may use: meaning, dimension, spellings.

Authors write ``mu_n``, ``μn`` or ``mun``; ``kT`` for k*T; ``V_T`` for kT/q;
an unsubscripted ``mu``, ``D``, ``v``, ``v_sat``, ``beta``, ``lambda`` or
``eta`` means the majority carrier's.  Every spelling is mapped onto one
canonical name before anything else looks at the formula; an unknown symbol
is an input error naming the closest known spellings.

Dimensions depend on the conductor's dimensionality d: densities are per
m^d, a conductivity is q·n·mu of that density.

Conveniences of hand-written formulas: ``·``, ``⋅`` and ``×`` are products and
``−`` (U+2212) is a minus; ``e^x`` means ``exp(x)``.  The elementary charge is
``q``: ``e`` is never a symbol, so ``e^x`` with a symbol in ``x`` is Euler's
number to that power, and a bare ``e`` or ``e^2`` (where the charge squared is
as likely meant as Euler's number) is refused with both readings to choose
from.  A Fermi–Dirac order may be written as a fraction: ``F(1/2, eta)``.
"""

from __future__ import annotations

import re
from collections.abc import Iterable
from dataclasses import dataclass
from functools import cache

from ...close_words import close_matches
from ...errors import InputError
from ..expressions import dimensions as dm
from ..expressions.parser import folded, names_in, parse, to_text
from ..expressions.tree import CALL, NAME, Node, binary, call, num, transform
from ..expressions.tree import name as name_node

# the functions a formula may call (F is the normalized Fermi–Dirac integral F_j(eta))
FORMULA_FUNCTIONS = ("exp", "log", "ln", "log10", "sqrt", "abs", "F")


@dataclass(frozen=True)
class FormulaSymbol:
    name: str
    unit: str  # dimension key, see _DIMENSION
    meaning: str
    spellings: tuple[str, ...]


def _dimension(key: str, dim: int) -> dm.Dimension:
    return _dimension_table(dim)[key]


@cache
def _dimension_table(dim: int) -> dict[str, dm.Dimension]:
    return {
        "density": dm.density(dim),
        "sheet_density": dm.density(2),  # per area in any calculation (n_s, p_s)
        "energy": dm.ENERGY,
        "none": dm.NONE,
        "temperature": dm.TEMPERATURE,
        "k": dm.ENERGY / dm.TEMPERATURE,
        "charge": dm.CHARGE,
        "action": dm.ENERGY * dm.TIME,
        "mass": dm.MASS,
        "mobility": dm.MOBILITY,
        "diffusivity": dm.DIFFUSIVITY,
        "velocity": dm.VELOCITY,
        "length": dm.LENGTH,
        "area": dm.AREA,
        "field": dm.FIELD,
        "resistance": dm.RESISTANCE,
        "conductivity": dm.conductivity(dim),
        "resistivity": dm.NONE / dm.conductivity(dim),
        "current_density": dm.CHARGE * dm.density(dim) * dm.VELOCITY,
        "time": dm.TIME,
        "contact_resistivity": dm.RESISTANCE * dm.AREA,
    }


def _symbols(rows: Iterable[tuple[str, str, str, str]]) -> dict[str, FormulaSymbol]:
    return {
        name: FormulaSymbol(name, unit, meaning, tuple(s.strip() for s in spell.split(",")))
        for name, unit, meaning, spell in rows
    }


SYMBOLS = _symbols(
    [
        ("n", "density", "electron density", "n, n0, n_0"),
        ("p", "density", "hole density", "p, p0, p_0"),
        ("N_D", "density", "donor density", "N_D, ND, Nd, N_d"),
        ("N_A", "density", "acceptor density", "N_A, NA, Na, N_a"),
        ("N_D_plus", "density", "ionized donor density N_D+", "N_D_plus, ND_plus, Nd_plus, N_Dp"),
        (
            "N_A_minus",
            "density",
            "ionized acceptor density N_A-",
            "N_A_minus, NA_minus, Na_minus, N_Am",
        ),
        ("f_D", "none", "ionized fraction of the donors", "f_D, f_d"),
        ("f_A", "none", "ionized fraction of the acceptors", "f_A, f_a"),
        ("g_D", "none", "donor ground-state degeneracy factor", "g_D, g_d"),
        ("g_A", "none", "acceptor ground-state degeneracy factor", "g_A, g_a"),
        ("N_c", "density", "conduction-band effective density of states", "N_c, N_C, Nc, NC"),
        ("N_v", "density", "valence-band effective density of states", "N_v, N_V, Nv, NV"),
        ("n_i", "density", "intrinsic density", "n_i, ni, n_int"),
        ("E_c", "energy", "conduction-band edge", "E_c, E_C, Ec, EC"),
        ("E_v", "energy", "valence-band edge", "E_v, E_V, Ev, EV"),
        ("E_F", "energy", "Fermi level", "E_F, E_f, EF, Ef"),
        ("E_g", "energy", "band gap E_c - E_v", "E_g, E_G, Eg, EG"),
        ("E_i", "energy", "intrinsic Fermi level", "E_i, E_I, Ei, EI"),
        (
            "E_D",
            "energy",
            "donor level (E_c minus the ionization energy); in a zero-gap sheet the Dirac "
            "point, from which E_F is measured (E_F - E_D and E_F alone are the same there)",
            "E_D, E_d, Ed, ED",
        ),
        ("E_A", "energy", "acceptor level (E_v plus the ionization energy)", "E_A, E_a"),
        (
            "eta_n",
            "none",
            "reduced Fermi level of electrons, (E_F - E_c)/kT",
            "eta_n, η_n, ηn, eta_c",
        ),
        ("eta_p", "none", "reduced Fermi level of holes, (E_v - E_F)/kT", "eta_p, η_p, ηp, eta_v"),
        ("k", "k", "Boltzmann constant", "k, k_B, kB"),
        ("T", "temperature", "temperature", "T"),
        ("q", "charge", "elementary charge", "q"),
        ("h", "action", "Planck constant", "h"),
        ("hbar", "action", "reduced Planck constant h/2π", "hbar, ħ, h_bar"),
        ("m0", "mass", "free-electron mass", "m0, m_0"),
        ("m_n", "mass", "density-of-states effective mass of electrons", "m_n, m_dn"),
        ("m_p", "mass", "density-of-states effective mass of holes", "m_p, m_dp"),
        ("mu_n", "mobility", "electron mobility (low field)", "mu_n, μ_n, μn, mun, mu_e"),
        ("mu_p", "mobility", "hole mobility (low field)", "mu_p, μ_p, μp, mup, mu_h"),
        ("D_n", "diffusivity", "electron diffusion coefficient", "D_n, Dn, D_e"),
        ("D_p", "diffusivity", "hole diffusion coefficient", "D_p, Dp, D_h"),
        ("tau_n", "time", "electron (minority-carrier) lifetime", "tau_n, τ_n, τn, taun, tau_e"),
        ("tau_p", "time", "hole (minority-carrier) lifetime", "tau_p, τ_p, τp, taup, tau_h"),
        ("L_n", "length", "electron diffusion length sqrt(D_n tau_n)", "L_n, Ln, L_e"),
        ("L_p", "length", "hole diffusion length sqrt(D_p tau_p)", "L_p, Lp, L_h"),
        ("v_n", "velocity", "electron drift velocity", "v_n, vn, v_dn"),
        ("v_p", "velocity", "hole drift velocity", "v_p, vp, v_dp"),
        ("v_sat_n", "velocity", "electron saturation velocity", "v_sat_n, vsat_n, v_satn"),
        ("v_sat_p", "velocity", "hole saturation velocity", "v_sat_p, vsat_p, v_satp"),
        ("beta_n", "none", "Caughey–Thomas field exponent of electrons", "beta_n, β_n, βn"),
        ("beta_p", "none", "Caughey–Thomas field exponent of holes", "beta_p, β_p, βp"),
        (
            "lambda_n",
            "length",
            "backscattering mean free path of electrons",
            "lambda_n, λ_n, λn, mfp_n",
        ),
        (
            "lambda_p",
            "length",
            "backscattering mean free path of holes",
            "lambda_p, λ_p, λp, mfp_p",
        ),
        ("sigma", "conductivity", "conductivity", "sigma, σ"),
        ("rho", "resistivity", "resistivity", "rho, ρ"),
        ("R", "resistance", "resistance of the conductor", "R"),
        ("R_s", "resistance", "sheet resistance (ohm per square)", "R_s, Rs, R_sh, Rsh, R_sq"),
        # sheets and 2D gases
        ("n_s", "sheet_density", "electron sheet density", "n_s, ns, n_2D, n_sheet"),
        ("p_s", "sheet_density", "hole sheet density", "p_s, ps, p_2D, p_sheet"),
        ("v_F", "velocity", "Fermi velocity of a linear (zero-gap) band", "v_F, vF, v_f"),
        (
            "rho_c",
            "contact_resistivity",
            "specific contact resistivity (ohm cm^2)",
            "rho_c, ρ_c, ρc, rhoc",
        ),
        ("L", "length", "conductor length", "L"),
        ("A", "area", "conductor cross-section", "A"),
        ("W", "length", "conductor width", "W, w"),
        ("t", "length", "layer thickness", "t, t_layer"),
        ("E", "field", "electric field", "E, E_field, Efield, field"),
        ("J", "current_density", "current density", "J"),
        ("pi", "none", "π", "pi, π"),
    ]
)

# unsubscripted names: the majority carrier's symbol ("{x}" is n or p)
GENERIC = {
    "mu": ("mu_{x}", "mu, μ"),
    "D": ("D_{x}", "D"),
    "v": ("v_{x}", "v, v_d, vd"),
    "v_sat": ("v_sat_{x}", "v_sat, vsat, v_s"),
    "beta": ("beta_{x}", "beta, β"),
    "lambda": ("lambda_{x}", "lambda, λ, mfp"),
    "eta": ("eta_{x}", "eta, η"),
}
# spellings that stand for an expression
SHORTHANDS = {
    "kT": ("k*T", "kT, kBT, k_BT"),
    "V_T": ("k*T/q", "V_T, Vt, V_t, VT, U_T, phi_t, φ_t"),
}


# spelling -> ("symbol", name) | ("generic", name pattern) | ("shorthand", its tree)
Spelling = tuple[str, str | Node]


def _spelling_table() -> dict[str, Spelling]:
    table: dict[str, Spelling] = {}
    for symbol in SYMBOLS.values():
        for spelling in symbol.spellings:
            table[spelling] = ("symbol", symbol.name)
    for target, spellings in GENERIC.values():
        for spelling in spellings.split(","):
            table[spelling.strip()] = ("generic", target)
    for text, spellings in SHORTHANDS.values():
        tree = parse(text)
        for spelling in spellings.split(","):
            table[spelling.strip()] = ("shorthand", tree)
    return table


SPELLINGS = _spelling_table()
# "lambda" is a Python keyword: rename it where it is used as a symbol (not "lambda x: ...")
_LAMBDA = re.compile(r"\blambda\b(?!\s*[A-Za-z_:])")
_LAMBDA_NAME = "lambda_"


# typographic operators pasted from documents; "·" would otherwise join two names into one
_OPERATORS = str.maketrans({"·": "*", "⋅": "*", "×": "*", "−": "-"})
EULER = "e"


def prepare_text(text: str) -> str:
    return _LAMBDA.sub(_LAMBDA_NAME, text.translate(_OPERATORS))


def _euler_powers(tree: Node, where: str) -> Node:
    """e^x -> exp(x) where x has a symbol; any other use of e is refused (see above)."""
    euler = name_node(EULER)

    def change(node: Node) -> Node:
        if node.kind != "**" or node.args[0] != euler:
            return node
        exponent = node.args[1]
        if names_in(exponent):
            return call("exp", (exponent,))
        charge = to_text(binary("**", name_node("q"), exponent))
        raise InputError(
            f"{where}: {to_text(node)!r} is ambiguous: write {charge} for the "
            f"elementary charge or exp({to_text(exponent)}) for Euler's number"
        )

    out = transform(tree, change)
    if EULER in names_in(out):  # e left over: not the base of a power
        raise InputError(
            f"{where}: 'e' alone is not a symbol: write q for the elementary "
            "charge, or exp(x) for e^x"
        )
    return out


def dimension_of(name: str, dim: int) -> dm.Dimension:
    return _dimension(SYMBOLS[name].unit, dim)


def canonical(tree: Node, majority: str, where: str) -> Node:
    """The tree with every spelling replaced by its canonical symbol (or expression)."""

    def change(node: Node) -> Node:
        if node.kind != NAME:
            return node
        spelled = "lambda" if node.value == _LAMBDA_NAME else node.value
        found = SPELLINGS.get(spelled)
        if found is None:
            close = close_matches(spelled, list(SPELLINGS), n=3, cutoff=0.5)
            hint = f"; closest known: {', '.join(close)}" if close else ""
            raise InputError(
                f"{where}: unknown symbol {spelled!r} in the formula{hint} "
                "(run 'regimecheck symbols' for the list)"
            )
        how, target = found
        if isinstance(target, Node):  # a shorthand: its expression
            return target
        if how == "symbol":
            return name_node(target)
        return name_node(target.format(x=majority))  # generic

    return transform(tree, change)


def parse_side(text: str, majority: str, where: str) -> tuple[Node, dict[str, str]]:
    """(canonical tree, {canonical name: the author's spelling}) of one side of a formula."""
    raw = _euler_powers(parse(prepare_text(text), None, where, functions=FORMULA_FUNCTIONS), where)
    tree = _check_orders(canonical(raw, majority, where), where)
    spelled: dict[str, str] = {}
    for name in names_in(raw):
        canonical_tree = canonical(name_node(name), majority, where)
        if canonical_tree.kind == NAME:
            spelled[canonical_tree.value] = "lambda" if name == _LAMBDA_NAME else name
    return tree, spelled


def _check_orders(tree: Node, where: str) -> Node:
    """The tree with each Fermi–Dirac order folded to a number (F(1/2, eta) -> F(0.5, eta));
    an order that is not a constant half-integer from -3/2 to 7/2 is refused."""

    def change(node: Node) -> Node:
        if node.kind != CALL or node.value != "F":
            return node
        order = folded(node.args[0])
        if order is None or not -1.5 <= order <= 3.5 or order * 2 != int(order * 2):
            raise InputError(
                f"{where}: F(j, eta) needs a half-integer order j from -3/2 "
                "to 7/2 written as a number, e.g. F(1/2, eta_n) or F(0.5, eta_n)"
            )
        return call("F", (num(order),) + node.args[1:])

    return transform(tree, change)


def glossary(dim: int = 3) -> list[tuple[str, str, str, str]]:
    """(canonical name, unit, meaning, spellings) for the ``symbols`` command."""
    rows = [
        (s.name, dm.text(_dimension(s.unit, dim)), s.meaning, ", ".join(s.spellings))
        for s in SYMBOLS.values()
    ]
    rows += [
        (
            name,
            "(majority carrier)",
            f"same as {target.format(x='n')} or {target.format(x='p')}",
            spell,
        )
        for name, (target, spell) in GENERIC.items()
    ]
    rows += [
        (name, "(shorthand)", f"= {text}", spell) for name, (text, spell) in SHORTHANDS.items()
    ]
    return rows
