"""Stated formulas in the band worlds beyond the parabolic bulk band: a bulk Kane conduction
band (InAs, InGaAs, InP, GaAs carry a Kane alpha) and a zero-gap linear sheet (graphene).

* the definitions the formulas are compared with, against mpmath quadrature of each band's
  density of states (E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957); T. Fang, A. Konar,
  H. Xing and D. Jena, Appl. Phys. Lett. 91, 092109 (2007)) and the generalized Einstein
  ratio n/(dn/deta) (P. T. Landsberg, Eur. J. Phys. 2, 213 (1981));
* the limit sets the parabolic, Boltzmann, zero-temperature, Einstein and one-carrier
  shortcuts are recognised as, and the rules they trigger end to end (BAND01, GRAPH01-03,
  STAT01).

The calculations are invented (Orchid Microsystems is a fictional company).
"""

import json
import math

import mpmath as mp
import numpy as np
import pytest
import scipy.constants as sc
from conftest import fd_reference
from reference import mp_kane_half, reference_solve
from test_rules import calc, check, one, quiet

from checker import load_material
from checker.engine.expressions import parser as expression
from checker.engine.expressions.tree import name as name_node
from checker.engine.formulas.check import parse_formula
from checker.engine.formulas.match import analyse
from checker.engine.formulas.relations import expand, world
from checker.physics import _relations

SEED = 20261202
T300 = 300.0
KT = sc.k * T300
PER_CM2 = 1e4
CM3 = 1e6


# ---- the definitions against mpmath ---------------------------------------------------------
def _kane_slope(eta, beta):
    """dF_K/deta = (2/sqrt(pi)) ∫ sqrt(x(1 + beta x))(1 + 2 beta x) f(1 - f) dx (mpmath)."""
    beta, eta = mp.mpf(beta), mp.mpf(eta)

    def integrand(x):
        u = x - eta
        return (
            mp.sqrt(x * (1 + beta * x)) * (1 + 2 * beta * x) / ((1 + mp.exp(u)) * (1 + mp.exp(-u)))
        )

    return 2 / mp.sqrt(mp.pi) * mp.quad(integrand, [0, max(eta, 0) + 1, mp.inf])


def test_kane_density_factor_against_mpmath_quadrature():
    # F_K(beta, eta) at random points, as the formula match evaluates it (one vectorized
    # call), against mpmath quadrature of sqrt(x(1 + beta x))(1 + 2 beta x)/(1 + e^(x - eta))
    # (Kane 1957)
    rng = np.random.default_rng(SEED)
    beta = rng.uniform(0.005, 0.6, 24)
    eta = rng.uniform(-12.0, 25.0, 24)
    got = _relations.kane_density_factor(beta, eta)
    assert got.shape == (24,)
    with mp.workdps(25):
        for b, e, value in zip(beta, eta, got):
            assert value == pytest.approx(float(mp_kane_half(e, b)), rel=1e-9)


def test_kane_einstein_ratio_against_mpmath_quadrature():
    # D/mu = (kT/q) n/(dn/deta) of the Kane band (Landsberg 1981), both integrals by mpmath
    rng = np.random.default_rng(SEED + 1)
    beta = rng.uniform(0.005, 0.6, 12)
    eta = rng.uniform(-8.0, 20.0, 12)
    got = _relations.kane_einstein_ratio(beta, eta)
    with mp.workdps(25):
        for b, e, value in zip(beta, eta, got):
            expected = mp_kane_half(e, b) / _kane_slope(e, b)
            assert value == pytest.approx(float(expected), rel=1e-9)


def test_kane_relations_at_alpha_zero_are_the_parabolic_ones():
    # beta = 0: F_K = F_1/2 and the ratio F_1/2/F_-1/2 (NIST DLMF 25.12.16 via mpmath)
    eta = np.array([-30.0, -2.0, 0.0, 3.5, 40.0])
    factor = _relations.kane_density_factor(np.zeros(5), eta)
    ratio = _relations.kane_einstein_ratio(0.0, eta)
    for e, f, r in zip(eta, factor, ratio):
        assert f == pytest.approx(float(fd_reference(0.5, e)), rel=1e-12)
        expected = fd_reference(0.5, e) / fd_reference(-0.5, e)
        assert r == pytest.approx(float(expected), rel=1e-12)


def _defined(band_world, name, values):
    """A defined symbol of a band world evaluated at ``values`` (its definition expanded)."""
    tree = expand(name_node(name), band_world.definitions)
    return expression.to_numpy(tree)(values)


def _sheet_point(size=16, seed=SEED):
    rng = np.random.default_rng(seed)
    T = rng.uniform(10.0, 600.0, size)
    return {
        "T": T,
        "k": np.full(size, sc.k),
        "h": np.full(size, sc.h),
        "q": np.full(size, sc.e),
        "pi": math.pi,
        "v_F": rng.uniform(0.5e6, 1.5e6, size),
        "E_F": rng.uniform(-8.0, 8.0, size) * sc.k * T,  # from the Dirac point
        "mu_n": np.full(size, 0.5),
        "mu_p": np.full(size, 0.3),
    }


def test_linear_sheet_densities_against_the_linear_density_of_states():
    # n_s = ∫ D(E) f(E) dE over the upper cone with D(E) = g_s g_v E/(2 pi hbar^2 v_F^2),
    # g_s g_v = 4 (graphene), p_s the same over the lower cone (Fang et al. 2007), by mpmath
    linear = world(2, "donor", "n", "linear")
    v = _sheet_point()
    n_s, p_s = _defined(linear, "n_s", v), _defined(linear, "p_s", v)
    with mp.workdps(25):
        for i in range(len(v["T"])):
            kT = mp.mpf(sc.k) * mp.mpf(v["T"][i])
            eta = mp.mpf(v["E_F"][i]) / kT
            slope = 4 / (2 * mp.pi * (mp.mpf(sc.hbar) * mp.mpf(v["v_F"][i])) ** 2)

            def cone(level):
                # ∫ D(E) f(E) dE in x = E/kT (the quadrature's error control is absolute)
                edges = [0, max(level, 0) + 1, mp.inf]
                return slope * kT**2 * mp.quad(lambda x: x / (1 + mp.exp(x - level)), edges)

            assert n_s[i] == pytest.approx(float(cone(eta)), rel=1e-11)
            assert p_s[i] == pytest.approx(float(cone(-eta)), rel=1e-11)


def test_linear_sheet_intrinsic_density_and_einstein_ratio():
    linear = world(2, "donor", "n", "linear")
    v = _sheet_point(seed=SEED + 2)
    # n_i = (pi/6)(kT/hbar v_F)^2 (Fang et al. 2007); hbar and k from scipy.constants
    expected = math.pi / 6 * (sc.k * v["T"] / (sc.hbar * v["v_F"])) ** 2
    assert _defined(linear, "n_i", v) == pytest.approx(expected, rel=1e-12)
    # 300 K, v_F = 1e8 cm/s: about 8e10 cm^-2 (Fang et al. 2007)
    at_300 = math.pi / 6 * (KT / (sc.hbar * 1e6)) ** 2 / PER_CM2
    assert at_300 == pytest.approx(8.0e10, rel=0.02)
    # D/mu = (kT/q) F_1/F_0 of each cone (Landsberg 1981), F_j from mpmath
    d_n = _defined(linear, "D_n", v)
    for i in range(len(v["T"])):
        eta = v["E_F"][i] / (sc.k * v["T"][i])
        ratio = fd_reference(1, eta) / fd_reference(0, eta)
        expected = 0.5 * sc.k * v["T"][i] / sc.e * float(ratio)
        assert d_n[i] == pytest.approx(expected, rel=1e-11)


# ---- limit sets -----------------------------------------------------------------------------
def _limits(formula, dim, majority, band):
    lhs, rhs, _ = parse_formula(formula, majority, "test")
    match = analyse(lhs, rhs, dim, majority, band)
    return match.status, {limit.id for limit in match.limits}, set(match.assumptions)


@pytest.mark.parametrize(
    "formula, status, limits, words",
    [
        # the parabolic N_c F_1/2 is the alpha -> 0 limit of N_c F_K (Kane 1957)
        (
            "n = N_c*F(1/2, eta_n)",
            "limit",
            {"parabolic_n"},
            {("parabolic-band", "n")},
        ),
        # ... and N_c e^eta its Boltzmann limit as well
        (
            "n = N_c*exp(eta_n)",
            "limit",
            {"parabolic_n", "nondeg_n"},
            {("parabolic-band", "n"), ("non-degenerate", "n")},
        ),
        # D = mu kT/q: parabolic and non-degenerate (Landsberg 1981)
        (
            "D = mu*k*T/q",
            "limit",
            {"parabolic_n", "nondeg_n"},
            {("parabolic-band", "n"), ("einstein-relation", "n")},
        ),
        # the holes stay parabolic: only their Boltzmann limit
        ("p = N_v*exp(eta_p)", "limit", {"nondeg_p"}, {("non-degenerate", "p")}),
    ],
)
def test_kane_world_limit_sets(formula, status, limits, words):
    assert _limits(formula, 3, "n", "kane") == (status, limits, words)


def test_parabolic_world_keeps_the_parabolic_density_exact():
    assert _limits("n = N_c*F(1/2, eta_n)", 3, "n", "parabolic") == ("exact", set(), set())
    assert _limits("D = mu*k*T/q", 3, "n", "parabolic") == (
        "limit",
        {"nondeg_n"},
        {("einstein-relation", "n")},
    )


@pytest.mark.parametrize(
    "formula, majority, limits, words",
    [
        # the T = 0 density of a linear band is the degenerate limit F_1 -> eta^2/2 of
        # N_eff F_1 (Fang et al. 2007); E_F measured from the Dirac point, alone or as
        # E_F - E_D
        (
            "n_s = E_F^2/(pi*hbar^2*v_F^2)",
            "n",
            {"deg_n"},
            {("zero-temperature", "n")},
        ),
        (
            "n_s = (E_F - E_D)^2/(pi*hbar^2*v_F^2)",
            "n",
            {"deg_n"},
            {("zero-temperature", "n")},
        ),
        (
            "p_s = E_F^2/(pi*hbar^2*v_F^2)",
            "p",
            {"deg_p"},
            {("zero-temperature", "p")},
        ),
        # D/mu = (kT/q) F_1/F_0 -> kT/q in the Boltzmann limit (Landsberg 1981)
        ("D = mu*k*T/q", "n", {"nondeg_n"}, {("einstein-relation", "n")}),
        # sigma_s = q(n mu_n + p mu_p) with the other cone left out
        ("sigma = q*n_s*mu", "n", {"holes_negligible"}, {("single-carrier", "n")}),
    ],
)
def test_linear_world_limit_sets(formula, majority, limits, words):
    assert _limits(formula, 2, majority, "linear") == ("limit", limits, words)


def test_linear_world_exact_density():
    # n_s = N_eff F_1(eta_n) with N_eff = (2/pi)(kT/hbar v_F)^2 (Fang et al. 2007)
    assert _limits("n_s = N_c*F(1, eta_n)", 2, "n", "linear") == ("exact", set(), set())
    assert _limits("n_s = 2/pi*(k*T/(hbar*v_F))^2*F(1, eta)", 2, "n", "linear") == (
        "exact",
        set(),
        set(),
    )


def test_two_dimensional_gas_formulas():
    # n_s = N_2D ln(1 + e^eta) of one parabolic subband (common knowledge of 2D gases,
    # F_0(eta) = ln(1 + e^eta), NIST DLMF 25.12.16)
    assert _limits("n_s = N_c*log(1 + exp(eta_n))", 2, "n", "parabolic") == (
        "exact",
        set(),
        set(),
    )
    # ... proved by the exact normal form, F_0(x) = ln(1 + e^x) (DLMF 25.12.16)
    lhs, rhs, _ = parse_formula("n_s = N_c*log(1 + exp(eta_n))", "n", "test")
    assert analyse(lhs, rhs, 2, "n", "parabolic").proof == "symbolic"
    assert _limits("n_s = N_c*exp(eta_n)", 2, "n", "parabolic") == (
        "limit",
        {"nondeg_n"},
        {("non-degenerate", "n")},
    )


# ---- end to end: the rules the formulas trigger ---------------------------------------------
def _formulas(*texts):
    return "formulas:\n" + "".join(f"  - {text}\n" for text in texts)


def _rules_of(report):
    return {(f.rule, f.carrier) for f in report.findings}


def test_parabolic_formulas_in_inas_trigger_band01(tmp_path):
    # InAs with 1e18 cm-3 S at 300 K (alpha = 2.68 1/eV): E_F - E_C = 0.111 eV (Kane) against
    # 0.156 eV parabolic, the check values; the parabolic density formula is 38 % low
    stated = "stated:\n  electron_mobility: 20000 cm^2/(V*s)\n"
    text = calc("InAs", "300 K", "S: 1e18 cm-3", extra=stated) + _formulas(
        "n = N_c*F(1/2, eta_n)", "n = N_c*exp(eta_n)", "D = mu*k*T/q"
    )
    report = check(tmp_path, text)
    results = {r.text: r for r in report.formulas}
    assert {r.matched.status for r in results.values()} == {"limit"}
    assert [label.split(" (")[0] for label in results["n = N_c*F(1/2, eta_n)"].matched.labels] == [
        "parabolic conduction band"
    ]
    finding = one(report, "BAND01", "electrons")
    assert finding.formula == "n = N_c*F(1/2, eta_n)"
    # the formula's value against its exact value: F_1/2(eta)/F_K(beta, eta) with eta of the
    # 40-digit reference solve of the Kane band and beta = alpha kT, by mpmath (Kane 1957;
    # DLMF 25.12.16)
    material = load_material("InAs")
    eta = reference_solve(material, T300, {"S": 1e18 * CM3}, {})
    beta = material.band_shape("electron").nonparabolicity * KT
    with mp.workdps(25):
        ratio = fd_reference(0.5, eta) / mp_kane_half(eta, beta)
    first = results["n = N_c*F(1/2, eta_n)"]
    assert first.value / first.exact == pytest.approx(float(ratio), rel=1e-6)
    assert first.value / first.exact == pytest.approx(0.623, abs=0.01)


def test_the_same_formula_in_silicon_is_exact(tmp_path):
    text = calc("Si", "300 K", "P: 1e18 cm-3") + _formulas("n = N_c*F(1/2, eta_n)")
    report = check(tmp_path, text)
    (result,) = report.formulas
    assert result.matched.status == "exact"
    assert quiet(report, "BAND01")
    # exact: the formula's value is the solved density
    assert result.value == pytest.approx(result.exact, rel=1e-9)


def test_declared_parabolic_band_fires_band01(tmp_path):
    base = calc("InAs", "300 K", "S: 1e18 cm-3")
    assert quiet(check(tmp_path, base), "BAND01")
    finding = one(check(tmp_path, base + "assumes: [parabolic-band]\n"), "BAND01", "electrons")
    assert finding.indicator_value > 1


def _graphene(ef_ev, *formulas):
    return (
        "material: graphene\ntemperature: 300 K\n"
        f"stated:\n  ef_minus_ec: {ef_ev} eV\n  electron_mobility: 5000 cm^2/(V*s)\n"
        + _formulas(*formulas)
    )


GRAPHENE_FORMULAS = (
    "n_s = E_F^2/(pi*hbar^2*v_F^2)",
    "D = mu*k*T/q",
    "sigma = q*n_s*mu",
)


def test_graphene_formulas_near_the_dirac_point_fire_the_graphene_rules(tmp_path):
    # E_F - E_D = 30 meV at 300 K (eta = 1.16): the T = 0 density is a third of the
    # Fermi-Dirac one, the other cone holds 14 % (Fang et al. 2007), D/mu = 1.41 kT/q
    report = check(tmp_path, _graphene(0.03, *GRAPHENE_FORMULAS))
    fired = _rules_of(report)
    assert {("GRAPH01", "electrons"), ("GRAPH02", "electrons"), ("GRAPH03", "electrons")} <= fired
    by_rule = {f.rule: f for f in report.findings}
    assert by_rule["GRAPH01"].formula == GRAPHENE_FORMULAS[0]
    assert by_rule["GRAPH03"].formula == GRAPHENE_FORMULAS[1]
    assert by_rule["GRAPH02"].formula == GRAPHENE_FORMULAS[2]
    # n_s/n_s(T = 0) = F_1(eta)/(eta^2/2), F_1 from mpmath (DLMF 25.12.16)
    eta = 0.03 * sc.e / KT
    expected = float(fd_reference(1, eta)) / (eta**2 / 2)
    assert by_rule["GRAPH01"].indicator_value == pytest.approx(expected, rel=1e-9)
    # the formula's value is the T = 0 density E_F^2/(pi hbar^2 v_F^2) (v_F of the material
    # file: 1.0e8 cm/s, the value Fang et al. use)
    (zero_t,) = [r for r in report.formulas if r.text == GRAPHENE_FORMULAS[0]]
    expected_value = (0.03 * sc.e) ** 2 / (math.pi * sc.hbar**2 * 1e6**2)
    assert zero_t.value == pytest.approx(expected_value, rel=1e-6)


def test_graphene_formulas_far_from_the_dirac_point(tmp_path):
    # E_F - E_D = 0.3 eV (eta = 11.6): F_1(eta) = eta^2/2 + pi^2/6 - F_1(-eta) is within
    # 2.5 % of eta^2/2 and the other cone below 1e-6: GRAPH01 and GRAPH02 stay quiet
    report = check(tmp_path, _graphene(0.3, GRAPHENE_FORMULAS[0], GRAPHENE_FORMULAS[2]))
    assert quiet(report, "GRAPH01")
    assert quiet(report, "GRAPH02")
    # without a D formula (nor a stated D) the Einstein relation is not assumed
    assert quiet(report, "GRAPH03")


def test_two_dimensional_gas_boltzmann_formula_fires_stat01(tmp_path):
    # a GaAs/AlGaAs gas at 1e12 cm-2, 300 K: N_2D = 7.24e11 cm-2 (m* = 0.067, computed from
    # CODATA constants), so eta = ln(e^(n_s/N_2D) - 1) = 1.2 > -3; n_s = N_2D e^eta assumes
    # Boltzmann statistics
    text = (
        "material: GaAs-AlGaAs\ntemperature: 300 K\n"
        "stated:\n  electron_sheet_density: 1e12 cm-2\n"
        + _formulas("n_s = N_c*log(1 + exp(eta_n))", "n_s = N_c*exp(eta_n)")
    )
    report = check(tmp_path, text)
    statuses = {r.text: r.matched.status for r in report.formulas}
    assert statuses == {
        "n_s = N_c*log(1 + exp(eta_n))": "exact",
        "n_s = N_c*exp(eta_n)": "limit",
    }
    finding = one(report, "STAT01", "electrons")
    assert finding.formula == "n_s = N_c*exp(eta_n)"
    n_2d = 0.067 * sc.m_e * KT / (math.pi * sc.hbar**2)
    assert n_2d / PER_CM2 == pytest.approx(7.24e11, rel=0.005)
    assert finding.indicator_value == pytest.approx(math.log(math.expm1(1e16 / n_2d)), rel=1e-6)


def test_calculation_schema_accepts_the_new_words():
    # the generated JSON Schema (draft 2020-12, validated by jsonschema) takes the words an
    # author declares; a misspelt one is refused
    import jsonschema

    from checker.resources import materials_dir

    schema = json.loads((materials_dir().parent / "calculation.schema.json").read_text())
    validator = jsonschema.Draft202012Validator(schema)
    document = {"material": "InAs", "temperature": "300 K"}
    for words in (["parabolic-band"], ["zero-temperature", "single-carrier"]):
        assert not list(validator.iter_errors({**document, "assumes": words})), words
    assert list(validator.iter_errors({**document, "assumes": ["parabolic-bands"]}))


def test_the_zero_temperature_formula_draws_one_verdict_at_the_formula_tolerance(tmp_path):
    # graphene at n - p = 3e12 cm^-2 (E_F - E_D ~ 7.8 kT): E_F^2/(pi hbar^2 v_F^2) is the T = 0
    # limit of N_eff F_1(eta) (Fang et al., Appl. Phys. Lett. 91, 092109 (2007)); mpmath puts
    # n/n(T = 0) = F_1(eta)/(eta^2/2) at about 1.054 there, above GRAPH01's 5 % (the
    # tolerance of every stated formula, FORM03): GRAPH01 fires and FORM03 does not repeat it
    # (v_F = 1.0e6 m/s and g_s g_v = 4, as the material entry gives them)
    text = (
        "material: graphene\ntemperature: 300 K\nstated:\n  net_sheet_density: 3e12 cm-2\n"
        "formulas:\n  - n_s = E_F^2/(pi*hbar^2*v_F^2)\n"
    )
    report = check(tmp_path, text)
    rules = sorted(f.rule for f in report.findings)
    assert rules == ["GRAPH01"]
    (finding,) = report.findings
    eta = mp.findroot(
        lambda e: (
            (2 / mp.pi)
            * (sc.k * 300 / (sc.hbar * 1e6)) ** 2
            * (-mp.polylog(2, -mp.exp(e)) + mp.polylog(2, -mp.exp(-e)))
            - 3e16
        ),
        7.0,
    )
    expected = float(-mp.polylog(2, -mp.exp(eta)) / (eta**2 / 2))
    assert finding.indicator_value == pytest.approx(expected, rel=1e-3)
