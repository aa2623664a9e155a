"""report/output_file.write_atomically makes its partial file itself (tempfile is not
imported): created only where no file or link of that name exists (O_EXCL: POSIX
open(2)), mode 0600 until the rename, the target's own mode after it, no partial file
left behind."""

from __future__ import annotations

import os
import stat

import pytest

from checker.report import output_file
from checker.report.output_file import write_atomically


def test_a_new_file_gets_the_umask_mode_and_no_partial_file_stays(tmp_path):
    target = tmp_path / "report.html"
    old = os.umask(0o022)
    try:
        write_atomically(target, b"<html/>")
    finally:
        os.umask(old)
    assert target.read_bytes() == b"<html/>"
    assert stat.S_IMODE(target.stat().st_mode) == 0o644
    assert sorted(p.name for p in tmp_path.iterdir()) == ["report.html"]


def test_an_existing_file_keeps_its_mode(tmp_path):
    target = tmp_path / "report.json"
    target.write_bytes(b"old")
    target.chmod(0o640)
    write_atomically(target, b"new")
    assert target.read_bytes() == b"new"
    assert stat.S_IMODE(target.stat().st_mode) == 0o640


def test_a_link_at_the_partial_name_is_never_followed(tmp_path, monkeypatch):
    target = tmp_path / "report.md"
    elsewhere = tmp_path / "elsewhere.txt"
    elsewhere.write_bytes(b"keep me")
    draws = iter([b"\x00" * 6, b"\x01" * 6])
    monkeypatch.setattr(output_file.os, "urandom", lambda n: next(draws))
    taken = tmp_path / f".report.md.{'00' * 6}.partial"
    taken.symlink_to(elsewhere)
    write_atomically(target, b"# report")
    assert target.read_bytes() == b"# report"
    assert elsewhere.read_bytes() == b"keep me"
    assert taken.is_symlink()
    assert not (tmp_path / f".report.md.{'01' * 6}.partial").exists()


def test_a_partial_file_is_private_until_renamed(tmp_path, monkeypatch):
    seen = []
    real_replace = os.replace

    def replace(source, destination):
        seen.append(stat.S_IMODE(os.stat(source).st_mode))
        real_replace(source, destination)

    monkeypatch.setattr(output_file.os, "chmod", lambda path, mode: seen.append("chmod"))
    monkeypatch.setattr(output_file.os, "replace", replace)
    write_atomically(tmp_path / "r.txt", b"x")
    assert seen == ["chmod", 0o600]


@pytest.mark.skipif(os.geteuid() == 0, reason="root writes into a read-only folder")
def test_a_folder_that_cannot_be_written_is_an_input_error(tmp_path):
    from checker.errors import InputError

    folder = tmp_path / "locked"
    folder.mkdir()
    folder.chmod(0o500)
    try:
        with pytest.raises(InputError, match="cannot write"):
            write_atomically(folder / "r.txt", b"x")
    finally:
        folder.chmod(0o700)


def test_a_target_name_of_255_bytes_is_written(tmp_path):
    # POSIX NAME_MAX is 255 bytes on the usual Linux file systems (ext4, tmpfs, xfs); the
    # partial file beside the target must fit too: main before this test failed from 234
    target = tmp_path / ("é" * 127 + "a")  # 255 bytes in UTF-8
    write_atomically(target, b"report")
    assert target.read_bytes() == b"report"
    assert sorted(p.name for p in tmp_path.iterdir()) == [target.name]
