"""The tree passes the linter and the formatter configured in pyproject.toml ([tool.ruff]),
in the package, tests, tools and benches, and the type checker on the files [tool.mypy]
names (strict for physics/); .ci/run also runs all three before the suite."""

import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
TREE = ["checker", "tests", "tools", "bench"]


def _run(*command):
    return subprocess.run(
        [sys.executable, "-m", *command],
        cwd=ROOT,
        capture_output=True,
        text=True,
        timeout=120,
    )


def test_ruff_finds_nothing():
    done = _run("ruff", "check", *TREE)
    assert done.returncode == 0, done.stdout + done.stderr


def test_tree_is_formatted():
    done = _run("ruff", "format", "--check", *TREE)
    assert done.returncode == 0, done.stdout + done.stderr


def test_mypy_finds_nothing():
    # the file set and the per-module strictness come from pyproject.toml ([tool.mypy])
    done = _run("mypy")
    assert done.returncode == 0, done.stdout + done.stderr
