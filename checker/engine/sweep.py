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


SMOOTH = 0.05      # |excess| at an edge, relative to its span, to accept it as a crossing
STEPS = 4          # false-position steps between two grid points


def _edges(flags) -> list:
    """(passing, failing) grid-index pairs at the ends of each failing run."""
    last = len(flags) - 1
    out = []
    for i, j in _runs(flags):
        if i > 0:
            out.append((i - 1, i))
        if j < last:
            out.append((j + 1, j))
    return out


def _interpolate(axis, pairs, bases, excess) -> list:
    """Where the indicator's excess crosses zero between each (passing, failing) pair of
    grid indices along ``axis`` (``bases``: the failing points' flat indices), by false
    position (in log for a log axis), all pairs in one solve per step.  A pair that does
    not cross smoothly (a jump, e.g. the Mott density switching the picture, or a gate)
    gets None: its grid value is used."""
    if not pairs:
        return []
    log = axis.spacing == "log"
    passing = np.array([axis.values[p] for p, _ in pairs], dtype=float)
    failing = np.array([axis.values[f] for _, f in pairs], dtype=float)
    bases = np.asarray(bases)
    fa = excess(bases, (axis.key, passing))
    fb = excess(bases, (axis.key, failing))
    ok = np.isfinite(fa) & np.isfinite(fb) & (fa <= 0) & (fb > 0)
    span = np.where(ok, fb - fa, 1.0)
    xa, xb = (np.log(passing), np.log(failing)) if log else (passing, failing)
    x, f = xb.copy(), fb.copy()
    for _ in range(STEPS):
        denominator = np.where(ok, fb - fa, 1.0)
        x = np.where(ok, xa - fa * (xb - xa) / denominator, xb)
        f = excess(bases, (axis.key, np.exp(x) if log else x))
        ok &= np.isfinite(f)
        below = ok & (f <= 0)
        xa, fa = np.where(below, x, xa), np.where(below, f, fa)
        xb, fb = np.where(ok & ~below, x, xb), np.where(ok & ~below, f, fb)
    good = ok & (np.abs(f) <= SMOOTH * span)
    values = np.exp(x) if log else x
    return [float(values[k]) if good[k] else None for k in range(len(pairs))]


def _along(axis, flags, crossings=None) -> str:
    """Where along one axis the rule fails, in words; ``crossings`` maps (passing,
    failing) index pairs to the interpolated edge value (None: use the grid value)."""
    values, label, last = axis.values, axis_label(axis), len(axis.values) - 1

    def edge(passing, failing):
        value = (crossings or {}).get((passing, failing))
        return axis_value(axis, values[failing] if value is None else value)

    parts = []
    for i, j in _runs(flags):
        if i == 0 and j == last:
            parts.append("on the whole range")
        elif i == 0:
            parts.append(f"for {label} ≤ {edge(j + 1, j)}")
        elif j == last:
            parts.append(f"for {label} ≥ {edge(i - 1, i)}")
        else:
            parts.append(f"for {edge(i - 1, i)} ≤ {label} ≤ {edge(j + 1, j)}")
    return " and ".join(parts) or "nowhere"


def boundary(calc, mask, excess=None) -> list:
    """Lines saying where on the grid the rule fails.  ``excess(flat indices, override)``
    (optional) gives the indicator's distance beyond its threshold, for interpolating
    the edges between grid points."""
    axes = calc.sweep
    shape = mask.shape
    if len(axes) == 1:
        rows, cols, grid_mask, row_axis, count = None, 0, mask[None, :], None, 1
    else:
        # temperature (if swept) labels the rows; the boundary runs along the other axis
        rows, cols = (0, 1) if axes[0].key == "T" or axes[1].key != "T" else (1, 0)
        grid_mask = mask if rows == 0 else mask.T
        row_axis, count = axes[rows], len(axes[rows].values)
    axis = axes[cols]

    def flat(r, c):
        if rows is None:
            return c
        position = [0, 0]
        position[rows], position[cols] = r, c
        return int(np.ravel_multi_index(tuple(position), shape))

    # rows whose failing cells are alike are described together, at their middle row
    plain = [_along(axis, grid_mask[r]) for r in range(count)]
    groups = []                       # consecutive rows that fail alike: (first, last)
    for r, text in enumerate(plain):
        if groups and plain[groups[-1][0]] == text:
            groups[-1] = (groups[-1][0], r)
        else:
            groups.append((r, r))
    if len(groups) > ROWS_SHOWN:      # too many to list: a few evenly spaced rows
        picks = np.linspace(0, count - 1, ROWS_SHOWN).round().astype(int)
        groups = [(r, r) for r in sorted(set(picks))]
    middles = [(first + last) // 2 for first, last in groups]
    crossings = {}                    # row -> {(passing, failing): edge value or None}
    if excess is not None:
        edges = [(r, pair) for r in middles for pair in _edges(grid_mask[r])]
        found = _interpolate(axis, [pair for _, pair in edges],
                             [flat(r, pair[1]) for r, pair in edges], excess)
        for (r, pair), value in zip(edges, found):
            crossings.setdefault(r, {})[pair] = value
    texts = [_along(axis, grid_mask[r], crossings.get(r)) for r in middles]
    if rows is None:
        return [f"fails {texts[0]}"]
    label = axis_label(row_axis)

    def rows_text(first, last, middle):
        if first == last:
            return f"at {label} = {axis_value(row_axis, row_axis.values[first])}"
        span = "every " + label if first == 0 and last == count - 1 else (
            f"{label} = {axis_value(row_axis, row_axis.values[first])} … "
            f"{axis_value(row_axis, row_axis.values[last])}")
        edge = f" (edge at {axis_value(row_axis, row_axis.values[middle])})" \
            if excess is not None else ""
        return f"at {span}{edge}"

    return [f"{rows_text(first, last, middle)}: fails {text}"
            for (first, last), middle, text in zip(groups, middles, texts)]


def excess_at(calc, rule, x, embodied, grid_points):
    """A function: flat grid indices -> how far the rule's indicator is beyond its
    threshold there (NaN where the rule does not apply)."""
    T, donors, acceptors, _ = grid_points
    names = carrier_names(x) if x else {}

    def excess(indices, override=None):
        """At grid points ``indices``; ``override`` = (axis key, value or one value per
        point) moves them along that axis."""
        indices = np.asarray(indices)
        T_at = T[indices]
        donors_at = {s: a[indices] for s, a in donors.items()}
        acceptors_at = {s: a[indices] for s, a in acceptors.items()}
        if override is not None:
            key, value = override
            moved = np.broadcast_to(np.asarray(value, dtype=float), indices.shape).copy()
            if key == "T":
                T_at = moved
            else:
                (donors_at if key[0] == "donors" else acceptors_at)[key[1]] = moved
        values, _ = solve_sweep(calc, T_at, donors_at, acceptors_at)
        count = indices.size
        with np.errstate(all="ignore"):
            made = _made(rule, x, names, calc, embodied, values, count)
            _, indicator, _ = rule_mask(rule, x, names, made | ~made.any(), values, count)
        beyond = indicator - rule.threshold if rule.relation == "above" \
            else rule.threshold - indicator
        return np.asarray(beyond, dtype=float)

    return excess


def summarize_sweep(calc, mask, index, grid_points, excess=None) -> SweepSummary:
    shape = grid_points[3]
    position = np.unravel_index(index, shape)
    worst = {axis_label(axis): axis_value(axis, axis.values[position[k]])
             for k, axis in enumerate(calc.sweep)}
    return SweepSummary(int(mask.size), float(mask.mean()),
                        boundary(calc, mask, excess), worst)
