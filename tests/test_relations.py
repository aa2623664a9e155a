"""The relations written once (engine/formulas/relation_table.py): the generated modules
are current, every generated numpy function agrees with an independent computation at
random points, sympy's derived limits are the published ones, and rule expressions may
call the relations by name (dimension-checked)."""

import importlib.util
from pathlib import Path

import mpmath as mp
import numpy as np
import pytest
import scipy.constants as sc
from conftest import fd_reference

from checker.engine.expressions import dimensions as dm
from checker.engine.expressions.dimension_check import DimensionProblem, dimension
from checker.engine.expressions.parser import parse, to_numpy
from checker.physics import _relations

ROOT = Path(__file__).resolve().parents[1]
RNG_SEED = 20261202


def _generator():
    spec = importlib.util.spec_from_file_location(
        "generate_relations", ROOT / "tools" / "generate_relations.py"
    )
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_generated_modules_are_current():
    # regenerated in memory from the table; a difference means someone edited the table
    # (or a generated file) without running tools/generate_relations.py
    for path, content in _generator().outputs().items():
        assert path.read_text(encoding="utf-8") == content, (
            f"{path.relative_to(ROOT)} is stale: run python tools/generate_relations.py"
        )


@pytest.mark.parametrize("dim", [1, 2, 3])
def test_einstein_ratio_against_mpmath(dim):
    # generalized Einstein ratio F_j/F_{j-1}, j = dim/2 - 1 (Landsberg, Eur. J. Phys. 2, 213
    # (1981)); F_j from mpmath's polylogarithm (DLMF 25.12.16)
    eta = np.random.default_rng(RNG_SEED + dim).uniform(-40.0, 40.0, 25)
    got = _relations.einstein_ratio(dim, eta)
    j = dim / 2 - 1
    for x, value in zip(eta, got):
        expected = fd_reference(j, x) / fd_reference(j - 1, x)
        assert value == pytest.approx(float(expected), rel=1e-13)


def test_einstein_ratio_takes_a_dimensionality_per_point():
    dims = np.array([1.0, 2.0, 3.0, 3.0])
    eta = np.array([0.0, 0.0, 0.0, -800.0])
    got = _relations.einstein_ratio(dims, eta)
    expected = [
        float(fd_reference(d / 2 - 1, 0.0) / fd_reference(d / 2 - 2, 0.0)) for d in dims[:3]
    ]
    assert got[:3] == pytest.approx(expected, rel=1e-13)
    # far in the tail both integrals underflow; the ratio is still the Boltzmann limit 1
    assert got[3] == 1.0


def _points(count=40):
    rng = np.random.default_rng(RNG_SEED)
    return {
        "mu": 10 ** rng.uniform(-3, 0, count),  # m^2/(V s)
        "field": 10 ** rng.uniform(2, 7, count),  # V/m
        "v_sat": 10 ** rng.uniform(4.5, 5.5, count),  # m/s
        "beta": rng.uniform(0.8, 2.5, count),
    }


def test_caughey_thomas_velocity_and_mobility_against_the_published_form():
    # v = mu E / (1 + (mu E / v_sat)^beta)^(1/beta), mu(E) = v/E: Caughey and Thomas,
    # Proc. IEEE 55, 2192 (1967), re-derived here in 30-digit arithmetic
    v = _points()
    velocity = _relations.field_velocity(v["mu"], v["field"], v["v_sat"], v["beta"])
    mobility = _relations.field_mobility(v["mu"], v["field"], v["v_sat"], v["beta"])
    with mp.workdps(30):
        for i in range(len(v["mu"])):
            mu, e, vs, b = (mp.mpf(float(v[k][i])) for k in ("mu", "field", "v_sat", "beta"))
            expected = mu * e / (1 + (mu * e / vs) ** b) ** (1 / b)
            assert velocity[i] == pytest.approx(float(expected), rel=1e-13)
            assert mobility[i] == pytest.approx(float(expected / e), rel=1e-13)


def test_conductor_resistance_against_the_published_form():
    # R = rho (L + lambda)/A, Lundstrom and Jeong, Near-Equilibrium Transport (2012), ch. 3
    rng = np.random.default_rng(RNG_SEED)
    rho, length, mfp, area = (
        10 ** rng.uniform(lo, hi, 30) for lo, hi in [(-5, 2), (-8, -3), (-9, -6), (-14, -8)]
    )
    got = _relations.conductor_resistance(rho, length, mfp, area)
    with mp.workdps(30):
        for i in range(30):
            expected = mp.mpf(rho[i]) * (mp.mpf(length[i]) + mp.mpf(mfp[i])) / mp.mpf(area[i])
            assert got[i] == pytest.approx(float(expected), rel=1e-14)


def test_intrinsic_density_against_the_published_form():
    # n_i = sqrt(N_c N_v) exp(-E_g / 2kT), Sze and Ng, Physics of Semiconductor Devices, 3rd
    # ed. (2007), ch. 1; k and q from scipy.constants (CODATA)
    rng = np.random.default_rng(RNG_SEED)
    n_c, n_v = 10 ** rng.uniform(23, 26, (2, 30))
    e_g = rng.uniform(0.1, 3.5, 30) * sc.e
    kT = sc.k * rng.uniform(50, 800, 30)
    got = _relations.intrinsic_density(n_c, n_v, e_g, kT)
    with mp.workdps(30):
        for i in range(30):
            expected = mp.sqrt(mp.mpf(n_c[i]) * mp.mpf(n_v[i])) * mp.exp(
                -mp.mpf(e_g[i]) / (2 * mp.mpf(kT[i]))
            )
            assert got[i] == pytest.approx(float(expected), rel=1e-12)


def test_two_carrier_conductivity_against_the_published_form():
    # sigma = q (n mu_n + p mu_p), Sze and Ng (2007), ch. 1; q from scipy.constants
    rng = np.random.default_rng(RNG_SEED)
    n, p = 10 ** rng.uniform(15, 26, (2, 30))
    mu_n, mu_p = 10 ** rng.uniform(-3, 0, (2, 30))
    got = _relations.two_carrier_conductivity(n, p, mu_n, mu_p, sc.e)
    assert got == pytest.approx(sc.e * (n * mu_n + p * mu_p), rel=1e-15)


def test_functions_broadcast():
    mu = np.full((3, 1), 0.1)
    field = np.geomspace(1e3, 1e7, 4)[None, :]
    assert _relations.field_velocity(mu, field, 1e5, 2.0).shape == (3, 4)
    assert _relations.einstein_ratio(3, np.zeros((2, 5))).shape == (2, 5)


def test_limits_derived_by_sympy_are_the_published_ones():
    import sympy as sp

    from checker.engine.formulas import relation_table as table

    limits = table.derived_limits()
    eta, dim = table.eta, table.dim
    mu, field, rho, length, area = table.mu, table.field, table.rho, table.length, table.area
    # D = mu kT/q for non-degenerate carriers (Sze & Ng 2007, ch. 1)
    assert limits["einstein_ratio, non-degenerate (Einstein relation)"] == 1
    # degenerate: D/mu -> (kT/q) eta/(j+1) = 2 eta/dim (Blakemore, Semiconductor
    # Statistics (1962); 3D: (2/3)(E_F - E_c)/q)
    assert sp.simplify(limits["einstein_ratio, degenerate"] - 2 * eta / dim) == 0
    # low field: v = mu E (Caughey & Thomas 1967)
    assert sp.simplify(limits["field_velocity, low field"] - mu * field) == 0
    # long conductor: R = rho L / A (Lundstrom & Jeong 2012, ch. 3)
    assert (
        sp.simplify(limits["conductor_resistance, diffusive (lambda << L)"] - rho * length / area)
        == 0
    )


def test_rules_call_relations_by_name_with_dimension_checks():
    tree = parse("used_mu_x*kT_q*einstein_ratio(dim, eta_x)")
    assert dimension(tree) == dm.DIFFUSIVITY
    assert dimension(parse("field_velocity(used_mu_x, field, vsat_x, beta_x)")) == dm.VELOCITY
    with pytest.raises(DimensionProblem, match="field_velocity"):
        dimension(parse("field_velocity(used_mu_x, T, vsat_x, beta_x)"))
    with pytest.raises(DimensionProblem, match="einstein_ratio"):
        dimension(parse("einstein_ratio(dim, kT)"))
    # the compiled rule expression is the generated function
    values = {"dim": np.array([2.0]), "eta_x": np.array([0.0])}
    # 2D at eta = 0: F_0(0)/F_-1(0) = ln 2/(1/2) = 2 ln 2 (closed forms, DLMF 25.12.16)
    assert to_numpy(parse("einstein_ratio(dim, eta_x)"))(values)[0] == pytest.approx(
        2 * np.log(2), rel=1e-14
    )
