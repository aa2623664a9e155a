"""Which reader a file goes to is decided by its suffix as pathlib defines it (the Python
standard library's PurePath.suffix is the reference): the last '.' of the name, neither
its first nor its last character."""

from pathlib import Path

import pytest

from checker.inputs.sources import _suffix

NAMES = ["a/b.yaml", "..yaml", ".yaml", "a.tar.gz", "dir.x/file", "file.", "x/.hidden.yml",
         "x.YAML", "a/b.yaml/", "C.csv", "...", ".", "a..b", "memo.md", "no_suffix"]  # fmt: skip


@pytest.mark.parametrize("name", NAMES)
def test_suffix_is_pathlibs(name):
    assert _suffix(name) == Path(name).suffix
