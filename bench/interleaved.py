"""Interleaved timing shared by the benches: ratios to an anchor measured in the same run.

Absolute times drift by up to 1.5x on a shared 2-core machine, so a bench never reports
a time alone.  Each round runs every case once, in an order rotated from round to round;
the ratio of a case to the anchor is taken per round, and the table gives the median of
those ratios and their spread (lowest and highest).  The anchor of a numeric kernel is
``np.exp(x, out=buffer)`` on the same array (one pass of a compiled transcendental, no
allocation); where the compiled Fermi–Dirac library fdint is importable (it ships no
wheels for this platform: its 2.0.2 sdist builds with numpy, cython, setuptools and wheel
preinstalled and ``pip install --no-build-isolation fdint==2.0.2``) its kernels are timed
beside ours.  Benches print tables and assert nothing.
"""

from __future__ import annotations

import statistics
import time
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from types import ModuleType

import numpy as np


@dataclass(frozen=True)
class Timing:
    """Seconds per round of one case."""

    name: str
    seconds: tuple[float, ...]

    @property
    def best(self) -> float:
        return min(self.seconds)


def interleaved(cases: Mapping[str, Callable[[], object]], rounds: int = 7) -> dict[str, Timing]:
    """Run every case once per round, rotating the order; return each case's timings.

    Each case runs once before timing (warm caches, lazy imports)."""
    names = list(cases)
    for name in names:
        cases[name]()
    seconds: dict[str, list[float]] = {name: [] for name in names}
    for r in range(rounds):
        shift = r % len(names)
        for name in names[shift:] + names[:shift]:
            start = time.perf_counter()
            cases[name]()
            seconds[name].append(time.perf_counter() - start)
    return {name: Timing(name, tuple(values)) for name, values in seconds.items()}


def ratios(timings: Mapping[str, Timing], anchor: str) -> dict[str, tuple[float, float, float]]:
    """name -> (median, lowest, highest) of the per-round ratio to ``anchor``."""
    base = timings[anchor].seconds
    out = {}
    for name, timing in timings.items():
        per_round = [t / b for t, b in zip(timing.seconds, base, strict=True)]
        out[name] = (statistics.median(per_round), min(per_round), max(per_round))
    return out


def exp_anchor(x: np.ndarray) -> Callable[[], object]:
    """``np.exp(x, out=buffer)``: the floor a per-element kernel is measured against."""
    buffer = np.empty_like(x)
    return lambda: np.exp(x, out=buffer)


def fdint() -> ModuleType | None:
    """The compiled fdint library where it is installed (benches only), else None."""
    try:
        import fdint as module  # type: ignore[import-not-found]
    except ImportError:
        return None
    return module


def ratio_table(
    timings: Mapping[str, Timing], anchor: str, per: int = 1, unit: str = "ns/elem"
) -> str:
    """A table: case, best time per element (``per`` elements per call), and the median
    ratio to ``anchor`` with its spread."""
    rows = [f"{'case':<40} {unit:>10} {'x ' + anchor:>14} {'spread':>15}"]
    for name, (median, low, high) in ratios(timings, anchor).items():
        best = timings[name].best / per * (1e9 if unit.startswith("ns") else 1e6)
        rows.append(f"{name:<40} {best:>10.2f} {median:>14.2f} {f'{low:.2f}-{high:.2f}':>15}")
    return "\n".join(rows)
