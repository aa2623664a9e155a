"""Design memos in Markdown: calculation blocks found, line numbers are the memo's own."""

import json
import subprocess
import sys

from checker.engine.run import check_paths
from checker.inputs.memo import calculation_blocks, read_memo

MEMO = "examples/lm6_bias_memo.md"


def _line(path, text):
    lines = open(path, encoding="utf-8").read().splitlines()
    return next(i for i, line in enumerate(lines, 1) if text in line)


def test_findings_point_at_memo_lines():
    result = check_paths([MEMO])
    assert [r.calc.name for r in result.reports] == [
        "LM-6 n-well resistor, 125 degC",
        "LM-6 p+ substrate strap, 125 degC",
    ]
    strap = result.reports[1]
    assert strap.calc.line == _line(MEMO, "name: LM-6 p+ substrate strap")
    (stat02,) = [f for f in strap.findings if f.rule == "STAT02"]
    assert stat02.file == MEMO and stat02.line == _line(MEMO, "- D_p = mu_p*k*T/q")
    mobility = [f for f in result.reports[0].findings if f.rule == "MOB02"][0]
    assert mobility.line == _line(MEMO, "electron_mobility: 830")


def test_block_detection(tmp_path):
    text = (
        "intro\n```regimecheck\na: 1\n```\n\n~~~~ regimecheck extra words\nb: 2\n~~~~\n"
        "```yaml\nnot: read\n```\n````\n```regimecheck\ninside another fence\n```\n````\n"
        "```regimecheck\nunclosed: 3\n"
    )
    assert calculation_blocks(text) == [(3, 3), (7, 7), (18, 18)]


def test_errors_inside_a_block_name_the_memo_line(tmp_path):
    memo = tmp_path / "memo.md"
    memo.write_text(
        "# memo\n\n```regimecheck\nname: good\nmaterial: Si\ntemperature: 300 K\n"
        "---\nname: bad\nmaterial: Si\ntemperature: 300 parsecs\n```\n"
    )
    read = read_memo(memo)
    assert [c.name for c in read.calculations] == ["good"]
    (error,) = read.errors
    assert error.startswith(f"{memo}:10:")


def test_memo_without_blocks(tmp_path):
    (tmp_path / "notes.md").write_text("# just prose\n\n```yaml\na: 1\n```\n")
    (tmp_path / "calc.md").write_text(
        "```regimecheck\nname: x\nmaterial: Si\ntemperature: 300 K\n```\n"
    )
    named = subprocess.run(
        [sys.executable, "-m", "checker.cli", "check", str(tmp_path / "notes.md")],
        capture_output=True,
        text=True,
    )
    assert named.returncode == 2 and "no ```regimecheck block" in named.stdout + named.stderr
    walked = subprocess.run(
        [sys.executable, "-m", "checker.cli", "check", str(tmp_path), "--format", "json"],
        capture_output=True,
        text=True,
    )
    data = json.loads(walked.stdout)
    assert [c["name"] for c in data["calculations"]] == ["x"] and not data["input_errors"]


def test_skip_unrelated_files_for_hooks(tmp_path):
    """pre-commit passes every changed file: unrelated YAML and prose are skipped."""
    (tmp_path / "ci.yml").write_text("name: build\non: push\n")
    (tmp_path / "notes.md").write_text("# prose only\n")
    (tmp_path / "calc.yaml").write_text("name: x\nmaterial: Si\ntemperature: 300 K\n")
    files = [str(tmp_path / n) for n in ("ci.yml", "notes.md", "calc.yaml")]
    hook = subprocess.run(
        [
            sys.executable,
            "-m",
            "checker.cli",
            "check",
            "--skip-unrelated",
            *files,
            "--format",
            "json",
        ],
        capture_output=True,
        text=True,
    )
    data = json.loads(hook.stdout)
    assert hook.returncode == 0 and [c["name"] for c in data["calculations"]] == ["x"]
    strict = subprocess.run(
        [sys.executable, "-m", "checker.cli", "check", *files], capture_output=True, text=True
    )
    assert strict.returncode == 2  # named without the option: errors
    walked = json.loads(
        subprocess.run(
            [sys.executable, "-m", "checker.cli", "check", str(tmp_path), "--format", "json"],
            capture_output=True,
            text=True,
        ).stdout
    )
    assert [c["name"] for c in walked["calculations"]] == ["x"] and not walked["input_errors"]
