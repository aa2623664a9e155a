"""Hostile and careless text in names, waiver reasons and file names reaches every report
format safely: no terminal escape, no raw HTML, well-formed XML and JSON, no crash on a
lone surrogate.

External judges: the XML 1.0 character production (W3C XML 1.0, 5th ed., §2.2 "Char"),
Python's expat parser (xml.etree), the json module, the OASIS SARIF 2.1.0 schema
(tests/data), the CommonMark reference behaviour as implemented by markdown-it-py, the
Unicode character categories of Python's unicodedata (Cc control, Cs surrogate), and
matplotlib's own text layout.
"""

import json
import os
import sys
import unicodedata
import xml.etree.ElementTree as ET
from pathlib import Path
from urllib.parse import unquote_to_bytes

import jsonschema
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from markdown_it import MarkdownIt

from checker.cli import main
from checker.engine.run import check_paths
from checker.report.check_report import render_console, render_json
from checker.report.ci_formats import render_junit, render_sarif
from checker.report.html_report import render_html
from checker.report.markdown_report import render_markdown
from checker.report.safe_text import visible

HOSTILE_NAME = "\ud800 <script>alert(1)</script> \x1b[31mRED\x1b[0m \x01 \ufffe \u202e|x"
HOSTILE_REASON = (
    "<img src=x onerror=alert(2)></td></tr><iframe src=//evil> \x07 `code` [a](javascript:x)"
)
HOSTILE_FILE = "odd`dir|\x1b]0;title\x07/\udcff.yaml"
CALCULATION = """name: plain
material: Si
temperature: 300 K
doping:
  donors: {P: 1e16 cm-3}
stated:
  electron_density: 1e16 cm-3
  thermal_voltage: 0.0345 V
waivers:
  - {rule: CONST01, reason: plain reason}
"""
RAW = ("\ud800", "\udcff", "\x1b", "\x01", "\x07", "\ufffe", "\u202e")


def xml_char_allowed(ch: str) -> bool:
    """W3C XML 1.0 (5th ed.) §2.2: Char ::= #x9 | #xA | #xD | [#x20-#xD7FF] |
    [#xE000-#xFFFD] | [#x10000-#x10FFFF]."""
    c = ord(ch)
    return (
        c in (0x9, 0xA, 0xD)
        or 0x20 <= c <= 0xD7FF
        or 0xE000 <= c <= 0xFFFD
        or 0x10000 <= c <= 0x10FFFF
    )


@pytest.fixture
def hostile(tmp_path):
    """A checked run whose user text is hostile: the report layer must be safe for any
    str, whatever the readers accept."""
    path = tmp_path / "calc.yaml"
    path.write_text(CALCULATION, encoding="utf-8")
    result = check_paths([str(path)])
    (report,) = result.reports
    report.calc.name = HOSTILE_NAME
    report.calc.source = HOSTILE_FILE
    (finding,) = report.findings
    finding.file = HOSTILE_FILE
    finding.waived = HOSTILE_REASON
    report.notes.append(f"note on {HOSTILE_NAME}")
    result.input_errors.append(f"{HOSTILE_FILE}:3: unknown material {HOSTILE_NAME!s}")
    return result


RENDER = {
    "json": lambda r: render_json(r, 1),
    "markdown": lambda r: render_markdown(r, 1),
    "sarif": lambda r: render_sarif(r, 1),
    "junit": lambda r: render_junit(r, 1, "warning"),
    "html": lambda r: render_html(r, 1),
}


def rendered(result, fmt):
    if fmt == "console":
        import io

        stream = io.StringIO()
        render_console(result, stream=stream)
        text = stream.getvalue()
    else:
        text = RENDER[fmt](result)
    text.encode("utf-8")  # no lone surrogate left to crash a writer
    return text


def report(path, fmt, capsys):
    code = main(["check", str(path), "--format", fmt])
    out, err = capsys.readouterr()
    assert code in (0, 1), err  # a report, not an input (2) or internal (3) error
    out.encode("utf-8")
    return out


def test_visible_leaves_only_characters_xml_and_terminals_accept():
    for code in range(0x110000):
        ch = chr(code)
        if visible(ch) != ch:
            continue
        # what is left unchanged: never a control (Unicode category Cc) other than tab and
        # newline, never a surrogate (Cs), always an XML 1.0 character
        assert unicodedata.category(ch) not in ("Cc", "Cs") or ch in "\t\n", hex(code)
        assert xml_char_allowed(ch), hex(code)
    assert visible("\x1b[31m") == r"\x1b[31m"
    assert visible("\ud800") == r"\ud800"
    assert visible("tab\tand\nnewline stay") == "tab\tand\nnewline stay"


@settings(max_examples=300, deadline=None)
@given(st.text(alphabet=st.characters(min_codepoint=0, max_codepoint=0x10FFFF)))
def test_any_text_made_visible_is_xml_and_utf8(text):
    safe = visible(text)
    safe.encode("utf-8")
    element = ET.Element("a", b=safe)
    element.text = safe
    back = ET.fromstring(ET.tostring(element, encoding="unicode"))  # expat: XML 1.0
    assert back.get("b") == safe and (back.text or "") == safe


@pytest.mark.parametrize("fmt", ["console", "json", "markdown", "sarif", "junit", "html"])
def test_no_raw_unsafe_character_in_any_format(hostile, fmt):
    text = rendered(hostile, fmt)
    for ch in RAW:
        assert ch not in text, (fmt, ch)
    # the text is still there, escaped where it was unsafe (JSON doubles a backslash)
    plain = text.replace("\\\\", "\\")
    assert r"\ud800" in plain and r"\x1b[31mRED" in plain and r"\u202e" in plain, fmt


def test_terminal_colours_are_ours_only(hostile):
    """On a terminal rich writes its own escape sequences; the name's must not pass."""
    import io

    from rich.console import Console

    stream = io.StringIO()
    render_console(hostile, Console(file=stream, force_terminal=True, width=100))
    out = stream.getvalue()
    assert "\x1b[" in out  # rich styles the text itself
    assert "\x1b[31mRED" not in out and "\x1b]0;" not in out
    assert r"\x1b[31mRED" in out
    assert not any(ch in out for ch in RAW if ch != "\x1b")


def test_json_and_sarif_parse_and_show_the_name(hostile):
    data = json.loads(rendered(hostile, "json"))
    name = data["calculations"][0]["name"]
    assert name == visible(HOSTILE_NAME)
    assert name.startswith(r"\ud800 <script>") and r"\x1b[31mRED" in name
    log = json.loads(rendered(hostile, "sarif"))
    schema = json.loads(
        (Path(__file__).parent / "data" / "sarif-schema-2.1.0.json").read_text(encoding="utf-8")
    )
    jsonschema.Draft7Validator(schema).validate(log)  # the OASIS SARIF 2.1.0 schema
    (result,) = log["runs"][0]["results"]
    assert result["properties"]["calculation"] == name
    assert result["suppressions"][0]["justification"].startswith("<img src=x")


def test_junit_and_html_are_well_formed_xml(hostile):
    junit = ET.fromstring(rendered(hostile, "junit").encode("utf-8"))  # expat: XML 1.0
    names = [case.get("name") for case in junit.iter("testcase")]
    assert any(r"\ud800 <script>" in n and r"\x01" in n for n in names)
    page = rendered(hostile, "html")
    root = ET.fromstring(page.split("\n", 1)[1].encode("utf-8"))  # after the DOCTYPE
    tags = {element.tag.split("}")[-1] for element in root.iter()}
    assert not tags & {"script", "img", "iframe"}
    assert "<script>alert(1)</script>" in "".join(root.itertext())  # shown as text


def test_markdown_renders_no_html_from_user_text(hostile):
    text = rendered(hostile, "markdown")
    # CommonMark with raw HTML enabled and GFM tables, as a memo viewer renders it
    html = MarkdownIt("commonmark", {"html": True}).enable("table").render(text)
    for tag in ("<script", "<img", "<iframe", "<a href", "</tr><iframe"):
        assert tag not in html, tag
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html  # visible as text
    assert "onerror=alert(2)" in html
    table = html.split("<tbody>", 1)[1].split("</tbody>", 1)[0]
    (row,) = [r for r in table.split("<tr>") if "CONST01" in r]
    # the pipes, backticks and closing tags of the name, file and reason stay in their cells
    assert row.count("<td>") == 5
    assert "<code>odd`dir|" in row


@pytest.mark.skipif(sys.platform != "linux", reason="file names as raw bytes: Linux only")
def test_file_name_that_is_not_utf8(tmp_path, capsys):
    folder = tmp_path / "walk"
    folder.mkdir()
    raw = os.path.join(os.fsencode(folder), b"bad\xff name.yaml")
    with open(raw, "wb") as out:
        out.write(CALCULATION.encode("utf-8"))
    for fmt in ("console", "json", "markdown", "junit", "html"):
        out = report(folder, fmt, capsys)
        assert r"bad\udcff name.yaml" in out.replace("\\\\", "\\"), fmt
    # SARIF locations are URI references: RFC 3986 percent-encoding of the name's own bytes
    log = json.loads(report(folder, "sarif", capsys))
    (location,) = [
        r["locations"][0]["physicalLocation"]["artifactLocation"]["uri"]
        for r in log["runs"][0]["results"]
    ]
    assert " " not in location
    assert unquote_to_bytes(location) == raw


def test_state_command_takes_names_as_text_not_markup(tmp_path, capsys):
    calc = tmp_path / "calc.yaml"
    calc.write_text(CALCULATION.replace("name: plain", 'name: "[/] [bold]x"'), encoding="utf-8")
    assert main(["state", str(calc)]) == 0  # rich would fail on "[/]" as markup
    assert "[/] [bold]x" in capsys.readouterr().out
    assert main(["state", str(calc), "--format", "json"]) == 0
    assert json.loads(capsys.readouterr().out)["points"][0]["name"] == "[/] [bold]x"


def test_state_report_escapes_what_a_reader_let_through():
    import io

    from rich.console import Console

    from checker.report import state_report

    summary = {key: 0.0 for key, _, _ in state_report.ROWS}
    stream = io.StringIO()
    state_report.render_console(
        [(HOSTILE_NAME, HOSTILE_FILE, summary)], [HOSTILE_NAME], Console(file=stream, width=100)
    )
    data = state_report.render_json([(HOSTILE_NAME, HOSTILE_FILE, summary)], [HOSTILE_NAME])
    for text in (stream.getvalue(), data):
        assert not any(ch in text for ch in RAW)
    assert json.loads(data)["points"][0]["name"] == visible(HOSTILE_NAME)


def test_plot_titles_with_dollar_signs_and_controls():
    import numpy as np

    from checker.engine.regime.regime_map import eta_curve
    from checker.inputs.material_catalog import resolve_material
    from checker.report.plots import draw_eta_curve, render

    # matplotlib reads text between two $ as mathtext; "\frac{" alone does not parse
    fig = draw_eta_curve(
        eta_curve(resolve_material("Si"), "P", 1e23, np.linspace(100, 400, 20)),
        title="cost $\\frac{ and $5 \x1b[0m \ud800",
    )
    svg = render(fig, "svg").decode("utf-8")
    ET.fromstring(svg)
    assert r"\x1b[0m" in svg and r"\ud800" in svg


@pytest.mark.parametrize("fmt", ["console", "json", "markdown", "sarif", "junit", "html"])
def test_zero_acceptor_density_and_sweep_from_zero(tmp_path, capsys, fmt):
    calc = tmp_path / "zero.yaml"
    calc.write_text(
        "name: zero boron\nmaterial: Si\ntemperature: 300 K\n"
        "doping:\n  acceptors: {B: 0 cm-3}\n---\n"
        "name: boron from zero\nmaterial: Si\ntemperature: 300 K\n"
        "doping:\n  acceptors: {B: {from: 0 cm-3, to: 1e17 cm-3, steps: 5, "
        "spacing: linear}}\n",
        encoding="utf-8",
    )
    out = report(calc, fmt, capsys)
    if fmt == "sarif":  # SARIF names calculations only in results, and none fired
        assert json.loads(out)["runs"][0]["invocations"][0]["executionSuccessful"]
    else:
        assert "zero boron" in out and "boron from zero" in out
