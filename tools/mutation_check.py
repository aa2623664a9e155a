"""Mutation check: do the tests fail when the code or a rule is changed on purpose?

Each mutation changes one piece of text in one file of a *copy* of the repository
(in a temporary directory; the working tree is never touched), runs a chosen subset
of the test files there with ``PYTHONPATH`` pointing at the copy, and records whether
some test failed (the mutation is *caught*) or all passed (it *survived*).  An
unmutated copy is run first: if the subset fails without any mutation, the table
would mean nothing and the script stops.

    python tools/mutation_check.py                     # every mutation, working tree
    python tools/mutation_check.py --ref HEAD          # the committed tree instead
    python tools/mutation_check.py --ref HEAD --overlay tests/test_thresholds.py
    python tools/mutation_check.py --only ION01-threshold --only relations-lambda
    python tools/mutation_check.py --tests tests/test_rules.py   # one subset for all
    python tools/mutation_check.py --list

``--ref`` exports that commit (``git archive``) instead of copying the working tree;
``--overlay`` then copies the named working-tree files over the export (to try new
tests against committed code).  Test files of a mutation's subset that do not exist
in the copy are left out and named in the table.  Runs one mutation at a time
(``--jobs 2`` runs two at once; the machine has two cores).

Prints a table: mutation, file, tests run, failed, result (caught / survived /
not applied when the text to change is no longer in the file).
"""

from __future__ import annotations

import argparse
import os
import re
import shutil
import subprocess
import sys
import tempfile
import time
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SKIP = shutil.ignore_patterns(
    ".git",
    "build",
    "dist",
    "__pycache__",
    "*.pyc",
    "*.egg-info",
    ".pytest_cache",
    ".hypothesis",
    ".mypy_cache",
    ".ruff_cache",
)

RULE_TESTS = ("tests/test_rules.py", "tests/test_thresholds.py", "tests/test_acceptance.py")
FORMULA_TESTS = ("tests/test_formulas.py", "tests/test_formula_hardening.py")
HALL_TESTS = (
    "tests/test_rules.py",
    "tests/test_thresholds.py",
    "tests/test_published_physics.py",
    "tests/test_tables.py",
    "tests/test_transport.py",
)
REGIME_TESTS = (
    "tests/test_maps.py",
    "tests/test_equilibrium.py",
    "tests/test_sweep.py",
    "tests/test_thresholds.py",
)
PHYSICS_TESTS = (
    "tests/test_transport.py",
    "tests/test_equilibrium.py",
    "tests/test_materials.py",
    "tests/test_fermi_dirac.py",
)


@dataclass(frozen=True)
class Mutation:
    name: str
    path: str  # file in the repository
    old: str  # a regular expression that must match exactly once
    new: str  # its replacement (re.sub syntax)
    tests: tuple  # default test subset
    what: str  # one line for the table


MUTATIONS = (
    # --- from the issue -------------------------------------------------------------------
    Mutation(
        "ION01-threshold",
        "rules/ION01.yaml",
        r"(\n\s*below:\s*)0\.95\b",
        r"\g<1>0.90",
        RULE_TESTS,
        "ION01 threshold 0.95 -> 0.90",
    ),
    Mutation(
        "relations-lambda",
        "checker/engine/relations.py",
        r'(3: \{"R": "rho\*\(L \+ )(s_d\*lambda_\{x\}\)/A")',
        r"\g<1>2*\g<2>",
        FORMULA_TESTS,
        "short-conductor R = rho(L + 2 s_d lambda)/A (3D)",
    ),
    Mutation(
        "CARR01-threshold",
        "rules/CARR01.yaml",
        r"(\n\s*above:\s*)0\.01\b",
        r"\g<1>0.02",
        RULE_TESTS,
        "CARR01 threshold doubled 0.01 -> 0.02",
    ),
    Mutation(
        "TRAN01-threshold",
        "rules/TRAN01.yaml",
        r"(\n\s*above:\s*)0\.05\b",
        r"\g<1>0.10",
        RULE_TESTS,
        "TRAN01 threshold doubled 0.05 -> 0.10",
    ),
    Mutation(
        "CONST01-threshold",
        "rules/CONST01.yaml",
        r"(\n\s*above:\s*)0\.01\b",
        r"\g<1>0.02",
        RULE_TESTS,
        "CONST01 threshold doubled 0.01 -> 0.02",
    ),
    Mutation(
        "MEAS01-threshold",
        "rules/MEAS01.yaml",
        r"(\n\s*above:\s*)1\.2\b",
        r"\g<1>1.4",
        RULE_TESTS,
        "MEAS01 threshold up by 0.2: 1.2 -> 1.4",
    ),
    Mutation(
        "STAT02-threshold",
        "rules/STAT02.yaml",
        r"(\n\s*above:\s*)1\.05\b",
        r"\g<1>1.10",
        RULE_TESTS,
        "STAT02 threshold 1.05 -> 1.10",
    ),
    Mutation(
        "hall-acoustic",
        "checker/physics/hall.py",
        r'("acoustic":\s*)-0\.5\b',
        r"\g<1>-0.45",
        HALL_TESTS,
        'Hall exponent of "acoustic" -0.5 -> -0.45',
    ),
    # --- our own --------------------------------------------------------------------------
    Mutation(
        "hall-sign",
        "checker/physics/hall.py",
        r"(numerator = rH_p \* p \* mu_p \*\* 2 )- (rH_n \* n \* mu_n \*\* 2)",
        r"\g<1>+ \g<2>",
        HALL_TESTS,
        "sign: two-carrier Hall coefficient r_p p mu_p^2 + r_n n mu_n^2",
    ),
    Mutation(
        "intrinsic-level-sign",
        "checker/engine/relations.py",
        r'("E_i": "\(E_c \+ E_v\)/2 )\+( k\*T/2\*log\(N_v/N_c\)")',
        r"\g<1>-\g<2>",
        FORMULA_TESTS,
        "sign: E_i = (E_c + E_v)/2 - kT/2 ln(N_v/N_c)",
    ),
    Mutation(
        "einstein-order",
        "checker/physics/transport.py",
        r"log_fermi_dirac\(j, eta\) - log_fermi_dirac\(j - 1, eta\)",
        "log_fermi_dirac(j, eta) - log_fermi_dirac(j - 0.5, eta)",
        PHYSICS_TESTS,
        "Einstein ratio F_j/F_(j-1/2) in place of F_j/F_(j-1)",
    ),
    Mutation(
        "boltzmann-digit",
        "checker/physics/constants.py",
        r"1\.380649e-23",
        "1.380694e-23",
        PHYSICS_TESTS,
        "constant: k_B 1.380649e-23 -> 1.380694e-23",
    ),
    Mutation(
        "electron-mass-digit",
        "checker/physics/constants.py",
        r"9\.1093837139e-31",
        "9.1093837193e-31",
        PHYSICS_TESTS,
        "constant: m_0 ...7139e-31 -> ...7193e-31",
    ),
    Mutation(
        "gamma-digit",
        "checker/engine/relations.py",
        r'(2\.5: ")0\.75(\*sqrt\(pi\)")',
        r"\g<1>0.76\g<2>",
        FORMULA_TESTS,
        "constant: Gamma(5/2) = 0.75 sqrt(pi) -> 0.76 sqrt(pi) (degenerate limit)",
    ),
    Mutation(
        "regime-ionized-fraction",
        "checker/physics/carriers.py",
        r"(IONIZED_FRACTION = )0\.9\b",
        r"\g<1>0.8",
        REGIME_TESTS,
        "regime map: incomplete ionization below 80 % in place of 90 %",
    ),
    Mutation(
        "regime-degenerate-eta",
        "checker/physics/carriers.py",
        r"(DEGENERATE_ETA = )-3\.0\b",
        r"\g<1>-2.5",
        REGIME_TESTS,
        "regime map: degenerate above eta = -2.5 in place of -3",
    ),
)


def _export(ref: str | None, overlay, target: Path) -> None:
    if ref is None:
        shutil.copytree(ROOT, target, ignore=SKIP)
    else:
        target.mkdir(parents=True)
        archive = subprocess.run(
            ["git", "-C", str(ROOT), "archive", ref], check=True, capture_output=True
        ).stdout
        subprocess.run(["tar", "-x", "-C", str(target)], input=archive, check=True)
        for name in overlay:
            source, dest = ROOT / name, target / name
            dest.parent.mkdir(parents=True, exist_ok=True)
            if source.is_dir():
                shutil.copytree(source, dest, ignore=SKIP, dirs_exist_ok=True)
            else:
                shutil.copy2(source, dest)
    # the installed (editable) package maps checker.rules onto <repo>/rules; in the copy
    # the same package must be found inside checker/ so that PYTHONPATH alone decides
    link = target / "checker" / "rules"
    if not link.exists():
        link.symlink_to(Path("..") / "rules")


def _environment(copy: Path) -> dict:
    env = dict(os.environ)
    env["PYTHONPATH"] = str(copy) + os.pathsep + env.get("PYTHONPATH", "")
    env["PYTHONDONTWRITEBYTECODE"] = "1"  # no stale bytecode of an unmutated file
    env.pop("PYTEST_ADDOPTS", None)
    return env


def _check_isolated(copy: Path) -> None:
    probe = "import checker, checker.resources as r; print(checker.__file__); print(r.rules_dir())"
    out = subprocess.run(
        [sys.executable, "-c", probe],
        cwd=copy,
        env=_environment(copy),
        capture_output=True,
        text=True,
        check=True,
    ).stdout.split()
    for line in out:
        if not Path(line).resolve().is_relative_to(copy.resolve()):
            raise SystemExit(f"the copy is not isolated: {line} is outside {copy}")


_COUNTS = re.compile(r"(\d+) (passed|failed|error|errors|skipped|xfailed|xpassed)")


def _run_tests(copy: Path, tests) -> tuple[int, dict, float, str]:
    command = [
        sys.executable,
        "-m",
        "pytest",
        "-q",
        "-p",
        "no:cacheprovider",
        "-p",
        "no:randomly",
        *tests,
    ]
    start = time.perf_counter()
    done = subprocess.run(command, cwd=copy, env=_environment(copy), capture_output=True, text=True)
    seconds = time.perf_counter() - start
    lines = (done.stdout + done.stderr).strip().splitlines()
    summary = lines[-1] if lines else ""
    counts = {}
    for number, kind in _COUNTS.findall(summary):
        counts["error" if kind == "errors" else kind] = int(number)
    failing = [
        line.split(" ", 1)[1].split(" - ")[0]
        for line in lines
        if line.startswith(("FAILED ", "ERROR "))
    ]
    return done.returncode, counts, seconds, "; ".join(failing[:3])


def _apply(copy: Path, mutation: Mutation) -> bool:
    path = copy / mutation.path
    if not path.is_file():
        return False
    text = path.read_text(encoding="utf-8")
    changed, count = re.subn(mutation.old, mutation.new, text)
    if count != 1:
        return False
    path.write_text(changed, encoding="utf-8")
    return True


def _one(mutation: Mutation, base: Path, workdir: Path, tests_override) -> dict:
    copy = workdir / mutation.name
    shutil.copytree(base, copy, symlinks=True)
    wanted = tuple(tests_override or mutation.tests)
    present = tuple(t for t in wanted if (copy / t.split("::")[0]).exists())
    missing = tuple(t for t in wanted if t not in present)
    row = {"mutation": mutation, "tests": present, "missing": missing}
    if not _apply(copy, mutation):
        row.update(result="not applied", counts={}, seconds=0.0, failing="")
        return row
    code, counts, seconds, failing = _run_tests(copy, present)
    ran = sum(counts.get(k, 0) for k in ("passed", "failed", "error", "xfailed", "xpassed"))
    result = (
        "survived"
        if code == 0
        else ("caught" if code in (1, 2) and ran else f"caught (pytest exit {code})")
    )
    row.update(result=result, counts=counts, seconds=seconds, failing=failing)
    shutil.rmtree(copy, ignore_errors=True)
    return row


def _table(rows) -> str:
    head = ("mutation", "change", "tests run", "failed", "result", "s")
    body = []
    for row in rows:
        counts = row["counts"]
        ran = sum(counts.get(k, 0) for k in ("passed", "failed", "error", "xfailed", "xpassed"))
        failed = counts.get("failed", 0) + counts.get("error", 0)
        files = ", ".join(Path(t).name for t in row["tests"])
        body.append(
            (
                row["mutation"].name,
                row["mutation"].what,
                f"{ran} ({files})",
                str(failed),
                row["result"],
                f"{row['seconds']:.0f}",
            )
        )
    widths = [max(len(r[i]) for r in [head, *body]) for i in range(len(head))]
    line = lambda r: " | ".join(c.ljust(w) for c, w in zip(r, widths)).rstrip()
    out = [line(head), "-+-".join("-" * w for w in widths)] + [line(r) for r in body]
    notes = [
        f"{r['mutation'].name}: not in this copy: {', '.join(r['missing'])}"
        for r in rows
        if r["missing"]
    ]
    notes += [f"{r['mutation'].name}: first failing: {r['failing']}" for r in rows if r["failing"]]
    return "\n".join(out + ([""] + notes if notes else []))


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--ref", help="export this git commit instead of the working tree")
    parser.add_argument(
        "--overlay",
        action="append",
        default=[],
        help="working-tree file copied over the export (with --ref)",
    )
    parser.add_argument("--only", action="append", default=[], help="mutation name (repeat)")
    parser.add_argument(
        "--tests",
        action="append",
        default=[],
        help="test file for every mutation, in place of each one's subset",
    )
    parser.add_argument("--jobs", type=int, default=1)
    parser.add_argument("--keep", action="store_true", help="keep the temporary copies")
    parser.add_argument("--list", action="store_true", help="list the mutations and exit")
    args = parser.parse_args(argv)
    chosen = [m for m in MUTATIONS if not args.only or m.name in args.only]
    unknown = set(args.only) - {m.name for m in MUTATIONS}
    if unknown:
        parser.error(f"unknown mutation(s): {', '.join(sorted(unknown))}")
    if args.list:
        for m in MUTATIONS:
            print(f"{m.name:26} {m.path:34} {m.what}")
        return 0

    workdir = Path(tempfile.mkdtemp(prefix="regimecheck-mutation-"))
    try:
        base = workdir / "base"
        _export(args.ref, args.overlay, base)
        _check_isolated(base)
        subsets = sorted(
            {
                t
                for m in chosen
                for t in (args.tests or m.tests)
                if (base / t.split("::")[0]).exists()
            }
        )
        print(f"copy: {base} ({'working tree' if args.ref is None else args.ref})")
        print(f"unmutated run of {len(subsets)} test file(s) ...", flush=True)
        code, counts, seconds, failing = _run_tests(base, subsets)
        if code != 0:
            print(f"the unmutated copy fails ({counts}; {failing}): fix that first")
            return 2
        print(f"  all pass ({counts.get('passed', 0)} passed, {seconds:.0f} s)\n", flush=True)
        with ThreadPoolExecutor(max_workers=max(1, args.jobs)) as pool:
            rows = list(pool.map(lambda m: _one(m, base, workdir, args.tests), chosen))
        print(_table(rows))
        survived = [r["mutation"].name for r in rows if r["result"] == "survived"]
        print(
            f"\n{len(rows)} mutation(s): {sum(r['result'].startswith('caught') for r in rows)}"
            f" caught, {len(survived)} survived" + (f" ({', '.join(survived)})" if survived else "")
        )
        return 0
    finally:
        if args.keep:
            print(f"copies kept in {workdir}")
        else:
            shutil.rmtree(workdir, ignore_errors=True)


if __name__ == "__main__":
    sys.exit(main())
