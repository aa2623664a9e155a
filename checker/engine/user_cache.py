"""The user's cache folder, shared by the rule cache and the formula-match store: where
it is, the hash that keys its files, and writing a file whole or not at all."""

from __future__ import annotations

import contextlib
import os
from pathlib import Path

try:  # the module behind hashlib.blake2b: hashlib itself loads OpenSSL (~2 ms)
    from _blake2 import blake2b
except ImportError:  # pragma: no cover - a Python built without it
    from hashlib import blake2b

__all__ = ["blake2b", "cache_folder", "write_whole"]


def cache_folder() -> Path:
    """Where regimecheck keeps what it may compute again (``$XDG_CACHE_HOME/regimecheck``,
    else ``~/.cache/regimecheck``)."""
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
