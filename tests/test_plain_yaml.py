"""The line reader of the usual calculation file (inputs/plain_yaml.py) against PyYAML:
every text it reads must read the same there -- each node's plain text, its start line
and column, every document -- and every text it is not sure of must go to the composer
(None).

References: PyYAML 6's pure-Python composer (``yaml.SafeLoader``) and its libyaml binding
(``yaml.CSafeLoader``), both YAML 1.1; each node reduced to what the calculation reader
keeps: its text (no tag resolved) and its start mark."""

import random
from pathlib import Path

import pytest
import yaml

from checker.inputs.calculation_file import read_documents
from checker.inputs.plain_yaml import plain_documents

ROOT = Path(__file__).resolve().parents[1]
LOADERS = [yaml.SafeLoader] + ([yaml.CSafeLoader] if hasattr(yaml, "CSafeLoader") else [])


def _plain(node, path, positions):
    positions[path] = (node.start_mark.line + 1, node.start_mark.column + 1)
    if isinstance(node, yaml.MappingNode):
        return {k.value: _plain(v, (*path, k.value), positions) for k, v in node.value}
    if isinstance(node, yaml.SequenceNode):
        return [_plain(child, (*path, i), positions) for i, child in enumerate(node.value)]
    return node.value


def pyyaml(text: str, loader) -> list:
    """(value, positions as a list in document order) of every document, by PyYAML."""
    out = []
    for node in yaml.compose_all(text, Loader=loader):
        positions: dict = {}
        value = _plain(node, (), positions)
        out.append((value, list(positions.items())))
    return out


def fast(text: str) -> list | None:
    read = plain_documents(text)
    return None if read is None else [(value, list(pos.items())) for value, pos in read]


def assert_same_where_read(text: str) -> bool:
    """Whether the line reader read ``text``; where it did, PyYAML (both parsers) reads
    the same and refuses nothing (no duplicate key either)."""
    read = fast(text)
    if read is None:
        return False
    for loader in LOADERS:
        assert pyyaml(text, loader) == read, (loader.__name__, text)
    assert read_documents(text, "f.yaml")[1] == []
    for _, positions in read:  # no key twice (PyYAML's composer keeps both)
        assert len(positions) == len(dict(positions))
    return True


def many_calculations(count: int) -> str:
    """Calculations as bench/bench_check.py writes them (flow mappings, flow and block
    sequences, formulas with '*', '/' and '(')."""
    docs = []
    for i in range(count):
        docs.append(
            f"name: generated {i}\nmaterial: Si\ntemperature: {200 + i} K\n"
            f"doping:\n  donors: {{P: {1e15 * (i + 1):.3e} cm-3}}\n"
            "  acceptors: {B: 1e14 cm-3, Al: 2e13 cm-3}\n"
            "stated:\n  electron_density: 1e15 cm-3\n  electron_mobility: 1000 cm^2/(V*s)\n"
            "assumes: [non-degenerate, full-ionization]\n"
            "formulas:\n  - n = N_D\n  - E_F - E_c = k*T*ln(N_D/N_c)\n"
        )
    return "---\n".join(docs)


READ = {
    "generated": many_calculations(20),
    "leading document mark and comments": (
        "# a comment\n---\na: 1  # after\n\n  # indented\nb: x y\n"
    ),
    "empty values": "a:\nb:   \nc:\n  # comment\nd: 1\ne:\n",
    "nested blocks": "a:\n  b:\n    c: 1\n    d:\n      - x\n      - y\n  e: 2\nf: 3\n",
    "sequence of mappings": (
        "waivers:\n  - rule: MOB01\n    reason: measured\n  - rule: X\n    n:\n      m: 1\nz: 1\n"
    ),
    "flow with blanks": "a: { P: 1 cm-3 ,B: x }\nb: [ a,b , c ]\nc: {}\nd: []\n",
    "text that is not ASCII": (
        "name: µ-Probe naïve · 85 °C\nstated: {rho: 1 Ω*cm, x: ∞}\nl: [é, ü]\n"
    ),
    "indicators inside scalars": "a: x & y * z ! w ? v | u > t % s @ r ` q\nb: -1.5 eV\nc: .5\n",
    "quotes inside scalars": "a: don't \"say\"\nb: 2'\n",
    "memo padding": "\n\n\n\nmaterial: Si\n\n\ntemperature: 300 K\n",
    "no final newline": "a: 1\nb: 2",
    "several documents": "a: 1\n---\nb: 2\n---\n# note\nc:\n  - 1\n",
    "key of 1,024 characters": "a" * 1024 + ": 1\nx: {" + "b" * 1024 + ": 2}\n",
}

REFUSED = {  # each goes to the composer, which reads or refuses it with its own words
    "duplicate key": "a: 1\na: 2\n",
    "duplicate flow key": "a: {P: 1, P: 2}\n",
    "anchor and alias": "a: &x 1\nb: *x\n",
    "tag": "a: !!str 1\n",
    "quoted scalar": 'a: "x"\n',
    "single-quoted scalar": "a: 'x'\n",
    "multi-line scalar": "a: one\n  two\n",
    "continuation in a sequence": "a:\n  - one\n    two\n",
    "block scalar": "a: |\n  x\n",
    "folded scalar": "a: >-\n  x\n",
    "nested flow": "a: {b: {c: 1}}\n",
    "flow over lines": "a: [1,\n  2]\n",
    "empty flow value": "a: {P: }\n",
    "trailing comma": "a: [1, 2, ]\n",
    "flow '?'": "a: [x?y]\n",
    "indentless sequence": "a:\n- 1\n- 2\n",
    "odd dedent": "a:\n    b: 1\n  c: 2\n",
    "deeper line": "a: 1\n  b: 2\n",
    "key without blank": "a:b\n",
    "colon in a value": "a: 1:2\n",
    "hash in a value": "a: x#y\n",
    "tab": "a:\t1\n",
    "carriage return": "a: 1\r\nb: 2\r\n",
    "line separator": "a: x\u2028y\n",
    "byte-order mark": "\ufeffa: 1\n",
    "document end": "a: 1\n...\n",
    "mark with text": "--- a: 1\n",
    "empty document": "a: 1\n---\n",
    "empty text": "",
    "root sequence": "- a\n- b\n",
    "indented root": "  a: 1\n",
    "bare scalar": "just text\n",
    "sequence entry without text": "a:\n  -\n  - x\n",
    "complex key": "? a\n: b\n",
    "directive": "%YAML 1.1\n---\na: 1\n",
    "control character": "a: x\x07y\n",
    "too deep": "".join(" " * i + f"k{i}:\n" for i in range(12)) + " " * 12 + "x: 1\n",
    # YAML 1.1 §9.1.2 / PyYAML: an implicit key ends within 1,024 characters
    "key of 1,025 characters": "a" * 1025 + ": 1\n",
    "flow key of 1,025 characters": "x: {" + "a" * 1025 + ": 1}\n",
    "entry key of 1,025 characters": "x:\n  - " + "a" * 1025 + ": 1\n",
}


@pytest.mark.parametrize("name", READ)
def test_reads_as_pyyaml(name):
    assert assert_same_where_read(READ[name])


@pytest.mark.parametrize("name", REFUSED)
def test_leaves_the_rest_to_the_composer(name):
    assert plain_documents(REFUSED[name]) is None


def test_empty_value_stands_after_its_colon():
    # PyYAML places an empty plain value at the end of the ':' token (line 2, column 3)
    assert plain_documents("a: 1\nb:   \n")[0][1][("b",)] == (2, 3)


def test_examples_in_the_usual_form_are_read_here():
    examples = sorted((ROOT / "examples").glob("*.yaml"))
    read = [p.name for p in examples if assert_same_where_read(p.read_text(encoding="utf-8"))]
    # every example but the sweep (a flow mapping inside a flow mapping) and the
    # header comment with a '?'... is read by the line reader
    assert len(read) >= len(examples) - 2, read
    assert "larkspur_operating_points.yaml" in read


def test_mutated_texts_read_as_pyyaml_or_go_to_the_composer():
    """Random edits of calculation texts (characters that make YAML structure, changed
    indentation, repeated and dropped lines): whatever the line reader accepts, PyYAML
    reads the same."""
    rng = random.Random(20261203)
    bases = [many_calculations(2), READ["sequence of mappings"], READ["nested blocks"]]
    pieces = [":", ": ", "#", " #", " ", "-", "- ", "{", "}", "[", "]", ",", '"', "'", "&",
              "*", "!", "?", "|", ">", "%", "@", "\t", "µ", "\xa0", "\n", "\n---\n", "...",
              "k: v", "\n  ", "\n- ", "\n  - "]  # fmt: skip
    read = 0
    for _ in range(1500):
        text = rng.choice(bases)
        for _ in range(rng.randint(1, 3)):
            lines = text.split("\n")
            j = rng.randrange(len(lines))
            kind = rng.random()
            if kind < 0.15:
                lines[j] = " " * rng.randint(1, 3) + lines[j]
            elif kind < 0.25:
                lines[j] = lines[j][rng.randint(1, 3) :]
            elif kind < 0.35:
                lines.insert(j, lines[rng.randrange(len(lines))])
            elif kind < 0.4:
                del lines[j]
            else:
                k = rng.randrange(len(lines[j]) + 1)
                lines[j] = lines[j][:k] + rng.choice(pieces) + lines[j][k:]
            text = "\n".join(lines)
        try:
            read += assert_same_where_read(text)
        except yaml.YAMLError:
            pytest.fail(f"read here, refused by PyYAML: {text!r}")
    assert read > 100  # the edits left many texts in the form read here


def test_quotes_in_plain_scalars_do_not_count_as_nesting():
    """A quote inside a plain scalar (x'y, 5") is text, and a bracket in a comment is
    comment: 40 such lines in one document are read by both readers alike, as PyYAML
    reads them (the composer's nesting guard once counted them as 40 open levels)."""
    for text in (
        "".join(f"k{i}: [x'y]\n" for i in range(40)),
        "".join(f'k{i}: [5"]\n' for i in range(40)),
        "".join(f"k{i}: x  # see [{i}\n" for i in range(40)),
    ):
        assert assert_same_where_read(text)
        tabbed = text + "# a tab\there sends the text to the composer\n"
        assert fast(tabbed) is None
        composed = read_documents(tabbed, "f.yaml")
        assert composed[1] == []
        assert composed[0][0].value == pyyaml(tabbed, yaml.SafeLoader)[0][0]
