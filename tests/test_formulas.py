"""Stated formulas: what each one is recognised as, its dimensions, its value at the
operating point, how its assumptions reach the rules, and hostile input.

Expected limit sets are the textbook derivations of each shortcut (sources beside
each row); numbers are checked against mpmath and scipy.constants, never against
values produced by the package.
"""

import json
import math
import subprocess
import sys

import mpmath as mp
import numpy as np
import pytest
import scipy.constants as sc
from reference import mp_electron_half, mp_fermi_half, reference_solve

from checker import load_material
from checker.engine.expressions import parser as expression
from checker.engine.expressions import tree
from checker.engine.formulas import normal_form
from checker.engine.formulas.check import dimension, parse_formula
from checker.engine.formulas.match import analyse
from checker.engine.formulas.relations import RELATION_NAMES, SWITCHES, expand, limited, world
from checker.engine.run import check_calculations
from checker.errors import InputError
from checker.inputs.calculation_file import read_calculation_file
from checker.physics import transport
from checker.physics.constants import ELECTRON_MASS, HBAR
from checker.physics.equilibrium import State, charge_balance_error, ionized_density
from checker.physics.fermi import fermi_dirac
from checker.physics.materials import BoundShare, Dopant, MassPolynomialDOS, Provenance

SZE = "Sze & Ng, Physics of Semiconductor Devices, 3rd ed. (2007), ch. 1"
SOMMERFELD = (
    "Blakemore, Semiconductor Statistics (1962): degenerate limit F_j -> "
    "eta^(j+1)/Gamma(j+2), so D/mu -> (E_F - E_c)/((j+1) q)"
)
LUNDSTROM = "Lundstrom & Jeong, Near-Equilibrium Transport (2012), R = rho(L + lambda)/A"
CAUGHEY = "Caughey & Thomas, Proc. IEEE 55, 2192 (1967): v = mu E/(1 + (mu E/v_sat)^beta)^(1/beta)"

# formula, majority carrier, dimensionality, expected limits, expected assumption words, source
RECOGNISED = [
    ("D_n = mu_n*k*T/q", "n", 3, {"nondeg_n"}, {("einstein-relation", "n")}, SZE),
    ("D_n/mu_n = k*T/q", "n", 3, {"nondeg_n"}, {("einstein-relation", "n")}, SZE),
    ("mu_n = q*D_n/(k*T)", "n", 3, {"nondeg_n"}, {("einstein-relation", "n")}, SZE),
    ("D_n = mu_n*V_T", "n", 3, {"nondeg_n"}, {("einstein-relation", "n")}, SZE),
    ("Dn = μn*kT/q", "n", 3, {"nondeg_n"}, {("einstein-relation", "n")}, SZE),
    ("D_p = mu_p*k*T/q", "p", 3, {"nondeg_p"}, {("einstein-relation", "p")}, SZE),
    ("D = (2/3)*mu*(E_F - E_c)/q", "n", 3, {"deg_n"}, set(), SOMMERFELD),
    ("D = mu*(E_F - E_c)/q", "n", 2, {"deg_n"}, set(), SOMMERFELD + ", 2D"),
    ("n = N_c*exp((E_F - E_c)/(k*T))", "n", 3, {"nondeg_n"}, {("non-degenerate", "n")}, SZE),
    ("p = N_v*exp((E_v - E_F)/(k*T))", "p", 3, {"nondeg_p"}, {("non-degenerate", "p")}, SZE),
    ("p = N_v*exp(-(E_F - E_v)/(k*T))", "n", 3, {"nondeg_p"}, {("non-degenerate", "p")}, SZE),
    ("E_F - E_c = k*T*ln(n/N_c)", "n", 3, {"nondeg_n"}, {("non-degenerate", "n")}, SZE),
    (
        "n = N_D",
        "n",
        3,
        {"holes_negligible", "full_ionization", "no_compensation"},
        {("extrinsic", "n"), ("full-ionization", "n"), ("no-compensation", "n")},
        SZE,
    ),
    (
        "n = N_D - N_A",
        "n",
        3,
        {"holes_negligible", "full_ionization"},
        {("extrinsic", "n"), ("full-ionization", "n")},
        SZE,
    ),
    (
        "p = N_A",
        "p",
        3,
        {"electrons_negligible", "full_ionization", "no_compensation"},
        {("extrinsic", "p"), ("full-ionization", "p"), ("no-compensation", "p")},
        SZE,
    ),
    ("sigma = q*n*mu_n", "n", 3, {"holes_negligible"}, {("single-carrier", "n")}, SZE),
    ("sigma = q*(n*mu_n + p*mu_p)", "n", 3, set(), set(), SZE),
    (
        "rho = 1/(q*N_D*mu_n)",
        "n",
        3,
        {"holes_negligible", "full_ionization", "no_compensation"},
        {
            ("extrinsic", "n"),
            ("single-carrier", "n"),
            ("full-ionization", "n"),
            ("no-compensation", "n"),
        },
        SZE,
    ),
    ("n_i = sqrt(N_c*N_v)*exp(-E_g/(2*k*T))", "n", 3, set(), set(), SZE),
    (
        "n*p = n_i^2",
        "n",
        3,
        {"nondeg_n", "nondeg_p"},
        {("non-degenerate", "n"), ("non-degenerate", "p")},
        SZE,
    ),
    (
        "p = n_i^2/N_D",
        "n",
        3,
        {"nondeg_n", "nondeg_p", "holes_negligible", "full_ionization", "no_compensation"},
        {
            ("non-degenerate", "n"),
            ("non-degenerate", "p"),
            ("extrinsic", "n"),
            ("full-ionization", "n"),
            ("no-compensation", "n"),
        },
        SZE,
    ),
    ("n = n_i*exp((E_F - E_i)/(k*T))", "n", 3, {"nondeg_n"}, {("non-degenerate", "n")}, SZE),
    ("R = rho*L/A", "n", 3, {"diffusive"}, {("diffusive", None)}, LUNDSTROM),
    ("R = rho*L/(W*t)", "n", 3, {"diffusive"}, {("diffusive", None)}, LUNDSTROM),
    ("v = mu*E", "n", 3, {"low_field"}, {("low-field", "n")}, CAUGHEY),
    ("J = sigma*E", "n", 3, {"low_field"}, {("low-field", None)}, CAUGHEY),
    ("N_c = 2*(2*pi*m_n*k*T/h^2)^(3/2)", "n", 3, set(), set(), SZE + " (parabolic band)"),
    ("N_D_plus = N_D/(1 + g_D*exp((E_F - E_D)/(k*T)))", "n", 3, set(), set(), SZE),
]


def _match(formula, majority="n", dim=3):
    lhs, rhs, _ = parse_formula(formula, majority, "test")
    return analyse(lhs, rhs, dim, majority)


@pytest.mark.parametrize(
    "formula, majority, dim, limits, words, source", RECOGNISED, ids=[r[0] for r in RECOGNISED]
)
def test_formula_is_recognised_with_its_limits(formula, majority, dim, limits, words, source):
    match = _match(formula, majority, dim)
    assert match.status == ("exact" if not limits else "limit"), source
    assert {limit.id for limit in match.limits} == limits, source
    assert set(match.assumptions) == words, source
    assert match.proof == "symbolic"


@pytest.mark.parametrize(
    "formula",
    [
        "n = N_c*exp((E_c - E_F)/(k*T))",  # sign error in the exponent
        "n_i = N_c*exp(-E_g/(2*k*T))",  # N_c in place of sqrt(N_c N_v)
        "n = n_i*exp((E_F - (E_c + E_v)/2)/(k*T))",  # intrinsic level taken at midgap
        "D_n = mu_n*k*T/q*(1 + n/(sqrt(8)*N_c))",  # first-order series, not a limit
    ],
)
def test_wrong_or_approximate_formulas_are_unrecognised(formula):
    assert _match(formula).status == "unrecognised"


@pytest.mark.parametrize("factor", ["q", "k*T", "N_c", "mu_n*L", "1/(W*t)"])
def test_rearranged_formulas_keep_their_limits(factor):
    """Multiplying both sides by the same factor changes nothing (randomized identity)."""
    for formula in ("D_n = mu_n*k*T/q", "n = N_D", "R = rho*L/A"):
        left, right = formula.split("=")
        base = _match(formula)
        scaled = _match(f"({left})*{factor} = ({right})*{factor}")
        assert {lim.id for lim in scaled.limits} == {lim.id for lim in base.limits}


def test_normal_form_does_not_prove_what_is_false():
    """Under no limits the shortcuts are not identities; the normal form must say so."""
    for formula, _, dim, limits, _, _ in RECOGNISED:
        if not limits:
            continue
        lhs, rhs, _ = parse_formula(formula, "n", "test")
        for which in ("donor", "acceptor"):
            defs = limited(world(dim, which, "n"), ())
            try:
                assert not normal_form.equal(expand(lhs, defs), expand(rhs, defs)), formula
            except normal_form.Unsupported:
                pass


def test_spellings_and_unknown_symbols():
    assert parse_formula("λ = lambda_n", "n", "f")[0] == tree.name("lambda_n")
    assert (
        parse_formula("Dn = μn*Vt", "n", "f")[:2]
        == parse_formula("D_n = mu_n*(k*T/q)", "n", "f")[:2]
    )
    with pytest.raises(InputError) as err:
        parse_formula("D_n = mu_x*k*T/q", "n", "calc.yaml:12:5")
    assert "calc.yaml:12:5" in str(err.value) and "mu_n" in str(err.value)
    for bad in ("D_n == mu_n", "D_n mu_n", "= mu_n", "D_n = "):
        with pytest.raises(InputError):
            parse_formula(bad, "n", "f")


def test_dimensions():
    """SI dimensions of the trade quantities (BIPM SI Brochure, 9th ed.)."""

    def dims(text, dim=3):
        return dimension(parse_formula(f"n = {text}", "n", "f")[1], dim)

    conductivity = dims("q*n*mu_n")
    assert dims("sigma") == conductivity and dims("1/rho") == conductivity
    assert dims("k*T/q") == dims("V_T") and dims("E*L") == dims("V_T")
    assert dims("q*n*mu_n", 2) == dims("1/R")  # a 2D conductivity is a conductance
    assert dims("D_n") == dims("mu_n*k*T/q")


@pytest.mark.parametrize(
    "formula, detail, fix",
    [
        ("D = mu*q/(k*T)", "the left side is m²/s", "D = mu*k*T/q"),
        ("D_n/mu_n = q/(k*T)", "the left side is V", "D_n/mu_n = k*T/q"),
        ("n = N_D + mu_n", "terms of a sum must have one dimension", None),
        ("n = N_c*exp(E_F - E_c)", "the argument of exp()", None),
    ],
)
def test_dimension_errors_name_both_sides_and_the_fix(tmp_path, formula, detail, fix):
    text = f"material: Si\ntemperature: 300 K\nformulas:\n  - {formula}\n"
    report = _check(tmp_path, text).reports[0]
    (finding,) = [f for f in report.findings if f.rule == "FORM01"]
    assert detail in finding.message and finding.line == 4
    if fix:
        assert f"Likely fix: {fix}." in finding.message


def _check(tmp_path, text, name="calc.yaml"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    read = read_calculation_file(path)
    assert not read.errors, read.errors
    return check_calculations(read.calculations)


# GaN: a parabolic conduction band (GaAs carries a Kane band, whose Einstein ratio the
# Kane tests check); at 2e19 cm-3 eta = 4.9, where (2/3) eta is 7 % below F_1/2/F_-1/2
DEGENERATE_GAN = """material: GaN
temperature: 300 K
doping:
  donors: {Si: 2e19 cm-3}
formulas:
  - D_n = mu_n*k*T/q
  - D = (2/3)*mu*(E_F - E_c)/q
  - D = mu*q/(k*T)
  - n = N_D
"""


def test_formulas_feed_the_rules_and_values_match_mpmath(tmp_path):
    result = _check(tmp_path, DEGENERATE_GAN)
    report = result.reports[0]
    assert not result.input_errors
    by_rule = {f.rule: f for f in report.findings}
    # the Einstein relation is caught by STAT02 at the formula's line, not by FORM03
    assert by_rule["STAT02"].formula == "D_n = mu_n*k*T/q" and by_rule["STAT02"].line == 6
    assert [f.formula for f in report.findings if f.rule == "FORM03"] == [
        "D = (2/3)*mu*(E_F - E_c)/q"
    ]
    assert by_rule["FORM01"].line == 8 and "D = mu*k*T/q" in by_rule["FORM01"].message
    # exact D at the operating point: mpmath F_1/2 / F_-1/2 at an independent solve
    gan = load_material("GaN")
    eta = reference_solve(gan, 300.0, {"Si": 2e19 * 1e6}, {})
    with mp.workdps(30):
        ratio = mp_fermi_half(eta) / -mp.re(mp.polylog(mp.mpf(0.5), -mp.exp(eta)))
    kT_q = sc.k * 300.0 / sc.e
    einstein = next(r for r in report.formulas if r.text == "D_n = mu_n*k*T/q")
    mu = einstein.value / kT_q  # the formula's own D / (kT/q)
    assert einstein.exact == pytest.approx(mu * kT_q * float(ratio), rel=1e-7)
    # the degenerate form at this eta: (2/3) eta kT/q
    degenerate = next(r for r in report.formulas if r.text.startswith("D = (2/3)"))
    assert degenerate.value == pytest.approx(mu * kT_q * 2 / 3 * eta, rel=1e-7)
    # n = N_D: the exact n is the independently solved density
    density = next(r for r in report.formulas if r.text == "n = N_D")
    nc = float(gan.Nc(300.0))
    with mp.workdps(30):
        n = nc * float(mp_electron_half(gan, mp.mpf(eta), mp.mpf(sc.k) * 300.0))
    assert density.exact == pytest.approx(n, rel=1e-7)


def test_two_examples_are_caught_by_their_formulas_alone():
    for name, rule in (("lk7_contact_cap.yaml", "STAT02"), ("lh3_hall_bar.yaml", "ION01")):
        read = read_calculation_file(f"examples/{name}")
        calc = read.calculations[0]
        assert not calc.assumes and not calc.stated and calc.formulas
        report = check_calculations([calc]).reports[0]
        hits = [f for f in report.findings if f.rule == rule]
        assert hits and all(f.formula for f in hits)


def test_formula_waiver(tmp_path):
    text = DEGENERATE_GAN + "waivers:\n  - {rule: FORM03, reason: degenerate form accepted}\n"
    report = _check(tmp_path, text).reports[0]
    assert all(f.waived for f in report.findings if f.rule == "FORM03")


HOSTILE = [
    "n = __import__('os').system('touch {sentinel}')",
    "n = N_D.__class__",
    "n = (lambda x: x)(1)",
    "n = [x for x in (1, 2)]",
    "n = 'text'",
    "n = 9**9**9",
    "n = 1e999999",
    "n = " + "(" * 10000 + "1" + ")" * 10000,
    "n = " + "1+" * 500000 + "1",
]


def test_hostile_formulas_are_refused_cleanly(tmp_path):
    sentinel = tmp_path / "executed"
    good = "name: fine\nmaterial: Si\ntemperature: 300 K\ndoping:\n  donors: {P: 1e16 cm-3}\n"
    docs = [good]
    for i, formula in enumerate(HOSTILE):
        text = formula.format(sentinel=sentinel)
        docs.append(
            f"name: hostile {i}\nmaterial: Si\ntemperature: 300 K\n"
            f"formulas:\n  - {json.dumps(text)}\n"
        )
    path = tmp_path / "hostile.yaml"
    path.write_text("---\n".join(docs), encoding="utf-8")
    before = path.read_text()
    run = subprocess.run(
        [sys.executable, "-m", "checker.cli", "check", str(path), "--format", "json"],
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert run.returncode == 2
    assert "Traceback" not in run.stdout + run.stderr
    data = json.loads(run.stdout)
    assert len(data["input_errors"]) == len(HOSTILE)
    assert all(message.startswith(f"{path}:") for message in data["input_errors"])
    assert "fine" in [c["name"] for c in data["calculations"]]
    assert not sentinel.exists()
    assert path.read_text() == before


def test_every_spelling_names_one_symbol():
    from checker.engine.formulas.symbols import GENERIC, SHORTHANDS, SYMBOLS

    spellings = [s for symbol in SYMBOLS.values() for s in symbol.spellings]
    spellings += [
        s.strip()
        for _, spelled in list(GENERIC.values()) + list(SHORTHANDS.values())
        for s in spelled.split(",")
    ]
    assert len(spellings) == len(set(spellings))


def test_readme_documents_every_symbol():
    from pathlib import Path

    from checker.engine.formulas.symbols import GENERIC, SHORTHANDS, SYMBOLS

    readme = Path(__file__).resolve().parents[1].joinpath("README.md").read_text("utf-8")
    for name in list(SYMBOLS) + list(GENERIC) + list(SHORTHANDS):
        assert f"| `{name}` |" in readme, name


def test_sign_error_is_unrecognised_and_its_value_matches_mpmath(tmp_path):
    text = (
        "material: Si\ntemperature: 300 K\ndoping:\n  donors: {P: 1e17 cm-3}\n"
        "formulas:\n  - n = N_c*exp((E_c - E_F)/(k*T))\n"
    )
    report = _check(tmp_path, text).reports[0]
    # one finding per formula line: off at this point, the unrecognised formula is FORM03's
    # warning (FORM02's info is for one that matches no relation but agrees here)
    assert [f.rule for f in report.findings if f.rule.startswith("FORM")] == ["FORM03"]
    assert report.formulas[0].match.status == "unrecognised"
    silicon = load_material("Si")
    eta = reference_solve(silicon, 300.0, {"P": 1e17 * 1e6}, {})
    (result,) = report.formulas
    # the formula reads N_c e^(-eta); the exact n is N_c F_1/2(eta) (Sze & Ng, ch. 1)
    nc = float(silicon.Nc(300.0))
    assert result.value == pytest.approx(nc * float(mp.exp(-eta)), rel=1e-7)
    assert result.exact == pytest.approx(nc * float(mp_fermi_half(eta)), rel=1e-7)


# --- the exact relations against the physics layer ---------------------------------------------
#
# Every definition in checker/engine/relations.py must be the relation the physics core
# computes.  Each one is evaluated at seeded random operating points (SI values, the real
# constants from scipy.constants) and compared with the physics-layer function that
# computes the same quantity; a changed relation (a doubled mean free path, a flipped
# sign) then fails here.

_EV = sc.e
_ANY = Provenance("test")
_DENSITY_DECADES = {3: (22.0, 25.5), 2: (14.0, 17.5), 1: (6.0, 9.0)}


class _Bands:
    """A material reduced to what State and the ionization statistics read: one band gap,
    N_c, N_v per point and two isolated dopant levels (no lowering; b(N) = 1 to far below
    rounding, so the statistics are the isolated-impurity ones of Sze & Ng (2007))."""

    def __init__(self, Eg, Nc, Nv, dE_D, dE_A, g_D, g_A):
        self.Eg, self._Nc, self._Nv = Eg, Nc, Nv
        share = BoundShare(N_b=1e60, d=2.3)
        self.levels = {
            "D": Dopant("D", "donor", dE_D, g_D, np.inf, False, _ANY, bound_share=share),
            "A": Dopant("A", "acceptor", dE_A, g_A, np.inf, False, _ANY, bound_share=share),
        }

    def need(self, attribute, purpose):
        # State asks its material for a parameter this way (materials.Material.need)
        return getattr(self, attribute)

    def band_gap(self, T):
        return self.Eg

    def Nc(self, T):
        return self._Nc

    def Nv(self, T):
        return self._Nv

    def dopant(self, name):
        return self.levels[name]


def _sample(dim, which, seed, size=64):
    """Primitive values of the relations (SI) at seeded random operating points, and
    eta_n there."""
    rng = np.random.default_rng(seed)
    lo, hi = _DENSITY_DECADES[dim]
    T = rng.uniform(150.0, 600.0, size)
    kT = sc.k * T
    Eg = rng.uniform(0.2, 2.0, size) * _EV
    # the majority band's Fermi level from -8 kT below its edge to 6 kT above
    eta_major = rng.uniform(-8.0, 6.0, size)
    eta_n = eta_major if which == "donor" else -eta_major - Eg / kT
    v = {
        "k": np.full(size, sc.k),
        "q": np.full(size, sc.e),
        "h": np.full(size, sc.h),
        "pi": np.full(size, math.pi),
        "T": T,
    }
    v["E_v"] = rng.uniform(-1.0, 1.0, size) * _EV
    v["E_c"] = v["E_v"] + Eg
    v["E_F"] = v["E_c"] + eta_n * kT
    for name in ("N_c", "N_v", "N_D", "N_A"):
        v[name] = 10.0 ** rng.uniform(lo, hi, size)
    v["dE_D"], v["dE_A"] = rng.uniform(0.005, 0.2, size) * _EV, rng.uniform(0.005, 0.3, size) * _EV
    v["g_D"], v["g_A"] = rng.uniform(1.5, 4.0, size), rng.uniform(2.0, 6.0, size)
    for name, (a, b) in {
        "mu_n": (-3.0, 0.0),
        "mu_p": (-3.0, 0.0),
        "L": (-8.0, -4.0),
        "W": (-7.0, -4.0),
        "t": (-8.0, -5.0),
        "lambda_n": (-9.0, -6.0),
        "lambda_p": (-9.0, -6.0),
        "E": (3.0, 7.0),
        "v_sat_n": (4.5, 5.5),
        "v_sat_p": (4.5, 5.5),
        "tau_n": (-10.0, -3.0),
        "tau_p": (-10.0, -3.0),
    }.items():
        v[name] = 10.0 ** rng.uniform(a, b, size)
    v["beta_n"], v["beta_p"] = rng.uniform(1.0, 2.5, size), rng.uniform(1.0, 2.5, size)
    return v, eta_n


def _state(v, eta_n, gap=None):
    """The physics layer's State at the sampled point (gap: E_c - E_v unless given)."""
    Eg = v["E_c"] - v["E_v"] if gap is None else gap
    bands = _Bands(Eg, v["N_c"], v["N_v"], v["dE_D"], v["dE_A"], v["g_D"], v["g_A"])
    none = np.zeros_like(eta_n)
    return State(
        bands, v["T"], {"D": v["N_D"]}, {"A": v["N_A"]}, eta_n, none.astype(bool), none, none
    )


def _physics(name, v, state, dim, majority):
    """The physics layer's value of a defined symbol at the same points (None: the
    relation needs the other quantities first, see the neutrality check)."""
    j = dim / 2 - 1
    kT = state.kT
    n = v["N_c"] * fermi_dirac(j, state.eta_n)
    p = v["N_v"] * fermi_dirac(j, state.eta_p)
    lam = v[f"lambda_{majority}"]
    rho = 1.0 / transport.conductivity(n, p, v["mu_n"], v["mu_p"])
    fast = {
        x: transport.field_dependent_mobility(v[f"mu_{x}"], v["E"], v[f"v_sat_{x}"], v[f"beta_{x}"])
        for x in "np"
    }
    return {
        "eta_n": state.eta_n,
        "eta_p": state.eta_p,
        "E_g": state.Eg,
        "n": state.n if dim == 3 else n,
        "p": state.p if dim == 3 else p,
        # a sheet's densities are its sheet densities
        "n_s": n if dim == 2 else None,
        "p_s": p if dim == 2 else None,
        "n_i": state.ni,
        # E_D, E_A: levels measured from their own band edge (the physics Dopant.energy)
        "E_D": v["E_c"] - state.material.dopant("D").energy,
        "E_A": v["E_v"] + state.material.dopant("A").energy,
        "f_D": ionized_density(state.material.dopant("D"), 1.0, state.eta_n, kT, v["N_D"]),
        "f_A": ionized_density(state.material.dopant("A"), 1.0, state.eta_p, kT, v["N_A"]),
        "N_D_plus": ionized_density(
            state.material.dopant("D"), v["N_D"], state.eta_n, kT, v["N_D"]
        ),
        "N_A_minus": ionized_density(
            state.material.dopant("A"), v["N_A"], state.eta_p, kT, v["N_A"]
        ),
        "D_n": transport.diffusion_coefficient(v["mu_n"], v["T"], state.eta_n, dim),
        "D_p": transport.diffusion_coefficient(v["mu_p"], v["T"], state.eta_p, dim),
        "sigma": transport.conductivity(n, p, v["mu_n"], v["mu_p"]),
        "rho": 1.0 / transport.conductivity(n, p, v["mu_n"], v["mu_p"]),
        "v_n": transport.drift_velocity(v["mu_n"], v["E"], v["v_sat_n"], v["beta_n"]),
        "v_p": transport.drift_velocity(v["mu_p"], v["E"], v["v_sat_p"], v["beta_p"]),
        "J": transport.conductivity(n, p, fast["n"], fast["p"]) * v["E"],
        "hbar": np.full_like(kT, HBAR),
        # diffusion length sqrt(D tau) (Shockley, Electrons and Holes in Semiconductors
        # (1950), from memory) with the physics layer's D
        "L_n": np.sqrt(
            transport.diffusion_coefficient(v["mu_n"], v["T"], state.eta_n, dim) * v["tau_n"]
        ),
        "L_p": np.sqrt(
            transport.diffusion_coefficient(v["mu_p"], v["T"], state.eta_p, dim) * v["tau_p"]
        ),
        # R = rho (L + lambda)/A (Lundstrom & Jeong 2012, ch. 3); A = W t (3D), the width W
        # of a sheet (2D), 1 for a wire
        "R": rho * (v["L"] + lam) / {3: v["W"] * v["t"], 2: v["W"], 1: 1.0}[dim],
        # sheet resistance: the diffusive resistance of one square (side W)
        "R_s": rho * v["W"] / {3: v["W"] * v["t"], 2: v["W"]}.get(dim, np.nan),
        "A": v["W"] * v["t"],
    }.get(name)


def _mass_from_physics_dos(N_c, T, dim):
    """The DOS mass (kg) whose physics-layer N_c(T) equals N_c: in 3D from the parabolic
    form of MassPolynomialDOS (constant mass), in 2D from N_c = m kT/(pi hbar^2)
    (J. H. Davies, The Physics of Low-Dimensional Semiconductors (1998), ch. 1, from memory)."""
    if dim == 2:
        return N_c * math.pi * sc.hbar**2 / (sc.k * T)
    unit = MassPolynomialDOS((1.0,), np.inf, _ANY)(T)  # N_c of a band with m = m0
    return (N_c / unit) ** (2.0 / 3.0) * ELECTRON_MASS


WORLDS = [
    (dim, which, majority)
    for dim in (3, 2, 1)
    for which in ("donor", "acceptor")
    for majority in ("n", "p")
]


@pytest.mark.parametrize(
    "dim, which, majority", WORLDS, ids=[f"{d}D-{w}-{m}" for d, w, m in WORLDS]
)
def test_every_relation_is_the_physics_layer(dim, which, majority):
    base = world(dim, which, majority)

    def relation(name, values):
        expanded = expand(tree.name(name), base.definitions)
        return np.broadcast_to(expression.to_numpy(expanded)(values), values["T"].shape)

    v, eta_n = _sample(dim, which, seed=1000 * dim + len(which) + ord(majority))
    # in this world one dopant density is defined by neutrality; the points are those
    # where it comes out positive, and the other relations (N_D_plus = N_D f_D ...) are
    # compared there with that density
    dopant = "N_D" if which == "donor" else "N_A"
    density = relation(dopant, v)
    keep = density > 0
    assert keep.mean() > 0.5
    v = {name: value[keep] for name, value in v.items()}
    v[dopant], eta_n = density[keep], eta_n[keep]
    state = _state(v, eta_n)
    checked = set()
    for name in base.definitions:
        if name in SWITCHES:
            continue
        value = relation(name, v)
        if name == "E_i":
            # the intrinsic level is where the physics layer's n equals p; checked with the
            # gap widened to 100 kT, where F_1/2(eta) = e^eta to 1e-21 (Sze & Ng 2007, ch. 1)
            wide = dict(v, E_c=v["E_v"] + 100 * state.kT)
            at_level = _state(
                wide, (relation(name, wide) - wide["E_c"]) / state.kT, gap=100 * state.kT
            )
            assert np.allclose(at_level.n / at_level.p, 1.0, rtol=1e-11, atol=0), name
        elif name in ("N_D", "N_A"):
            # charge neutrality n + N_A^- = p + N_D^+ (Sze & Ng 2007, ch. 1) with the
            # physics layer's densities of this dimensionality and its ionization statistics
            j = dim / 2 - 1
            negative = v["N_c"] * fermi_dirac(j, eta_n) + ionized_density(
                state.material.dopant("A"), v["N_A"], state.eta_p, state.kT, v["N_A"]
            )
            positive = v["N_v"] * fermi_dirac(j, state.eta_p) + ionized_density(
                state.material.dopant("D"), v["N_D"], eta_n, state.kT, v["N_D"]
            )
            assert np.allclose(negative, positive, rtol=1e-11, atol=0), name
            if dim == 3:  # the solver's own neutrality error
                assert np.max(charge_balance_error(state)) < 1e-11, name
        elif name in ("m_n", "m_p"):
            band = "N_c" if name == "m_n" else "N_v"
            expected = _mass_from_physics_dos(v[band], v["T"], dim)
            assert np.allclose(value, expected, rtol=1e-11, atol=0), name
        else:
            expected = _physics(name, v, state, dim, majority)
            assert expected is not None, f"relation {name} has no physics-layer check"
            assert np.allclose(value, expected, rtol=1e-11, atol=0), name
        checked.add(name)
    assert checked == set(base.definitions) - set(SWITCHES)
    assert checked <= set(RELATION_NAMES)


SHARED_TEXT = """name: first
material: Si
temperature: 300 K
doping:
  donors: {P: 1e16 cm-3}
formulas:
  - n = N_D
  - n = N_Q
---
name: second
material: Si
temperature: 400 K
doping:
  donors: {P: 3e17 cm-3}
formulas:
  - n = N_D
  - n = N_Q
"""


def test_a_formula_text_stated_twice_is_valued_at_each_point_and_refused_at_each_line(tmp_path):
    # the analysis of a formula text is shared by the calculations stating it; its value
    # and every refusal are each calculation's own
    path = tmp_path / "shared.yaml"
    path.write_text(SHARED_TEXT, encoding="utf-8")
    read = read_calculation_file(path)
    result = check_calculations(read.calculations)
    values = [r.value for report in result.reports for r in report.formulas]
    # N_D as written in each calculation, cm^-3 -> m^-3 (1 cm^-3 = 1e6 m^-3: SI definition)
    assert values == [pytest.approx(1e16 * 1e6, rel=1e-12), pytest.approx(3e17 * 1e6, rel=1e-12)]
    errors = read.errors + result.input_errors
    assert [e.split(":")[1] for e in errors if "N_Q" in e] == ["8", "17"], errors
