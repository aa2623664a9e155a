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

import jsonschema
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from markdown_it import MarkdownIt

from checker.cli import main
from checker.report.safe_text import visible

HOSTILE_NAME = r'\ud800 <script>alert(1)</script> \x1b[31mRED\x1b[0m \x01 \ufffe \u202e|x'
HOSTILE_REASON = r'<img src=x onerror=alert(2)></td></tr><iframe src=//evil> \x07 `code` [a](javascript:x)'
CALCULATION = f'''name: "{HOSTILE_NAME}"
material: Si
temperature: 300 K
doping:
  donors: {{P: 1e16 cm-3}}
stated:
  electron_density: 1e16 cm-3
  thermal_voltage: 0.0345 V
waivers:
  - {{rule: CONST01, reason: "{HOSTILE_REASON}"}}
'''
RAW = ("\ud800", "\x1b", "\x01", "\x07", "\ufffe", "\u202e")


def xml_char_allowed(ch: str) -> bool:
    """W3C XML 1.0 (5th ed.) §2.2: Char ::= #x9 | #xA | #xD | [#x20-#xD7FF] |
    [#xE000-#xFFFD] | [#x10000-#x10FFFF]."""
    c = ord(ch)
    return (c in (0x9, 0xA, 0xD) or 0x20 <= c <= 0xD7FF or 0xE000 <= c <= 0xFFFD
            or 0x10000 <= c <= 0x10FFFF)


@pytest.fixture
def hostile(tmp_path):
    path = tmp_path / "hostile.yaml"
    path.write_text(CALCULATION, encoding="utf-8")
    return path


def report(path, fmt, capsys):
    code = main(["check", str(path), "--format", fmt])
    out, err = capsys.readouterr()
    assert code in (0, 1), err           # a report, not an internal error (3)
    out.encode("utf-8")                  # no lone surrogate left to crash a writer
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
    back = ET.fromstring(ET.tostring(element, encoding="unicode"))    # expat: XML 1.0
    assert back.get("b") == safe and (back.text or "") == safe


def test_console_shows_escapes_instead_of_acting_on_them(hostile, capsys):
    out = report(hostile, "console", capsys)
    for ch in RAW:
        assert ch not in out
    assert r"\x1b[31mRED" in out and r"\ud800" in out and r"\u202e" in out


def test_json_and_sarif_parse_and_show_the_name(hostile, capsys):
    data = json.loads(report(hostile, "json", capsys))
    name = data["calculations"][0]["name"]
    assert name.startswith(r"\ud800 <script>") and r"\x1b[31mRED" in name
    assert not any(ch in json.dumps(data, ensure_ascii=False) for ch in RAW)
    log = json.loads(report(hostile, "sarif", capsys))
    schema = json.loads((Path(__file__).parent / "data" / "sarif-schema-2.1.0.json")
                        .read_text(encoding="utf-8"))
    jsonschema.Draft7Validator(schema).validate(log)      # the OASIS SARIF 2.1.0 schema
    text = json.dumps(log, ensure_ascii=False)
    assert not any(ch in text for ch in RAW)
    result, = log["runs"][0]["results"]
    assert result["properties"]["calculation"] == name
    assert result["suppressions"][0]["justification"].startswith("<img src=x")


def test_junit_and_html_are_well_formed_xml(hostile, capsys):
    junit = ET.fromstring(report(hostile, "junit", capsys).encode("utf-8"))  # expat: XML 1.0
    names = [case.get("name") for case in junit.iter("testcase")]
    assert any(r"\ud800 <script>" in n and r"\x01" in n for n in names)
    page = report(hostile, "html", capsys)
    root = ET.fromstring(page.split("\n", 1)[1].encode("utf-8"))   # after the DOCTYPE
    tags = {element.tag.split("}")[-1] for element in root.iter()}
    assert not tags & {"script", "img", "iframe"}
    assert "<script>alert(1)</script>" in "".join(root.itertext())   # shown as text


def test_markdown_renders_no_html_from_user_text(hostile, capsys):
    text = report(hostile, "markdown", capsys)
    for ch in RAW:
        assert ch not in text
    # CommonMark with raw HTML enabled and GFM tables, as a memo viewer renders it
    rendered = MarkdownIt("commonmark", {"html": True}).enable("table").render(text)
    for tag in ("<script", "<img", "<iframe", "<a href", "</tr><iframe"):
        assert tag not in rendered, tag
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in rendered     # visible as text
    assert "onerror=alert(2)" in rendered
    table = rendered.split("<tbody>", 1)[1].split("</tbody>", 1)[0]
    row, = [r for r in table.split("<tr>") if "CONST01" in r]
    assert row.count("<td>") == 5       # the pipe and the closing tags in the reason
    # stay inside their cell


def test_markdown_code_spans_survive_backticks_and_pipes(tmp_path, capsys):
    folder = tmp_path / "odd`name|dir"
    folder.mkdir()
    calc = folder / "calc.yaml"
    calc.write_text(CALCULATION.replace(HOSTILE_NAME, "plain"), encoding="utf-8")
    text = report(calc, "markdown", capsys)
    rendered = MarkdownIt("commonmark").enable("table").render(text)
    assert "odd`name|dir" in rendered.replace("&amp;", "&")
    row, = [r for r in rendered.split("<tr>") if "CONST01" in r]
    assert row.count("<td>") == 5


@pytest.mark.skipif(sys.platform != "linux", reason="file names as raw bytes: Linux only")
def test_file_name_that_is_not_utf8(tmp_path, capsys):
    folder = tmp_path / "walk"
    folder.mkdir()
    raw = os.path.join(os.fsencode(folder), b"bad\xff name.yaml")
    with open(raw, "wb") as out:
        out.write(CALCULATION.replace(HOSTILE_NAME, "plain").encode("utf-8"))
    for fmt in ("console", "json", "markdown", "junit", "sarif", "html"):
        out = report(folder, fmt, capsys)
        assert r"bad\udcff name.yaml" in out.replace("\\\\", "\\"), fmt


def test_state_command_takes_names_as_text_not_markup(tmp_path, capsys):
    calc = tmp_path / "calc.yaml"
    calc.write_text(CALCULATION.replace(HOSTILE_NAME, r"[/] [bold]x\x1b"), encoding="utf-8")
    assert main(["state", str(calc)]) == 0
    out = capsys.readouterr().out
    assert "[/] [bold]x" in out and "\x1b" not in out
    assert main(["state", str(calc), "--format", "json"]) == 0
    assert json.loads(capsys.readouterr().out)["points"][0]["name"] == r"[/] [bold]x\x1b"


def test_plot_titles_with_dollar_signs_and_controls():
    import numpy as np

    from checker.inputs.material_catalog import resolve_material
    from checker.report.plots import draw_eta_curve, render

    # matplotlib reads text between two $ as mathtext; "\frac{" alone does not parse
    fig = draw_eta_curve(resolve_material("Si"), "P", 1e23, np.linspace(100, 400, 20),
                         title="cost $\\frac{ and $5 \x1b[0m \ud800")
    svg = render(fig, "svg").decode("utf-8")
    ET.fromstring(svg)
    assert r"\x1b[0m" in svg and r"\ud800" in svg


@pytest.mark.parametrize("fmt", ["console", "json", "markdown", "sarif", "junit", "html"])
def test_zero_acceptor_density_and_sweep_from_zero(tmp_path, capsys, fmt):
    calc = tmp_path / "zero.yaml"
    calc.write_text("name: zero boron\nmaterial: Si\ntemperature: 300 K\n"
                    "doping:\n  acceptors: {B: 0 cm-3}\n---\n"
                    "name: boron from zero\nmaterial: Si\ntemperature: 300 K\n"
                    "doping:\n  acceptors: {B: {from: 0 cm-3, to: 1e17 cm-3, steps: 5, "
                    "spacing: linear}}\n", encoding="utf-8")
    out = report(calc, fmt, capsys)
    if fmt == "sarif":        # SARIF names calculations only in results, and none fired
        assert json.loads(out)["runs"][0]["invocations"][0]["executionSuccessful"]
    else:
        assert "zero boron" in out and "boron from zero" in out
