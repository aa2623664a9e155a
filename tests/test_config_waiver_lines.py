"""A configuration waiver always has a line to point at: written as an inline table
(``regimecheck = {waive = [...]}``) its keys have no lines of their own, so the line of
the table itself is used (a note "pyproject.toml:None: ..." was the earlier result); an
array of tables keeps the line of its own header."""

import pytest

from checker.inputs.config import load_config

INLINE = (
    '[project]\nname = "demo"\n\n[tool]\n'
    'regimecheck = { waive = [{ path = "wafer.yaml", rule = "STAT01", reason = "r" }] }\n'
)
ARRAY = (
    'fail-level = "error"\n\n[[waive]]\npath = "wafer.yaml"\nrule = "STAT01"\nreason = "reviewed"\n'
)


@pytest.mark.parametrize(
    "name,text,line", [("pyproject.toml", INLINE, 5), ("regimecheck.toml", ARRAY, 3)]
)
def test_a_waiver_points_at_a_line(tmp_path, name, text, line):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    (waiver,) = load_config(path).waive
    assert waiver.line == line
