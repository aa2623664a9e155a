"""A plain ``check`` command line is read without argparse (start-up cost); it must read
to exactly what argparse reads (the parser in checker/cli_parser.py, argparse being the
reference), and every other command line must still go to argparse."""

import pytest

from checker.cli import _plain_check
from checker.cli_parser import parser

READ_HERE = [
    ["check", "a.yaml"],
    ["check", "a.yaml", "b.md", "dir/"],
    ["check", "a.yaml", "--exit-zero"],
    ["check", "a.yaml", "--skip-unrelated", "--exit-zero"],
    ["check", "a.yaml", "--format", "json", "--output", "r.json"],
    ["check", "a.yaml", "b.yaml", "--fail-on", "error", "--config", "s.toml"],
    ["check", "a b.yaml", "--format", "sarif"],
]
LEFT_TO_ARGPARSE = [
    ["check"],
    ["check", "--help"],
    ["check", "--exit-zero", "a.yaml"],  # an option before a path
    ["check", "a.yaml", "--format=json"],
    ["check", "a.yaml", "--form", "json"],  # an abbreviation argparse accepts
    ["check", "a.yaml", "--format"],
    ["check", "a.yaml", "--format", "pdf"],
    ["check", "a.yaml", "--fail-on", "fatal"],
    ["check", "a.yaml", "--output", "-"],
    ["check", "a.yaml", "--exit-zero", "--exit-zero"],
    ["check", "a.yaml", "--format", "json", "b.yaml"],
    ["check", "-"],
    ["check", "a.yaml", "--"],
    ["check", ""],
    ["state", "a.yaml"],
    ["--version"],
    [],
]


@pytest.mark.parametrize("argv", READ_HERE, ids=" ".join)
def test_a_plain_check_reads_as_argparse_reads_it(argv):
    plain = _plain_check(argv)
    assert plain is not None
    assert vars(plain) == vars(parser().parse_args(argv))


@pytest.mark.parametrize("argv", LEFT_TO_ARGPARSE, ids=" ".join)
def test_everything_else_is_argparse_s(argv):
    assert _plain_check(argv) is None
