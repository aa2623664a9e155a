"""The console report of one file of many calculations, pinned byte for byte.

The file is every shipped example calculation (examples/*.yaml, in name order) joined as
the documents of one file, then two more: one with text a terminal would act on or no
line can hold (a name with a tab and a right-to-left override, a waiver reason with a
word longer than the line), one with a stated number in a p-type layer's electrons.
The expected text, tests/data/console_many_examples.txt, was printed by the command on
main (commit 263fe9b) before the console report was rewritten for speed, so a change in
any report line shows here as a difference.
"""

from __future__ import annotations

from pathlib import Path

from checker.cli import main

ROOT = Path(__file__).resolve().parents[1]
EXPECTED = ROOT / "tests" / "data" / "console_many_examples.txt"

# edge cases appended after the examples (GaN p-gate layer of examples/lg8_gan_pgate.yaml)
_EXTRA = """name: "LG-8 gate\\ttabbed \\u202eRTL"
material: GaN
temperature: 25 degC
doping:
  acceptors: {Mg: 2e19 cm-3}
  donors: {Si: 1e17 cm-3}
stated:
  hole_density: 2e19 cm-3
  hole_mobility: 10 cm^2/(V*s)
assumes: [full-ionization]
waivers:
  - rule: MOB01
    reason: see LR-2231 %s
---
name: LG-8 gate layer with a stated number the model cannot place
material: GaN
temperature: 25 degC
doping:
  acceptors: {Mg: 2e19 cm-3}
stated:
  hole_density: 2e19 cm-3
  hole_mobility: 10 cm^2/(V*s)
  electron_mobility: 300 cm^2/(V*s)
assumes: [full-ionization, non-degenerate]
""" % ("x" * 130)


def many_examples_text(root: Path = ROOT) -> str:
    """Every example calculation of ``root``/examples as the documents of one file."""
    docs = [
        path.read_text(encoding="utf-8").strip("\n") + "\n"
        for path in sorted((root / "examples").glob("*.yaml"))
    ]
    return "---\n".join([*docs, _EXTRA])


def test_console_text_of_many_calculations_is_unchanged(tmp_path, monkeypatch, capsys):
    (tmp_path / "many.yaml").write_text(many_examples_text(), encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "cache"))
    code = main(["check", "many.yaml"])
    printed = capsys.readouterr().out
    assert code == 1  # the examples hold errors
    expected = EXPECTED.read_text(encoding="utf-8")
    assert expected.count("\n── ") > 40 and "\\u202eRTL" in expected
    assert printed == expected
