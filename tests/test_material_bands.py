"""The bands a material describes (bulk, Kane, 2D channels, graphene) against formulas
evaluated here from scipy.constants and mpmath, and the published values named per check."""

import math

import mpmath
import numpy as np
import pytest
import scipy.constants as sc

from checker import load_material
from checker.errors import InputError, MissingParameterError
from checker.inputs.calculation_file import parse_calculations
from checker.inputs.material_catalog import material_from_mapping
from checker.physics.bands import KaneBand, ParabolicBand
from checker.physics.energy_window import (
    carrier_density,
    dirac_intrinsic_density,
    effective_density,
    eta_from_density,
)

PER_CM2 = 1e4
PER_CM3 = 1e6
POWER_LAW_BULK = ["GaAs", "GaN", "Ge", "InAs", "InGaAs", "InP", "4H-SiC"]


def parabolic_counterpart(band):
    """The parabolic band of the same mass (a Kane band's edge mass)."""
    return ParabolicBand(3, band.mass, band.valley_degeneracy)


@pytest.mark.parametrize("name", POWER_LAW_BULK)
@pytest.mark.parametrize("carrier", ["electron", "hole"])
def test_bulk_band_reproduces_the_materials_own_effective_density(name, carrier):
    """N_c = 2 (m kT / 2 pi hbar^2)^(3/2) is a T^(3/2) power law of one mass (Sze & Ng 2007,
    ch. 1), so the band of the mass read off N_c(300 K) gives N_c at every temperature."""
    material = load_material(name)
    (band,) = material.bands(carrier)
    density = material.Nc if carrier == "electron" else material.Nv
    T = np.array([20.0, 77.0, 300.0, 650.0])
    assert effective_density(parabolic_counterpart(band), T) == pytest.approx(density(T), rel=1e-12)


def test_the_mass_polynomial_dos_agrees_at_300K():
    # Si: N_c(T) follows a temperature-dependent mass (Couderc et al. 2014); the band holds
    # its 300 K value, 1.09 m0 (M. A. Green, J. Appl. Phys. 67, 2944 (1990))
    si = load_material("Si")
    (band,) = si.bands("electron")
    assert band.mass == pytest.approx(1.09, abs=0.005)
    assert float(effective_density(band, 300.0)) == pytest.approx(float(si.Nc(300.0)), rel=1e-12)


def test_effective_density_from_the_mass_by_scipy_constants():
    # N_c = 2 (m m0 k T / (2 pi hbar^2))^(3/2), evaluated here with CODATA constants
    gaas = load_material("GaAs")
    mass = gaas.dos_mass("electron")
    expected = 2 * (mass * sc.m_e * sc.k * 300.0 / (2 * math.pi * sc.hbar**2)) ** 1.5
    assert expected == pytest.approx(float(gaas.Nc(300.0)), rel=1e-8)


# (material, m* of the Gamma valley over m0 from Vurgaftman, Meyer & Ram-Mohan, J. Appl.
#  Phys. 89, 5815 (2001), E_g at 300 K in eV with its source)
KANE = [
    ("GaAs", 0.067, 1.424, "Ioffe NSM archive; Sze & Ng 2007"),
    ("InAs", 0.026, 0.354, "Ioffe NSM archive"),
    ("InP", 0.0795, 1.344, "Ioffe NSM archive (spread 1.344-1.353)"),
    # In0.53Ga0.47As: 0.47 m(GaAs) + 0.53 m(InAs) - 0.47 * 0.53 * 0.0091 (bowing, same source)
    ("InGaAs", 0.47 * 0.067 + 0.53 * 0.026 - 0.47 * 0.53 * 0.0091, 0.74, "Goetz et al. 1983"),
]


@pytest.mark.parametrize("name, mass, gap, gap_source", KANE, ids=[k[0] for k in KANE])
def test_kane_coefficient_is_the_two_band_estimate(name, mass, gap, gap_source):
    """alpha = (1 - m*/m0)^2 / E_g (E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957)); the
    files round it and use their own 300 K gap, within 1 % of the published gaps'."""
    shape = load_material(name).band_shape("electron")
    assert shape.model == "kane"
    assert shape.nonparabolicity * sc.e == pytest.approx((1 - mass) ** 2 / gap, rel=0.01)


def test_kane_band_without_nonparabolicity_is_the_parabolic_band():
    """alpha = 0: n = N_c F_1/2(eta), F_1/2(eta) = -Li_3/2(-e^eta) (mpmath polylog)."""
    material = material_from_mapping(
        {
            "density_of_states": {"Nc300": "4.7e17 cm-3", "Nv300": "9e18 cm-3"},
            "bands": {"electron": {"band_model": "kane", "nonparabolicity": "0 1/eV"}},
        }
    )
    (band,) = material.bands("electron")
    assert isinstance(band, KaneBand) and band.alpha == 0.0
    eta = np.array([-8.0, -1.0, 0.0, 2.5, 12.0])
    expected = [
        float(material.Nc(300.0)) * float(mpmath.re(-mpmath.polylog(1.5, -mpmath.exp(e))))
        for e in eta
    ]
    assert carrier_density(band, eta, 300.0) == pytest.approx(expected, rel=1e-12)
    assert carrier_density(band, eta, 300.0) == pytest.approx(
        carrier_density(parabolic_counterpart(band), eta, 300.0), rel=1e-12
    )


def test_inas_fermi_level_with_its_kane_band():
    """E_F - E_C of n = 1e19 cm^-3 InAs at 300 K from mpmath quadrature of the Kane density
    of states D(E) = (1/2 pi^2)(2 m/hbar^2)^(3/2) sqrt(E(1 + aE)) (1 + 2aE) (Kane 1957),
    and the parabolic one; issue 15 estimates about 0.37 eV against 0.74 eV (no source)."""
    inas = load_material("InAs")
    (band,) = inas.bands("electron")
    kT = sc.k * 300.0
    prefactor = (2 * band.mass * sc.m_e * kT / sc.hbar**2) ** 1.5 / (2 * math.pi**2)
    n = 1e19 * PER_CM3
    mpmath.mp.dps = 30

    def density(eta, akT):  # x = E/kT, akT = alpha kT
        def dos(x):
            return mpmath.sqrt(x * (1 + akT * x)) * (1 + 2 * akT * x)

        fermi = lambda x: dos(x) / (1 + mpmath.exp(x - eta))  # noqa: E731
        return prefactor * mpmath.quad(fermi, [0, max(eta, 1), max(eta, 1) + 80])

    for alpha, roughly in ((band.alpha, 0.37), (0.0, 0.74)):
        eta_ref = mpmath.findroot(lambda e: density(e, alpha * kT) / n - 1, roughly * sc.e / kT)
        shape = KaneBand(3, band.mass, alpha) if alpha else parabolic_counterpart(band)
        assert float(eta_from_density(shape, n, 300.0)) == pytest.approx(float(eta_ref), rel=1e-9)
        assert float(eta_ref) * kT / sc.e == pytest.approx(roughly, abs=0.02)


def test_2d_effective_density_of_gaas():
    """N_2D = g_v m* kT / (pi hbar^2) = 7.24e11 cm^-2 for m* = 0.067 at 300 K (CODATA via
    scipy.constants; issue 15's check value)."""
    (band,) = load_material("GaAs/AlGaAs").bands("electron")
    expected = 0.067 * sc.m_e * sc.k * 300.0 / (math.pi * sc.hbar**2)
    assert float(effective_density(band, 300.0)) == pytest.approx(expected, rel=1e-12)
    assert expected / PER_CM2 == pytest.approx(7.24e11, rel=1e-3)


def test_gan_channel_eta_at_1e13():
    """n_s = N_2D ln(1 + e^eta) (T. Ando, A. B. Fowler and F. Stern, Rev. Mod. Phys. 54, 437
    (1982)): eta = ln(e^(n_s/N_2D) - 1), about +4.6 for m* = 0.2 at 1e13 cm^-2 (issue 15)."""
    bands = load_material("GaN/AlGaN").bands("electron")
    n_s = 1e13 * PER_CM2
    N2D = 0.20 * sc.m_e * sc.k * 300.0 / (math.pi * sc.hbar**2)
    expected = math.log(math.expm1(n_s / N2D))
    assert float(eta_from_density(bands, n_s, 300.0)) == pytest.approx(expected, rel=1e-10)
    assert expected == pytest.approx(4.6, abs=0.1)


def test_si_inversion_layer_has_two_valleys_of_the_transverse_mass():
    # lowest subband of Si(100): g_v = 2, m_t = 0.19 m0 (Ando, Fowler & Stern 1982, sec. II)
    (band,) = load_material("Si(100) inversion").bands("electron")
    assert (band.valley_degeneracy, band.mass) == (2.0, 0.19)
    expected = 2 * 0.19 * sc.m_e * sc.k * 300.0 / (math.pi * sc.hbar**2)
    assert float(effective_density(band, 300.0)) == pytest.approx(expected, rel=1e-12)


def test_subband_ladder():
    # two subbands 25 meV apart: n = N_2D [ln(1 + e^eta) + ln(1 + e^(eta - 25 meV/kT))]
    gaas = load_material("GaAs-AlGaAs")
    bands = gaas.bands("electron", subband_energies=[0.0, 0.025 * sc.e])
    kT = sc.k * 300.0
    N2D = 0.067 * sc.m_e * kT / (math.pi * sc.hbar**2)
    expected = N2D * (math.log1p(math.exp(1.0)) + math.log1p(math.exp(1.0 - 0.025 * sc.e / kT)))
    assert float(carrier_density(bands, 1.0, 300.0)) == pytest.approx(expected, rel=1e-12)


def test_graphene_intrinsic_density():
    """n_i = (pi/6)(kT/hbar v_F)^2, about 8e10 cm^-2 at 300 K for v_F = 1e8 cm/s (T. Fang,
    A. Konar, H. Xing and D. Jena, Appl. Phys. Lett. 91, 092109 (2007))."""
    graphene = load_material("graphene")
    (band,) = graphene.bands("electron")
    assert graphene.bands("hole") == (band,)
    expected = math.pi / 6 * (sc.k * 300.0 / (sc.hbar * 1.0e6)) ** 2
    assert float(dirac_intrinsic_density(band, 300.0)) == pytest.approx(expected, rel=1e-12)
    assert expected / PER_CM2 == pytest.approx(8e10, rel=0.02)
    assert graphene.band_gap is None and graphene.dopants == {}


def test_a_2d_material_has_no_bulk_bands():
    with pytest.raises(InputError, match="2D material; it has no 3D bands"):
        load_material("graphene").bands("electron", 3)
    with pytest.raises(InputError, match="no subband ladder"):
        load_material("graphene").bands("electron", subband_energies=[0.0])
    with pytest.raises(InputError, match="no subbands"):
        load_material("GaAs").bands("electron", 3, subband_energies=[0.0])
    with pytest.raises(MissingParameterError, match="describes no hole band"):
        load_material("GaN-AlGaN").bands("hole")


def test_typical_mobility_ranges_carry_their_source():
    for name in ("GaAs-AlGaAs", "GaN-AlGaN", "InGaAs-QW", "Si100-inversion", "graphene"):
        span = load_material(name).typical_mobility["electron"]
        assert 0 < span.low < span.high and span.T == 300.0 and span.source, name


BULK_TEXT = "  band_gap: {Eg0: 1.1 eV}\n  density_of_states: {Nc300: 1e19 cm-3, Nv300: 1e19 cm-3}\n"
BAD_BANDS = [
    (
        BULK_TEXT,
        "bands: {electron: {band_model: kane, dos_mass: 0.05}}",
        "missing 'nonparabolicity'",
    ),
    (BULK_TEXT, "bands: {electron: {band_model: kane, nonparabolicity: 0.6}}", "with its unit"),
    (BULK_TEXT, "bands: {electron: {band_model: kane, nonparabolicity: -1 1/eV}}", "from 0 to 100"),
    (
        BULK_TEXT,
        "bands: {electron: {band_model: kane, nonparabolicity: 6 cm/s}}",
        "e.g. '0.61 1/eV'",
    ),
    (BULK_TEXT, "bands: {electron: {band_model: quartic}}", "band_model must be one of"),
    (
        BULK_TEXT,
        "bands: {electron: {dos_mass: 0.1, fermi_velocity: 1e8 cm/s}}",
        "belongs to band_model linear",
    ),
    (BULK_TEXT, "bands: {electron: {valley_degeneracy: 0}}", "must be above 0"),
    (
        "  permittivity: 6\n",
        "bands: {electron: {band_model: linear, fermi_velocity: 1e8 cm/s}}",
        "add dimensionality: 2",
    ),
    (
        "  dimensionality: 2\n",
        "bands: {electron: {band_model: parabolic}}",
        "needs its in-plane dos_mass",
    ),
    (
        "  dimensionality: 2\n",
        "bands: {electron: {band_model: linear, fermi_velocity: 0 cm/s}}",
        "must be above 0",
    ),
    ("  bands: {electron: {dos_mass: 0.2}}\n", "dimensionality: 4", "must be from 2 to 3"),
    ("  bands: {electron: {dos_mass: 0.2}}\n", "dimensionality: two", "whole number"),
    (
        "  bands: {electron: {dos_mass: 0.2}}\n  dimensionality: 2\n",
        "density_of_states: {Nc300: 1e19 cm-3, Nv300: 1e19 cm-3}",
        "bulk (per volume)",
    ),
    (
        "  bands: {electron: {band_model: linear, fermi_velocity: 1e8 cm/s}}\n"
        "  dimensionality: 2\n",
        "band_gap: {Eg0: 0.1 eV}",
        "a linear band has no gap",
    ),
    (BULK_TEXT, "typical_mobility: {electron: [900 cm^2/(V*s), 100 cm-3]}", "unit of density"),
]


@pytest.mark.parametrize("before, line, message", BAD_BANDS, ids=[b[2] for b in BAD_BANDS])
def test_bad_band_description_names_file_and_line(before, line, message):
    text = f"name: invented\nmaterial:\n{before}  {line}\ntemperature: 300 K\n"
    result = parse_calculations(text, "calc.yaml")
    assert result.calculations == [] and len(result.errors) == 1, result.errors
    error = result.errors[0]
    assert message in error, error
    assert error.startswith(f"calc.yaml:{text.splitlines().index('  ' + line) + 1}:"), error


def test_a_linear_band_is_shared_by_both_carriers():
    with pytest.raises(InputError, match="shared by electrons and holes"):
        material_from_mapping(
            {
                "dimensionality": 2,
                "bands": {
                    "electron": {"band_model": "linear", "fermi_velocity": "1e8 cm/s"},
                    "hole": {"dos_mass": 0.3},
                },
            }
        )


def test_the_listing_shows_bands_and_sources():
    from test_cli import run

    result = run("materials", "graphene", "InAs", "GaN/AlGaN")
    assert result.returncode == 0, result.stderr
    out = result.stdout
    assert "graphene — monolayer graphene; 2D sheet or channel" in out
    assert "linear, zero gap, v_F = 1e+08 cm/s, 2 valleys" in out
    assert "kane, DOS mass 0.0229 m0 (from N_c), 1 valley, alpha = 2.68 1/eV" in out
    assert "from: two-band Kane estimate" in out and "Castro Neto" in out
    assert "typical electron μ 1000-2200 cm^2/(V*s) at 300 K" in out
    missing = run("materials", "Unobtainium")
    assert missing.returncode == 2 and "Traceback" not in missing.stderr
