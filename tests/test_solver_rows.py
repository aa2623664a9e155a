"""The solve told its points' distinct temperatures and doping rows
(equilibrium.solve(temperatures=..., dopings=...), as a sweep's chunk is, from its grid)
evaluates the terms of T alone -- kT, E_g/kT, ln N_c, ln N_v, n_i -- once per temperature
and those of the doping alone (totals, the levels' ln N, lowered energies and bound
shares, ln of the net doping, Mott flags, narrowing) once per doping row, and gathers
them per point.

That must change no number: every array of the state is the one the plain solve gives, to
the bit, for power-law and Couderc band densities, several species and compensation, a
Kane conduction band and several bound levels (4H-SiC), in blocks on threads; with
band-gap narrowing the temperature rows are not used (the doping rows are).  At a few
points the solve is also held to the independent 40-digit bisection solve of
tests/reference.py (Sze & Ng, Physics of Semiconductor Devices, 3rd ed. (2007), ch. 1,
statistics written out there in mpmath).
"""

import numpy as np
import pytest
from reference import reference_solve

from checker.inputs.material_catalog import resolve_material
from checker.physics import equilibrium
from checker.physics.arrays import distinct_points

PER_CM3 = 1e6
RNG = np.random.default_rng(20261204)

CASES = [
    ("Si", ("P",), ()),
    ("Si", ("P", "As"), ("B",)),
    ("GaAs", ("Si",), ("C",)),
    ("Ge", (), ("Ga",)),
    ("InAs", ("S",), ()),
    ("4H-SiC", ("N",), ("Al",)),
]


def _grid(n_T, n_N, species):
    """A temperature x density grid, flattened with temperature slowest (a sweep's order),
    each species at its own random log-uniform densities (m^-3)."""
    T = np.repeat(np.linspace(40.0, 650.0, n_T), n_N)
    densities = {s: np.tile(10 ** RNG.uniform(13.0, 20.0, n_N) * PER_CM3, n_T) for s in species}
    return T, densities


def _arrays(state):
    """Every array a state holds or derives, by name."""
    names = ("eta_n", "residual", "metallic", "narrowing", "level_logs")
    derived = ("eta_p", "log_electron_factor", "log_hole_factor", "n", "p", "kT", "Eg", "ni", "Nc")
    derived += ("Nv", "donors_total", "acceptors_total")
    return {name: getattr(state, name) for name in names + derived}


def _rows(T, densities, which):
    """The keyword arguments giving the solve the rows ``which`` names."""
    rows = {}
    if "T" in which:
        rows["temperatures"] = distinct_points([T], T.size)
    if "N" in which:
        rows["dopings"] = distinct_points(list(densities.values()), T.size)
    return rows


@pytest.mark.parametrize(("name", "donors", "acceptors"), CASES)
@pytest.mark.parametrize("n_T", [7, 300])  # one block; several blocks on the threads
@pytest.mark.parametrize("which", ["T", "N", "TN"])
def test_rows_change_no_number(name, donors, acceptors, n_T, which):
    material = resolve_material(name)
    T, densities = _grid(n_T, 500, donors + acceptors)
    donor_densities = {s: densities[s] for s in donors}
    acceptor_densities = {s: densities[s] for s in acceptors}
    rows = _rows(T, densities, which)
    if "T" in which:
        assert rows["temperatures"][0].size == n_T
    if "N" in which and densities:
        assert rows["dopings"][0].size == 500
    plain = equilibrium.solve(material, T, donor_densities, acceptor_densities)
    on_rows = equilibrium.solve(material, T, donor_densities, acceptor_densities, **rows)
    for key, value in _arrays(plain).items():
        np.testing.assert_array_equal(_arrays(on_rows)[key], value, err_msg=key)


def test_with_narrowing_the_temperature_rows_are_not_used():
    """E_g/kT then depends on the doping: the temperature rows are ignored, the doping
    rows (the narrowing among their terms) used; the numbers are the plain solve's."""
    material = resolve_material("Si")
    T, densities = _grid(5, 40, ("P", "B"))
    plain = equilibrium.solve(material, T, {"P": densities["P"]}, {"B": densities["B"]}, True)
    on_rows = equilibrium.solve(
        material,
        T,
        {"P": densities["P"]},
        {"B": densities["B"]},
        band_gap_narrowing=True,
        **_rows(T, densities, "TN"),
    )
    assert plain.narrowing.max() > 0
    for key, value in _arrays(plain).items():
        np.testing.assert_array_equal(_arrays(on_rows)[key], value, err_msg=key)


def test_rows_of_another_length_are_refused():
    material = resolve_material("Si")
    T, densities = _grid(3, 4, ("P",))
    first, back = distinct_points([T], T.size)
    with pytest.raises(ValueError, match="one row per point"):
        equilibrium.solve(material, T, densities, temperatures=(first, back[:-1]))
    with pytest.raises(ValueError, match="one row per point"):
        equilibrium.solve(material, T, densities, dopings=(first, back[:-1]))


@pytest.mark.parametrize(("T", "density"), [(300.0, 1e16), (77.0, 3e17), (500.0, 1e14)])
def test_the_solve_on_rows_meets_the_independent_solve(T, density):
    """Silicon with phosphorus at three points of a grid (the published-statistics
    reference: 40-digit bisection on plain neutrality, tests/reference.py)."""
    material = resolve_material("Si")
    temps = np.array([T, T, 250.0])
    donors = {"P": np.array([density, density / 10, density]) * PER_CM3}
    state = equilibrium.solve(
        material,
        temps,
        donors,
        temperatures=distinct_points([temps], temps.size),
        dopings=distinct_points([donors["P"]], temps.size),
    )
    eta = reference_solve(material, float(T), {"P": density * PER_CM3}, {})
    assert abs(state.eta_n[0] - eta) <= 1e-9 * max(1.0, abs(eta))
