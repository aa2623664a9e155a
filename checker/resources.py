"""Locations of the data that ship inside the package.

Installed, the rule files are the package ``checker.rules`` (pyproject maps the
repository's ``rules/`` there).  Run from a source checkout without that mapping (the
repository root on ``sys.path``, e.g. ``python -m checker`` there after a plain
``pip install .``, whose installed copy the local ``checker/`` folder shadows), the
rule files are the ``rules/`` folder beside the package.
"""

from __future__ import annotations

from importlib.util import find_spec
from pathlib import Path

_PACKAGE = Path(__file__).resolve().parent
_CHECKOUT_RULES = _PACKAGE.parent / "rules"


def rules_dir() -> Path:
    """The directory of the declarative rule files (``rules/`` in the repository); the
    package is installed unpacked (a plain folder), so it is a filesystem path.  Found by
    the import system's spec (importlib.resources and the modules it pulls in cost a
    one-file check some milliseconds of start-up)."""
    spec = find_spec("checker.rules")
    if spec is not None and spec.submodule_search_locations:
        return Path(next(iter(spec.submodule_search_locations)))
    if (_CHECKOUT_RULES / "__init__.py").is_file():
        return _CHECKOUT_RULES
    raise ModuleNotFoundError("No module named 'checker.rules'", name="checker.rules")


def materials_dir() -> Path:
    """The directory of the built-in material data files (inside the package folder)."""
    return _PACKAGE / "data" / "materials"
