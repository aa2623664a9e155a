"""The tree passes the linter and the formatter configured in pyproject.toml ([tool.ruff]),
in the package, tests, tools and benches (.ci/run also runs both before the suite)."""

import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
TREE = ["checker", "tests", "tools", "bench"]


def _ruff(*args):
    return subprocess.run(
        [sys.executable, "-m", "ruff", *args, *TREE],
        cwd=ROOT,
        capture_output=True,
        text=True,
        timeout=120,
    )


def test_ruff_finds_nothing():
    done = _ruff("check")
    assert done.returncode == 0, done.stdout + done.stderr


def test_tree_is_formatted():
    done = _ruff("format", "--check")
    assert done.returncode == 0, done.stdout + done.stderr
