"""carriers.einstein_ratio: the parabolic Einstein ratio at a solved state, its 3D numerator
ln F_1/2 taken from the state (the solve keeps its neutrality check's) so that only
ln F_-1/2 is evaluated.  It must give transport.einstein_ratio's numbers to the bit at any
solved point, and F_1/2/F_-1/2 of mpmath (DLMF 25.12.16, tests/conftest.fd_reference)."""

import numpy as np
import pytest
from conftest import PER_CM3, fd_reference

from checker import load_material
from checker.physics import carriers, equilibrium, transport


@pytest.mark.parametrize(
    "material, donor, acceptor, narrowing",
    [
        ("Si", "P", "B", False),
        ("Si", "P", "B", True),
        ("GaAs", "Si", "Zn", False),
        ("Ge", "P", "B", False),
        ("InAs", "S", None, False),  # a Kane conduction band: its electrons take the fallback
        ("GaN", None, "Mg", False),
    ],
)
def test_the_ratio_at_a_state_is_the_relation_to_the_bit(material, donor, acceptor, narrowing):
    rng = np.random.default_rng(7)
    count = 4000
    T = rng.uniform(5.0, 900.0, count)
    donors = {donor: 10 ** rng.uniform(12, 21, count) * PER_CM3} if donor else {}
    acceptors = {acceptor: 10 ** rng.uniform(12, 21, count) * PER_CM3} if acceptor else {}
    state = equilibrium.solve(
        load_material(material), T, donors, acceptors, band_gap_narrowing=narrowing
    )
    for x, eta in (("n", state.eta_n), ("p", state.eta_p)):
        for dimension in (3, 2, 1):
            np.testing.assert_array_equal(
                carriers.einstein_ratio(state, x, dimension),
                transport.einstein_ratio(eta, dimension),
                err_msg=f"{material} {x} {dimension}D",
            )


def test_the_ratio_at_a_state_against_mpmath():
    # silicon from non-degenerate to degenerate electrons (eta_n about -20 ... +10)
    T = np.full(6, 300.0)
    state = equilibrium.solve(load_material("Si"), T, {"P": np.geomspace(1e13, 1e21, 6) * PER_CM3})
    assert state.eta_n.min() < -10 and state.eta_n.max() > 3
    got = carriers.einstein_ratio(state, "n")
    for eta, value in zip(state.eta_n, got, strict=True):
        expected = fd_reference(0.5, eta) / fd_reference(-0.5, eta)
        assert value == pytest.approx(float(expected), rel=1e-13)
