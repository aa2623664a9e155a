"""The console report on a terminal (rich, colour forced), pinned byte for byte at three
widths, and as plain text (a pipe).

The input is the many-calculation file of tests/test_console_many.py (every shipped
example, a tab, a right-to-left override, a word longer than the line) and one more
calculation whose name, notes, waiver and formulas hold text a terminal would act on or
that rich would read as markup: control characters, a right-to-left override, rich
markup such as ``[bold]``, wide (East Asian) characters and very long words.  The
expected texts, tests/data/console_rich_w{60,100,140}.txt and console_hostile_plain.txt,
were printed by this test's rendering on main (commit 1c20ef8) before the console
report's two paths were folded into one producer of lines, so a change in any byte or
style shows here.
"""

from __future__ import annotations

import io
from pathlib import Path

import pytest
from rich.console import Console
from test_console_many import many_examples_text

from checker.api import check_paths
from checker.records import replace
from checker.report.check_report import render_console

ROOT = Path(__file__).resolve().parents[1]
DATA = ROOT / "tests" / "data"

# invented text of the kind a pasted memo carries (YAML double-quoted escapes)
_HOSTILE = """name: "[bold]LG-9[/bold] \\u6e29\\u5ea6 gate \\u202eRTL\\u202c [link=x]y"
material: GaN
temperature: 25 degC
doping:
  acceptors: {Mg: 2e19 cm-3}
stated:
  hole_density: 2e19 cm-3
  hole_mobility: 10 cm^2/(V*s)
assumes: [full-ionization]
formulas:
  - p = N_A
waivers:
  - rule: MOB01
    reason: "[red]checked[/red] \\u8a66\\u9a13\\u6e08\\u307f %s end"
"""


def rich_report_text(width: int | None, tmp_path: Path) -> str:
    """The console report of the pinned input, written as many.yaml in ``tmp_path`` (the
    current folder), as rich writes it to a colour terminal ``width`` columns wide (the
    command's own console settings, colour forced); for ``width`` None, as the command
    writes it to a pipe (plain text)."""
    path = tmp_path / "many.yaml"
    hostile = _HOSTILE % ("\\uff37" * 70)  # full-width letters: a long word of wide characters
    path.write_text(many_examples_text() + "---\n" + hostile, encoding="utf-8")
    result = check_paths(["many.yaml"])  # relative: the same lines in any folder
    # the reader refuses control characters in a file: text from elsewhere (an API
    # caller's records) may still hold them
    last = result.reports[-1]
    controlled = replace(
        last,
        calc=replace(last.calc, name="esc \x1b[31mred\x07 bell\ttab"),
        notes=[*last.notes, "note \x1b]0;title\x07 [bold]x[/bold] \u2028 " + "y" * 90],
        findings=[replace(f, waived="ok \x1b[2J" if f.waived else None) for f in last.findings],
    )
    result = replace(result, reports=[*result.reports, controlled])
    stream = io.StringIO()
    if width is None:
        render_console(result, stream=stream)
        return stream.getvalue()
    console = Console(
        file=stream,
        width=width,
        force_terminal=True,
        color_system="standard",
        highlight=False,
        legacy_windows=False,
    )
    render_console(result, console)
    return stream.getvalue()


@pytest.mark.parametrize("width", [60, 100, 140, None])
def test_rich_console_report_is_unchanged(width, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "cache"))
    printed = rich_report_text(width, tmp_path)
    name = f"console_rich_w{width}.txt" if width else "console_hostile_plain.txt"
    expected = (DATA / name).read_text(encoding="utf-8")
    assert ("\x1b[1m" in expected) == (width is not None) and "[bold]LG-9" in expected
    assert "\\x1b[31mred" in expected and "\\x1b]0;title" in expected
    assert printed == expected
