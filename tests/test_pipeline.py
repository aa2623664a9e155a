"""One pipeline for single points and sweeps, and imports that only go downwards.

- `state` and `check` name the same quantities alike (that reports are unchanged by a
  refactoring is shown by tools/compare_example_reports.py against the commit before it).
- Grid cells of a sweep give the findings of the same points checked one by one, and
  the 3kT rule fires on the grid exactly where an independent 40-digit solve puts the
  Fermi level within 3kT of the band edge.
- No module imports a layer above its own (physics < inputs < engine < report < api,
  cli), and the plots draw what the engine computed.
"""

import ast
import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from reference import K_B, ionized_fraction, mp_fermi_half
from test_sweep import TWO_AXES
from test_sweep import _calc as sweep_calculation

from checker import load_material
from checker.engine.findings import carrier_code
from checker.engine.regime import rulebook, sweep
from checker.engine.run import check_calculations

ROOT = Path(__file__).resolve().parents[1]


def _command(*args):
    """regimecheck ARGS from the repository's package."""
    code = "import sys\nimport checker.cli\nsys.exit(checker.cli.main(sys.argv[1:]))\n"
    done = subprocess.run(
        [sys.executable, "-c", code, *args], cwd=ROOT, capture_output=True, text=True
    )
    assert done.returncode in (0, 1), done.stderr
    return done.stdout


def test_check_and_state_name_the_mott_density_alike():
    state = json.loads(_command("state", "examples/ld310_emitter.yaml", "--format", "json"))
    check = json.loads(_command("check", "examples/ld310_emitter.yaml", "--format", "json"))
    shared = set(state["points"][0]["state"]) & set(check["calculations"][0]["state"])
    assert "above_mott_density" in shared and "metallic" not in shared
    assert len(shared) == len(check["calculations"][0]["state"])


def test_grid_cells_give_the_findings_of_single_points(tmp_path):
    calc = sweep_calculation(tmp_path, TWO_AXES)
    rules = rulebook.load_rules()
    report = check_calculations([calc]).reports[0]
    assert report.embodied  # the formula's assumptions reach the grid
    grid_points = sweep.grid(calc)
    masks, _ = sweep.rule_grid(calc, rules, report.embodied, grid_points)
    T, donors, acceptors, _ = grid_points
    silicon = load_material("Si")
    rng = np.random.default_rng(7)
    sides = set()
    for index in rng.choice(T.size, 25, replace=False):
        point = sweep.point(calc, T, donors, acceptors, index)
        single = {
            (f.rule, carrier_code(f.carrier))
            for f in check_calculations([point]).reports[0].findings
            if not f.rule.startswith("FORM")
        }
        on_grid = {
            (rule, x or None) for (rule, x), (mask, _) in masks.items() if mask.ravel()[index]
        }
        assert on_grid == single, (index, on_grid, single)
        # the 3kT rule (Sze & Ng 2007, ch. 1): the Fermi level lies above E_C - 3kT where
        # the 40-digit neutrality balance is still negative at eta_n = -3
        balance = _charge_at(
            silicon, -3, float(T[index]), float(donors["P"][index]), float(acceptors["B"][index])
        )
        assert (("STAT01", "n") in on_grid) is (balance < 0), (index, balance)
        sides.add(balance < 0)
    assert sides == {True, False}  # the sample has cells on both sides of 3kT


def _charge_at(material, eta, T, N_D, N_A):
    """n + N_A^- - p - N_D^+ of phosphorus and boron in 40 digits at eta_n = ``eta``
    (increasing in eta: the solve's eta_n lies above ``eta`` where this is negative);
    the statistics of tests/reference.py (reference_solve), evaluated at one eta."""
    import mpmath as mp

    with mp.workdps(40):
        kT = mp.mpf(K_B) * T
        eta_p = -eta - mp.mpf(float(material.band_gap(T))) / kT
        return float(
            mp.mpf(float(material.Nc(T))) * mp_fermi_half(eta)
            - mp.mpf(float(material.Nv(T))) * mp_fermi_half(eta_p)
            + N_A * ionized_fraction(material.dopant("B"), eta_p, kT, N_A)
            - N_D * ionized_fraction(material.dopant("P"), eta, kT, N_D)
        )


LAYERS = ["physics", "inputs", "engine", "report", "api|cli"]


def _modules(layer):
    if "|" in layer:
        return [f"checker.{name}" for name in layer.split("|")]
    folder = ROOT / "checker" / layer
    return [
        f"checker.{layer}.{p.stem}" for p in sorted(folder.glob("*.py")) if p.stem != "__init__"
    ] + [f"checker.{layer}"]


@pytest.mark.parametrize("layer", LAYERS[:-1])
def test_no_layer_imports_one_above_it(layer):
    above = [m for name in LAYERS[LAYERS.index(layer) + 1 :] for m in _modules(name)]
    code = (
        "import importlib, json, sys\n"
        f"for name in {_modules(layer)!r}:\n"
        "    importlib.import_module(name)\n"
        f"print(json.dumps(sorted(m for m in sys.modules if m in {above!r})))\n"
    )
    done = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    assert json.loads(done.stdout) == []


def test_plots_draw_without_solving():
    """The plots take the engine's grid and curve; nothing in report/ solves."""
    code = (
        "import sys, checker.report.plots\n"
        "print(sorted(m for m in sys.modules if m.startswith('checker.engine')))\n"
    )
    done = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True)
    assert done.returncode == 0 and done.stdout.strip() == "[]", done.stdout + done.stderr
    for path in sorted((ROOT / "checker" / "report").glob("*.py")):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.ImportFrom):
                names = {alias.name for alias in node.names}
                assert not ({"equilibrium", "solve", "state_values", "solve_all"} & names), path
                assert not (node.module or "").endswith(("equilibrium", "state_values")), path
