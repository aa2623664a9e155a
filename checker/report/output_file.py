"""Writing a report or a figure to ``--output``.

Never over a file the run read (a calculation found by a directory walk, a hard link
or symlink to one, the settings file), and never half: the whole output is rendered
first, written to a temporary file beside the target and renamed over it only when
complete, so an error or Ctrl-C leaves any previous file as it was.
"""

from __future__ import annotations

import contextlib
import errno
import os
import stat
from pathlib import Path

from ..errors import InputError

# --output suffix -> report format, when --format is not given
SUFFIX_FORMATS = {
    ".json": "json",
    ".md": "markdown",
    ".markdown": "markdown",
    ".sarif": "sarif",
    ".xml": "junit",
    ".html": "html",
    ".htm": "html",
    ".txt": "console",
}


def format_for(output) -> str | None:
    """The report format a file name asks for (``x.sarif.json`` is SARIF), or None."""
    name = Path(output).name.lower()
    if name.endswith(".sarif.json"):
        return "sarif"
    return SUFFIX_FORMATS.get(Path(name).suffix)


def _identity(path):
    """(device, inode) of an existing file, else None."""
    try:
        info = os.stat(path)
    except (OSError, ValueError):
        return None
    return info.st_dev, info.st_ino


def refuse_inputs(output, read, option="--output") -> None:
    """An InputError when ``output`` is one of the files ``read`` (same resolved path,
    or the same file by device and inode: a hard link or a symlink to it)."""
    target = os.path.realpath(output)
    identity = _identity(output)
    for path in read:
        if path is None:
            continue
        if os.path.realpath(path) == target or (identity and _identity(path) == identity):
            raise InputError(
                f"{option} {output}: that is the input file {path} of this run; "
                "name another file (inputs are never overwritten)"
            )


def _new_file_mode() -> int:
    umask = os.umask(0)
    os.umask(umask)
    return 0o666 & ~umask


def _partial_file(target: Path) -> tuple[int, str]:
    """A new empty file beside ``target`` (``.name.<random>.partial``, the name cut to
    200 bytes), open for writing, made as tempfile.mkstemp makes one (created only if
    absent, a link never followed, mode 0600) without importing tempfile, which brings
    shutil and the archive modules
    (some 7 ms of a report written with --output)."""
    flags = os.O_RDWR | os.O_CREAT | os.O_EXCL | getattr(os, "O_NOFOLLOW", 0)
    flags |= getattr(os, "O_BINARY", 0)
    # the target's name cut to 200 bytes: the partial name then keeps within the usual
    # 255-byte limit of a name, however long the target's is
    stem = target.name
    while len(os.fsencode(stem)) > 200:
        stem = stem[:-1]
    for _ in range(100):
        path = os.path.join(target.parent, f".{stem}.{os.urandom(6).hex()}.partial")
        try:
            return os.open(path, flags, 0o600), path
        except FileExistsError:
            continue
    raise FileExistsError(errno.EEXIST, "no unused name for a partial file", str(target))


def write_atomically(output, data: bytes, option="--output") -> None:
    """Write ``data`` to ``output`` all at once (through a symlink, to the file it
    names); an InputError saying why when the file cannot be written."""
    try:
        try:
            info = os.stat(output)
        except FileNotFoundError:
            info = None
        if info is not None and stat.S_ISDIR(info.st_mode):
            raise InputError(f"{option} {output}: that is a directory; name a file")
        if info is not None and not stat.S_ISREG(info.st_mode):
            with open(output, "wb") as out:  # a pipe or device: cannot be renamed over
                out.write(data)
            return
        target = Path(os.path.realpath(output))
        mode = stat.S_IMODE(info.st_mode) if info is not None else _new_file_mode()
        handle, temporary = _partial_file(target)
    except OSError as exc:
        raise InputError(f"{option} {output}: cannot write ({exc.strerror})") from None
    try:
        with os.fdopen(handle, "wb") as out:
            out.write(data)
            out.flush()
            os.fsync(out.fileno())
        os.chmod(temporary, mode)
        os.replace(temporary, target)
    except BaseException as exc:
        with contextlib.suppress(OSError):
            os.unlink(temporary)
        if isinstance(exc, OSError):
            raise InputError(f"{option} {output}: cannot write ({exc.strerror})") from None
        raise
