"""regimecheck: finds where the shortcuts of a semiconductor calculation leave their regime.

The import package is ``checker``; the command is ``regimecheck``.  Units in
the Python API are SI (m^-3, m^2/(V s), K); see ``checker.api.PER_CM3``.
"""
from .api import (CM2_PER_VS, PER_CM3, builtin_materials, carrier_transport, check_paths,
                  load_material, regime_label, solve_equilibrium, state_summary)
from .errors import (ConvergenceError, InputError, MissingParameterError, RegimecheckError,
                     UnknownDopantError, UnknownMaterialError)
from .physics.equilibrium import State
from .physics.fermi import fermi_dirac, inverse_fermi_dirac_half, log_fermi_dirac

__version__ = "0.1.0"

__all__ = [
    "CM2_PER_VS", "PER_CM3", "ConvergenceError", "InputError", "MissingParameterError",
    "RegimecheckError", "State", "UnknownDopantError", "UnknownMaterialError",
    "builtin_materials", "carrier_transport", "check_paths", "fermi_dirac", "inverse_fermi_dirac_half",
    "load_material", "log_fermi_dirac", "regime_label", "solve_equilibrium", "state_summary",
]
