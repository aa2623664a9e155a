"""Whole-process timings of the installed `regimecheck check` command.

Targets: one example, cold, <= 0.35 s wall without formulas and <= 0.8 s with
formulas (design.md §7; issue 3 allowed 0.5 s), measured as the median of
interleaved runs beside `python -c pass`; 1,000 calculations in one run <= 10 s
(every other one with four stated formulas); a directory of 1,000 small files
<= 15 s; the expression parser and the formula reader refuse hostile text in well
under a second.  Prints a table; stops with exit code 1 where the command exits with
a code other than 0 or 1 (an error is not timed).
"""

import argparse
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import installed_command
from installed_command import CHECKED

ROOT = Path(__file__).resolve().parents[1]
ONE = ROOT / "examples" / "lc9_counterdoped_well.yaml"  # no formulas
WITH_FORMULAS = ROOT / "examples" / "lk7_contact_cap.yaml"  # 7 formulas, 2 calculations
FORMULAS = ("n = N_D", "D_n = mu_n*k*T/q", "sigma = q*n*mu_n", "E_F - E_c = k*T*ln(N_D/N_c)")

# (material, donor, acceptor) cycled through the generated run
MIXES = [
    ("Si", "P", "B"),
    ("Si", "As", "B"),
    ("Ge", "Sb", "Ga"),
    ("GaAs", "Si", "C"),
    ("GaN", "Si", "Mg"),
    ("4H-SiC", "N", "Al"),
    ("InP", "S", "Zn"),
    ("InGaAs", "Si", "Zn"),
]


def wall(args, runs, expected=CHECKED):
    """Wall times of ``regimecheck *args`` (the installed command)."""
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        installed_command.run(args, expected, cwd=ROOT)
        times.append(time.perf_counter() - start)
    return times


def interpreter_start(runs):
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        subprocess.run([sys.executable, "-c", "pass"], check=True)
        times.append(time.perf_counter() - start)
    return times


def many_calculations(count: int) -> str:
    docs = []
    for i in range(count):
        material, donor, acceptor = MIXES[i % len(MIXES)]
        nd = 10 ** (14 + (i * 7 % 60) / 10)
        na = nd * ((i % 5) / 10)
        T = 200 + (i * 13) % 400
        docs.append(
            f"name: generated {i}\nmaterial: {material}\ntemperature: {T} K\n"
            f"doping:\n  donors: {{{donor}: {nd:.3e} cm-3}}\n"
            + (f"  acceptors: {{{acceptor}: {na:.3e} cm-3}}\n" if na else "")
            + f"stated:\n  electron_density: {nd:.3e} cm-3\n  electron_mobility: 1000 cm^2/(V*s)\n"
            "assumes: [non-degenerate, full-ionization, einstein-relation, single-carrier]\n"
            + ("formulas:\n" + "".join(f"  - {f}\n" for f in FORMULAS) if i % 2 else "")
        )
    return "---\n".join(docs)


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--runs", type=int, default=15)
    parser.add_argument("--calculations", type=int, default=1000)
    args = parser.parse_args()
    tool = ["check"]
    baseline, one, formulas = [], [], []
    for _ in range(args.runs):  # interleaved: machine noise hits all alike
        baseline += interpreter_start(1)
        one += wall(tool + [str(ONE)], 1)
        formulas += wall(tool + [str(WITH_FORMULAS)], 1)
    every = wall(tool + [str(ROOT / "examples")], 5)
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "many.yaml"
        path.write_text(many_calculations(args.calculations), encoding="utf-8")
        many = wall(tool + [str(path)], 3)
        many_json = wall(tool + [str(path), "--format", "json"], 3)
        folder = Path(tmp) / "files"  # 1,000 small files in nested folders
        for i, doc in enumerate(many_calculations(1000).split("---\n")):
            target = folder / f"block{i // 100}" / f"calc{i}.yaml"
            target.parent.mkdir(parents=True, exist_ok=True)
            target.write_text(doc, encoding="utf-8")
        files = wall(tool + [str(folder)], 3)

    from checker.engine.expressions import parser as expression
    from checker.engine.formulas.check import parse_formula
    from checker.errors import InputError

    hostile = [
        "__import__('os').system('x')",
        "9**9**9",
        "1e999999",
        "(" * 10000 + ")" * 10000,
        "x+" * 500_000 + "x",
        "(" * 150 + "1" + ")" * 150,
    ]
    worst = 0.0
    for text in hostile:
        for reader in (expression.parse, lambda t: parse_formula(f"n = {t}", "n", "bench")):
            start = time.perf_counter()
            try:
                reader(text)
            except InputError:
                pass
            worst = max(worst, time.perf_counter() - start)

    print(f"{'what':<52} {'median s':>9} {'best s':>8} {'target':>8}")
    rows = [
        ("python -c pass", baseline, ""),
        (f"check {ONE.name} (no formulas)", one, "0.35"),
        (f"check {WITH_FORMULAS.name} (7 formulas)", formulas, "0.8"),
        ("check examples/ (all example files)", every, ""),
        (f"check {args.calculations} calculations (console)", many, "10"),
        (f"check {args.calculations} calculations (--format json)", many_json, "10"),
        ("check a directory of 1000 small files", files, "15"),
    ]
    for label, times, target in rows:
        print(f"{label:<52} {statistics.median(times):9.3f} {min(times):8.3f} {target:>8}")
    ratio = statistics.median(one) / statistics.median(baseline)
    print(
        f"one example minus interpreter start: "
        f"{statistics.median(one) - statistics.median(baseline):.3f} s "
        f"(ratio to python -c pass: {ratio:.1f}x)"
    )
    print(f"slowest refusal of hostile expression or formula text: {worst * 1e3:.1f} ms")


if __name__ == "__main__":
    main()
