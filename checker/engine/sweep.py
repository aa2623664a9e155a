"""Sweeps: a calculation whose temperature and/or a dopant density are ranges.

The grid (the outer product of at most two axes) is solved and every rule is
evaluated over it in vectorized chunks; only the masks of failing points and each
rule's worst point are kept.  Per rule the report gives where on the grid it
starts to fail ("for N_D(P) ≥ 2.5e18 cm⁻³ at 300 K"), the fraction of the grid that
fails, and the full finding (indicator, corrections) at the worst point, which is
checked again as an ordinary single-point calculation.
"""
from __future__ import annotations

import copy
from dataclasses import dataclass, field

import numpy as np

from .evaluate import rule_mask
from .state_values import solve_sweep
from .vocabulary import carrier_names

CHUNK = 100_000          # points solved and evaluated at a time (bounds the memory)
ROWS_SHOWN = 5           # rows of a 2D grid whose boundary is written out


@dataclass
class SweepSummary:
    axes: list                        # inputs.calculation_file.Axis
    points: int
    failing_fraction: float
    boundary: list = field(default_factory=list)     # lines of text
    worst_point: dict = field(default_factory=dict)  # axis label -> value (trade units)


def axis_label(axis) -> str:
    if axis.key == "T":
        return "T"
    group, species = axis.key
    return f"{'N_D' if group == 'donors' else 'N_A'}({species})"


def axis_value(axis, value) -> str:
    return f"{value:.4g} K" if axis.key == "T" else f"{value * 1e-6:.3g} cm⁻³"


def grid(calc):
    """(T, donors, acceptors, shape) of every grid point, flattened (axis 0 slowest)."""
    arrays = np.meshgrid(*[axis.values for axis in calc.sweep], indexing="ij")
    shape = arrays[0].shape
    flat = {axis.key: a.ravel() for axis, a in zip(calc.sweep, arrays)}
    size = arrays[0].size
    T = flat.get("T", np.full(size, calc.temperature))
    donors = {s: flat.get(("donors", s), np.full(size, v)) for s, v in calc.donors.items()}
    acceptors = {s: flat.get(("acceptors", s), np.full(size, v))
                 for s, v in calc.acceptors.items()}
    return T, donors, acceptors, shape


def point(calc, T, donors, acceptors, index):
    """The single-point calculation at grid index ``index``."""
    single = copy.copy(calc)
    single.sweep = []
    single.temperature = float(T[index])
    single.donors = {s: float(a[index]) for s, a in donors.items()}
    single.acceptors = {s: float(a[index]) for s, a in acceptors.items()}
    return single


def evaluate_sweep(calc, rules, embodied, progress=None):
    """Per (rule id, carrier): (failing mask over the grid, worst index); plus a note."""
    T, donors, acceptors, shape = grid(calc)
    size = T.size
    masks, worst, notes = {}, {}, []
    for start in range(0, size, CHUNK):
        stop = min(start + CHUNK, size)
        values, skipped = solve_sweep(calc, T[start:stop],
                                      {s: a[start:stop] for s, a in donors.items()},
                                      {s: a[start:stop] for s, a in acceptors.items()})
        if skipped and skipped not in notes:
            notes.append(skipped)
        count = stop - start
        with np.errstate(all="ignore"):
            for rule in rules:
                if rule.evaluated_by:
                    continue
                for x in rule.carriers:
                    names = carrier_names(x) if x else {}
                    made = _made(rule, x, names, calc, embodied, values, count)
                    fired, indicator, _ = rule_mask(rule, x, names, made, values, count)
                    if not fired.any():
                        continue
                    key = (rule.id, x)
                    masks.setdefault(key, np.zeros(size, dtype=bool))[start:stop] = fired
                    excess = indicator - rule.threshold if rule.relation == "above" \
                        else rule.threshold - indicator
                    excess = np.where(fired, np.nan_to_num(excess, posinf=1e300), -np.inf)
                    best = int(np.argmax(excess))
                    if key not in worst or excess[best] > worst[key][0]:
                        worst[key] = (float(excess[best]), start + best)
        if progress:
            progress(stop, size)
    return {key: (mask.reshape(shape), worst[key][1]) for key, mask in masks.items()}, \
        (T, donors, acceptors, shape), notes


def _made(rule, x, names, calc, embodied, values, count):
    made = np.zeros(count, dtype=bool)
    if not rule.declared:
        return made
    in_use = values[names["in_use_x"]] > 0 if x else np.ones(count, dtype=bool)
    if any(word in calc.assumes for word in rule.declared):
        made |= in_use
    for item in embodied:
        if item.word in rule.declared:
            if not x or item.carrier == x:
                made[:] = True
            elif item.carrier is None:
                made |= in_use
    return made


def _runs(flags) -> list:
    """(first, last) index of each run of True."""
    edges = np.diff(np.concatenate(([0], np.asarray(flags, dtype=np.int8), [0])))
    return list(zip(np.flatnonzero(edges == 1), np.flatnonzero(edges == -1) - 1))


def _along(axis, flags) -> str:
    """Where along one axis the rule fails, in words."""
    values, label, last = axis.values, axis_label(axis), len(axis.values) - 1
    parts = []
    for i, j in _runs(flags):
        if i == 0 and j == last:
            parts.append("on the whole range")
        elif i == 0:
            parts.append(f"for {label} ≤ {axis_value(axis, values[j])}")
        elif j == last:
            parts.append(f"for {label} ≥ {axis_value(axis, values[i])}")
        else:
            parts.append(f"for {axis_value(axis, values[i])} ≤ {label} ≤ "
                         f"{axis_value(axis, values[j])}")
    return " and ".join(parts) or "nowhere"


def boundary(calc, mask) -> list:
    """Lines saying where on the grid the rule fails."""
    axes = calc.sweep
    if len(axes) == 1:
        return [f"fails {_along(axes[0], mask)}"]
    # temperature (if swept) labels the rows; the boundary runs along the other axis
    rows, cols = (0, 1) if axes[0].key == "T" or axes[1].key != "T" else (1, 0)
    grid_mask = mask if rows == 0 else mask.T
    row_axis = axes[rows]
    texts = [_along(axes[cols], grid_mask[r]) for r in range(len(row_axis.values))]
    groups = []                       # consecutive rows that fail alike: (first, last, text)
    for r, text in enumerate(texts):
        if groups and groups[-1][2] == text:
            groups[-1] = (groups[-1][0], r, text)
        else:
            groups.append((r, r, text))
    if len(groups) > ROWS_SHOWN:      # too many to list: a few evenly spaced rows
        picks = np.linspace(0, len(texts) - 1, ROWS_SHOWN).round().astype(int)
        groups = [(r, r, texts[r]) for r in sorted(set(picks))]
    label = axis_label(row_axis)

    def rows_text(first, last):
        if first == 0 and last == len(texts) - 1:
            return f"at every {label}"
        if first == last:
            return f"at {label} = {axis_value(row_axis, row_axis.values[first])}"
        return (f"at {label} = {axis_value(row_axis, row_axis.values[first])} … "
                f"{axis_value(row_axis, row_axis.values[last])}")

    return [f"{rows_text(first, last)}: fails {text}" for first, last, text in groups]


def summarize_sweep(calc, mask, index, grid_points) -> SweepSummary:
    T, donors, acceptors, shape = grid_points
    position = np.unravel_index(index, shape)
    worst = {axis_label(axis): axis_value(axis, axis.values[position[k]])
             for k, axis in enumerate(calc.sweep)}
    return SweepSummary(calc.sweep, int(mask.size), float(mask.mean()), boundary(calc, mask),
                        worst)
