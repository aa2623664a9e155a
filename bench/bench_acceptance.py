"""Acceptance suite as a reviewer reads it: how many published numbers draw a false alarm
and how many classic mistakes are missed, per group, with the list of each.

    python bench/bench_acceptance.py

Runs the same single check as tests/test_acceptance.py (every file of
tests/acceptance/index.toml through ``regimecheck check --format json``), here with the
installed command, and prints a table: cases, correct numbers, false alarms (a correct number
that drew a warning or error, with the rule ids), mistakes, misses (a mistake that did not
draw its rule), and how many cases the index marks as expected to fail today.  Then the lists
and the wall time of the check.  Exits 0 whatever the verdicts; 1 only where the command
itself fails (an exit code other than 0 with --exit-zero).
"""

import argparse
import json
import sys
import tempfile
import time
from collections import OrderedDict
from pathlib import Path

import installed_command

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

from test_acceptance import HERE, INDEX, SETTINGS, verdict  # noqa: E402


def run_suite(output: Path) -> dict:
    """Every file of the index in one run of the installed command (JSON report)."""
    files = sorted({str(HERE / case["file"]) for case in INDEX})
    settings = ["--config", SETTINGS, "--exit-zero"]
    installed_command.run(["check", *files, "--format", "json", "--output", output, *settings])
    report = json.loads(output.read_text(encoding="utf-8"))
    report["by_name"] = {calc["name"]: calc for calc in report["calculations"]}
    return report


def main() -> int:
    argparse.ArgumentParser(description=__doc__.split("\n\n")[0]).parse_args()  # --help only
    with tempfile.TemporaryDirectory() as tmp:
        start = time.perf_counter()
        report = run_suite(Path(tmp) / "report.json")
        wall = time.perf_counter() - start
    groups = OrderedDict()
    false_alarms, misses, missing = [], [], []
    for case in INDEX:
        row = groups.setdefault(
            case["group"], dict(cases=0, correct=0, false_alarms=0, mistakes=0, misses=0, marked=0)
        )
        row["cases"] += 1
        row["marked"] += "xfail" in case
        calc = report["by_name"].get(case["id"])
        if calc is None:
            missing.append(case["id"])
            continue
        ok, drawn = verdict(case, calc)
        if case["kind"] == "correct":
            row["correct"] += 1
            if not ok:
                row["false_alarms"] += 1
                false_alarms.append((case, drawn))
        else:
            row["mistakes"] += 1
            if not ok:
                row["misses"] += 1
                misses.append((case, drawn))

    head = ("group", "cases", "correct", "false alarms", "mistakes", "misses", "marked xfail")
    keys = ("cases", "correct", "false_alarms", "mistakes", "misses", "marked")
    width = max(len(g) for g in list(groups) + ["total"]) + 2
    print(f"{head[0]:<{width}}" + "".join(f"{h:>14}" for h in head[1:]))
    total = {k: 0 for k in keys}
    for name, row in groups.items():
        print(f"{name:<{width}}" + "".join(f"{row[k]:>14}" for k in keys))
        for k in keys:
            total[k] += row[k]
    print(f"{'total':<{width}}" + "".join(f"{total[k]:>14}" for k in keys))
    print(
        f"\none check run over {len(report['calculations'])} calculations: {wall:.2f} s "
        f"({len(report['input_errors'])} input error(s))"
    )

    print(
        f"\nFalse alarms ({len(false_alarms)}): correct published numbers that drew a warning/error"
    )
    for case, drawn in false_alarms:
        known = "expected today" if "xfail" in case else "NEW (not marked xfail)"
        print(f"  {case['id']:<38} {', '.join(drawn) or 'input error':<16} {known}")
    print(f"\nMisses ({len(misses)}): mistakes that did not draw their rule")
    for case, drawn in misses:
        known = "expected today" if "xfail" in case else "NEW (not marked xfail)"
        print(
            f"  {case['id']:<38} wants {case['rule']:<8} "
            f"drew {', '.join(drawn) or 'nothing':<16} {known}"
        )
    fixed = [
        c["id"]
        for c in INDEX
        if "xfail" in c
        and c["id"] not in {x[0]["id"] for x in false_alarms + misses}
        and c["id"] not in missing
    ]
    if fixed:
        print(f"\nMarked xfail but right today ({len(fixed)}): " + ", ".join(fixed))
    if missing:
        print(f"\nNot in the report ({len(missing)}): " + ", ".join(missing))
    return 0


if __name__ == "__main__":
    sys.exit(main())
