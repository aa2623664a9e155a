"""Material data against published handbook values (sources named per check)."""
import math

import pytest
import scipy.constants as sc

from checker import InputError, MissingParameterError, builtin_materials, load_material, solve_equilibrium
from checker.inputs.material_catalog import material_from_mapping, missing_parameters
from conftest import PER_CM3

EV = sc.e
CM2 = 1e-4


def test_all_eight_materials_are_built_in():
    assert set(builtin_materials()) == {"Si", "Ge", "GaAs", "InP", "GaN", "4H-SiC", "InAs", "InGaAs"}


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


def test_silicon_varshni_fit():
    # Thurmond 1975 / Ioffe: Eg = 1.17 - 4.73e-4 T^2/(T + 636) eV
    si = load_material("Si")
    for T in (77.0, 300.0, 600.0):
        assert float(si.band_gap(T)) / EV == pytest.approx(1.17 - 4.73e-4 * T * T / (T + 636), rel=1e-12)


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
    # N_c(m* = m0, 300 K) = 2 (2 pi m0 kT / h^2)^(3/2) = 2.5094e19 cm^-3 (references.md §7);
    # Si N_c = 2.86e19 corresponds to m_dos = 1.09 m0 (Green 1990)
    nc0 = 2 * (2 * math.pi * sc.m_e * sc.k * 300 / sc.h ** 2) ** 1.5 / PER_CM3
    assert nc0 == pytest.approx(2.5094e19, rel=1e-4)
    si = load_material("Si")
    assert (float(si.Nc(300.0)) / PER_CM3 / nc0) ** (2 / 3) == pytest.approx(1.09, abs=0.005)


class TestSiliconMobility:
    def test_masetti_phosphorus_worked_example(self):
        # Van Zeghbroeck, Principles of Semiconductor Devices, mobility example:
        # Si, 1e18 cm^-3 phosphorus, Masetti parameters -> mu_n ~ 277 cm^2/Vs
        si = load_material("Si")
        mu = si.electron.low_field(1e18 * PER_CM3, 300.0, model="masetti_P") / CM2
        assert mu == pytest.approx(277, abs=1.0)

    @pytest.mark.parametrize("N", [1e14, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21])
    def test_masetti_formula_with_published_table(self, N):
        # Masetti, Severi & Solmi, IEEE TED 30, 764 (1983), Table I and eqs. 1, 4
        si = load_material("Si")
        e_as = 52.2 + (1417 - 52.2) / (1 + (N / 9.68e16) ** 0.680) - 43.4 / (1 + (3.43e20 / N) ** 2.0)
        h_b = (44.9 * math.exp(-9.23e16 / N) + 470.5 / (1 + (N / 2.23e17) ** 0.719)
               - 29.0 / (1 + (6.10e20 / N) ** 2.0))
        # (the 300 K fits are carried to other temperatures by Arora's ratio: exact at 300 K)
        assert si.electron.low_field(N * PER_CM3, 300.0, species="As") / CM2 == pytest.approx(e_as, rel=1e-12)
        assert si.hole.low_field(N * PER_CM3, 300.0, model="masetti_B") / CM2 == pytest.approx(h_b, rel=1e-12)

    def test_arora_low_doping_limits(self):
        # Arora, Hauser & Roulston 1982: mu(N -> 0, 300 K) = 88 + 7.4e8 * 300^-2.33
        # = 1340 (electrons) and 54.3 + 1.36e8 * 300^-2.23 = 461 (holes) cm^2/Vs
        si = load_material("Si")
        assert si.electron.low_field(0.0, 300.0, model="arora") / CM2 == pytest.approx(1340, abs=2)
        assert si.hole.low_field(0.0, 300.0, model="arora") / CM2 == pytest.approx(461, abs=2)

    def test_canali_field_exponent(self):
        # Canali et al. 1975: beta = 2.57e-2 T^0.66 (e), 0.46 T^0.17 (h);
        # 1.109 / 1.213 at 300 K (Garfield++ defaults) and 1.0916 / 1.2081 at 293 K
        # (allpix-squared user manual worked example)
        si = load_material("Si")
        assert float(si.electron.beta(300.0)) == pytest.approx(1.109, abs=5e-4)
        assert float(si.hole.beta(300.0)) == pytest.approx(1.213, abs=5e-4)
        assert float(si.electron.beta(293.0)) == pytest.approx(1.0916, abs=1e-4)
        assert float(si.hole.beta(293.0)) == pytest.approx(1.2081, abs=1e-4)

    @pytest.mark.parametrize("T", [77.0, 300.0, 430.0])
    def test_saturation_velocity(self, T):
        # Canali et al., IEEE TED 22, 1045 (1975): v_m = 1.53e9 T^-0.87 cm/s (e),
        # 1.62e8 T^-0.52 cm/s (h), 77-430 K
        si = load_material("Si")
        assert float(si.electron.vsat(T)) * 100 == pytest.approx(1.53e9 * T ** -0.87, rel=1e-3)
        assert float(si.hole.vsat(T)) * 100 == pytest.approx(1.62e8 * T ** -0.52, rel=3e-3)


def test_sotoodeh_gaas_mobility():
    # Sotoodeh, Khalid & Rezazadeh, J. Appl. Phys. 87, 2890 (2000): GaAs electrons
    # mu = 500 + (9400 - 500)/(1 + (N/6e16)^0.394) at 300 K
    gaas = load_material("GaAs")
    for N in (1e15, 1e17, 1e19):
        expected = 500 + (9400 - 500) / (1 + (N / 6e16) ** 0.394)
        assert gaas.electron.low_field(N * PER_CM3, 300.0) / CM2 == pytest.approx(expected, rel=1e-12)


def test_band_gap_narrowing_slotboom():
    # Klaassen, Slotboom & de Graaff 1992 set (6.92 mV, 1.3e17, 0.5): 3.4, 29.1, 60.5,
    # 92.2 meV at 1e17..1e20 cm^-3 (references.md §5, computed from the formula)
    si = load_material("Si")
    for N, meV in [(1e17, 3.4), (1e18, 29.1), (1e19, 60.5), (1e20, 92.2)]:
        assert float(si.narrowing(N * PER_CM3, 0.0)) / EV * 1e3 == pytest.approx(meV, abs=0.06)


def test_mott_densities():
    si = load_material("Si")
    # measured: Si:P 3.74e18 (Rosenbaum et al. 1983), Si:B 4.06e18 (Dai et al. 1991)
    assert si.dopant("P").mott_density / PER_CM3 == pytest.approx(3.74e18)
    assert si.dopant("B").mott_density / PER_CM3 == pytest.approx(4.06e18)
    # n-GaAs: Edwards-Sienko estimate ~1.7e16, experiments 1-2e16 (references.md §4d)
    gaas = load_material("GaAs")
    assert 1.0e16 <= gaas.dopant("Si").mott_density / PER_CM3 <= 2.5e16
    assert gaas.dopant("Si").mott_estimated


def test_degeneracy_factors():
    # Sze & Ng 2007: g_D = 2, g_A = 4
    si = load_material("Si")
    assert si.dopant("P").degeneracy == 2 and si.dopant("B").degeneracy == 4


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


@pytest.mark.parametrize("field,value,text", [
    ("band_gap", {"Eg0": "1.0"}, "has no unit"),
    ("band_gap", {"Eg0": "1.0 cm-3"}, "unit of density where energy is expected"),
    ("band_gap", {"alpha": "3e-4 eV/K"}, "missing 'Eg0'"),
    ("dopants", {"D1": {"kind": "donor"}}, "missing 'energy'"),
    ("dopants", {"D1": {"kind": "neutral", "energy": "1 meV"}}, "kind must be"),
    ("colour", "blue", "unknown material field"),
])
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
