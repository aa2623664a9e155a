"""The thread pools the physics kernels split large arrays over, one per worker count,
started on first need and kept (a sweep solves many chunks; starting threads per call
costs more than small blocks gain).  ``concurrent.futures`` and ``threading`` are imported
only then: a check of a few points never loads them."""

from __future__ import annotations

import os
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from concurrent.futures import ThreadPoolExecutor

POOLS: dict[int, ThreadPoolExecutor] = {}
# a forked child inherits the pools without their threads: work sent to them would never run
if hasattr(os, "register_at_fork"):
    os.register_at_fork(after_in_child=POOLS.clear)


def pool(workers: int) -> ThreadPoolExecutor:
    """The pool of ``workers`` threads."""
    if workers not in POOLS:
        from concurrent.futures import ThreadPoolExecutor

        POOLS[workers] = ThreadPoolExecutor(max_workers=workers)
    return POOLS[workers]


def on_main_thread() -> bool:
    """True on the main thread (a kernel called from a pool's worker adds no nested pool)."""
    import threading

    return threading.current_thread() is threading.main_thread()
