"""The user's cache folder, shared by the rule cache, the formula-match store and the
built-in materials: where it is, the hash that keys its files, writing a file whole or
not at all, and objects kept as pickles that may name only the classes a caller allows."""

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

__all__ = ["blake2b", "cache_folder", "kept", "source_hash", "write_whole"]


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
        return Path(setting)
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "regimecheck"


def write_whole(file: Path, data: bytes) -> bool:
    """Write ``file`` through a temporary beside it, so that a run beside this one reads
    the old or the new file, never a part; False where the folder cannot be written (a
    cache is then simply not kept)."""
    temporary = file.with_name(f"{file.name}.{os.getpid()}.tmp")
    try:
        file.parent.mkdir(parents=True, exist_ok=True)
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
    """A hash of the Python version and of the paths and contents of ``sources``."""
    digest = blake2b(digest_size=20)
    digest.update(f"{sys.version}\0".encode())
    for path in sources:
        digest.update(f"{path}\0".encode())
        digest.update(path.read_bytes())
    return digest.hexdigest()


def kept(
    name: str,
    sources: Sequence[Path],
    allowed: Collection[tuple[str, str]],
    build: Callable[[], object],
    fits: Callable[[object], bool],
) -> object:
    """What ``build()`` makes, kept in the cache file ``name`` while ``sources`` (and the
    Python version) are unchanged: the file holds a hash of their contents and the
    object, pickled; it is read by an unpickler that admits only the ``allowed``
    (module, class) pairs, and the object is used only where ``fits(object)``.  Anything
    absent, unreadable, stale or foreign is built afresh (and kept, where the folder can
    be written); a source that cannot be read means no cache."""
    folder = cache_folder()
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
