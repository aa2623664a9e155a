"""What a console check of one file imports: nothing it does not use (start-up cost; the
speed itself is measured by bench/bench_startup.py, never asserted here)."""

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
unused = (
    "numpy.ma", "sympy", "matplotlib", "checker.engine.regime.sweep", "concurrent.futures"
)
print("loaded:" + ",".join(m for m in unused if m in sys.modules))
"""


def test_a_console_check_imports_neither_numpy_ma_nor_sympy_nor_matplotlib():
    # numpy.ma came in through np.unique without a return_* flag (numpy 2.4); the thread
    # pools (concurrent.futures) only serve large arrays; sympy and
    # matplotlib are for formulas' symbolic proofs and plots only; the sweep module for a
    # calculation with swept axes only (the example has none)
    example = ROOT / "examples" / "lc9_counterdoped_well.yaml"
    done = subprocess.run(
        [sys.executable, "-c", PROBE, str(example)], capture_output=True, text=True, check=True
    )
    (loaded,) = [line for line in done.stdout.splitlines() if line.startswith("loaded:")]
    assert loaded == "loaded:"
