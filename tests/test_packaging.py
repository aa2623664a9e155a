"""The wheel carries every subpackage, the material data and the rules folder."""

import shutil
import subprocess
import sys
import tomllib
import zipfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_every_subpackage_is_listed_in_pyproject():
    config = tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"]
    listed = set(config["packages"])
    found = {
        ".".join(p.parent.relative_to(ROOT).parts) for p in (ROOT / "checker").rglob("__init__.py")
    }
    assert found <= listed, f"add to pyproject packages: {sorted(found - listed)}"
    assert config["package-dir"]["checker.rules"] == "rules"


def test_wheel_contains_rules_and_materials(tmp_path):
    # an isolated build, as pip does for a user (fetches setuptools from the package index)
    build = subprocess.run(
        [sys.executable, "-m", "pip", "wheel", "--no-deps", "-q", "-w", str(tmp_path), str(ROOT)],
        capture_output=True,
        text=True,
    )
    assert build.returncode == 0, build.stderr[-2000:]
    wheel = next(tmp_path.glob("regimecheck-*.whl"))
    names = zipfile.ZipFile(wheel).namelist()
    assert "checker/rules/README.md" in names
    for material in ("Si", "Ge", "GaAs", "InP", "GaN", "4H-SiC", "InAs", "InGaAs"):
        assert f"checker/data/materials/{material}.yaml" in names
    assert "checker/report/state_report.py" in names
    assert "checker/physics/_fd_tables.py" in names


def test_a_source_checkout_finds_its_rule_files(tmp_path):
    # `python -m checker` from a checkout whose checker/ shadows the installed package (a
    # plain `pip install .`, then run from the repository root) exited 3 when the rules
    # were found only as the installed package checker.rules: the checkout's rules/ serve
    shutil.copytree(
        ROOT / "checker", tmp_path / "checker", ignore=shutil.ignore_patterns("__pycache__")
    )
    shutil.copytree(ROOT / "rules", tmp_path / "rules")
    code = (
        "import sys\n"
        # no installed or editable mapping of checker.rules: only the checkout
        "sys.meta_path[:] = [f for f in sys.meta_path if 'ditable' not in repr(f)]\n"
        f"sys.path.insert(0, {str(tmp_path)!r})\n"
        "import checker.cli\n"
        f"assert checker.cli.__file__.startswith({str(tmp_path)!r})\n"
        "sys.exit(checker.cli.main(['rules']))\n"
    )
    done = subprocess.run(
        [sys.executable, "-c", code], cwd=tmp_path, capture_output=True, text=True
    )
    assert done.returncode == 0, done.stderr
    assert "VAL05" in done.stdout and "CARR01" in done.stdout
