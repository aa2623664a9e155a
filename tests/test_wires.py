"""1D conductors (nanowires, quantum wires) per length, through the engine: the wire solve
against scipy.constants and mpmath, the rules that read it, and the inputs it refuses."""

from pathlib import Path

import mpmath as mp
import numpy as np
import pytest
import scipy.constants as sc
from test_sheet_solve import _findings, _solve

from checker.cli import main
from checker.engine.run import check_calculations
from checker.inputs.calculation_file import parse_calculations
from checker.inputs.table import read_table

ROOT = Path(__file__).resolve().parents[1]
PER_CM = 1e-2
T300 = 300.0


def _n1d(mass, T=T300, valleys=1):
    # N_1D = g_v sqrt(2 m* kT/(pi hbar^2)), spin included (Lundstrom & Jeong, Near-Equilibrium
    # Transport (2012), ch. 2; Davies, The Physics of Low-Dimensional Semiconductors (1998),
    # ch. 3), from scipy.constants (CODATA)
    return valleys * np.sqrt(2.0 * mass * sc.m_e * sc.k * T / (np.pi * sc.hbar**2))


def _fd(j, eta):
    # F_j(eta) = -Li_{j+1}(-e^eta), the normalized Fermi–Dirac integral (Blakemore 1982), mpmath
    # (real for real eta; mpmath's inversion for e^eta > 1 leaves a zero imaginary part)
    mp.mp.dps = 30
    return mp.re(-mp.polylog(j + 1, -mp.exp(eta)))


def _density_by_quadrature(mass, eta, T=T300, valleys=1):
    # n_l = ∫ g(E) f(E) dE with the 1D density of states of a parabolic band,
    # g(E) = (g_s g_v/(pi hbar)) sqrt(m*/(2E)) per length (Davies 1998, ch. 3); mpmath quad
    mp.mp.dps = 30
    m, kT, hbar = mp.mpf(mass * sc.m_e), mp.mpf(sc.k * T), mp.mpf(sc.hbar)

    def integrand(x):  # E = kT x^2 removes the E^-1/2 edge: dE/sqrt(E) = 2 sqrt(kT) dx
        return 2 * mp.sqrt(kT) / (1 + mp.exp(x**2 - eta))

    total = mp.quad(integrand, [0, mp.sqrt(max(eta, 0) + 1), mp.inf])
    return float(2 * valleys / (mp.pi * hbar) * mp.sqrt(m / 2) * total)


# GaAs-AlGaAs: a parabolic Gamma band of m* = 0.067 (the material file), here as a wire
WIRE = """
name: gaas wire
material: GaAs-AlGaAs
temperature: 300 K
structure:
  dimensionality: 1
  length: 2 um
stated:
  electron_line_density: {density} cm-1
  electron_mobility: 4000 cm^2/(V*s)
"""


def test_gaas_effective_line_density_at_300_k():
    # N_1D for m* = 0.067 at 300 K from scipy.constants (CODATA): 1.203e6 cm-1
    expected = _n1d(0.067)
    assert expected * PER_CM == pytest.approx(1.203e6, rel=1e-3)
    values, notes = _solve(WIRE.format(density="1e6"))
    assert values["N1D_n"][0] == pytest.approx(expected, rel=1e-9)
    assert "1D statistics of the electrons (1 subband, N_1D = 1.2e+06 cm-1)" in notes[0]
    # per length only: no bulk or sheet quantity is made up from a line density
    for name in ("dens_n", "ns_n", "sigma", "rho", "sigma_s"):
        assert np.isnan(values[name][0]), name


@pytest.mark.parametrize("eta", [-6.0, -1.0, 0.0, 2.0, 9.0])
def test_line_density_against_quadrature_of_the_1d_dos(eta):
    # the wire solve holds n_l = ∫ g f dE (mpmath) at its Fermi level: feed the quadrature's
    # density in, get eta back
    density = _density_by_quadrature(0.067, eta)
    values, _ = _solve(WIRE.format(density=f"{density * PER_CM:.17g}"))
    assert values["eta_n"][0] == pytest.approx(eta, abs=1e-9)
    assert values["nl_n"][0] == pytest.approx(density, rel=1e-10)


@pytest.mark.parametrize("eta", [-4.0, 0.0, 1.5, 6.0])
def test_einstein_ratio_is_f_minus_half_over_f_minus_three_halves(eta):
    # D/mu = (kT/q) F_-1/2(eta)/F_-3/2(eta) for a 1D parabolic band (Landsberg 1981;
    # Lundstrom & Jeong 2012, ch. 2), F_j from mpmath polylog
    density = float(_n1d(0.067) * _fd(-0.5, eta))
    values, _ = _solve(WIRE.format(density=f"{density * PER_CM:.17g}"))
    expected = float(_fd(-0.5, eta) / _fd(-1.5, eta))
    assert values["einstein_n"][0] == pytest.approx(expected, rel=1e-10)


def test_two_subbands_add_their_line_densities():
    # n_l = N_1D [F_-1/2(eta) + F_-1/2(eta - dE/kT)] (Davies 1998, ch. 3); the root found by
    # mpmath findroot on the polylog form
    spacing = 0.020  # eV, above the lowest subband
    text = WIRE.format(density="2e6").replace(
        "dimensionality: 1", "dimensionality: 1\n  subband_energies: [0 meV, 20 meV]"
    )
    values, notes = _solve(text)
    n1d, kT = _n1d(0.067), sc.k * T300 / sc.e
    target = 2e6 / PER_CM

    def excess(eta):
        return n1d * (_fd(-0.5, eta) + _fd(-0.5, eta - spacing / kT)) - target

    eta = float(mp.findroot(excess, 1.0))
    assert values["eta_n"][0] == pytest.approx(eta, abs=1e-9)
    assert "2 subbands" in notes[0]
    # the ratio from both subbands: n/(dn/deta), F_-3/2 the derivative of F_-1/2
    slope = _fd(-1.5, eta) + _fd(-1.5, eta - spacing / kT)
    ratio = (_fd(-0.5, eta) + _fd(-0.5, eta - spacing / kT)) / slope
    assert values["einstein_n"][0] == pytest.approx(float(ratio), rel=1e-10)


def test_modes_and_mean_free_path_of_a_wire():
    # a 1D subband's modes in the window: <M> = F_-1(eta) = 1/(1 + e^-eta), a count
    # (Lundstrom & Jeong 2012, ch. 2); the diffusive limit of the Landauer conductance,
    # sigma_1D = (2q^2/h) <M> lambda = q n_l mu, fixes lambda (ch. 3); CODATA q, h
    values, _ = _solve(WIRE.format(density="2e6"))
    eta = values["eta_n"][0]
    modes = 1.0 / (1.0 + np.exp(-eta))
    assert values["modes_1d_n"][0] == pytest.approx(modes, rel=1e-10)
    mu = 4000e-4
    expected = (2e6 / PER_CM) * mu * sc.h / (2.0 * sc.e * modes)
    assert values["lambda_n"][0] == pytest.approx(expected, rel=1e-9)


# GaAs (bulk file: a Kane Gamma band) as a wire, 2e6 cm-1 electrons: degenerate (eta ~ +2.3)
GAAS_WIRE = """
name: {name}
material: GaAs
temperature: 300 K
structure:
  dimensionality: 1
  length: {length}
{assumes}stated:
  electron_line_density: 2e6 cm-1
{more}"""


def _gaas(name, more="", length="2 um", assumes=""):
    return GAAS_WIRE.format(name=name, more=more, length=length, assumes=assumes)


def test_degenerate_gaas_wire_draws_stat01_and_stat02_and_the_clean_one_neither():
    values, _ = _solve(_gaas("x"))
    eta, kT = values["eta_n"][0], sc.k * T300 / sc.e
    n1d, ratio = values["N1D_n"][0], values["einstein_n"][0]
    assert eta > 2.0 and ratio > 1.5  # degenerate: the 3kT rule (Sze & Ng 2007, ch. 1)
    boltzmann_ef = kT * np.log(2e6 / PER_CM / n1d)  # the shortcut n_l = N_1D e^eta
    mu = 3000e-4
    plain_d, exact_d = mu * kT * 1e4, mu * kT * ratio * 1e4  # cm^2/s
    docs = "---".join(
        [
            _gaas("boltzmann", f"  ef_minus_ec: {boltzmann_ef:.6f} eV\n"),
            _gaas(
                "einstein",
                "  electron_mobility: 3000 cm^2/(V*s)\n"
                f"  electron_diffusivity: {plain_d:.4f} cm^2/s\n",
            ),
            _gaas(
                "clean",
                f"  ef_minus_ec: {kT * eta:.6f} eV\n  electron_mobility: 3000 cm^2/(V*s)\n"
                f"  electron_diffusivity: {exact_d:.4f} cm^2/s\n",
            ),
        ]
    )
    found, _ = _findings(docs)
    assert "STAT01" in found[0]
    assert "STAT02" in found[1]
    assert found[2] == set()


def test_short_wire_draws_tran01_and_a_long_one_does_not():
    # lambda/L above 5 % (common practice (no source)) with drift-diffusion declared
    more = "  electron_mobility: 3000 cm^2/(V*s)\n"
    short = _gaas("short", more, "200 nm", "assumes: [diffusive]\n")
    long = _gaas("long", more, "50 um", "assumes: [diffusive]\n")
    found, _ = _findings(short + "---" + long)
    assert "TRAN01" in found[0]
    assert "TRAN01" not in found[1]


def test_example_fires_its_rules_and_its_reviewed_calculations_are_clean():
    path = ROOT / "examples" / "lw7_nanowire_channel.yaml"
    read = parse_calculations(path.read_text(), str(path))
    assert not read.errors
    ids = [
        {f.rule for f in report.findings}
        for report in check_calculations(read.calculations).reports
    ]
    assert ids[0] == {"STAT01", "STAT02"}
    assert ids[1] == set() and ids[2] == set()


def test_a_table_row_with_a_line_density_is_a_wire(tmp_path):
    # the same degenerate GaAs wire as a table row: D = mu kT/q there is STAT02's (the ratio
    # F_-1/2/F_-3/2 of the wire, Landsberg 1981); a row with both densities is refused
    path = tmp_path / "wires.csv"
    path.write_text(
        "name,material,dopant,density,temperature,line_density [cm-1],"
        "mobility [cm^2/(V*s)],diffusivity [cm^2/s]\n"
        "wire,GaAs,Si,,300 K,2e6,3000,77.6\n"
        "both,GaAs,Si,1e17 cm-3,300 K,2e6,,\n"
    )
    read = read_table(str(path))
    assert len(read.calculations) == 1 and len(read.errors) == 1
    assert "wires.csv:3: column 'density'" in read.errors[0]
    calc = read.calculations[0]
    assert calc.structure["dim"] == 1.0 and not calc.donors
    assert calc.stated["stated_nl_n"] == pytest.approx(2e8)
    report = check_calculations(read.calculations).reports[0]
    assert {f.rule for f in report.findings} == {"STAT02"}


@pytest.mark.parametrize(
    "text, place, words",
    [
        (  # a line density in a 3D calculation
            "material: GaAs\ntemperature: 300 K\nstated:\n  electron_line_density: 2e6 cm-1\n",
            "x.yaml:4:",
            "dimensionality: 1",
        ),
        (  # a sheet density in a 1D calculation
            "material: GaAs\ntemperature: 300 K\nstructure: {dimensionality: 1}\n"
            "stated:\n  electron_sheet_density: 1e12 cm-2\n",
            "x.yaml:5:",
            "electron_line_density",
        ),
        (  # negative
            "material: GaAs\ntemperature: 300 K\nstructure: {dimensionality: 1}\n"
            "stated:\n  electron_line_density: -2e6 cm-1\n",
            "x.yaml:5:",
            "negative",
        ),
        (  # beyond one carrier per 0.1 nm
            "material: GaAs\ntemperature: 300 K\nstructure: {dimensionality: 1}\n"
            "stated:\n  electron_line_density: 5e10 cm-1\n",
            "x.yaml:5:",
            "1e9 cm^-1",
        ),
        (  # cm-1 where a volume density belongs
            "material: GaAs\ntemperature: 300 K\nstated:\n  electron_density: 2e6 cm-1\n",
            "x.yaml:4:",
            "electron_line_density",
        ),
        (  # a 1D wire with nothing fixing its carriers
            "material: GaAs-AlGaAs\ntemperature: 300 K\nstructure: {dimensionality: 1}\n",
            "x.yaml:",
            "electron_line_density: 2e6 cm-1",
        ),
    ],
)
def test_bad_wire_input_names_file_line_and_fix(tmp_path, capsys, text, place, words):
    (tmp_path / "x.yaml").write_text(text)
    code = main(["check", str(tmp_path / "x.yaml")])
    said = "".join(capsys.readouterr()).replace(str(tmp_path) + "/", "")
    assert code == 2 and "Traceback" not in said
    assert place in said and words in said


def _wire_resistance_reference(line_density_cm, mobility_cm2, length):
    """(L/(q n_l mu), (L + lambda)/(q n_l mu)) of the GaAs-AlGaAs wire (m* = 0.067) by
    mpmath: eta from n_l = N_1D F_-1/2(eta), D = mu (kT/q) F_-1/2/F_-3/2 (Landsberg 1981),
    the window velocity <<v_x+>> = sqrt(2kT/(pi m*)) F_-1/F_-3/2 and lambda = 2D/<<v_x+>>
    (Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2 and 6)."""
    n_l, mu = line_density_cm / PER_CM, mobility_cm2 * 1e-4
    n1d, kT_q = _n1d(0.067), sc.k * T300 / sc.e
    eta = mp.findroot(lambda e: n1d * _fd(-0.5, e) - n_l, 0.0)
    diffusivity = mu * kT_q * float(_fd(-0.5, eta) / _fd(-1.5, eta))
    velocity = np.sqrt(2 * sc.k * T300 / (np.pi * 0.067 * sc.m_e)) * float(
        _fd(-1.0, eta) / _fd(-1.5, eta)
    )
    per_length = 1.0 / (sc.e * n_l * mu)
    return per_length * length, per_length * (length + 2 * diffusivity / velocity)


def test_a_wire_resistance_from_drift_diffusion_draws_tran01_and_a_slip_val05():
    # R = L/(q n_l mu) of a 200 nm wire leaves out the ballistic part: TRAN01 corrects it to
    # (L + lambda)/(q n_l mu); a resistance a decade off that draws VAL05 (20 %, common
    # practice (no source)) with the same corrected value
    diffusive, landauer = _wire_resistance_reference(5e5, 4000, 200e-9)
    text = WIRE.format(density="5e5").replace("length: 2 um", "length: 200 nm")
    stated = f"  resistance: {diffusive:.6e} ohm\n"
    slip = f"  resistance: {landauer / 10:.6e} ohm\n"
    reports = check_calculations(
        parse_calculations(text + stated + "---\n" + text + slip, "w.yaml").calculations
    ).reports
    (tran01,) = [f for f in reports[0].findings if f.rule == "TRAN01"]
    resistance = next(c for c in tran01.corrections if c.label == "resistance R")
    assert resistance.corrected == pytest.approx(landauer, rel=1e-6)
    (val05,) = [f for f in reports[1].findings if f.rule == "VAL05"]
    assert val05.corrections[0].corrected == pytest.approx(landauer, rel=1e-6)
