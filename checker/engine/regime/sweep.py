"""Sweeps: a calculation whose temperature and/or a dopant density are ranges.

The grid (the outer product of at most two axes) is solved and ruled in chunks of
cells (:mod:`checker.engine.regime.evaluate`, as single points are); this module's reduction
keeps only each rule's failing mask and worst cell.  Per rule the result says where on
the grid it starts to fail (edges between grid points interpolated where the indicator
crosses its threshold smoothly), the fraction of the grid that fails, and the full
finding at the worst cell, which is checked again as an ordinary single point.  Only
numbers and names leave here; :mod:`checker.report.sweep_text` writes them as text.
"""

from __future__ import annotations

import copy
from collections.abc import Callable, Generator, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, TypeAlias

import numpy as np

from ...inputs.calculation_file import AxisKey
from ...physics import carriers
from ...physics.arrays import ArrayIn, BoolArray, FloatArray, IndexArray, distinct_points
from ..findings import Embodied, carrier_word
from .evaluate import (
    Cells,
    Ruled,
    beyond,
    probed_names,
    rule_cells,
    rule_indicator,
    sweep_rules,
)
from .points import CalculationReport, check_points
from .rulebook import Rule
from .state_values import Values, solve_sweep
from .sweep_gates import open_rules

if TYPE_CHECKING:
    from ...inputs.calculation_file import Axis, Calculation

# (T, donors, acceptors, grid shape) of every grid point, flattened
GridPoints: TypeAlias = (
    "tuple[GridQuantity, dict[str, GridQuantity], dict[str, GridQuantity], tuple[int, ...]]"
)
# a step of the edges' false position: (flat indices, (axis key, values there))
Request: TypeAlias = "tuple[ArrayIn, tuple[AxisKey, ArrayIn]]"
# (boundary axis, row axis or None, rows)
Boundary: TypeAlias = "tuple[Axis, Axis | None, list[BoundaryRow]]"
# (rule id, carrier) -> (failing mask over the grid, worst flat index)
Masks: TypeAlias = dict[tuple[str, str], tuple[BoolArray, int]]

# points solved and ruled at a time: 128k points make the solve's blocks 64k on each of two
# threads (equilibrium.THREAD_CHUNK), where 64k-point chunks gave each thread 32k and
# solved 1.2x slower per point than one whole-grid solve (128k: 1.0x); a chunk's quantities
# not read are never computed (state_values.LazyValues), so a 2000 x 2000 grid peaks near
# 180 MB (64k chunks: 120 MB; bench/bench_sweep.py)
CHUNK = 1 << 17
ROWS_SHOWN = 5  # rows of a 2D grid whose boundary is written out


@dataclass
class FailingRun:
    """A run of failing grid points along the boundary axis: its lower and upper edge
    values, whichever way the axis is written (None: the run reaches that end of the
    axis's range)."""

    low: float | None
    high: float | None


@dataclass
class BoundaryRow:
    """Rows of the grid that fail alike (one axis: the single row, ``rows`` None)."""

    rows: tuple[float, ...] | None  # (first, last, middle) value of the row axis
    single: bool  # one row
    every: bool  # the rows cover the whole row axis
    runs: list[FailingRun]  # along the boundary axis


@dataclass
class SweepSummary:
    points: int
    failing_fraction: float
    axis: Axis | None = None  # the axis the boundary runs along
    row_axis: Axis | None = None  # the axis of the rows (None: one axis)
    rows: list[BoundaryRow] = field(default_factory=list)
    interpolated: bool = False  # edges between grid points were interpolated
    worst_point: list[tuple[Axis, float]] = field(default_factory=list)  # per swept axis


def axis_label(axis: Axis) -> str:
    key = axis.key
    if isinstance(key, str):  # the temperature axis, "T"
        return key
    group, species = key
    return f"{'N_D' if group == 'donors' else 'N_A'}({species})"


class GridQuantity:
    """One quantity over the flattened grid, computed on indexing instead of stored (a
    2000 x 2000 sweep would hold 32 MB per quantity): the value at flat index i is
    ``values[(i // stride) % len(values)]``."""

    def __init__(self, values: ArrayIn, stride: int, size: int) -> None:
        self.values = np.atleast_1d(np.asarray(values, dtype=float))
        self.stride, self.size = stride, size
        # the codes of the last slice asked for: a chunk's values and its rows read them
        self._last: tuple[int, int, IndexArray] = (0, 0, np.zeros(0, dtype=np.intp))

    def __len__(self) -> int:
        return self.size

    def __getitem__(self, index: int | slice | ArrayIn) -> FloatArray:
        """Values at an index, a slice or an integer array of flat indices."""
        codes = self.codes(index)
        if not np.ndim(codes):
            picked: FloatArray = self.values[codes]
            return picked
        # (codes lie in range: a clipping gather, which checks nothing, costs half)
        return self.values.take(codes, mode="clip")

    def codes(self, index: int | slice | ArrayIn) -> IndexArray:
        """The index into ``values`` at an index, a slice or flat indices."""
        if isinstance(index, slice) and index.step in (None, 1):
            start, stop, _ = index.indices(self.size)
            return self._run(start, max(start, stop))
        at = np.arange(*index.indices(self.size)) if isinstance(index, slice) else index
        codes: IndexArray = (np.asarray(at) // self.stride) % self.values.size
        return codes

    def rows(self, start: int, stop: int) -> carriers.Rows:
        """(one point of each of ``values`` present at flat indices start ... stop - 1, each
        point's row), as carriers.Rows: from the grid's structure, with no pass over the
        points but the one that numbers them (the first flat index >= start of each code
        is found per code)."""
        count, stride = self.values.size, self.stride
        block = start // stride
        # the first block at or after start's with each code, and its first flat index
        first = np.maximum(start, (block + (np.arange(count) - block) % count) * stride)
        present = first < stop
        codes = self._run(start, stop)
        if present.all():  # every value present: its row is its code
            return first - start, codes
        row = np.cumsum(present) - 1
        return first[present] - start, row[codes]

    def _run(self, start: int, stop: int) -> IndexArray:
        """The codes of flat indices start ... stop - 1: runs of ``stride`` equal codes,
        built as such (no integer division per point); kept for the next call."""
        last_start, last_stop, codes = self._last
        if (last_start, last_stop) != (start, stop):
            codes = self._made_run(start, stop)
            codes.flags.writeable = False  # (shared by the callers)
            self._last = (start, stop, codes)
        return codes

    def _made_run(self, start: int, stop: int) -> IndexArray:
        count, stride = self.values.size, self.stride
        if count == 1 or stop == start:
            return np.zeros(stop - start, dtype=np.intp)
        if stride == 1:  # 0, 1, ..., count - 1 over and over (no division per point)
            offset = start % count
            repeats = -(-(offset + stop - start) // count)
            cycles = np.tile(np.arange(count, dtype=np.intp), repeats)
            return cycles[offset : offset + stop - start]
        first, last = start // stride, (stop - 1) // stride
        lengths = np.full(last - first + 1, stride, dtype=np.intp)
        lengths[0] -= start - first * stride
        lengths[-1] -= (last + 1) * stride - stop
        return np.repeat(np.arange(first, last + 1, dtype=np.intp) % count, lengths)


def grid_rows(
    T: GridQuantity, dopings: Sequence[GridQuantity], at: slice
) -> tuple[carriers.Rows, carriers.Rows]:
    """The distinct temperatures and doping rows of the points ``at`` (carriers.Rows),
    from the grid's axis indices (no sort of the values)."""
    swept = [quantity for quantity in dopings if quantity.values.size > 1]
    if len(swept) <= 1:  # one doping axis (or none): its rows are the doping rows
        one = swept[0] if swept else GridQuantity(0.0, 1, T.size)
        return T.rows(at.start, at.stop), one.rows(at.start, at.stop)
    doping = np.zeros(at.stop - at.start, dtype=np.intp)
    for quantity in swept:
        doping = doping * quantity.values.size + quantity.codes(at)
    return T.rows(at.start, at.stop), _rows(doping)


def _rows(codes: IndexArray) -> carriers.Rows:
    """(one point of each distinct code, every point's row) of non-negative codes."""
    low = int(codes.min())
    span = int(codes.max()) - low + 1
    if span > 4 * codes.size:  # sparse codes: sorted (two doping axes, no temperature)
        return distinct_points([codes.astype(float)], codes.size)
    shifted = codes - low
    present = np.zeros(span, dtype=bool)
    present[shifted] = True
    some = np.empty(span, dtype=np.intp)
    some[shifted] = np.arange(codes.size)  # any point of each code will do
    row = np.cumsum(present) - 1
    return some[present], row[shifted]


def grid(calc: Calculation) -> GridPoints:
    """(T, donors, acceptors, shape) of every grid point, flattened (axis 0 slowest)."""
    shape = tuple(len(axis.values) for axis in calc.sweep)
    size = int(np.prod(shape))
    strides = [int(np.prod(shape[k + 1 :])) for k in range(len(shape))]
    swept = {
        axis.key: GridQuantity(axis.values, stride, size)
        for axis, stride in zip(calc.sweep, strides)
    }

    def quantity(key: AxisKey, fixed: float) -> GridQuantity:
        return swept[key] if key in swept else GridQuantity(fixed, 1, size)

    T = quantity("T", calc.temperature)
    donors = {s: quantity(("donors", s), v) for s, v in calc.donors.items()}
    acceptors = {s: quantity(("acceptors", s), v) for s, v in calc.acceptors.items()}
    return T, donors, acceptors, shape


def point(
    calc: Calculation,
    T: GridQuantity,
    donors: dict[str, GridQuantity],
    acceptors: dict[str, GridQuantity],
    index: int,
) -> Calculation:
    """The single-point calculation at grid index ``index``."""
    single = copy.copy(calc)
    single.sweep = []
    single.temperature = float(T[index])
    single.donors = {s: float(a[index]) for s, a in donors.items()}
    single.acceptors = {s: float(a[index]) for s, a in acceptors.items()}
    return single


def check_sweep(
    calc: Calculation,
    rules: Sequence[Rule],
    progress: Callable[[int, int], None] | None = None,
) -> tuple[CalculationReport, list[str]]:
    """(CalculationReport, input errors) of a sweep: its first point read as a single
    point (formulas, solvability), every rule over the grid, then each failing rule's
    worst point checked in full and its boundary summarized."""
    grid_points = grid(calc)
    T, donors, acceptors, _ = grid_points
    (first,), errors = check_points([point(calc, T, donors, acceptors, 0)], rules)
    if first.error:
        return CalculationReport(calc, None, error=first.error), errors
    for result in first.formulas:  # a value "here" belongs to one point, not to a sweep
        result.value = result.exact = result.error = float("nan")
    ruled, reads = grid_rules(calc, rules, first.embodied, grid_points, open_only=True)
    masks, notes = rule_grid(calc, ruled, first.embodied, grid_points, progress, reads)
    findings = [f for f in first.findings if f.rule in ("FORM01", "FORM02")]
    by_id = {rule.id: rule for rule in rules}
    ordered = sorted(masks.items())
    # every rule's worst point checked in full, in one call (one solve)
    worst_reports, _ = check_points(
        [point(calc, T, donors, acceptors, index) for _, (_, index) in ordered], rules
    )
    kept = []  # (finding, mask, worst index) of each rule confirmed at its worst point
    for ((rule_id, x), (mask, index)), worst in zip(ordered, worst_reports):
        match = [f for f in worst.findings if f.rule == rule_id and f.carrier == carrier_word(x)]
        if match:
            kept.append((match[0], by_id[rule_id], x, mask, index))
    found = boundaries_together(
        calc, grid_points, [(rule, x, mask) for _, rule, x, mask, _ in kept], reads
    )
    for (finding, _, _, mask, index), where in zip(kept, found):
        finding.sweep = _summary(mask, index, grid_points, calc, where, True)
        findings.append(finding)
    report = CalculationReport(
        calc, None, findings, notes, formulas=first.formulas, embodied=first.embodied
    )
    report.sweep = {"axes": [(axis_label(a), a) for a in calc.sweep], "points": int(T.size)}
    return report, errors


def grid_rules(
    calc: Calculation,
    rules: Sequence[Rule],
    embodied: list[Embodied],
    grid_points: GridPoints,
    open_only: bool = False,
) -> tuple[list[Rule], frozenset[str]]:
    """(the rules that may fire on the grid, the quantities they read): evaluate.sweep_rules
    from a probe of the grid's first point; the chunks rule and compute only those.
    ``open_only``: less the carriers whose gate the sweep's stated numbers close
    (sweep_gates.open_rules)."""
    values = _values_at(calc, grid_points, [0], reads=probed_names(rules))
    cells = Cells.grid(calc, values, 1, embodied)
    may_fire = sweep_rules(rules, cells)
    return sweep_rules(open_rules(may_fire[0], values), cells) if open_only else may_fire


def rule_grid(
    calc: Calculation,
    rules: Sequence[Rule],
    embodied: list[Embodied],
    grid_points: GridPoints,
    progress: Callable[[int, int], None] | None = None,
    reads: frozenset[str] | None = None,
) -> tuple[Masks, list[str]]:
    """({(rule id, carrier): (failing mask over the grid, worst flat index)}, notes):
    every rule over the grid in chunks of cells (``reads``: grid_rules; None: every
    quantity)."""
    T, donors, acceptors, shape = grid_points
    size = T.size
    masks: dict[tuple[str, str], BoolArray] = {}
    worst: dict[tuple[str, str], tuple[float, int]] = {}
    notes: list[str] = []
    reference = carriers.ReferenceSolves()  # each doping solved at T_0 once per sweep
    for start in range(0, size, CHUNK):
        stop = min(start + CHUNK, size)
        values, skipped = solve_sweep(
            calc,
            T[start:stop],
            {s: a[start:stop] for s, a in donors.items()},
            {s: a[start:stop] for s, a in acceptors.items()},
            reads,
            reference,
            grid_rows(T, [*donors.values(), *acceptors.values()], slice(start, stop)),
        )
        if skipped and skipped not in notes:
            notes.append(skipped)
        for ruled in rule_cells(rules, Cells.grid(calc, values, stop - start, embodied, reads)):
            if not ruled.fired.any():
                continue
            key = (ruled.rule.id, ruled.x)
            if key not in masks:
                masks[key] = np.zeros(size, dtype=bool)
            masks[key][start:stop] = ruled.fired
            # the worst fired cell (the first of equals): a fired indicator lies beyond
            # its threshold, so its excess is > 0 (an infinite one counts as 1e300)
            if key in worst and _largest_excess(ruled) <= worst[key][0]:
                continue  # no cell of this chunk is worse than the worst so far
            fired = np.flatnonzero(ruled.fired)
            with np.errstate(all="ignore"):
                excess = np.asarray(beyond(ruled.rule, ruled.indicator[fired]), dtype=float)
            # (never NaN: a NaN indicator fires nowhere)
            best = int(np.argmax(np.minimum(excess, 1e300, out=excess)))
            if key not in worst or excess[best] > worst[key][0]:
                worst[key] = (float(excess[best]), start + int(fired[best]))
        values = {}  # the chunk's arrays go before the next chunk is solved, not beside it
        if progress:
            progress(stop, size)
    return {key: (mask.reshape(shape), worst[key][1]) for key, mask in masks.items()}, notes


def _largest_excess(ruled: Ruled) -> float:
    """The largest excess (beyond, at most 1e300) of the fired cells, from the largest or
    smallest fired indicator in one pass: the excess is monotonic in the indicator, so it
    is the largest of the cells' own (every fired indicator is finite or infinite, never
    NaN)."""
    rule, indicator, fired = ruled.rule, ruled.indicator, ruled.fired
    if rule.relation == "above":
        extreme = np.max(indicator, where=fired, initial=-np.inf)
    else:
        extreme = np.min(indicator, where=fired, initial=np.inf)
    with np.errstate(all="ignore"):
        return min(float(beyond(rule, np.asarray(extreme))), 1e300)


def _runs(flags: ArrayIn) -> list[tuple[int, int]]:
    """(first, last) index of each run of True."""
    edges = np.diff(np.concatenate(([0], np.asarray(flags, dtype=np.int8), [0])))
    return [
        (int(i), int(j))
        for i, j in zip(np.flatnonzero(edges == 1), np.flatnonzero(edges == -1) - 1)
    ]


SMOOTH = 0.05  # |excess| at an edge, relative to its span, to accept it as a crossing
STEPS = 4  # false-position steps between two grid points


def _edges(flags: BoolArray) -> list[tuple[int, int]]:
    """(passing, failing) grid-index pairs at the ends of each failing run."""
    last = len(flags) - 1
    out = []
    for i, j in _runs(flags):
        if i > 0:
            out.append((i - 1, i))
        if j < last:
            out.append((j + 1, j))
    return out


def _interpolate(
    axis: Axis, pairs: list[tuple[int, int]], bases: Sequence[int]
) -> Generator[Request, FloatArray, list[float | None]]:
    """Where the indicator's excess crosses zero between each (passing, failing) pair of
    grid indices along ``axis`` (``bases``: the failing points' flat indices), by false
    position (in log for a log axis), all pairs in one solve per step: each step yields
    (flat indices, (axis key, values there)) and is sent the excess at those points.  A
    pair that does not cross smoothly (a jump, e.g. the Mott density switching the
    picture, or a gate) gets None: its grid value is used."""
    if not pairs:
        return []
    log = axis.spacing == "log"
    values, key = axis.values, axis.key
    passing = np.array([values[p] for p, _ in pairs], dtype=float)
    failing = np.array([values[f] for _, f in pairs], dtype=float)
    at = np.asarray(bases)
    both = yield np.concatenate([at, at]), (key, np.concatenate([passing, failing]))
    fa, fb = both[: at.size], both[at.size :]
    ok = np.isfinite(fa) & np.isfinite(fb) & (fa <= 0) & (fb > 0)
    span = np.where(ok, fb - fa, 1.0)
    xa, xb = (np.log(passing), np.log(failing)) if log else (passing, failing)
    x, f = xb.copy(), fb.copy()
    for _ in range(STEPS):
        denominator = np.where(ok, fb - fa, 1.0)
        x = np.where(ok, xa - fa * (xb - xa) / denominator, xb)
        f = yield at, (key, np.exp(x) if log else x)
        ok &= np.isfinite(f)
        below = ok & (f <= 0)
        xa, fa = np.where(below, x, xa), np.where(below, f, fa)
        xb, fb = np.where(ok & ~below, x, xb), np.where(ok & ~below, f, fb)
    good = ok & (np.abs(f) <= SMOOTH * span)
    found = np.exp(x) if log else x
    return [float(found[k]) if good[k] else None for k in range(len(pairs))]


def _failing_runs(
    axis: Axis, flags: BoolArray, crossings: dict[tuple[int, int], float | None] | None = None
) -> list[FailingRun]:
    """The failing runs along one axis; ``crossings`` maps (passing, failing) index
    pairs to the interpolated edge value (None: the failing grid value)."""
    values = axis.values
    last = len(values) - 1

    def edge(passing: int, failing: int) -> float:
        value = (crossings or {}).get((passing, failing))
        return float(values[failing] if value is None else value)

    runs = [
        FailingRun(None if i == 0 else edge(i - 1, i), None if j == last else edge(j + 1, j))
        for i, j in _runs(flags)
    ]
    if values[0] <= values[-1]:
        return runs
    # an axis written from high to low: each run's edges, and the runs, in value order
    return [FailingRun(run.high, run.low) for run in reversed(runs)]


def boundary_steps(calc: Calculation, mask: BoolArray) -> Generator[Request, FloatArray, Boundary]:
    """(boundary axis, row axis or None, [BoundaryRow]): where on the grid the rule
    fails, as steps: each false-position step of the edges between
    grid points yields (flat indices, override) and is sent the indicator's excess there,
    so that the boundaries of several rules share one solve per step
    (:func:`boundaries_together`)."""
    axes = calc.sweep
    shape = mask.shape
    if len(axes) == 1:
        rows: int | None = None
        cols, grid_mask, row_axis, count = 0, mask[None, :], None, 1
    else:
        # temperature (if swept) labels the rows; the boundary runs along the other axis
        rows, cols = (0, 1) if axes[0].key == "T" or axes[1].key != "T" else (1, 0)
        grid_mask = mask if rows == 0 else mask.T
        row_axis, count = axes[rows], len(axes[rows].values)
    axis = axes[cols]

    def flat(r: int, c: int) -> int:
        if rows is None:
            return c
        position = [0, 0]
        position[rows], position[cols] = r, c
        return int(np.ravel_multi_index(tuple(position), shape))

    # rows whose failing cells are alike (the same mask, so the same runs) are described
    # together, at their middle row: consecutive rows (first, last)
    starts = np.flatnonzero(np.concatenate(([True], np.any(grid_mask[1:] != grid_mask[:-1], 1))))
    ends = np.append(starts[1:] - 1, count - 1)
    groups = [(int(first), int(last)) for first, last in zip(starts, ends)]
    if len(groups) > ROWS_SHOWN:  # too many to list: a few evenly spaced rows
        picks = np.linspace(0, count - 1, ROWS_SHOWN).round().astype(int)
        groups = [(r, r) for r in sorted(set(picks))]
    middles = [(first + last) // 2 for first, last in groups]
    # row -> {(passing, failing): edge value or None}
    crossings: dict[int, dict[tuple[int, int], float | None]] = {}
    edges = [(r, pair) for r in middles for pair in _edges(grid_mask[r])]
    found = yield from _interpolate(
        axis, [pair for _, pair in edges], [flat(r, pair[1]) for r, pair in edges]
    )
    for (r, pair), value in zip(edges, found):
        crossings.setdefault(r, {})[pair] = value
    described = []
    for (first, last), middle in zip(groups, middles):
        at = (
            None
            if row_axis is None
            else tuple(float(row_axis.values[r]) for r in (first, last, middle))
        )
        described.append(
            BoundaryRow(
                at,
                first == last,
                first == 0 and last == count - 1,
                _failing_runs(axis, grid_mask[middle], crossings.get(middle)),
            )
        )
    return axis, row_axis, described


def _values_at(
    calc: Calculation,
    grid_points: GridPoints,
    at: ArrayIn,
    override: tuple[AxisKey, ArrayIn] | None = None,
    reads: frozenset[str] | None = None,
) -> Values:
    """Every quantity (``reads``: those the rules read) at grid points ``at`` (flat
    indices); ``override`` = (axis key, value or one value per point) moves them along
    that axis."""
    T, donors, acceptors, _ = grid_points
    indices = np.asarray(at)
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
    values, _ = solve_sweep(calc, T_at, donors_at, acceptors_at, reads)
    return values


def _excess(rule: Rule, x: str, values: Values, count: int) -> FloatArray:
    indicator = rule_indicator(rule, x, values, count)
    with np.errstate(all="ignore"):
        return np.asarray(beyond(rule, indicator), dtype=float)


def boundaries_together(
    calc: Calculation,
    grid_points: GridPoints,
    jobs: Sequence[tuple[Rule, str, BoolArray]],
    reads: frozenset[str] | None = None,
) -> list[Boundary]:
    """The boundaries (:func:`boundary_steps`), edges interpolated, of every (rule,
    carrier, mask) in ``jobs``, in lockstep: each false-position step of all of them is
    one solve (the solve and the indicators work point by point: no number changes)."""
    steps = [boundary_steps(calc, mask) for _, _, mask in jobs]
    results: dict[int, Boundary] = {}
    pending: dict[int, Request] = {}

    def advance(k: int, sent: FloatArray | None) -> None:
        try:
            pending[k] = next(steps[k]) if sent is None else steps[k].send(sent)
        except StopIteration as done:
            pending.pop(k, None)
            results[k] = done.value

    for k in range(len(jobs)):
        advance(k, None)
    while pending:
        keys = list(pending)
        requests = [pending[k] for k in keys]
        axis_key = requests[0][1][0]  # the boundary axis, the same for every rule
        at = np.concatenate([np.asarray(r[0]) for r in requests])
        moved = np.concatenate(
            [np.broadcast_to(np.asarray(r[1][1], float), np.shape(r[0])) for r in requests]
        )
        values = _values_at(calc, grid_points, at, (axis_key, moved), reads)
        start = 0
        for k, request in zip(keys, requests):
            rule, x, _ = jobs[k]
            stop = start + np.size(request[0])
            advance(k, _excess(rule, x, values, at.size)[start:stop])
            start = stop
    return [results[k] for k in range(len(jobs))]


def _summary(
    mask: BoolArray,
    index: int,
    grid_points: GridPoints,
    calc: Calculation,
    found: Boundary,
    interpolated: bool,
) -> SweepSummary:
    position = np.unravel_index(index, grid_points[3])
    axis, row_axis, rows = found
    worst = [(axis_, float(axis_.values[position[k]])) for k, axis_ in enumerate(calc.sweep)]
    return SweepSummary(
        int(mask.size),
        np.count_nonzero(mask) / mask.size,  # (the mean, without a float pass)
        axis,
        row_axis,
        rows,
        interpolated,
        worst,
    )
