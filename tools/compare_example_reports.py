"""Compare the shipped examples' reports of the working tree with those of a commit.

A refactoring promises "no change for users": this script shows it.  It checks out
COMMIT into a temporary git worktree, runs the same report commands with each tree's
package (rule files and materials included) from the repository root, and prints the
first differing lines of each report that differs.

    python tools/compare_example_reports.py 09fbaf1            # exit 1 on any difference
    python tools/compare_example_reports.py 09fbaf1 --ignore-key above_mott_density

Reports compared: `check examples/` as console, JSON, SARIF, Markdown and HTML (its inline
SVG maps included: drawn with fixed ids and no date), and `state`
of every example YAML as JSON.  ``--ignore-key`` drops a JSON key (at any depth) from
both sides, for a deliberate, documented renaming.
"""

from __future__ import annotations

import argparse
import difflib
import json
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
REPORTS = {
    "check.txt": ["check", "examples/", "--exit-zero"],
    "check.json": ["check", "examples/", "--format", "json", "--exit-zero"],
    "check.sarif": ["check", "examples/", "--format", "sarif", "--exit-zero"],
    "check.md": ["check", "examples/", "--format", "markdown", "--exit-zero"],
    "check.html": ["check", "examples/", "--format", "html", "--exit-zero"],
    "state.json": [
        "state",
        *sorted(str(p.relative_to(ROOT)) for p in (ROOT / "examples").glob("*.yaml")),
        "--format",
        "json",
    ],
}
# the command of a tree: its package first on the path
RUNNER = """
import sys
sys.path.insert(0, {tree!r})
import checker.cli
assert checker.cli.__file__.startswith({tree!r}), checker.cli.__file__
sys.exit(checker.cli.main(sys.argv[1:]))
"""


def _run(tree: Path, args: list[str]) -> str:
    done = subprocess.run(
        [sys.executable, "-c", RUNNER.format(tree=str(tree)), *args],
        cwd=ROOT,
        capture_output=True,
        text=True,
        env={"COLUMNS": "110", "PATH": "/usr/bin:/bin", "NO_COLOR": "1"},
    )
    if done.returncode not in (0, 1):
        # e.g. the examples use a key the older tree does not know: the reports of the two
        # trees cannot be compared on these inputs
        said = (done.stderr or done.stdout).strip().splitlines()[-5:]
        raise SystemExit(
            f"{tree}: regimecheck {' '.join(args)} exited {done.returncode}:\n" + "\n".join(said)
        )
    return done.stdout


def _drop(value, keys):
    if isinstance(value, dict):
        return {k: _drop(v, keys) for k, v in value.items() if k not in keys}
    if isinstance(value, list):
        return [_drop(v, keys) for v in value]
    return value


def _normal(name: str, text: str, keys: set[str], tree: Path) -> list[str]:
    text = text.replace(str(tree), "<tree>")
    if name.endswith((".json", ".sarif")):
        data = json.loads(text)
        # the tool's own version and the run's clock are not the reports' content
        text = json.dumps(
            _drop(data, keys | {"version", "semanticVersion", "endTimeUtc", "startTimeUtc"}),
            indent=1,
            sort_keys=True,
        )
    return text.splitlines()


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("commit")
    parser.add_argument("--ignore-key", action="append", default=[])
    args = parser.parse_args(argv)
    keys = set(args.ignore_key)
    with tempfile.TemporaryDirectory() as folder:
        before = Path(folder) / "before"
        subprocess.run(
            ["git", "worktree", "add", "--detach", "-q", str(before), args.commit],
            cwd=ROOT,
            check=True,
        )
        try:
            # an older tree finds its rule files only as the package checker.rules
            (before / "checker" / "rules").symlink_to(before / "rules")
            differing = 0
            for name, command in REPORTS.items():
                old = _normal(name, _run(before, command), keys, before)
                new = _normal(name, _run(ROOT, command), keys, ROOT)
                if old == new:
                    print(f"{name:12s} identical ({len(new)} lines)")
                    continue
                differing += 1
                diff = list(difflib.unified_diff(old, new, "before", "after", n=1, lineterm=""))
                print(f"{name:12s} DIFFERS ({len(diff)} diff lines); first lines:")
                print("\n".join("    " + line for line in diff[:30]))
        finally:
            subprocess.run(["git", "worktree", "remove", "--force", str(before)], cwd=ROOT)
    return 1 if differing else 0


if __name__ == "__main__":
    sys.exit(main())
