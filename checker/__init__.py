"""regimecheck: finds where the shortcuts of a semiconductor calculation leave their regime.

The import package is ``checker``; the command is ``regimecheck``.  Units in
the Python API are SI (m^-3, m^2/(V s), K); see ``checker.api.PER_CM3``.

The public names are loaded on first use, so ``import checker.physics.fermi`` loads
numpy only (not the readers, YAML or the engine), and the command starts quickly.
"""

from __future__ import annotations

from importlib import import_module

_WHERE = {
    **dict.fromkeys(
        (
            "CM2_PER_VS",
            "PER_CM3",
            "builtin_materials",
            "carrier_transport",
            "check_paths",
            "load_material",
            "regime_label",
            "solve_equilibrium",
            "state_summary",
        ),
        ".api",
    ),
    **dict.fromkeys(
        (
            "ConvergenceError",
            "InputError",
            "MissingParameterError",
            "RegimecheckError",
            "UnknownDopantError",
            "UnknownMaterialError",
        ),
        ".errors",
    ),
    "State": ".physics.equilibrium",
    **dict.fromkeys(
        ("fermi_dirac", "inverse_fermi_dirac_half", "log_fermi_dirac"), ".physics.fermi"
    ),
}

__all__ = sorted(_WHERE) + ["__version__"]


def __getattr__(name: str):
    if name == "__version__":
        from importlib import metadata

        try:
            return metadata.version("regimecheck")
        except metadata.PackageNotFoundError:  # a source tree that was never installed
            return "0+unknown"
    if name in _WHERE:
        value = getattr(import_module(_WHERE[name], __name__), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
