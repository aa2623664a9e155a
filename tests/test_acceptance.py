"""Acceptance suite: the tool's verdicts on published numbers and on classic mistakes.

tests/acceptance/ holds calculation files and index.toml.  A case of kind "correct" states a
published number (source beside it in the file and in the index) and must draw no warning or
error (info is allowed); a case of kind "mistake" must draw the rule the index names.  All files
are checked once, through the real command (``checker.cli.main``, JSON report), by a
module-scoped fixture.  Cases the current code gets wrong carry an ``xfail`` reason in the index
and are marked ``xfail(strict=False)``: they report XPASS once the physics is fixed.

The stated numbers themselves are checked against the published equations written out below
(ASTM F723 fits, Arora et al., Masetti et al., Canali et al., Misiakos & Tsamakis, Sproul &
Green, Green, CODATA kT/q from scipy.constants): never against the package.
``bench/bench_acceptance.py`` prints the counts per group.
"""

import functools
import json
import math
import re
import tomllib
from pathlib import Path

import pytest
import scipy.constants as sc
import yaml

HERE = Path(__file__).resolve().parent / "acceptance"
INDEX = tomllib.loads((HERE / "index.toml").read_text(encoding="utf-8"))["case"]
SETTINGS = HERE / "settings.toml"
BAD = ("warning", "error")


def run_suite(output):
    """Check every file of the index with ``regimecheck check --format json``; returns
    (exit code, report) with the report's calculations keyed by their name."""
    from checker.cli import main

    files = sorted({str(HERE / case["file"]) for case in INDEX})
    code = main(
        [
            "check",
            *files,
            "--format",
            "json",
            "--output",
            str(output),
            "--config",
            str(SETTINGS),
            "--exit-zero",
        ]
    )
    report = json.loads(Path(output).read_text(encoding="utf-8"))
    report["by_name"] = {calc["name"]: calc for calc in report["calculations"]}
    return code, report


def verdict(case, calc):
    """(ok, what was drawn): a correct number drew no warning/error; a mistake drew its rule."""
    drawn = sorted({(f["rule"], f["severity"]) for f in calc["findings"] if not f["waived"]})
    alarms = [rule for rule, severity in drawn if severity in BAD]
    if case["kind"] == "correct":
        return not alarms and calc["error"] is None, alarms
    return case["rule"] in alarms, alarms


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    code, data = run_suite(tmp_path_factory.mktemp("acceptance") / "report.json")
    assert code == 0
    assert data["input_errors"] == []
    return data


def _param(case):
    marks = [pytest.mark.xfail(strict=False, reason=case["xfail"])] if "xfail" in case else []
    return pytest.param(case, id=case["id"], marks=marks)


CORRECT = [_param(c) for c in INDEX if c["kind"] == "correct"]
MISTAKES = [_param(c) for c in INDEX if c["kind"] == "mistake"]


@pytest.mark.parametrize("case", CORRECT)
def test_published_number_draws_no_warning(case, report):
    calc = report["by_name"][case["id"]]
    ok, alarms = verdict(case, calc)
    assert ok, f"{case['id']} ({case['source']}) drew {alarms} {calc['error'] or ''}"


@pytest.mark.parametrize("case", MISTAKES)
def test_mistake_draws_its_rule(case, report):
    calc = report["by_name"][case["id"]]
    ok, alarms = verdict(case, calc)
    assert ok, f"{case['id']} should draw {case['rule']} ({case['source']}); drew {alarms}"


# --------------------------------------------------------------------------- the suite itself


@functools.cache
def _documents():
    """(file name, text of the document, parsed document) of every calculation file."""
    out = []
    for path in sorted(HERE.glob("*.yaml")):
        for text in re.split(r"^---\s*$", path.read_text(encoding="utf-8"), flags=re.M):
            out.append((path.name, text, yaml.safe_load(text)))
    return tuple(out)


def test_index_and_files_name_the_same_cases():
    docs = {(name, doc["name"]) for name, _, doc in _documents()}
    index = {(case["file"], case["id"]) for case in INDEX}
    assert docs == index
    assert len(index) == len(INDEX)  # ids are unique


def test_suite_has_the_required_cases():
    kinds = [case["kind"] for case in INDEX]
    assert set(kinds) == {"correct", "mistake"}
    assert kinds.count("correct") >= 40
    assert kinds.count("mistake") >= 20
    rules = {p.stem for p in (Path(__file__).resolve().parents[1] / "rules").glob("*.yaml")}
    assert {case["rule"] for case in INDEX if case["kind"] == "mistake"} <= rules


def test_each_document_names_its_source_in_a_comment():
    index = {case["id"]: case for case in INDEX}
    for _name, text, doc in _documents():
        case = index[doc["name"]]
        comments = " ".join(
            line.lstrip("#").strip() for line in text.splitlines() if line.startswith("#")
        )
        if case["kind"] == "correct":
            assert "Source:" in comments, doc["name"]
        else:
            assert f"must draw {case['rule']}" in comments, doc["name"]
        assert " ".join(case["source"].split()) in comments, doc["name"]
        if case.get("from_memory"):
            assert "from memory" in comments, doc["name"]


# --------------------------------------------------------------------------- stated values
# Published equations; the parameters are those of the papers, cited beside each.


def f723_boron(N, T):
    """ASTM F723 (SEMI MF723) dopant density -> resistivity, boron, 23 degC (Thurber, Mattis,
    Liu & Filliben, NBS SP 400-64); ohm*cm, N in cm^-3."""
    return 1.305e16 / N + 1.133e17 / (N * (1 + (2.58e-19 * N) ** -0.737))


def f723_phosphorus(N, T):
    """ASTM F723 dopant density -> resistivity, phosphorus, 23 degC (rational fit in
    y = log10 N - 16, Thurber et al.); ohm*cm."""
    y = math.log10(N) - 16
    c0, c1, c2, c3 = -3.0769, 2.2108, -0.62272, 0.057501
    d1, d2, d3 = -0.68157, 0.19833, -0.018376
    z = (c0 + c1 * y + c2 * y**2 + c3 * y**3) / (1 + d1 * y + d2 * y**2 + d3 * y**3)
    return 6.242e18 / N * 10**z


def _arora(N, T, mu_min, mu0, b2, n_ref):
    """Arora, Hauser & Roulston, IEEE Trans. Electron Devices 29, 292 (1982), eq. (8)."""
    tn = T / 300
    return mu_min * tn**-0.57 + mu0 * T**b2 / (1 + (N / (n_ref * tn**2.4)) ** (0.88 * tn**-0.146))


def arora_n(N, T):
    return _arora(N, T, 88, 7.4e8, -2.33, 1.26e17)


def arora_p(N, T):
    return _arora(N, T, 54.3, 1.36e8, -2.23, 2.35e17)


def _masetti(N, mu_min1, mu_min2, mu_max, mu1, p_c, c_r, c_s, alpha, beta):
    """Masetti, Severi & Solmi, IEEE Trans. Electron Devices 30, 764 (1983), eq. (1), 300 K."""
    return (
        mu_min1 * math.exp(-p_c / N)
        + (mu_max - mu_min2) / (1 + (N / c_r) ** alpha)
        - mu1 / (1 + (c_s / N) ** beta)
    )


def masetti_P(N, T):  # Table I, phosphorus
    return _masetti(N, 68.5, 68.5, 1414, 56.1, 0, 9.20e16, 3.41e20, 0.711, 1.98)


def masetti_As(N, T):  # Table I, arsenic
    return _masetti(N, 52.2, 52.2, 1417, 43.4, 0, 9.68e16, 3.43e20, 0.680, 2.0)


def masetti_B(N, T):  # Table I, boron
    return _masetti(N, 44.9, 0.0, 470.5, 29.0, 9.23e16, 2.23e17, 6.10e20, 0.719, 2.0)


def minority_hole_del_alamo(N, T):
    """Minority holes in n+ Si, del Alamo & Swanson, Solid-State Electron. 30, 1127 (1987)
    (fit from memory)."""
    return 130 + 370 / (1 + (N / 8e17) ** 1.25)


def minority_electron_swirhun(N, T):
    """Minority electrons in p+ Si, Swirhun, Kwark & Swanson, IEDM 1986, p. 24 (fit from memory)."""
    return 232 + 1180 / (1 + (N / 8e16) ** 0.9)


def _canali(E, T, vm, ec, beta):
    """Canali et al., IEEE Trans. Electron Devices 22, 1045 (1975): v = v_m (E/E_c) /
    [1 + (E/E_c)^beta]^(1/beta); cm/s, E in V/cm."""
    return vm * (E / ec) / (1 + (E / ec) ** beta) ** (1 / beta)


def canali_n(E, T):
    return _canali(E, T, 1.53e9 * T**-0.87, 1.01 * T**1.55, 2.57e-2 * T**0.66)


def canali_p(E, T):
    return _canali(E, T, 1.62e8 * T**-0.52, 1.24 * T**1.68, 0.46 * T**0.17)


def kT_q(T):
    """Thermal voltage from the exact SI constants (CODATA 2018, scipy.constants); V."""
    return sc.k * T / sc.e


def ni_misiakos(T):
    """Misiakos & Tsamakis, J. Appl. Phys. 74, 3293 (1993), 78-340 K; cm^-3."""
    return 5.29e19 * (T / 300) ** 2.54 * math.exp(-6726 / T)


def ni_sproul_green(T):
    """Sproul & Green, J. Appl. Phys. 70, 846 (1991), 275-375 K; cm^-3."""
    return 9.15e19 * (T / 300) ** 2 * math.exp(-6880 / T)


def green_dos_c(T):
    """Green, J. Appl. Phys. 67, 2944 (1990): N_c = 2.86e19 (T/300)^1.58 cm^-3."""
    return 2.86e19 * (T / 300) ** 1.58


def green_dos_v(T):
    """Green (1990): N_v = 3.10e19 (T/300)^1.85 cm^-3."""
    return 3.10e19 * (T / 300) ** 1.85


def vsat_jacoboni(T):
    """Electron saturation velocity of Si, Jacoboni et al., Solid-State Electron. 20, 77 (1977):
    2.4e7/(1 + 0.8 exp(T/600 K)) cm/s (from memory)."""
    return 2.4e7 / (1 + 0.8 * math.exp(T / 600))


# Altermatt et al., J. Appl. Phys. 100, 113714 and 113715 (2006), incomplete ionization of Si:
# E_dop = E_dop0/(1 + (N/N_ref)^c), b = 1/(1 + (N/N_b)^d), N+/N = 1 - b n/(n + n1/g) with
# n1 = N_band exp(-E_dop/kT).  Parameters of the paper's Table I (read second-hand):
# E_dop0 (eV), N_ref (cm^-3), c, N_b (cm^-3), d, ground-state degeneracy g.
ALTERMATT_2006 = {
    "P": (0.0455, 3.0e18, 2.0, 6.0e18, 2.3, 2),
    "As": (0.0537, 4.0e18, 1.5, 1.4e19, 3.0, 2),
    "B": (0.04439, 1.7e18, 1.4, 6.0e18, 2.4, 4),
}


def ionized_fraction_altermatt(species, N, T):
    """Ionized fraction of Si:P/As/B without compensation, Boltzmann carriers, N_c = 2.86e19 and
    N_v = 3.10e19 cm^-3 at 300 K (Green 1990) scaled as T^1.5; neutrality n = N+ by bisection."""
    e0, n_ref, c, n_b, d, g = ALTERMATT_2006[species]
    n_band = (3.10e19 if species == "B" else 2.86e19) * (T / 300) ** 1.5
    e_dop = e0 / (1 + (N / n_ref) ** c)
    bound = 1 / (1 + (N / n_b) ** d)
    n1 = n_band * math.exp(-e_dop / kT_q(T))
    lo, hi = 0.0, N
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        if mid < N * (1 - bound * mid / (mid + n1 / g)):
            lo = mid
        else:
            hi = mid
    return lo / N


# reference -> (stated unit, function of the calculation's (N, T, field, species))
REFERENCES = {
    "f723_boron": ("ohm*cm", lambda N, T, E, s: f723_boron(N, T)),
    "f723_phosphorus": ("ohm*cm", lambda N, T, E, s: f723_phosphorus(N, T)),
    "arora_n": ("cm^2/(V*s)", lambda N, T, E, s: arora_n(N, T)),
    "arora_p": ("cm^2/(V*s)", lambda N, T, E, s: arora_p(N, T)),
    "masetti_P": ("cm^2/(V*s)", lambda N, T, E, s: masetti_P(N, T)),
    "masetti_As": ("cm^2/(V*s)", lambda N, T, E, s: masetti_As(N, T)),
    "masetti_B": ("cm^2/(V*s)", lambda N, T, E, s: masetti_B(N, T)),
    "minority_hole_del_alamo": ("cm^2/(V*s)", lambda N, T, E, s: minority_hole_del_alamo(N, T)),
    "minority_electron_swirhun": ("cm^2/(V*s)", lambda N, T, E, s: minority_electron_swirhun(N, T)),
    "canali_n": ("cm/s", lambda N, T, E, s: canali_n(E, T)),
    "canali_p": ("cm/s", lambda N, T, E, s: canali_p(E, T)),
    "vsat_jacoboni": ("cm/s", lambda N, T, E, s: vsat_jacoboni(T)),
    "kT_q": ("V", lambda N, T, E, s: kT_q(T)),
    "ni_misiakos": ("cm-3", lambda N, T, E, s: ni_misiakos(T)),
    "ni_sproul_green": ("cm-3", lambda N, T, E, s: ni_sproul_green(T)),
    "green_dos_c": ("cm-3", lambda N, T, E, s: green_dos_c(T)),
    "green_dos_v": ("cm-3", lambda N, T, E, s: green_dos_v(T)),
    "altermatt_2006": ("cm-3", lambda N, T, E, s: N * ionized_fraction_altermatt(s, N, T)),
}
# how close a stated value must be to its equation: 3-4 significant digits are written (0.5 %);
# the ionized fractions are two-digit readings of a figure (2 %)
TOLERANCE = {"altermatt_2006": 0.02}


def _number(text):
    number, unit = str(text).split(maxsplit=1)
    return float(number), unit.strip()


def _kelvin(text):
    number, unit = _number(text)
    return number + sc.zero_Celsius if unit == "degC" else number


def _operating_point(doc):
    doping = doc.get("doping") or {}
    species = [name for group in ("donors", "acceptors") for name in (doping.get(group) or {})]
    densities = [
        _number(v)[0]
        for group in ("donors", "acceptors")
        for v in (doping.get(group) or {}).values()
    ]
    N = sum(densities) if densities else 1e10  # undoped: the N -> 0 limit of the fits
    field = (doc.get("structure") or {}).get("field")
    E = _number(field)[0] * 1e3 if field else None  # kV/cm -> V/cm
    assert field is None or _number(field)[1] == "kV/cm"
    return N, _kelvin(doc["temperature"]), E, (species[0] if species else None)


def _stated(doc, key=None):
    """The case's stated number: the only one, or ``key`` where the calculation also states
    its inputs (a sheet's density and mobility)."""
    if key is not None:
        return _number(doc["stated"][key])
    ((_, text),) = doc["stated"].items()
    return _number(text)


CASES_WITH_VALUE = [pytest.param(c, id=c["id"]) for c in INDEX if "value" in c]


@pytest.mark.parametrize("case", CASES_WITH_VALUE)
def test_stated_value_is_the_published_one(case):
    doc = next(d for _, _, d in _documents() if d["name"] == case["id"])
    value, unit = _stated(doc, case.get("key"))
    assert value == pytest.approx(case["value"], rel=1e-9)  # file and index agree
    if "reference" not in case:
        return
    expected_unit, published = REFERENCES[case["reference"]]
    assert unit == expected_unit
    N, T, E, species = _operating_point(doc)
    rel = TOLERANCE.get(case["reference"], 5e-3)
    assert value == pytest.approx(published(N, T, E, species), rel=rel), case["source"]


def _low_dimensional_values():
    """The numbers of the 2D, graphene and Landauer cases from their published formulas,
    with CODATA constants (scipy.constants) and mpmath."""
    import mpmath as mp

    kT_q = sc.k * 300.0 / sc.e
    g0 = 2 * sc.e**2 / sc.h  # 2q^2/h, exact in the SI (CODATA 2018)
    # 2D gas (m* = 0.20): eta from n_s = N_2D ln(1 + e^eta); D/mu = (kT/q)(1 + e^-eta) ln(1 + e^eta)
    n2d = 0.20 * sc.m_e * sc.k * 300.0 / (math.pi * sc.hbar**2) * 1e-4  # cm^-2
    eta = float(mp.log(mp.expm1(1e13 / n2d)))
    ratio_2d = (1 + math.exp(-eta)) * math.log1p(math.exp(eta))
    return {
        # R_s = 1/(q n_s mu) (Sze & Ng 2007, ch. 1), cm^-2 and cm^2/(V s)
        "ld-gan-2deg-sheet-resistance": (1 / (sc.e * 1e13 * 2000), 2e-3),
        "ld-gaas-2deg-sheet-resistance": (1 / (sc.e * 5e11 * 8000), 2e-3),
        "ld-graphene-sio2-sheet-resistance": (1 / (sc.e * 1e12 * 40000), 2e-3),
        # D/mu at the Dirac point: F_1(0)/F_0(0) = (pi^2/12)/ln 2 (Blakemore 1982)
        "ld-graphene-dirac-point-einstein": (5000 * kT_q * math.pi**2 / (12 * math.log(2)), 1e-3),
        "ld-gan-2deg-einstein": (1800 * kT_q * ratio_2d, 1e-3),
        "x-gan-2deg-boltzmann-einstein": (1800 * kT_q, 2e-3),
        "x-graphene-boltzmann-einstein": (5000 * kT_q, 2e-3),
        # n = E_F^2/(pi hbar^2 v_F^2) at 50 meV, v_F = 1e6 m/s (Fang et al. 2007), cm^-2
        "x-graphene-zero-temperature-density": (
            (0.05 * sc.e) ** 2 / (math.pi * (sc.hbar * 1e6) ** 2) * 1e-4,
            5e-3,
        ),
        "x-graphene-one-carrier-near-neutrality": (1 / (sc.e * 1e11 * 5000), 2e-3),
        "x-2deg-sheet-resistance-decade": (0.1 / (sc.e * 1e13 * 2000), 2e-3),
        "ld-point-contact-third-plateau": (3 * g0, 1e-4),
    }


def test_low_dimensional_cases_follow_their_published_formulas():
    index = {case["id"]: case for case in INDEX}
    for name, (expected, rel) in _low_dimensional_values().items():
        assert index[name]["value"] == pytest.approx(expected, rel=rel), name


def test_published_values_cited_beside_the_equations():
    """A few printed numbers the equations above must reproduce (spot checks of the
    copying of the coefficients)."""
    # Arora et al. (1982): undoped Si electrons at 500 K about 446 cm^2/(V*s) (issue brief)
    assert arora_n(1e10, 500) == pytest.approx(446, rel=5e-3)
    # Arora et al. (1982): mu_0 T^-2.33 = 1252 and 1.36e8 T^-2.23 = 407 at 300 K
    assert 7.4e8 * 300**-2.33 == pytest.approx(1252, rel=1e-3)
    assert 1.36e8 * 300**-2.23 == pytest.approx(407, rel=1e-3)
    # Misiakos & Tsamakis (1993): tabulated 9.7e9 cm^-3 at 300 K
    assert ni_misiakos(300) == pytest.approx(9.7e9, rel=5e-3)
    # Sproul & Green (1991): 1.00e10 cm^-3 at 300 K
    assert ni_sproul_green(300) == pytest.approx(1.00e10, rel=5e-3)
    # Canali et al. (1975): beta = 1.109 (electrons) and 1.213 (holes) at 300 K (from memory)
    assert 2.57e-2 * 300**0.66 == pytest.approx(1.109, abs=2e-3)
    assert 0.46 * 300**0.17 == pytest.approx(1.213, abs=2e-3)
    # CODATA 2018: kT/q at 300 K = 0.025852 V
    assert kT_q(300) == pytest.approx(0.025852, abs=1e-6)
