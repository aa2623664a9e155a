"""Report layout a reviewer reads without friction, and the transport numbers the state
summaries show.

Layout: the HTML review opens with a summary table and puts each calculation's findings
above its state; the compact CI form gives one line per finding and one per clean
calculation; a sweep's header gives its ranges, not its first grid point.

Numbers: the transport rows are checked against formulas typed here from their published
sources (mpmath Fermi–Dirac integrals, scipy.constants), not against the code that
computed them.
"""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET

import mpmath as mp
import pytest
import scipy.constants as sc

from checker.api import check_paths
from checker.report import DISCLAIMER
from checker.report.check_report import render_compact, render_json, worst_active
from checker.report.html_report import render_html
from checker.report.markdown_report import render_markdown

XHTML = "{http://www.w3.org/1999/xhtml}"
EXAMPLES = [
    "examples/lg8_gan_pgate.yaml",  # a waived finding
    "examples/larkspur_operating_points.yaml",  # clean calculations
    "examples/lw3_corner_sweep.yaml",  # a sweep
    "examples/ld310_emitter.yaml",
]


@pytest.fixture(scope="module")
def examples():
    return check_paths(EXAMPLES)


def _fermi(j, eta):
    """Normalized Fermi–Dirac integral F_j(eta) = -Li_{j+1}(-e^eta) (Blakemore, Solid-State
    Electronics 25, 1067 (1982)), by mpmath."""
    return -mp.polylog(j + 1, -mp.exp(eta))


def _check_one(tmp_path, text):
    path = tmp_path / "calc.yaml"
    path.write_text(text, encoding="utf-8")
    result = check_paths([str(path)])
    (report,) = result.reports
    assert report.error is None, report.error
    return report.state


# ---- HTML review -------------------------------------------------------------------------


def test_html_opens_with_one_summary_row_per_calculation(examples):
    text = render_html(examples, 1, maps=False)
    root = ET.fromstring(text[text.index("<html") :])
    body = root.find(f"{XHTML}body")
    children = list(body)
    overview = body.find(f"{XHTML}table")
    first_section = next(i for i, el in enumerate(children) if el.tag == f"{XHTML}section")
    assert children.index(overview) < first_section  # before every calculation
    rows = overview.findall(f"{XHTML}tbody/{XHTML}tr")
    assert len(rows) == len(examples.reports)
    section_ids = {s.get("id") for s in body.iter(f"{XHTML}section")}
    for row, report in zip(rows, examples.reports, strict=True):
        name, where, worst, fired = row.findall(f"{XHTML}td")
        link = name.find(f"{XHTML}a")
        assert link.text == report.calc.name and link.get("href")[1:] in section_ids
        assert "".join(where.itertext()) == f"{report.calc.source}:{report.calc.line}"
        expected = worst_active(report)
        assert "".join(worst.itertext()) == (expected or "clean")
        shown = "".join(fired.itertext())
        for f in report.findings:
            assert f.rule in shown
    # the waived MOB01 of the LG-8 gate layer is marked as waived in its row
    gate = rows[0]
    assert "MOB01 (waived)" in "".join(gate.itertext())
    assert "ION01 (waived)" not in "".join(gate.itertext())
    assert text.count(DISCLAIMER) == 1


def test_html_section_puts_findings_above_the_state(examples):
    text = render_html(examples, 1, maps=False)
    root = ET.fromstring(text[text.index("<html") :])
    for section in root.iter(f"{XHTML}section"):
        headings = [h.text for h in section.iter(f"{XHTML}h3")]
        if "Solved state" in headings:  # single points (a sweep has no state table)
            assert headings.index("Findings") < headings.index("Solved state")


# ---- compact form for CI logs ------------------------------------------------------------


def test_compact_form_has_one_line_per_finding_and_per_clean_calculation(examples):
    lines = render_compact(examples).splitlines()
    assert lines[-2:] == [lines[-2], DISCLAIMER] and "calculation(s)" in lines[-2]
    body = lines[:-2]
    expected = sum(
        1 + len(r.findings) + len(r.notes) if r.findings else 1 for r in examples.reports
    )
    assert len(body) == expected
    clean = [r for r in examples.reports if not r.findings]
    assert clean and all(f"ok  {r.calc.source}:{r.calc.line}  {r.calc.name}" in body for r in clean)
    for report in examples.reports:
        for f in report.findings:
            (line,) = [x for x in body if f" {f.rule} " in x and f"{f.file}:{f.line} " in x]
            assert f.title in line
            assert line.split()[0] == (f"waived-{f.severity}" if f.waived else f.severity)
            for c in f.corrections:
                assert f"[{c.error_text()}]" in line and "→" in line


def test_compact_form_ends_as_the_console_report(examples):
    import io

    from checker.report.check_report import render_console

    stream = io.StringIO()
    render_console(examples, stream=stream)
    assert stream.getvalue().splitlines()[-2:] == render_compact(examples).splitlines()[-2:]


# ---- sweep header ------------------------------------------------------------------------


def test_markdown_sweep_header_gives_the_ranges(examples):
    text = render_markdown(examples, 1)
    header = next(line for line in text.splitlines() if line.startswith("`examples/lw3_corner"))
    # -40 degC and 150 degC are 233.15 K and 423.15 K (SI Brochure, 9th ed., 2.3.1)
    assert "T 233.1–423.1 K (39 points, linear)" in header
    assert "N\\_D(P) 1e+14–1e+20 cm⁻³ (61 points, log)" in header
    assert "233.15 K" not in header  # not the first grid point as if it were the point


def test_sweep_over_temperature_keeps_the_fixed_doping_in_its_header(tmp_path):
    path = tmp_path / "sweep.yaml"
    path.write_text(
        "name: Fictional TS-1 cold start\nmaterial: Si\n"
        "temperature: {from: 200 K, to: 400 K, steps: 5}\n"
        "doping:\n  donors: {P: 1e16 cm-3}\n",
        encoding="utf-8",
    )
    text = render_markdown(check_paths([str(path)]), 0)
    header = next(line for line in text.splitlines() if line.startswith(f"`{path}:1`"))
    assert "T 200–400 K (5 points, linear)" in header and "P 1e+16 cm^-3 (donor)" in header


# ---- transport in the state summaries ----------------------------------------------------

AS_1E17 = """name: Fictional LT-2 arsenic layer
material: Si
temperature: 300 K
doping:
  donors: {As: 1e17 cm-3}
"""


def test_mobility_row_is_the_published_masetti_fit(tmp_path):
    state = _check_one(tmp_path, AS_1E17)
    # Masetti, Severi and Solmi, IEEE TED 30, 764 (1983), Table I, arsenic (from memory;
    # the same numbers as the material file): mu_min1 = mu_min2 = 52.2, mu_max = 1417,
    # mu_1 = 43.4 cm^2/(V s), C_r = 9.68e16, C_s = 3.43e20 cm^-3, alpha = 0.680, beta = 2.0
    N = 1e17
    masetti = 52.2 + (1417 - 52.2) / (1 + (N / 9.68e16) ** 0.680) - 43.4 / (1 + (3.43e20 / N) ** 2)
    assert state["mu_n_cm2_per_Vs"] == pytest.approx(masetti, rel=1e-9)


def test_diffusivity_and_mean_free_path_follow_their_published_forms(tmp_path):
    state = _check_one(tmp_path, AS_1E17)
    kT_q = sc.k * 300.0 / sc.e
    eta = state["eta_n"]
    mu = state["mu_n_cm2_per_Vs"]
    # generalized Einstein relation D = mu kT/q F_1/2(eta)/F_-1/2(eta) (Landsberg, Eur. J.
    # Phys. 2, 213 (1981))
    D = mu * kT_q * float(_fermi(0.5, eta) / _fermi(-0.5, eta))
    assert state["D_n_cm2_per_s"] == pytest.approx(D, rel=1e-9)
    # lambda = 2D/<<v_x+>> with the window velocity <<v_x+>> = sqrt(2kT/(pi m*)) F_0/F_-1/2
    # (D = (v_T lambda/2) F_0/F_-1/2 for a constant lambda: Lundstrom and Jeong,
    # Near-Equilibrium Transport (2012), ch. 6); m* = 0.26 m0 for Si electrons (Sze & Ng,
    # Physics of Semiconductor Devices, 3rd ed., App. F; from memory)
    v_plus = (2 * sc.k * 300.0 / (sc.pi * 0.26 * sc.m_e)) ** 0.5 * 100  # cm/s
    v_plus *= float(_fermi(0, eta) / _fermi(-0.5, eta))
    assert state["lambda_n_nm"] == pytest.approx(2 * D / v_plus * 1e7, rel=1e-6)


def test_conductivity_and_resistivity_rows(tmp_path):
    state = _check_one(tmp_path, AS_1E17)
    # sigma = q (n mu_n + p mu_p) (Sze & Ng, 3rd ed., ch. 1), q from scipy.constants
    sigma = sc.e * (
        state["n_cm3"] * state["mu_n_cm2_per_Vs"] + state["p_cm3"] * state["mu_p_cm2_per_Vs"]
    )
    assert state["sigma_S_per_cm"] == pytest.approx(sigma, rel=1e-9)
    assert state["rho_ohm_cm"] == pytest.approx(1 / sigma, rel=1e-9)


def test_velocity_row_only_where_a_field_is_given(tmp_path):
    assert _check_one(tmp_path, AS_1E17)["v_n_at_field_cm_per_s"] is None
    state = _check_one(tmp_path, AS_1E17 + "structure:\n  field: 20 kV/cm\n")
    # Caughey–Thomas v = mu E / (1 + (mu E/v_m)^beta)^(1/beta) (Proc. IEEE 55, 2192 (1967))
    # with Canali et al., IEEE TED 22, 1045 (1975), electrons: v_m = 1.53e9 T^-0.87 cm/s,
    # beta = 2.57e-2 T^0.66
    T, E, mu = 300.0, 20e3, state["mu_n_cm2_per_Vs"]
    v_m, beta = 1.53e9 * T**-0.87, 2.57e-2 * T**0.66
    v = mu * E / (1 + (mu * E / v_m) ** beta) ** (1 / beta)
    assert state["v_n_at_field_cm_per_s"] == pytest.approx(v, rel=2e-3)  # v300 rounded


def test_effective_intrinsic_density_only_with_band_gap_narrowing(tmp_path):
    heavy = AS_1E17.replace("1e17", "1e18")
    assert _check_one(tmp_path, heavy)["nie_cm3"] is None
    state = _check_one(tmp_path, heavy + "options:\n  band_gap_narrowing: true\n")
    # mass action with Fermi–Dirac carriers: n p = n_ie^2 F_1/2(eta_n) e^-eta_n
    # F_1/2(eta_p) e^-eta_p (Sze & Ng, 3rd ed., ch. 1)
    factor = _fermi(0.5, state["eta_n"]) * mp.exp(-state["eta_n"])
    factor *= _fermi(0.5, state["eta_p"]) * mp.exp(-state["eta_p"])
    nie = float(mp.sqrt(state["n_cm3"] * state["p_cm3"] / factor))
    assert state["nie_cm3"] == pytest.approx(nie, rel=1e-6)
    assert state["nie_cm3"] > 1.5 * state["ni_cm3"]  # narrowing raises it


def test_json_state_keys_are_additive(examples):
    # the keys the README documents before the transport rows stay (never renamed)
    earlier = {
        "regime", "temperature_K", "EF_minus_EC_eV", "EF_minus_EV_eV", "eta_n", "eta_p",
        "n_cm3", "p_cm3", "donors_ionized_fraction", "acceptors_ionized_fraction", "ni_cm3",
        "band_gap_eV", "above_mott_density",
    }  # fmt: skip
    report = json.loads(render_json(examples, 1))
    state = next(c["state"] for c in report["calculations"] if c["state"])
    assert earlier <= set(state)
    assert {"mu_n_cm2_per_Vs", "D_p_cm2_per_s", "rho_ohm_cm", "nie_cm3"} <= set(state)


def test_compact_form_names_input_errors_on_their_own_lines(tmp_path):
    path = tmp_path / "bad.yaml"
    path.write_text("name: Fictional TS-9\nmaterial: Si\ntemperature: 300\n", encoding="utf-8")
    lines = render_compact(check_paths([str(path)])).splitlines()
    (error,) = [line for line in lines if line.startswith("input error: ")]
    assert f"{path}:3" in error and "1 input error(s)." in lines[-2]


def test_console_wrapping_is_the_standard_library_wrap():
    # reference: Python's own textwrap.wrap (break_on_hyphens=False); the console's
    # shortcut for lines of single-spaced words must give the same lines for any text
    import random
    import textwrap

    from checker.report.check_report import wrapped

    pieces = ["a", "bb", "n=1.5e+17", "x" * 40, " ", "  ", "\t", "-", "é", "\u00a0", "\n", "a-b"]
    rng = random.Random(16)
    for _ in range(20_000):
        line = "".join(rng.choice(pieces) for _ in range(rng.randint(0, 30)))
        width = rng.randint(1, 60)
        expected = textwrap.wrap(line, width, break_on_hyphens=False) or [""]
        assert wrapped(line, width) == expected, (line, width)


def test_every_character_the_console_escapes_is_unprintable():
    # the plain console report skips visible()'s pattern search for a printable line:
    # sound only if no character it escapes counts as printable (Unicode categories
    # Cc, Cf, Cs, Cn, Zl, Zp and separators other than the space are not: Python's
    # str.isprintable), checked over every code point
    import sys

    from checker.report.safe_text import _UNSAFE

    printable_escaped = [
        hex(code)
        for code in range(sys.maxunicode + 1)
        if chr(code).isprintable() and _UNSAFE.match(chr(code))
    ]
    assert printable_escaped == []


def test_a_closing_newline_does_not_let_an_escape_through():
    from checker.report.check_report import _shown
    from checker.report.safe_text import visible

    for text in ("name\x1b[2J\n", "\u202eabc\n", "plain\n", "plain", "\n", ""):
        assert _shown(text) == visible(text)
