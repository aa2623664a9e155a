"""The intrinsic-onset temperature of a user material that lacks band data says what is
missing (MissingParameterError naming the parameter), never a Python TypeError from a call
of the absent fit."""

import pytest
from test_materials import _minimal_user_material

from checker import MissingParameterError
from checker.inputs.material_catalog import material_from_mapping
from checker.physics.carriers import intrinsic_onset_temperature

PER_CM3 = 1e6


@pytest.mark.parametrize("block,parameter", [("band_gap", "band_gap"), ("density_of_states", "Nc")])
def test_onset_names_the_missing_parameter(block, parameter):
    data = _minimal_user_material()
    del data[block]
    material = material_from_mapping(data)
    with pytest.raises(MissingParameterError, match=f"'{parameter}'.*intrinsic-onset"):
        intrinsic_onset_temperature(material, 1e16 * PER_CM3)
