"""Hostile and careless stated formulas: every one ends promptly, either refused with a
message at the formula's file:line:column (exit 2, the other calculations still
checked, the file untouched) or analysed into a finding; never a hang, a traceback or
an internal error (exit 3).  Also the conveniences of hand-written formulas: F(1/2, eta),
e^x, the typographic product signs, log10, diffusion length, contact resistivity, and the
explicit form shown for an implicit product.

Every case that could run long runs in a subprocess bounded by TIMEOUT: a regression
shows as a failed test, not as a stuck suite.  No assertion is made on speed.
"""

import json
import math
import subprocess
import sys
import textwrap

import mpmath as mp
import numpy as np
import pytest
import scipy.constants as sc
import sympy
from reference import mp_fermi_half, reference_solve

from checker import load_material
from checker.engine.expressions import dimensions as dm
from checker.engine.expressions import tree as node
from checker.engine.expressions.parser import parse, to_numpy
from checker.engine.formulas.check import dimension, parse_formula
from checker.engine.formulas.match import SYMPY_BUDGET, expansion_cost
from checker.errors import InputError

TIMEOUT = 60  # seconds; each case ends in well under a second when it works
SZE = "Sze & Ng, Physics of Semiconductor Devices, 3rd ed. (2007), ch. 1"
SHOCKLEY = (
    "diffusion length L = sqrt(D tau): Shockley, Electrons and Holes in "
    "Semiconductors (1950) (from memory)"
)

GOOD = "name: fine\nmaterial: Si\ntemperature: 300 K\ndoping:\n  donors: {P: 1e16 cm-3}\n"

# eight distinct sums, multiplied in one order and divided in the reverse order: an
# identity whose expansion (3^8 terms per side) is far beyond the symbolic budget
_SUMS = [f"({a} + {b})" for a in ("eta_n", "eta_p", "f_D", "f_A") for b in ("g_D", "g_A")]
OVER_BUDGET = "n = n*" + "*".join(_SUMS) + "/(" + "*".join(reversed(_SUMS)) + ")"

# formula -> a fragment of the message it must get (at the formula's file:line:column)
REFUSED = [
    ("n = N_D*(10^(1e9/1))^(0/1)", "the exponent '1000000000/1' is 1e+09"),
    ("n = N_D*(3^(123456789/1))^(0/1)", "the exponent '123456789/1' is 1.23457e+08"),
    ("n = N_D*(((N_D/N_c)^60)^60)^60", "raise a factor to the power 3600"),
    ("n = N_D*((N_D/N_c)^16)^8", "raise a factor to the power 128"),
    ("n = N_c*F(1e9, eta)", "half-integer order"),
    ("n = N_c*F(10^300, eta)", "the exponent '300' is 300"),
    ("n = N_D*1" + "0" * 309, "out of range"),
    ("n = N_D*1" + "0" * 3000, "out of range"),
    ("n = N_D*(1e300)^64", "a constant must be a finite number"),
    ("n = N_D*(-8)^(1/3)", "a constant must be a finite number"),
    ("n = " + "-" * 3000 + "N_D", "nested deeper than 40 levels"),
    ("n = " + " + ".join(["N_D"] * 199), "nested deeper than 40 levels"),
    ("n = 2N_D", "write 2*N_D"),
    ("n = N_D mu_n/mu_n", "write N_D*mu_n/mu_n"),
    ("n = 2(N_D - N_A)", "write 2*(...)"),
    ("n = N_D (1 + eta_n)", "write N_D*(...)"),
    ("n = e*N_D", "'e' alone is not a symbol"),
    ("n = N_D*e^2", "write q^2 for the elementary charge or exp(2)"),
]
# formulas that are analysed (bounded) and reported as unrecognised (FORM02 or FORM03)
UNRECOGNISED = [
    "n = N_D*" + "exp(" * 30 + "eta_n" + ")" * 30,
    "n = N_D*(1 + eta_n + eta_p + f_D + f_A)^64",
    "n = N_D*((N_D/N_c)^8)^8",
    "n = N_D*log(-1)",
    "n = N_D/0",
    OVER_BUDGET,
]


def _document(name: str, formula: str) -> str:
    return (
        f"name: {name}\nmaterial: Si\ntemperature: 300 K\ndoping:\n"
        f"  donors: {{P: 1e16 cm-3}}\nformulas:\n  - {json.dumps(formula)}\n"
    )


def _check_in_subprocess(path):
    """`regimecheck check` through checker.cli.main, bounded by TIMEOUT."""
    code = (
        f"import sys; from checker.cli import main; sys.exit(main(['check', {str(path)!r}, "
        "'--format', 'json']))"
    )
    return subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, timeout=TIMEOUT
    )


def test_hostile_formulas_end_promptly_with_a_message_or_a_finding(tmp_path):
    docs, lines, line = [GOOD], {}, GOOD.count("\n") + 1
    cases = [(f"refused {i}", formula) for i, (formula, _) in enumerate(REFUSED)] + [
        (f"unrecognised {i}", formula) for i, formula in enumerate(UNRECOGNISED)
    ]
    for name, formula in cases:
        lines[name] = line + 7  # "---" then the document; the formula on its 7th line
        docs.append(_document(name, formula))
        line += 1 + docs[-1].count("\n")
    path = tmp_path / "hostile.yaml"
    path.write_text("---\n".join(docs), encoding="utf-8")
    before = path.read_bytes()
    run = _check_in_subprocess(path)
    assert run.returncode == 2, run.stderr[-2000:]
    assert "Traceback" not in run.stdout + run.stderr and "internal error" not in run.stderr
    data = json.loads(run.stdout)
    errors = data["input_errors"]
    assert len(errors) == len(REFUSED), errors
    for i, (_, fragment) in enumerate(REFUSED):
        where = f"{path}:{lines[f'refused {i}']}:5: "
        hits = [message for message in errors if message.startswith(where)]
        assert hits and fragment in hits[0], (where, fragment, hits)
    by_name = {c["name"]: c for c in data["calculations"]}
    assert "fine" in by_name
    for i in range(len(UNRECOGNISED)):
        calc = by_name[f"unrecognised {i}"]
        rules = [f["rule"] for f in calc["findings"]]
        # unrecognised: FORM02 where its value agrees here, FORM03 where it is off
        assert {"FORM02", "FORM03"} & set(rules), (UNRECOGNISED[i][:60], rules)
        assert calc["formulas"][0]["status"] == "unrecognised", UNRECOGNISED[i][:60]
    assert path.read_bytes() == before


_FUNCTION_LEVEL = textwrap.dedent("""
    import json
    from checker.engine.formulas.match import analyse
    from checker.engine.formulas.check import parse_formula
    from checker.errors import InputError
    out = {}
    # the hang of issue 11, built without the parser: 10^(10^9) overflows in every sample
    from checker.engine.expressions.tree import binary, name, num
    rhs = binary("*", name("N_D"), binary("**", binary("**", num(10), num(1e9)), num(0)))
    out["built"] = analyse(name("n"), rhs, 3, "n").status
    lhs, rhs, _ = parse_formula(%r, "n", "test")
    out["over_budget"] = analyse(lhs, rhs, 3, "n").status
    refused = []
    for formula in %r:
        try:
            parse_formula(formula, "n", "calc.yaml:7:5")
        except InputError as exc:
            refused.append(str(exc))
    out["refused"] = refused
    print(json.dumps(out))
""")


def test_hostile_formulas_at_the_function_level():
    code = _FUNCTION_LEVEL % (OVER_BUDGET, [formula for formula, _ in REFUSED])
    run = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, timeout=TIMEOUT
    )
    assert run.returncode == 0, run.stderr[-2000:]
    out = json.loads(run.stdout)
    # inf**0 is 1 in IEEE 754 arithmetic (C99 Annex F, pow(x, +-0)): it must not match
    assert out["built"] == "unrecognised"
    # a true identity too large to prove symbolically is "not proved", not expanded
    assert out["over_budget"] == "unrecognised"
    assert len(out["refused"]) == len(REFUSED)
    for message, (_, fragment) in zip(out["refused"], REFUSED):
        assert message.startswith("calc.yaml:7:5: ") and fragment in message


def test_strict_evaluation_does_not_hide_an_overflow():
    """numpy follows IEEE 754 / C99 Annex F (F.9.4.4, from memory): pow(inf, 0) = 1 and
    1/inf = 0; the identity test's strict evaluation keeps such a point as NaN."""
    tree = parse("x*(10^y)^0 + 1/(10^y)")
    values = {"x": np.array([2.0, 2.0]), "y": np.array([1.0, 400.0])}
    with np.errstate(all="ignore"):
        plain = to_numpy(tree)(values)
        strict = to_numpy(tree, strict=True)(values)
    assert plain[1] == 2.0  # the overflow vanished
    assert strict[0] == pytest.approx(2.1, rel=1e-15) and math.isnan(strict[1])


@pytest.mark.parametrize(
    "text",
    [
        "(a + b + c)^5",
        "(a + b)*(c + d)*(e + f)",
        "(a + b + c)^3/(a + b)^2",
        "exp((a + b)^2) + (c + d)^(5/2)",
    ],
)
def test_expansion_cost_bounds_sympys_own_count(text):
    """The budget's estimate is an upper bound on the terms sympy's expand makes."""
    tree = parse(text)
    expanded = sympy.expand(sympy.sympify(text.replace("^", "**")))  # test input, not user text
    terms = len(sympy.Add.make_args(expanded))
    assert expansion_cost(tree) >= terms
    # (a + b + c)^5 has C(5 + 2, 2) = 21 monomials (multinomial theorem)
    if text == "(a + b + c)^5":
        assert terms == math.comb(7, 2)


def test_budget_exceeded_is_reported_not_proved():
    assert expansion_cost(parse(OVER_BUDGET.split("=", 1)[1])) > SYMPY_BUDGET


# ---- friction: what hand-written formulas look like -----------------------------------------
def _one_calculation(tmp_path, formulas, donors="1e17"):
    text = (
        f"name: friction\nmaterial: Si\ntemperature: 300 K\ndoping:\n"
        f"  donors: {{P: {donors} cm-3}}\nformulas:\n"
        + "".join(f"  - {json.dumps(f)}\n" for f in formulas)
    )
    path = tmp_path / "calc.yaml"
    path.write_text(text, encoding="utf-8")
    run = _check_in_subprocess(path)
    assert "Traceback" not in run.stdout + run.stderr
    return run, json.loads(run.stdout)


def test_fractional_orders_euler_powers_product_signs_and_log10_agree_with_mpmath(tmp_path):
    formulas = [
        "n = N_c*F(1/2, eta_n)",
        "n = N_c*e^((E_F - E_c)/(k*T))",
        "sigma = q·n×mu_n",
        "E_F − E_c = k*T*log10(n/N_c)*ln(10)",
    ]
    run, data = _one_calculation(tmp_path, formulas)
    assert not data["input_errors"]
    results = {f["formula"]: f for f in data["calculations"][0]["formulas"]}
    silicon = load_material("Si")
    eta = reference_solve(silicon, 300.0, {"P": 1e17 * 1e6}, {})
    nc = float(silicon.Nc(300.0)) * 1e-6  # cm^-3
    # n = N_c F_1/2(eta): exact, and its value is mpmath's F_1/2 at an independent solve
    exact = results["n = N_c*F(1/2, eta_n)"]
    assert exact["status"] == "exact" and exact["proof"] == "symbolic"
    assert exact["at_operating_point"]["formula"] == pytest.approx(
        nc * float(mp_fermi_half(eta)), rel=1e-7
    )
    # e^x is exp(x): the Boltzmann form, non-degenerate electrons (SZE)
    boltzmann = results["n = N_c*e^((E_F - E_c)/(k*T))"]
    assert boltzmann["embodies"] == ["non-degenerate electrons (F_j -> e^η)"], SZE
    assert boltzmann["at_operating_point"]["formula"] == pytest.approx(
        nc * float(mp.exp(eta)), rel=1e-7
    )
    # · and × are products (ISO 80000-1, product signs, from memory): sigma = q n mu_n
    assert results["sigma = q·n×mu_n"]["assumptions"] == [
        {"assumption": "single-carrier", "carrier": "n"}
    ], SZE
    # log10(x)*ln(10) = ln(x): E_F - E_c = kT ln(n/N_c), non-degenerate (SZE); value in eV
    level = results["E_F − E_c = k*T*log10(n/N_c)*ln(10)"]
    assert level["proof"] == "symbolic" and level["assumptions"] == [
        {"assumption": "non-degenerate", "carrier": "n"}
    ]
    kT_eV = sc.k * 300.0 / sc.e
    assert level["at_operating_point"]["exact"] == pytest.approx(kT_eV * eta, rel=1e-7)


def test_product_signs_read_as_the_star():
    """U+00B7 MIDDLE DOT, U+22C5 DOT OPERATOR, U+00D7 MULTIPLICATION SIGN and U+2212
    MINUS SIGN (Unicode Character Database) are the product and the minus."""
    assert (
        parse_formula("sigma = q·n⋅mu_n", "n", "f")[:2]
        == parse_formula("sigma = q*n*mu_n", "n", "f")[:2]
    )
    assert (
        parse_formula("D = mu×k×T/q − 0", "n", "f")[:2]
        == parse_formula("D = mu*k*T/q - 0", "n", "f")[:2]
    )


def test_diffusion_length_and_lifetime(tmp_path):
    formulas = ["L_n = sqrt(D_n*tau_n)", "L_p = sqrt(mu_p*k*T/q*tau_p)", "L_n = sqrt(D_n/tau_n)"]
    run, data = _one_calculation(tmp_path, formulas)
    results = {f["formula"]: f for f in data["calculations"][0]["formulas"]}
    # the definition itself is exact; with the Einstein relation it embodies non-degenerate
    # holes, which the rules know as the Einstein relation (SHOCKLEY, SZE)
    assert results["L_n = sqrt(D_n*tau_n)"]["status"] == "exact", SHOCKLEY
    assert results["L_n = sqrt(D_n*tau_n)"]["relations"] == ["diffusion length"]
    assert results["L_p = sqrt(mu_p*k*T/q*tau_p)"]["assumptions"] == [
        {"assumption": "einstein-relation", "carrier": "p"}
    ], SZE
    # no lifetime is stated: not evaluated (no value, no FORM03)
    assert results["L_n = sqrt(D_n*tau_n)"]["at_operating_point"]["formula"] is None
    # the dimensions are still checked: sqrt(m^2/s / s) is a velocity, not a length
    wrong = results["L_n = sqrt(D_n/tau_n)"]
    assert wrong["status"] == "dimension-error" and "m/s" in wrong["dimensions"]["problem"]
    rules = [f["rule"] for f in data["calculations"][0]["findings"]]
    assert "FORM01" in rules and "FORM03" not in rules


def test_contact_resistivity_has_the_dimension_of_ohm_square_metre():
    """rho_c is in ohm m^2 (ohm cm^2 in the trade): a resistance times an area (BIPM SI
    Brochure, 9th ed., derived units)."""
    lhs, rhs, _ = parse_formula("R = rho_c/A", "n", "f")
    assert dimension(rhs, 3) == dimension(lhs, 3) == dm.RESISTANCE
    assert dimension(parse_formula("rho_c = R*A", "n", "f")[0], 3) == dm.RESISTANCE * dm.AREA
    wrong_lhs, wrong_rhs, _ = parse_formula("R = rho_c/L", "n", "f")
    assert dimension(wrong_rhs, 3) != dimension(wrong_lhs, 3)  # ohm m is no resistance


@pytest.mark.parametrize(
    "formula, explicit",
    [
        ("n = 2N_D", "2*N_D"),
        ("n = 2 N_D", "2*N_D"),
        ("n = 2eta_n*N_c", "2*eta_n*N_c"),
        ("sigma = q n mu_n", "q*n*mu_n"),
        ("n = (N_D - N_A)2", "(N_D - N_A)*2"),
    ],
)
def test_implicit_products_are_refused_with_the_explicit_form(formula, explicit):
    with pytest.raises(InputError) as err:
        parse_formula(formula, "n", "calc.yaml:7:5")
    assert str(err.value).startswith("calc.yaml:7:5: ") and f"write {explicit}" in str(err.value)


def test_a_number_with_an_exponent_is_not_an_implicit_product():
    # 1e16 and 2.5E-3 are numbers (Python's float literal grammar), not 1*e16
    product = node.binary("*", node.num(2.5e-3), node.name("x"))
    assert parse("2.5E-3*x + 1e16") == node.binary("+", product, node.num(1e16))


@pytest.mark.parametrize(
    "formula, order",
    [("n = N_c*F(1/2, eta)", 0.5), ("n = N_c*F(-1/2, eta)", -0.5), ("n = N_c*F(3/2, eta)", 1.5)],
)
def test_fermi_orders_may_be_fractions(formula, order):
    rhs = parse_formula(formula, "n", "f")[1]
    assert rhs.args[1] == node.call("F", (node.num(order), node.name("eta_n")))
    with pytest.raises(InputError, match="half-integer"):
        parse_formula("n = N_c*F(1/3, eta)", "n", "f")


def test_e_as_a_power_base_is_exp_and_q_stays_the_charge():
    assert (
        parse_formula("n = N_c*e^eta", "n", "f")[1]
        == parse_formula("n = N_c*exp(eta)", "n", "f")[1]
    )
    assert (
        parse_formula("n = N_c*e**(-eta_p)", "n", "f")[1]
        == parse_formula("n = N_c*exp(-eta_p)", "n", "f")[1]
    )
    with pytest.raises(InputError, match="elementary charge"):
        parse_formula("sigma = e*n*mu_n", "n", "f")
