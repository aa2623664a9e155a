"""Locations of the data that ship inside the package.

Installed, the rule files are the package ``checker.rules`` (pyproject maps the
repository's ``rules/`` there).  Run from a source checkout without that mapping (the
repository root on ``sys.path``, e.g. ``python -m checker`` there after a plain
``pip install .``, whose installed copy the local ``checker/`` folder shadows), the
rule files are the ``rules/`` folder beside the package.
"""

from __future__ import annotations

from importlib import resources
from pathlib import Path

_CHECKOUT_RULES = Path(__file__).resolve().parent.parent / "rules"


def rules_dir() -> Path:
    """The directory of the declarative rule files (``rules/`` in the repository); the
    package is installed unpacked (a plain folder), so it is a filesystem path."""
    try:
        return Path(str(resources.files("checker.rules")))
    except ModuleNotFoundError:
        if (_CHECKOUT_RULES / "__init__.py").is_file():
            return _CHECKOUT_RULES
        raise


def materials_dir() -> Path:
    """The directory of the built-in material data files."""
    return Path(str(resources.files("checker"))) / "data" / "materials"
