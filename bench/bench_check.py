"""Whole-process cost of the installed `regimecheck check` command, as ratios to
`python -c "import numpy, yaml"` (the import floor every check pays) measured in the same
interleaved rounds (bench/interleaved.py: rotated order, median of per-round ratios and
their spread): one example without formulas, one with formulas, all examples, 1,000
calculations in one file (every other one with four stated formulas; console and JSON)
and the same calculations one per file in a directory; the one example also with an
empty user cache (the first run after an install).  The package's bytecode is written
first, as pip writes it.  The expression parser and the
formula reader must refuse hostile text in well under a second (the slowest refusal is
printed).  Prints a table; stops with exit code 1 where the command exits with a code
other than 0 or 1 (an error is not timed).  The issue-16 targets (cold start, reading,
walk, HTML) are in bench/bench_startup.py.
Usage: python bench/bench_check.py [--rounds 5] [--calculations 1000]
"""

import argparse
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
import installed_command  # noqa: E402
from installed_command import CHECKED  # noqa: E402
from interleaved import interleaved, ratio_table  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
ONE = ROOT / "examples" / "lc9_counterdoped_well.yaml"  # no formulas
WITH_FORMULAS = ROOT / "examples" / "lk7_contact_cap.yaml"  # 7 formulas, 2 calculations
FORMULAS = ("n = N_D", "D_n = mu_n*k*T/q", "sigma = q*n*mu_n", "E_F - E_c = k*T*ln(N_D/N_c)")
FLOOR = [sys.executable, "-c", "import numpy, yaml"]
FLOOR_NAME = "import numpy, yaml"

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


# The warm cases' user cache: a folder of this bench run's own.  The user's cache is
# shared with every other install on the machine, and a run of another version of the
# code replaces the formula matches kept there (match_store keeps one code version):
# a check timed after it would search them afresh.
_WARM_CACHE = tempfile.TemporaryDirectory(prefix="regimecheck-bench-cache-")  # mode 0700


def command(*args, cold: bool = False):
    """A case: ``regimecheck *args`` run once (exit 0 or 1, else the bench stops), with
    the bench's own user cache (REGIMECHECK_CACHE), filled by the first run;
    ``cold``: with an empty one, as the first run after an install or upgrade: the
    rules, materials and formula matches are read, checked and searched afresh."""
    argv = [str(a) for a in args]
    if not cold:
        env = {**os.environ, "REGIMECHECK_CACHE": _WARM_CACHE.name}
        return lambda: installed_command.run(argv, CHECKED, cwd=ROOT, env=env)

    def case():
        with tempfile.TemporaryDirectory() as cache:
            env = {**os.environ, "REGIMECHECK_CACHE": cache}
            installed_command.run(argv, CHECKED, cwd=ROOT, env=env)

    return case


def compile_package() -> None:
    """Write the package's bytecode, as pip does when it installs: an editable checkout
    run under PYTHONDONTWRITEBYTECODE would otherwise time the compiler on every run."""
    import compileall

    import checker

    compileall.compile_dir(Path(checker.__file__).parent, quiet=1)


def floor():
    """The case every check is measured against: the interpreter importing numpy and yaml."""
    return lambda: subprocess.run(FLOOR, check=True)


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


def write_inputs(folder: Path, count: int) -> tuple[Path, Path]:
    """(one file of ``count`` calculations, a folder of the same calculations one per file,
    100 files a subfolder)."""
    text = many_calculations(count)
    many = folder / "many.yaml"
    many.write_text(text, encoding="utf-8")
    files = folder / "files"
    for i, doc in enumerate(text.split("---\n")):
        target = files / f"block{i // 100}" / f"calc{i}.yaml"
        target.parent.mkdir(parents=True, exist_ok=True)
        target.write_text(doc, encoding="utf-8")
    return many, files


def slowest_refusal() -> float:
    """Seconds of the slowest refusal of hostile expression or formula text."""
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
    return worst


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--rounds", type=int, default=5)
    parser.add_argument("--calculations", type=int, default=1000)
    args = parser.parse_args()
    count = args.calculations
    compile_package()
    with tempfile.TemporaryDirectory() as tmp:
        many, files = write_inputs(Path(tmp), count)
        cases = {
            FLOOR_NAME: floor(),
            f"check {ONE.name}": command("check", ONE),
            f"check {ONE.name}, empty user cache": command("check", ONE, cold=True),
            f"check {WITH_FORMULAS.name} (formulas)": command("check", WITH_FORMULAS),
            "check examples/": command("check", ROOT / "examples"),
            f"check {count} calculations": command("check", many),
            f"check {count} calculations, json": command("check", many, "--format", "json"),
            f"check {count} files (a walk)": command("check", files),
        }
        timings = interleaved(cases, args.rounds)
    print(ratio_table(timings, FLOOR_NAME, unit="us/run"))
    print(
        f"slowest refusal of hostile expression or formula text: {slowest_refusal() * 1e3:.1f} ms"
    )


if __name__ == "__main__":
    main()
