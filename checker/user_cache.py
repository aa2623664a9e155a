"""The user's cache folder, shared by the rule cache, the formula-match store and the
built-in materials: where it is, the hash that keys its files, writing a file whole or
not at all, and objects kept as pickles that may name only the classes a caller allows.

Every key includes a stamp of the whole package's code (each module's path, size and
modification time), of the Python and numpy versions and of the sympy install, so no
edit or upgrade can leave a stale entry in use.  The folder is used only where it belongs
to the user running the check and no one else can write to it (it is made with mode
0700): a folder shared with others, or restored from an untrusted source, is ignored
rather than trusted."""

from __future__ import annotations

import contextlib
import io
import os
import pickle
import sys
from collections.abc import Callable, Collection, Sequence
from pathlib import Path

try:  # the module behind hashlib.blake2b: hashlib itself loads OpenSSL (~2 ms)
    from _blake2 import blake2b
except ImportError:  # pragma: no cover - a Python built without it
    from hashlib import blake2b

__all__ = ["blake2b", "cache_folder", "code_stamp", "entry_name", "kept", "source_hash"]
__all__ += ["usable_folder", "write_whole"]

_PACKAGE = Path(__file__).resolve().parent


CACHE_SETTING = "REGIMECHECK_CACHE"  # a folder to use, or "off" to keep nothing
_OFF = {"off", "no", "none", "0", "false"}


def cache_folder() -> Path | None:
    """Where regimecheck keeps what it may compute again: the folder named by
    ``$REGIMECHECK_CACHE``, else ``$XDG_CACHE_HOME/regimecheck``, else
    ``~/.cache/regimecheck``; None where ``REGIMECHECK_CACHE=off`` (nothing is kept or
    read: every run computes everything afresh)."""
    setting = os.environ.get(CACHE_SETTING, "").strip()
    if setting.lower() in _OFF:
        return None
    if setting:
        return Path(setting).expanduser().absolute()
    base = os.environ.get("XDG_CACHE_HOME", "")
    if not os.path.isabs(base):  # unset, or relative (which the XDG convention ignores)
        home = os.path.expanduser("~")
        if not os.path.isdir(home):  # never create a missing home folder
            return None
        base = os.path.join(home, ".cache")
    return Path(base) / "regimecheck"


def usable_folder() -> Path | None:
    """The cache folder, made (mode 0700) where absent, if it is a folder of the user
    running the check that no one else can write to; else None (nothing kept or read)."""
    folder = cache_folder()
    if folder is None:
        return None
    try:
        folder.mkdir(mode=0o700, parents=True, exist_ok=True)
        found = folder.stat()
    except OSError:
        return None
    own = not hasattr(os, "getuid") or found.st_uid == os.getuid()
    return folder if own and not found.st_mode & 0o022 else None


_STAMP: list[str] = []


def code_stamp() -> str:
    """A hash of the package's modules (path, size, modification time) and of the Python
    and numpy versions and the sympy install: any edit, reinstall or upgrade changes it."""
    if not _STAMP:
        digest = blake2b(digest_size=20)
        numpy = sys.modules.get("numpy")
        digest.update(f"{sys.version}\0{getattr(numpy, '__version__', '')}\0".encode())
        for place in sys.path:  # sympy proves formula matches: its install, by its files'
            try:  # stat (reading its version would import it or importlib.metadata)
                found = os.stat(os.path.join(place or ".", "sympy", "release.py"))
            except OSError:
                continue
            digest.update(f"sympy\0{found.st_size}\0{found.st_mtime_ns}\0".encode())
            break
        folders = [str(_PACKAGE)]
        while folders:  # os.scandir: a third of pathlib.rglob's cost
            with os.scandir(folders.pop()) as entries:
                for entry in sorted(entries, key=lambda e: e.name):
                    if entry.is_dir() and entry.name != "__pycache__":
                        folders.append(entry.path)
                    elif entry.name.endswith(".py"):
                        found = entry.stat()
                        stamp = f"{entry.path}\0{found.st_size}\0{found.st_mtime_ns}\0"
                        digest.update(stamp.encode())
        _STAMP.append(digest.hexdigest())
    return _STAMP[0]


def write_whole(file: Path, data: bytes) -> bool:
    """Write ``file`` through a temporary beside it, so that a run beside this one reads
    the old or the new file, never a part; False where the folder cannot be written (a
    cache is then simply not kept)."""
    import threading  # threads of one process must not share a temporary

    temporary = file.with_name(f"{file.name}.{os.getpid()}.{threading.get_ident()}.tmp")
    try:
        temporary.write_bytes(data)
        os.replace(temporary, file)
        return True
    except OSError:
        with contextlib.suppress(OSError):
            temporary.unlink(missing_ok=True)
        return False


class _AllowedUnpickler(pickle.Unpickler):
    def __init__(self, data: bytes, allowed: Collection[tuple[str, str]]):
        super().__init__(io.BytesIO(data))
        self._allowed = allowed

    def find_class(self, module: str, name: str) -> object:
        if (module, name) not in self._allowed:
            raise pickle.UnpicklingError(f"{module}.{name} may not be named here")
        return super().find_class(module, name)


def source_hash(sources: Sequence[Path]) -> str:
    """A hash of the code stamp and of the paths and contents of ``sources``."""
    digest = blake2b(digest_size=20)
    digest.update(f"{code_stamp()}\0".encode())
    for path in sources:
        digest.update(f"{path}\0".encode())
        digest.update(path.read_bytes())
    return digest.hexdigest()


def entry_name(kind: str, place: Path) -> str:
    """The cache file of ``kind`` (rules, material-Si, ...) built from ``place`` (a rule
    folder, a material file): one file per place, named by a hash of its path."""
    return f"{kind}-{blake2b(str(place).encode(), digest_size=8).hexdigest()}.pickle"


def kept(
    name: str,
    sources: Sequence[Path],
    allowed: Collection[tuple[str, str]],
    build: Callable[[], object],
    fits: Callable[[object], bool],
) -> object:
    """What ``build()`` makes, kept in the cache file ``name`` while ``sources`` (and the
    code stamp) are unchanged: the file holds a hash of their contents and the
    object, pickled; it is read by an unpickler that admits only the ``allowed``
    (module, class) pairs, and the object is used only where ``fits(object)``.  Anything
    absent, unreadable, stale or foreign is built afresh (and kept, where the folder can
    be written); a source that cannot be read means no cache."""
    folder = usable_folder()
    if folder is None:
        return build()
    try:
        wanted = source_hash(sources)
    except OSError:
        return build()
    file = folder / name
    try:
        found, made = _AllowedUnpickler(file.read_bytes(), allowed).load()
        if found == wanted and fits(made):
            return made
    except Exception:  # absent, truncated, foreign: build it afresh
        pass
    made = build()
    write_whole(file, pickle.dumps((wanted, made), protocol=pickle.HIGHEST_PROTOCOL))
    return made
