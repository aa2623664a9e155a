"""The tree passes the linter configured in pyproject.toml ([tool.ruff]): no unused or
undefined names, no syntax errors, in the package, tests, tools and benches."""
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_ruff_finds_nothing():
    done = subprocess.run([sys.executable, "-m", "ruff", "check", "checker", "tests", "tools",
                           "bench"], cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stdout + done.stderr
