"""User YAML is parsed by libyaml (PyYAML's C binding) with the strict rules composed in
Python; the reading must be the one of PyYAML's own pure-Python parser, the reference
here: the same values at the same line and column, and the same refusals and messages.

References: PyYAML 6 (``yaml.SafeLoader``, pure Python: scanner, parser, composer) and
its libyaml binding (``yaml.CSafeLoader``); both implement YAML 1.1.  The last test checks
that a file found by a directory walk is parsed once."""

import random
from pathlib import Path

import pytest
import yaml

from checker.inputs import yaml_source
from checker.inputs.yaml_source import compose_documents

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "examples").glob("*.yaml"))
# characters that make YAML structure, plus text that is not ASCII
ALPHABET = list(":-[]{}\n '\"&*!#|>,%@`\\é😀abc0.\u2028")


def shape(node, with_empty_columns=True):
    """A node tree as (value, line, column) nested lists: what the reader keeps.  An
    empty plain value in flow style ('{P: }') has no text to stand on: libyaml places it
    at the next token, PyYAML at the end of the previous one; without
    ``with_empty_columns`` only its line is compared."""
    mark = (node.start_mark.line, node.start_mark.column)
    if isinstance(node, yaml.ScalarNode):
        if node.value == "" and not with_empty_columns:
            mark = (node.start_mark.line,)
        return (node.value, mark)
    children = [
        [shape(part, with_empty_columns) for part in child]
        if isinstance(child, tuple)
        else shape(child, with_empty_columns)
        for child in node.value
    ]
    return (children, mark)


def pure_strict(text: str, name: str):
    """The strict reading on PyYAML's pure-Python parser alone."""
    saved = yaml_source._COMPOSER
    yaml_source._COMPOSER = yaml_source._StrictLoader
    try:
        return compose_documents(text, name)
    finally:
        yaml_source._COMPOSER = saved


def test_libyaml_parses_where_pyyaml_has_it():
    # the speed of `check` rests on it; PyYAML wheels ship it for the common platforms,
    # and without it the pure-Python parser reads alone
    with_libyaml = getattr(yaml, "__with_libyaml__", False)
    assert (yaml_source._COMPOSER is not yaml_source._StrictLoader) == with_libyaml


def assert_reads_as_pyyaml(text: str):
    nodes, errors = compose_documents(text, "f.yaml")
    reference = list(yaml.compose_all(text, Loader=yaml.SafeLoader))  # noqa: S506 - safe
    assert errors == []
    assert [shape(n) for n in nodes] == [shape(n) for n in reference]


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_every_example_reads_as_pyyaml_reads_it(path):
    assert_reads_as_pyyaml(path.read_text(encoding="utf-8"))


@pytest.mark.parametrize(
    "text",
    [
        "\ufeffname: é\nmaterial: [Si, éé, {x: y}]\n",
        "a: 😀😀 b\nc: [😀, d]\n",
        "a: 1\r\nb: [x,\r\n  é]\r\n",
        "x: 'é\n  ü'\ny: z\n",
        "---\na: é\n---\nb: ü\n...\n",
        "a: b\u2028c: d\n",
        "a: b\x85c: d\n",
        "a: |\n  line one\n  line two\nb: >\n  folded\n  text\n",
    ],
)
def test_marks_count_characters_as_pyyaml_does(text):
    assert_reads_as_pyyaml(text)


@pytest.mark.parametrize(
    "text",
    [
        "a: &x 1\nb: *x\n",
        "a: !!float abc\n",
        "a: 1\na: 2\n",
        "? [a, b]\n: 1\n",
        'a: "\\ud800"\n',
        "a: b\x0cc\n",
        "a:\n\t- b\n",  # a tab PyYAML refuses and libyaml would accept
        "a: {b: c, ? d}\n",  # an explicit key in flow: the same
        "a: [x, !b, c]\n",  # libyaml ends the tag before the comma, PyYAML after it
        "a: [b\n",
        "a: 1\n---\nb: &y 2\nc: *y\n---\nd: 3\n",
        "[" * 40 + "]" * 40 + "\n---\na: 1\n",
        # refusals in a text without '&' or '!': libyaml's tree is built, then refused
        "a: *x\n",  # an alias with no anchor
        '"k\\x07": 1\n',  # an escape writing a control character in a key
        "a:\n  b: 1\n  b: 2\n",  # a repeated key below the top
        "{a: 1, a: 2}\n",
        "a: 1\n---\n" + "".join("  " * i + f"k{i}:\n" for i in range(40)) + "---\nb: 2\n",
        "x: [{a: [b, {c: d}]}]\n" * 3 + "y: [" * 30 + "]" * 30 + "\n",
        # at the nesting limit and either side of it: mappings, sequences, an empty one
        *(
            "".join("  " * i + f"k{i}:\n" for i in range(n)) + "  " * n + "v\n"
            for n in (31, 32, 33)
        ),
        *("- " * n + "x\n" for n in (31, 32)),
        *("- " * n + "[]\n" for n in (31, 32)),
        # block nesting far past the limit, which libyaml's own composer would recurse
        # into until the C stack overflows: composed event by event instead
        "- " * 100_000 + "x\n",
        "".join(" " * i + f"k{i}:\n" for i in range(2000)) + "v\n",
    ],
)
def test_refusals_are_pyyaml_s(text):
    assert compose_documents(text, "f.yaml")[1] == pure_strict(text, "f.yaml")[1]
    nodes, _ = compose_documents(text, "f.yaml")
    assert [shape(n) for n in nodes] == [shape(n) for n in pure_strict(text, "f.yaml")[0]]


def test_damaged_examples_read_as_pyyaml_reads_them():
    """Examples with a few structural characters inserted or deleted at random (a fixed
    seed): each reads to the same values, marks and messages on both parsers."""
    texts = [path.read_text(encoding="utf-8") for path in EXAMPLES]
    rng = random.Random(16)
    for _ in range(400):
        chars = list(rng.choice(texts))
        for _ in range(rng.randint(1, 4)):
            at = rng.randrange(len(chars) + 1)
            if rng.random() < 0.5:
                chars.insert(at, rng.choice(ALPHABET))
            elif at < len(chars):
                del chars[at]
        text = "".join(chars)
        nodes, errors = compose_documents(text, "f.yaml")
        ref_nodes, ref_errors = pure_strict(text, "f.yaml")
        assert errors == ref_errors, text
        assert [shape(n, False) for n in nodes] == [shape(n, False) for n in ref_nodes], text


def test_without_libyaml_the_pure_parser_reads(monkeypatch):
    monkeypatch.setattr(yaml_source, "_COMPOSER", yaml_source._StrictLoader)
    nodes, errors = compose_documents("a: &x 1\nb: *x\n---\nc: 2\n", "f.yaml")
    assert errors == ["f.yaml:2:4: YAML aliases (*name) are not accepted; write the value out"]
    assert [shape(n) for n in nodes] == [([[("c", (3, 0)), ("2", (3, 3))]], (3, 0))]


def test_a_walked_file_is_parsed_once(tmp_path, monkeypatch):
    """A file found by a directory walk is read once: the documents that decide whether
    it holds calculations are those that are checked."""
    from checker.inputs import calculation_file

    calls = []
    original = calculation_file.read_documents  # the line reader, else the composer

    def counted(text, name):
        calls.append(name)
        return original(text, name)

    monkeypatch.setattr(calculation_file, "read_documents", counted)
    calc = tmp_path / "calc.yaml"
    calc.write_text("name: a\nmaterial: Si\ntemperature: 300 K\n", encoding="utf-8")
    other = tmp_path / "settings.yaml"
    other.write_text("jobs: {build: {runs-on: x}}\n", encoding="utf-8")
    read = calculation_file.read_calculation_file(calc, explicit=False)
    skipped = calculation_file.read_calculation_file(other, explicit=False)
    assert [c.name for c in read.calculations] == ["a"] and read.errors == []
    assert skipped.calculations == [] and skipped.errors == []  # some other YAML
    assert calls == [str(calc), str(other)]


def test_a_plain_file_is_composed_by_libyaml(monkeypatch):
    """A text without anchors, tags or refused constructs (the usual file) is composed
    by libyaml's own composer, and reads as PyYAML's pure-Python parser reads it."""
    composed = []
    original = yaml_source._tree_is_plain

    def seen(node):
        composed.append(node)
        return original(node)

    monkeypatch.setattr(yaml_source, "_tree_is_plain", seen)
    text = "---\n".join(path.read_text(encoding="utf-8") for path in EXAMPLES[:3])
    assert "&" not in text and "!" not in text
    assert_reads_as_pyyaml(text)
    assert len(composed) == len(list(yaml.compose_all(text, Loader=yaml.SafeLoader)))  # noqa: S506
