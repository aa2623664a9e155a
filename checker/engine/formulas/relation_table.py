"""Every relation regimecheck computes, written once, as a sympy expression.

Imported only by ``tools/generate_relations.py``, by ``explain`` and by the tests --
never when ``check`` starts (sympy takes a second to import).  The generator writes
from this table:

* ``checker/physics/_relations.py``: one vectorized numpy function per entry of
  :data:`FUNCTIONS` (the physics layer and the rule language call these);
* ``checker/engine/expressions/_relation_texts.py``: each function's formula as text of
  the expression language (for the dimension check of rule expressions) and the exact
  definitions that stated formulas are compared with (:data:`definitions`), built from
  the same functions by substitution.

``F(j, eta)`` is the normalized Fermi–Dirac integral F_j(eta) (F_j -> e^eta as
eta -> -inf).  The definitions come in band worlds (:data:`BANDS`): parabolic bands,
a bulk Kane conduction band (n = N_c F_K(beta, eta_n), whose F_K and Einstein ratio are
quadratures of the physics layer, written here as the opaque functions K and K_ratio)
and a linear zero-gap sheet (graphene; energies from the Dirac point).

Named limits that follow from a relation are derived here by sympy
(:func:`derived_limits`) and checked by the tests.

References
----------
J. S. Blakemore, Semiconductor Statistics (Pergamon, 1962): F_j densities,
  ionization statistics, degenerate limit F_j(eta) ~ eta^(j+1)/Gamma(j+2).
S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (2007), ch. 1:
  neutrality, n_i, two-carrier conductivity, generalized Einstein relation.
P. T. Landsberg, Eur. J. Phys. 2, 213 (1981): generalized Einstein relation.
D. M. Caughey and R. E. Thomas, Proc. IEEE 55, 2192 (1967): field-dependent velocity.
M. Lundstrom and C. Jeong, Near-Equilibrium Transport (2012), ch. 3: R = rho(L+lambda)/A.
W. Shockley, Electrons and Holes in Semiconductors (Van Nostrand, 1950): the
  diffusion length L = sqrt(D tau) (from memory).
E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957): the non-parabolic band E(1 + alpha E).
T. Fang, A. Konar, H. Xing and D. Jena, Appl. Phys. Lett. 91, 092109 (2007): densities
  and n_i of graphene's linear bands.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import sympy as sp

F = sp.Function("F")  # normalized Fermi–Dirac integral F_j(eta)
# Kane non-parabolic density factor F_K(beta, eta) = n/N_c (beta = alpha kT) and the Einstein
# ratio F_K/(dF_K/deta) of that band: quadratures of the physics layer, no closed form
K = sp.Function("K")
K_RATIO = sp.Function("K_ratio")


def _positive(names: str) -> Any:
    return sp.symbols(names, positive=True)


@dataclass(frozen=True)
class Function:
    """A relation callable from rules and from the physics layer."""

    name: str
    parameters: tuple[Any, ...]  # sympy symbols, in call order
    expression: sp.Expr
    meaning: str  # one line, with units of the result
    validity: str
    reference: str
    # text the dimension check walks where the relation has no closed form (a quadrature):
    # it states only that the arguments and the result are pure numbers
    dimension_text: str | None = None

    def __call__(self, *args: Any) -> sp.Expr:
        """The expression with the parameters replaced by ``args`` (simultaneously)."""
        return self.expression.subs(dict(zip(self.parameters, args)), simultaneous=True)


dim, eta = sp.symbols("dim eta", real=True)
beta_k = sp.Symbol("beta", nonnegative=True)  # alpha kT of a Kane band
mu, field, v_sat, beta = _positive("mu field v_sat beta")
rho, length, mfp, area = _positive("rho L mean_free_path A")
n_c, n_v, e_g, kT = _positive("N_c N_v E_g kT")
n, p, mu_n, mu_p, q = _positive("n p mu_n mu_p q")

FUNCTIONS = {
    f.name: f
    for f in (
        Function(
            "einstein_ratio",
            (dim, eta),
            F(dim / 2 - 1, eta) / F(dim / 2 - 2, eta),
            "generalized Einstein ratio (D/mu)/(kT/q) of a parabolic band of "
            "dimensionality dim at reduced Fermi level eta (dimensionless)",
            "parabolic band, one subband in 2D and 1D; dim in {1, 2, 3}, any real eta",
            "P. T. Landsberg, Eur. J. Phys. 2, 213 (1981)",
        ),
        Function(
            "kane_density_factor",
            (beta_k, eta),
            K(beta_k, eta),
            "Kane non-parabolic density factor F_K = n/N_c at beta = alpha kT and reduced "
            "Fermi level eta, F_K = (2/sqrt(pi)) integral of sqrt(x(1 + beta x))(1 + 2 beta x)"
            "/(1 + e^(x - eta)) dx (dimensionless; F_1/2(eta) at beta = 0)",
            "bulk (3D) Kane band E(1 + alpha E) = hbar^2 k^2/2m*; beta >= 0, any real eta",
            "E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957)",
            "F(0.5, eta) + 0*beta",
        ),
        Function(
            "kane_einstein_ratio",
            (beta_k, eta),
            K_RATIO(beta_k, eta),
            "generalized Einstein ratio (D/mu)/(kT/q) = F_K/(dF_K/deta) of a bulk Kane band "
            "(dimensionless; F_1/2/F_-1/2 at beta = 0)",
            "bulk (3D) Kane band; beta >= 0, any real eta",
            "P. T. Landsberg, Eur. J. Phys. 2, 213 (1981); E. O. Kane, J. Phys. Chem. Solids "
            "1, 249 (1957)",
            "F(0.5, eta) + 0*beta",
        ),
        Function(
            "field_velocity",
            (mu, field, v_sat, beta),
            mu * field / (1 + (mu * field / v_sat) ** beta) ** (1 / beta),
            "Caughey–Thomas drift velocity at field magnitude E (m/s)",
            "E >= 0; monotone saturation (no negative differential mobility)",
            "D. M. Caughey and R. E. Thomas, Proc. IEEE 55, 2192 (1967)",
        ),
        Function(
            "field_mobility",
            (mu, field, v_sat, beta),
            mu / (1 + (mu * field / v_sat) ** beta) ** (1 / beta),
            "Caughey–Thomas mobility at field magnitude E (m^2/(V s))",
            "E >= 0; monotone saturation (no negative differential mobility)",
            "D. M. Caughey and R. E. Thomas, Proc. IEEE 55, 2192 (1967)",
        ),
        Function(
            "conductor_resistance",
            (rho, length, mfp, area),
            rho * (length + mfp) / area,
            "resistance of a conductor of any length, diffusive plus ballistic (ohm)",
            "near equilibrium (low bias); lambda the backscattering mean free path",
            "M. Lundstrom and C. Jeong, Near-Equilibrium Transport (2012), ch. 3",
        ),
        Function(
            "intrinsic_density",
            (n_c, n_v, e_g, kT),
            sp.sqrt(n_c * n_v) * sp.exp(-e_g / (2 * kT)),
            "intrinsic density n_i (per m^3 for N_c, N_v per m^3)",
            "non-degenerate intrinsic carriers (E_g >> kT)",
            "S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (2007), ch. 1",
        ),
        Function(
            "two_carrier_conductivity",
            (n, p, mu_n, mu_p, q),
            q * (n * mu_n + p * mu_p),
            "drift conductivity of electrons and holes (S/m)",
            "low field; densities per m^3, mobilities in m^2/(V s), q in C",
            "S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (2007), ch. 1",
        ),
    )
}


def derived_limits() -> dict[str, tuple[Any, Any]]:
    """Named limits of the functions, derived by sympy: name -> (expression, limit)."""
    j = sp.Symbol("j")
    nondegenerate = {F: sp.Lambda((j, eta), sp.exp(eta))}
    degenerate = {F: sp.Lambda((j, eta), eta ** (j + 1) / sp.gamma(j + 2))}
    ratio = FUNCTIONS["einstein_ratio"].expression
    velocity = FUNCTIONS["field_velocity"].expression
    resistance = FUNCTIONS["conductor_resistance"].expression
    return {
        "einstein_ratio, non-degenerate (Einstein relation)": sp.simplify(
            ratio.replace(F, nondegenerate[F])
        ),
        "einstein_ratio, degenerate": sp.gammasimp(ratio.replace(F, degenerate[F])),
        "field_velocity, low field": sp.limit(velocity, v_sat, sp.oo),
        "conductor_resistance, diffusive (lambda << L)": sp.limit(resistance / length, mfp, 0)
        * length,
    }


# ---- the exact definitions stated formulas are compared with ---------------------------------
def S(name: str) -> sp.Symbol:
    """A trade symbol of stated formulas (energies may be negative: real)."""
    if name in ("E_c", "E_v", "E_F", "E_D", "E_A", "E_i", "eta_n", "eta_p"):
        return sp.Symbol(name, real=True)
    return sp.Symbol(name, positive=True)


def _common(d: int) -> dict[str, Any]:
    """Definitions shared by both neutrality worlds, for dimensionality ``d``.

    The switches w_n, w_p (a carrier counted), s_d (lambda/L counted), s_fn, s_fp
    (mu E/v_sat counted) are 1 in the exact relation; a named limit sets one to 0.
    """
    k, T, q_ = S("k"), S("T"), S("q")
    kT_ = k * T
    out = {
        "eta_n": (S("E_F") - S("E_c")) / kT_,
        "eta_p": (S("E_v") - S("E_F")) / kT_,
        "E_g": S("E_c") - S("E_v"),
        "n": S("N_c") * F(sp.Rational(d, 2) - 1, S("eta_n")),
        "p": S("N_v") * F(sp.Rational(d, 2) - 1, S("eta_p")),
        "n_i": FUNCTIONS["intrinsic_density"](S("N_c"), S("N_v"), S("E_g"), kT_),
        "E_i": (S("E_c") + S("E_v")) / 2 + kT_ / 2 * sp.log(S("N_v") / S("N_c")),
        "E_D": S("E_c") - S("dE_D"),
        "E_A": S("E_v") + S("dE_A"),
        "f_D": 1 / (1 + S("g_D") * sp.exp((S("E_F") - S("E_D")) / kT_)),
        "f_A": 1 / (1 + S("g_A") * sp.exp((S("E_A") - S("E_F")) / kT_)),
        "N_D_plus": S("N_D") * S("f_D"),
        "N_A_minus": S("N_A") * S("f_A"),
        "sigma": FUNCTIONS["two_carrier_conductivity"](
            S("w_n") * S("n"), S("w_p") * S("p"), S("mu_n"), S("mu_p"), q_
        ),
        "rho": 1 / S("sigma"),
        "J": q_ * (S("w_n") * S("n") * S("v_n") + S("w_p") * S("p") * S("v_p")),
        "hbar": S("h") / (2 * sp.pi),
    }
    for x in ("n", "p"):
        out[f"D_{x}"] = S(f"mu_{x}") * kT_ / q_ * FUNCTIONS["einstein_ratio"](d, S(f"eta_{x}"))
        # the low-field limit is v_sat -> infinity: s_f (= 1) / v_sat -> 0
        out[f"v_{x}"] = FUNCTIONS["field_velocity"](
            S(f"mu_{x}"), S("E"), S(f"v_sat_{x}") / S(f"s_f{x}"), S(f"beta_{x}")
        )
        out[f"L_{x}"] = sp.sqrt(S(f"D_{x}") * S(f"tau_{x}"))
    return out


def _geometry(d: int, majority: str) -> dict[str, Any]:
    h, k, T = S("h"), S("k"), S("T")
    resistance = FUNCTIONS["conductor_resistance"]
    path = S("s_d") * S(f"lambda_{majority}")  # s_d = 0: the diffusive limit
    if d == 3:
        return {
            "R": resistance(S("rho"), S("L"), path, S("A")),
            "R_s": S("rho") / S("t"),
            "A": S("W") * S("t"),
            "m_n": (S("N_c") / 2) ** sp.Rational(2, 3) * h**2 / (2 * sp.pi * k * T),
            "m_p": (S("N_v") / 2) ** sp.Rational(2, 3) * h**2 / (2 * sp.pi * k * T),
        }
    if d == 2:
        return {
            "R": resistance(S("rho"), S("L"), path, S("W")),
            "R_s": S("rho"),
            "m_n": S("N_c") * sp.pi * S("hbar") ** 2 / (k * T),
            "m_p": S("N_v") * sp.pi * S("hbar") ** 2 / (k * T),
        }
    return {"R": resistance(S("rho"), S("L"), path, 1)}


# charge neutrality n + N_A- = p + N_D+ has no explicit form for n: it is written for the
# dopant instead (the donor world defines N_D, the acceptor world N_A)
NEUTRALITY = {
    "donor": {"N_D": (S("n") - S("w_p") * S("p") + S("N_A") * S("f_A")) / S("f_D")},
    "acceptor": {"N_A": (S("p") - S("w_n") * S("n") + S("N_D") * S("f_D")) / S("f_A")},
}


# the band worlds of each dimensionality: "parabolic" everywhere, a Kane conduction band in
# bulk, linear zero-gap bands (graphene) in a sheet
BANDS = {3: ("parabolic", "kane"), 2: ("parabolic", "linear"), 1: ("parabolic",)}


def _kane(d: int) -> dict[str, Any]:
    """A bulk Kane conduction band: n = N_c F_K(beta, eta_n), D_n/mu_n from the same band
    (beta_kane_n = alpha kT; Kane 1957, Landsberg 1981).  Holes stay parabolic."""
    k, T, q_ = S("k"), S("T"), S("q")
    beta_n = S("beta_kane_n")
    return {
        "n": S("N_c") * FUNCTIONS["kane_density_factor"](beta_n, S("eta_n")),
        "D_n": S("mu_n") * k * T / q_ * FUNCTIONS["kane_einstein_ratio"](beta_n, S("eta_n")),
    }


# g_s g_v of graphene: N_eff = (g_s g_v/2 pi)(kT/hbar v_F)^2 = (2/pi)(kT/hbar v_F)^2
GRAPHENE_DEGENERACY = 4


def _linear(d: int) -> dict[str, Any]:
    """A zero-gap sheet with linear bands E = +-hbar v_F |k| (Fang et al. 2007).

    Energies are measured from the Dirac point: E_D (here the Dirac point, not a donor
    level) is the energy zero, so E_F - E_D and E_F alone are the same number; eta_p =
    -eta_n; n_s = N_eff F_1(eta_n), p_s = N_eff F_1(eta_p); D/mu = (kT/q) F_1/F_0.
    """
    k, T, q_ = S("k"), S("T"), S("q")
    kT_ = k * T
    n_eff = sp.Rational(GRAPHENE_DEGENERACY, 2) / sp.pi * (kT_ / (S("hbar") * S("v_F"))) ** 2
    out = {
        "E_D": sp.Integer(0),
        "E_c": S("E_D"),
        "E_v": S("E_D"),
        "eta_n": (S("E_F") - S("E_D")) / kT_,
        "eta_p": (S("E_D") - S("E_F")) / kT_,
        "N_c": n_eff,
        "N_v": n_eff,
        "n_s": S("N_c") * F(1, S("eta_n")),
        "p_s": S("N_v") * F(1, S("eta_p")),
        "n": S("n_s"),
        "p": S("p_s"),
        # both cones at E_F = E_D: N_eff F_1(0) = (pi/6)(kT/hbar v_F)^2 for graphene
        "n_i": S("N_c") * sp.pi**2 / 12,
        "E_i": S("E_D"),
    }
    for x in ("n", "p"):
        out[f"D_{x}"] = S(f"mu_{x}") * kT_ / q_ * F(1, S(f"eta_{x}")) / F(0, S(f"eta_{x}"))
    return out


# a linear sheet has no dopant levels and no band masses
_NOT_LINEAR = ("E_A", "f_D", "f_A", "N_D_plus", "N_A_minus", "m_n", "m_p")


def definitions(d: int, majority: str, band: str = "parabolic") -> dict[str, Any]:
    """name -> sympy expression of every defined trade symbol (without neutrality), for
    dimensionality ``d``, majority carrier ``majority`` and band world ``band``."""
    out = _common(d)
    out.update(_geometry(d, majority))
    if d == 2:  # a sheet's densities are its sheet densities
        out.update({"n_s": S("n"), "p_s": S("p")})
    if band == "kane":
        out.update(_kane(d))
    elif band == "linear":
        for name in _NOT_LINEAR + ("n_s", "p_s"):
            out.pop(name, None)
        out.update(_linear(d))
    return out
