"""What a console check of one file imports: nothing it does not use (start-up cost; the
speed itself is measured by bench/bench_startup.py, never asserted here)."""

import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

PROBE = """
import sys
from checker.cli import main
try:
    main(["check", sys.argv[1], "--exit-zero"])
except SystemExit:
    pass
unused = sys.argv[2].split(",")
print("loaded:" + ",".join(m for m in unused if m in sys.modules))
"""
# numpy.ma came in through np.unique without a return_* flag (numpy 2.4); the thread
# pools (concurrent.futures) only serve large arrays; sympy and matplotlib are for
# formulas' symbolic proofs and plots only; the sweep module for a calculation with swept
# axes only (the example has none); rich for progress bars and tables, not the console
# report; difflib for 'did you mean' hints, tomllib where a configuration exists, csv for
# tables, json for the JSON report; importlib.resources was only a path lookup,
# numpy.polynomial one polyval, shutil argparse's terminal width; the rule
# reader and what it validates with (field table, dimension check) only where the rule
# cache is cold or stale; argparse where the command line is a plain check (cli._arguments);
# PyYAML for the texts the line reader (inputs/plain_yaml.py) leaves to the composer
UNUSED = (
    "yaml",
    "argparse",
    "numpy.ma",
    "sympy",
    "matplotlib",
    "checker.engine.regime.sweep",
    "concurrent.futures",
    "rich",
    "difflib",
    "tomllib",
    "csv",
    "json",
    "importlib.resources",
    "numpy.polynomial",
    "shutil",
    "checker.engine.regime.rule_reader",
    "checker.engine.regime.rule_fields",
    "checker.engine.expressions.dimension_check",
)


def _loaded(cache: Path) -> str:
    example = ROOT / "examples" / "lc9_counterdoped_well.yaml"
    env = {**os.environ, "XDG_CACHE_HOME": str(cache)}
    done = subprocess.run(
        [sys.executable, "-c", PROBE, str(example), ",".join(UNUSED)],
        capture_output=True,
        text=True,
        check=True,
        env=env,
        cwd=ROOT,  # its pyproject.toml has no [tool.regimecheck] table
    )
    (loaded,) = [line for line in done.stdout.splitlines() if line.startswith("loaded:")]
    return loaded


def test_a_console_check_imports_nothing_it_does_not_use(tmp_path):
    first = _loaded(tmp_path)  # fills the rule cache: reads and validates the rule files
    assert "checker.engine.regime.rule_reader" in first
    assert _loaded(tmp_path) == "loaded:"
