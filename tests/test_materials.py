"""Material data against published handbook values (sources named per check)."""

import math

import pytest
import scipy.constants as sc
from conftest import PER_CM3
from reference import reference_solve

from checker import (
    InputError,
    MissingParameterError,
    builtin_materials,
    load_material,
    solve_equilibrium,
)
from checker.inputs.material_catalog import material_from_mapping, missing_parameters
from checker.physics.materials import MassPolynomialDOS, Provenance

EV = sc.e
CM2 = 1e-4


BULK = ["Si", "Ge", "GaAs", "InP", "GaN", "4H-SiC", "InAs", "InGaAs"]
CHANNELS = ["GaAs-AlGaAs", "GaN-AlGaN", "InGaAs-QW", "Si100-inversion", "graphene"]


def test_the_bulk_and_2d_materials_are_built_in():
    assert set(builtin_materials()) == set(BULK + CHANNELS)


@pytest.mark.parametrize("name", ["Si", "Ge", "GaAs", "InP", "GaN", "4H-SiC", "InAs", "InGaAs"])
def test_every_parameter_names_its_source(name):
    material = load_material(name)
    assert material.band_gap.provenance.source
    assert material.Nc.provenance.source
    for dopant in material.dopants.values():
        assert dopant.provenance.source
    for carrier in (material.electron, material.hole):
        for model in carrier.mobility.values():
            assert model.provenance.source


# (material, published E_g at 300 K in eV, tolerance, source)
GAPS = [
    ("Si", 1.12, 0.006, "Ioffe NSM archive; Bludau et al. 1974: 1.1242"),
    ("Ge", 0.661, 0.002, "Ioffe NSM archive"),
    ("GaAs", 1.424, 0.002, "Ioffe NSM archive; Sze & Ng 2007"),
    ("InP", 1.344, 0.01, "Ioffe NSM archive (spread 1.344-1.353)"),
    ("GaN", 3.39, 0.05, "Ioffe NSM archive (spread 3.39-3.44)"),
    ("4H-SiC", 3.23, 0.04, "Ioffe NSM archive (from memory; Kimoto & Cooper 3.26)"),
    ("InAs", 0.354, 0.002, "Ioffe NSM archive"),
    ("InGaAs", 0.74, 0.002, "Goetz et al. 1983 via the Ioffe NSM archive"),
]


@pytest.mark.parametrize("name,gap,tol,source", GAPS, ids=[g[0] for g in GAPS])
def test_band_gap_at_300K(name, gap, tol, source):
    assert float(load_material(name).band_gap(300.0)) / EV == pytest.approx(gap, abs=tol)


# (material, published n_i at 300 K in cm^-3, relative tolerance covering the spread, source)
INTRINSIC = [
    ("Ge", 2.0e13, 0.15, "Ioffe NSM archive 2.0e13; Sze 1981 2.4e13"),
    ("GaAs", 2.1e6, 0.20, "Ioffe NSM archive / Sze & Ng 2.1e6; Sze 1981 1.79e6"),
    ("InP", 1.3e7, 0.25, "Ioffe NSM archive 1.3e7"),
    ("InAs", 1.0e15, 0.25, "Ioffe NSM archive 1e15"),
    ("InGaAs", 6.3e11, 0.30, "Ioffe NSM archive 6.3e11"),
]


@pytest.mark.parametrize("name,ni,tol,source", INTRINSIC, ids=[i[0] for i in INTRINSIC])
def test_intrinsic_density_at_300K(name, ni, tol, source):
    state = solve_equilibrium(name, 300.0)
    assert float(state.n) / PER_CM3 == pytest.approx(ni, rel=tol)


def test_effective_density_of_states_prefactor():
    # N_c = 2 (2 pi m kT / h^2)^(3/2) is 25.09e18 cm^-3 for m = m0 at 300 K (nextnano3
    # tutorial "Electron concentration in doped semiconductors", section 1)
    unit_mass = MassPolynomialDOS((1.0,), 1e9, Provenance("test"))
    assert float(unit_mass(300.0)) / PER_CM3 == pytest.approx(25.09e18, rel=2e-4)
    # Si N_c = 2.86e19 corresponds to m_dos = 1.09 m0 (Green, J. Appl. Phys. 67, 2944 (1990))
    si = load_material("Si")
    assert (float(si.Nc(300.0)) / float(unit_mass(300.0))) ** (2 / 3) == pytest.approx(
        1.09, abs=0.005
    )


class TestSiliconMobility:
    def test_masetti_phosphorus_worked_example(self):
        # Van Zeghbroeck, Principles of Semiconductor Devices, mobility example:
        # Si, 1e18 cm^-3 phosphorus, Masetti parameters -> mu_n ~ 277 cm^2/Vs
        si = load_material("Si")
        mu = si.electron.low_field(1e18 * PER_CM3, 300.0, model="masetti_P") / CM2
        assert mu == pytest.approx(277, abs=1.0)

    def test_canali_field_exponent(self):
        # Canali et al. 1975: beta = 2.57e-2 T^0.66 (e), 0.46 T^0.17 (h);
        # 1.109 / 1.213 at 300 K (Garfield++ defaults) and 1.0916 / 1.2081 at 293 K
        # (allpix-squared user manual worked example)
        si = load_material("Si")
        assert float(si.electron.beta(300.0)) == pytest.approx(1.109, abs=5e-4)
        assert float(si.hole.beta(300.0)) == pytest.approx(1.213, abs=5e-4)
        assert float(si.electron.beta(293.0)) == pytest.approx(1.0916, abs=1e-4)
        assert float(si.hole.beta(293.0)) == pytest.approx(1.2081, abs=1e-4)

    def test_saturation_velocity_at_293K(self):
        # Canali et al. (1975) saturation velocities at 293 K as printed in the allpix-squared
        # user manual ("Charge Carrier Mobility", custom model replicating Jacoboni-Canali at
        # T = 293 K): v_m = 1.0927393e7 cm/s (electrons), 8.447804e6 cm/s (holes)
        si = load_material("Si")
        assert float(si.electron.vsat(293.0)) * 100 == pytest.approx(1.0927393e7, rel=2e-5)
        assert float(si.hole.vsat(293.0)) * 100 == pytest.approx(8.447804e6, rel=2e-5)


@pytest.mark.parametrize(
    "species, published, source",
    [
        ("P", 3.74e18, "Rosenbaum et al., Phys. Rev. B 27, 7509 (1983)"),
        ("B", 4.06e18, "Dai, Zhang & Sarachik, Phys. Rev. Lett. 66, 1914 (1991) (from memory)"),
    ],
)
def test_metallic_from_the_measured_mott_density(species, published, source):
    # the solve calls silicon metallic from the measured metal-insulator transition on
    group = "donors" if species == "P" else "acceptors"
    for factor, metallic in ((0.999, False), (1.001, True)):
        state = solve_equilibrium("Si", 300.0, **{group: {species: factor * published * PER_CM3}})
        assert bool(state.metallic) is metallic, (species, factor, source)


def test_gaas_mott_density_estimate():
    # bulk n-GaAs: the Mott transition lies at "about 1e16 cm^-3" ("Experimental evidence of
    # a Mott transition in highly doped two-dimensional confined structures" (2004),
    # abstract); no measured value is tabulated, so the estimate must come out near it
    gaas = load_material("GaAs")
    assert gaas.dopant("Si").mott_estimated
    assert 0.5e16 <= gaas.dopant("Si").mott_density / PER_CM3 <= 2e16


@pytest.mark.parametrize("species, kind, degeneracy", [("P", "donor", 2), ("B", "acceptor", 4)])
def test_ground_state_degeneracy_in_freeze_out(species, kind, degeneracy):
    """Sze & Ng (2007), ch. 1: N_D+ = N_D / (1 + g_D e^((E_F - E_D)/kT)), g_D = 2, and
    N_A- = N_A / (1 + g_A e^((E_A - E_F)/kT)), g_A = 4.  At 1e14 cm^-3 about half the
    dopants are frozen out at 55 K, so the ionized fraction of the solve at the independently
    solved Fermi level (tests/reference.py) shows the factor; the level is the material's,
    its lowering and band-tail share change the fraction by < 1e-5 at this density."""
    si = load_material("Si")
    T, N = 55.0, 1e14 * PER_CM3
    group = {species: N}
    donors, acceptors = (group, {}) if kind == "donor" else ({}, group)
    state = solve_equilibrium(si, T, donors, acceptors)
    eta_n = reference_solve(si, T, donors, acceptors)
    kT = sc.k * T
    eta = eta_n if kind == "donor" else -eta_n - float(si.band_gap(T)) / kT
    expected = 1 / (1 + degeneracy * math.exp(eta + si.dopant(species).energy / kT))
    fraction = state.donor_fraction if kind == "donor" else state.acceptor_fraction
    assert 0.2 < expected < 0.9
    assert float(fraction) == pytest.approx(expected, rel=1e-4)


def _minimal_user_material():
    return {
        "name": "ExampleX",
        "band_gap": {"Eg0": "1.0 eV", "alpha": "3e-4 eV/K", "beta": "200 K"},
        "density_of_states": {"Nc300": "1e19 cm-3", "Nv300": "1e19 cm-3"},
        "permittivity": 10.0,
        "dopants": {"D1": {"kind": "donor", "energy": "20 meV"}},
    }


def test_user_defined_material_solves():
    material = material_from_mapping(_minimal_user_material())
    state = solve_equilibrium(material, 300.0, {"D1": 1e16 * PER_CM3})
    assert 0.9 < float(state.n) / (1e16 * PER_CM3) <= 1.0


def test_user_defined_material_reports_what_is_missing():
    material = material_from_mapping(_minimal_user_material())
    missing = missing_parameters(material)
    assert "mobility" in missing and "conductivity" in missing["mobility"]
    from checker import carrier_transport

    state = solve_equilibrium(material, 300.0, {"D1": 1e16 * PER_CM3})
    with pytest.raises(MissingParameterError, match="has no 'electron'.*needed for mobility"):
        carrier_transport(state)


@pytest.mark.parametrize(
    "field,value,text",
    [
        ("band_gap", {"Eg0": "1.0"}, "has no unit"),
        ("band_gap", {"Eg0": "1.0 cm-3"}, "unit of density where energy is expected"),
        ("band_gap", {"alpha": "3e-4 eV/K"}, "missing 'Eg0'"),
        ("dopants", {"D1": {"kind": "donor"}}, "missing 'energy'"),
        ("dopants", {"D1": {"kind": "neutral", "energy": "1 meV"}}, "kind must be"),
        ("colour", "blue", "unknown material field"),
    ],
)
def test_user_defined_material_bad_input(field, value, text):
    data = _minimal_user_material()
    data[field] = value
    with pytest.raises(InputError, match=text):
        material_from_mapping(data)


def test_no_solve_without_band_data():
    data = _minimal_user_material()
    del data["band_gap"]
    material = material_from_mapping(data)
    with pytest.raises(MissingParameterError, match="band_gap.*equilibrium"):
        solve_equilibrium(material, 300.0)


def test_shipped_data_is_found_from_another_directory(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    from checker.resources import materials_dir, rules_dir

    assert (materials_dir() / "Si.yaml").is_file()
    assert (rules_dir() / "README.md").is_file()


def test_name_index_agrees_with_full_parse():
    """The start-up index reads only the name/aliases lines; a full parse must agree."""
    import yaml

    from checker.inputs.material_catalog import _index
    from checker.resources import materials_dir

    expected = {}
    for path in materials_dir().glob("*.yaml"):
        data = yaml.safe_load(path.read_text(encoding="utf-8"))
        for key in [data["name"], *data.get("aliases", [])]:
            expected[str(key).lower()] = path.name
    assert _index() == expected
