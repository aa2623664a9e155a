"""Locations of the data that ship inside the package (work after a plain install)."""
from __future__ import annotations

from importlib import resources


def rules_dir():
    """The directory of the declarative rule files (``rules/`` in the repository)."""
    return resources.files("checker.rules")


def materials_dir():
    """The directory of the built-in material data files."""
    return resources.files("checker") / "data" / "materials"
