"""The command against careless and hostile use: --output never destroys an input and
never leaves a half-written file, Ctrl-C and numerical warnings end quietly, command-line
quantities are held to the same bounds as calculation files, each input file is read
once, the report format follows the output's suffix, and --version.

Exit codes: 2 for unusable input, 130 for an interrupt (128 + SIGINT, the POSIX shell
convention, IEEE Std 1003.1 "Exit Status for Commands").
"""

import json
import os
import signal
import stat
import subprocess
import sys
import time
import tomllib
import xml.etree.ElementTree as ET
from importlib.metadata import version
from pathlib import Path

import pytest

import checker.cli as cli
from checker.cli import main

ROOT = Path(__file__).resolve().parents[1]
CALCULATION = (
    "name: {name}\nmaterial: Si\ntemperature: 300 K\ndoping:\n  donors: {{P: 1e16 cm-3}}\n"
    "stated:\n  electron_density: 1e16 cm-3\n  thermal_voltage: 0.0345 V\n"
)
MEMO = "# memo\n\n```regimecheck\n" + CALCULATION.format(name="in a memo") + "```\n"


@pytest.fixture
def walk(tmp_path):
    """A directory with a calculation file and a memo."""
    folder = tmp_path / "d"
    folder.mkdir()
    (folder / "a.yaml").write_text(CALCULATION.format(name="first"), encoding="utf-8")
    (folder / "memo.md").write_text(MEMO, encoding="utf-8")
    return folder


def refused(args, protected, capsys, text="input"):
    """Run; the run is refused with exit 2 and ``protected`` keeps its bytes."""
    before = protected.read_bytes()
    code = main(args)
    err = capsys.readouterr().err
    assert code == 2, err
    assert text in err and "Traceback" not in err
    assert protected.read_bytes() == before
    return err


# --- 1. --output never overwrites a file the run read ---------------------------------


def test_output_into_a_walked_directory_is_refused(walk, capsys):
    err = refused(
        ["check", str(walk), "--format", "json", "--output", str(walk / "a.yaml")],
        walk / "a.yaml",
        capsys,
    )
    assert "a.yaml" in err
    refused(
        ["check", str(walk), "--format", "markdown", "--output", str(walk / "memo.md")],
        walk / "memo.md",
        capsys,
    )


def test_output_to_a_hard_link_or_symlink_of_an_input_is_refused(walk, tmp_path, capsys):
    hard = tmp_path / "report.json"
    os.link(walk / "a.yaml", hard)
    refused(
        ["check", str(walk / "a.yaml"), "--format", "json", "--output", str(hard)],
        walk / "a.yaml",
        capsys,
    )
    soft = tmp_path / "report.md"
    soft.symlink_to(walk / "memo.md")
    refused(["check", str(walk), "--output", str(soft)], walk / "memo.md", capsys)


def test_output_to_the_settings_file_is_refused(walk, tmp_path, capsys, monkeypatch):
    settings = tmp_path / "settings.toml"
    settings.write_text('fail-level = "error"\n', encoding="utf-8")
    refused(
        ["check", str(walk), "--config", str(settings), "--output", str(settings)], settings, capsys
    )
    project = tmp_path / "project"
    (project / "sub").mkdir(parents=True)
    pyproject = project / "pyproject.toml"
    pyproject.write_text('[tool.regimecheck]\nfail-level = "error"\n', encoding="utf-8")
    monkeypatch.chdir(project / "sub")  # found upward from the working directory
    refused(["check", str(walk), "--output", "../pyproject.toml"], pyproject, capsys)
    refused(
        ["point", "--material", "Si", "--temperature", "300K", "--output", str(pyproject)],
        pyproject,
        capsys,
    )


def test_map_output_onto_a_calculation_file_is_refused(walk, tmp_path, capsys):
    figure = tmp_path / "figure.svg"
    os.link(walk / "a.yaml", figure)
    refused(
        ["map", str(walk / "a.yaml"), "--resolution", "10", "--output", str(figure)],
        walk / "a.yaml",
        capsys,
    )


# --- 2. the output is written whole or not at all ---------------------------------------


def _folder_listing(folder):
    return sorted(p.name for p in folder.iterdir())


@pytest.mark.parametrize(
    "failure,code", [(RuntimeError("renderer broke"), 3), (KeyboardInterrupt(), 130)]
)
def test_a_failing_render_leaves_the_previous_report(
    walk, tmp_path, capsys, monkeypatch, failure, code
):
    previous = tmp_path / "prev.json"
    previous.write_text('{"previous": true}\n', encoding="utf-8")
    listing = _folder_listing(tmp_path)

    def broken(*_args):
        raise failure

    monkeypatch.setattr("checker.report.check_report.render_json", broken)
    assert main(["check", str(walk), "--format", "json", "--output", str(previous)]) == code
    capsys.readouterr()
    assert previous.read_text(encoding="utf-8") == '{"previous": true}\n'
    assert _folder_listing(tmp_path) == listing  # no temporary file left behind


def test_a_failing_write_leaves_the_previous_report(walk, tmp_path, capsys, monkeypatch):
    previous = tmp_path / "prev.json"
    previous.write_text('{"previous": true}\n', encoding="utf-8")
    listing = _folder_listing(tmp_path)

    def full_disk(*_args):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "replace", full_disk)
    assert main(["check", str(walk), "--format", "json", "--output", str(previous)]) == 2
    assert "No space left on device" in capsys.readouterr().err
    assert previous.read_text(encoding="utf-8") == '{"previous": true}\n'
    assert _folder_listing(tmp_path) == listing


def test_a_lone_surrogate_name_replaces_the_previous_report_completely(tmp_path, capsys):
    calc = tmp_path / "calc.yaml"
    calc.write_text(CALCULATION.format(name='"\\ud800"'), encoding="utf-8")
    previous = tmp_path / "prev.json"
    previous.write_text("{}", encoding="utf-8")
    code = main(["check", str(calc), "--format", "json", "--output", str(previous)])
    err = capsys.readouterr().err
    data = json.loads(previous.read_text(encoding="utf-8"))  # complete, not 0 bytes
    if code == 2:  # the reader refuses such a name, and the report says where
        assert "calc.yaml:1" in data["input_errors"][0]
    else:  # or it is checked and shown escaped
        assert code == 1, err
        assert data["calculations"][0]["name"] == r"\ud800"


def test_a_failing_figure_leaves_the_previous_figure(tmp_path, capsys, monkeypatch):
    figure = tmp_path / "map.svg"
    figure.write_text("<svg/>", encoding="utf-8")

    def broken(*_args):
        raise RuntimeError("drawing broke")

    monkeypatch.setattr("checker.report.plots.render", broken)
    assert (
        main(["curve", "--material", "Si", "--doping", "P=1e17cm-3", "--output", str(figure)]) == 3
    )
    capsys.readouterr()
    assert figure.read_text(encoding="utf-8") == "<svg/>"
    assert _folder_listing(tmp_path) == ["map.svg"]


@pytest.mark.skipif(os.name != "posix", reason="POSIX symlinks and devices")
def test_output_through_a_symlink_and_to_a_device(walk, tmp_path, capsys):
    real = tmp_path / "real.json"
    real.write_text("{}", encoding="utf-8")
    link = tmp_path / "link.json"
    link.symlink_to(real)
    assert main(["check", str(walk), "--output", str(link)]) == 1
    assert link.is_symlink()  # the link stays, the file it names is new
    assert json.loads(real.read_text(encoding="utf-8"))["summary"]["calculations"] == 2
    assert main(["check", str(walk), "--output", os.devnull]) == 1  # no rename on a device
    assert "Report: " in capsys.readouterr().err


@pytest.mark.skipif(os.name != "posix", reason="POSIX file modes")
def test_rewriting_a_report_keeps_its_file_mode(walk, tmp_path, capsys):
    previous = tmp_path / "prev.json"
    previous.write_text("{}", encoding="utf-8")
    previous.chmod(0o640)
    assert main(["check", str(walk), "--format", "json", "--output", str(previous)]) == 1
    capsys.readouterr()
    assert stat.S_IMODE(previous.stat().st_mode) == 0o640
    assert json.loads(previous.read_text(encoding="utf-8"))["summary"]["calculations"] == 2


# --- 5. Ctrl-C and numerical warnings ----------------------------------------------------


def test_interrupt_ends_with_one_line_and_exit_130(capsys, monkeypatch):
    def interrupted(_args):
        raise KeyboardInterrupt

    monkeypatch.setattr(cli, "_cmd_check", interrupted)
    assert main(["check", "anything.yaml"]) == 130
    out, err = capsys.readouterr()
    assert err == "regimecheck: interrupted\n" and out == ""


@pytest.mark.skipif(os.name != "posix", reason="SIGINT to a child process: POSIX")
def test_sigint_during_a_large_sweep(tmp_path):
    calc = tmp_path / "sweep.yaml"
    calc.write_text(
        "name: large sweep\nmaterial: Si\n"
        "temperature: {from: 200 K, to: 500 K, steps: 2000}\n"
        "doping:\n  donors: {P: {from: 1e14 cm-3, to: 1e20 cm-3, steps: 2000}}\n",
        encoding="utf-8",
    )
    child = subprocess.Popen(
        [sys.executable, "-m", "checker", "check", str(calc)],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    # signal once the child has done a second of work (past the imports, inside the sweep)
    stat_file = Path(f"/proc/{child.pid}/stat")
    while child.poll() is None and stat_file.exists():
        fields = stat_file.read_text().rsplit(")", 1)[1].split()
        if (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK") >= 1.0:
            break
        time.sleep(0.05)
    if child.poll() is not None:
        pytest.skip("the sweep finished before it could be interrupted")
    child.send_signal(signal.SIGINT)
    out, err = child.communicate(timeout=300)
    if child.returncode in (0, 1):
        pytest.skip("the sweep finished before the signal arrived")
    assert child.returncode == 130, err
    assert err == "regimecheck: interrupted\n"


def test_numpy_warnings_do_not_reach_the_reader(capsys, recwarn, monkeypatch):
    import numpy as np

    def overflowing(_args):
        np.exp(np.array([1000.0]))  # overflow: a RuntimeWarning from numpy
        np.array([0.0]) / np.array([0.0])  # invalid value
        return 0

    monkeypatch.setattr(cli, "_cmd_rules", overflowing)
    assert main(["rules"]) == 0
    assert not [w for w in recwarn if issubclass(w.category, RuntimeWarning)]
    assert capsys.readouterr().err == ""


def test_undoped_silicon_at_one_kelvin_prints_no_warning():
    done = subprocess.run(
        [
            sys.executable,
            "-m",
            "checker",
            "point",
            "--material",
            "Si",
            "--temperature",
            "1K",
            "--format",
            "json",
        ],
        capture_output=True,
        text=True,
        cwd=ROOT,
        timeout=300,
    )
    assert done.returncode in (0, 1), done.stderr
    assert "Warning" not in done.stderr and done.stderr == ""
    json.loads(done.stdout)


# --- 6. command-line quantities and files -----------------------------------------------


@pytest.mark.parametrize(
    "extra,text",
    [
        (["--field=-5kV/cm"], "negative"),
        (["--field", "1e12V/cm"], "not a plausible field"),
        (["--length", "0nm"], "not a plausible length"),
        (["--length", "5km"], "not a plausible length"),
        (["--donor", "P=1e17cm-3", "--donor", "P=1e18cm-3"], "given twice"),
        (["--acceptor", "B=1e15cm-3", "--acceptor", " B=1e15cm-3"], "given twice"),
    ],
)
def test_point_refuses_what_a_calculation_file_refuses(extra, text, capsys):
    code = main(["point", "--material", "Si", "--temperature", "300K", *extra])
    err = capsys.readouterr().err
    assert code == 2 and text in err, err


def _calculations(args, capsys):
    assert main(["check", *args, "--format", "json"]) == 1
    return json.loads(capsys.readouterr().out)["summary"]["calculations"]


def test_each_file_is_read_once(walk, tmp_path, capsys):
    a = str(walk / "a.yaml")
    assert _calculations([a], capsys) == 1
    assert _calculations([a, a], capsys) == 1
    assert _calculations([str(walk), a], capsys) == 2  # a.yaml and the memo
    link = tmp_path / "link.yaml"
    link.symlink_to(walk / "a.yaml")
    assert _calculations([a, str(link)], capsys) == 1
    assert _calculations([str(walk), str(walk) + "/"], capsys) == 2


# --- 7. format from the output's suffix, --version ---------------------------------------


def _parsed(fmt, text):
    if fmt == "json":
        return json.loads(text)["format"] == "regimecheck-report/1"
    if fmt == "sarif":
        return json.loads(text)["version"] == "2.1.0"
    if fmt == "junit":
        return ET.fromstring(text.encode("utf-8")).tag == "testsuites"
    if fmt == "html":
        return text.startswith("<!DOCTYPE html>")
    return text.startswith("## regimecheck review")


@pytest.mark.parametrize(
    "name,fmt",
    [
        ("r.json", "json"),
        ("r.sarif", "sarif"),
        ("r.sarif.json", "sarif"),
        ("r.xml", "junit"),
        ("r.html", "html"),
        ("r.md", "markdown"),
    ],
)
def test_output_suffix_chooses_the_format(walk, tmp_path, capsys, name, fmt):
    target = tmp_path / name
    assert main(["check", str(walk / "a.yaml"), "--output", str(target)]) == 1
    capsys.readouterr()
    assert _parsed(fmt, target.read_text(encoding="utf-8"))


def test_explicit_format_wins_over_the_suffix(walk, tmp_path, capsys):
    target = tmp_path / "r.json"
    assert (
        main(["check", str(walk / "a.yaml"), "--format", "markdown", "--output", str(target)]) == 1
    )
    capsys.readouterr()
    assert _parsed("markdown", target.read_text(encoding="utf-8"))


def test_version(capsys):
    assert main(["--version"]) == 0
    printed = capsys.readouterr().out.strip()
    declared = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    assert printed == f"regimecheck {declared['project']['version']}"
    assert printed == f"regimecheck {version('regimecheck')}"
