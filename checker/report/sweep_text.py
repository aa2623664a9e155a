"""Sweeps in words: axis values in trade units, where a rule fails on the grid, and
the message of a finding that covers a grid (from engine.regime.sweep's numbers)."""

from __future__ import annotations


def axis_label(axis) -> str:
    """engine.regime.sweep.axis_label, imported where a sweep is reported (a point check's
    report does not load the sweep module)."""
    from ..engine.regime.sweep import axis_label as label

    return label(axis)


def _trade(axis, value) -> tuple[str, str]:
    """(number, unit) of a grid value in trade units."""
    return (f"{value:.4g}", "K") if axis.key == "T" else (f"{value * 1e-6:.3g}", "cm⁻³")


def axis_value(axis, value) -> str:
    """A grid value in trade units: '300 K', '2.5e+18 cm⁻³'."""
    return " ".join(_trade(axis, value))


def axis_text(label, axis) -> str:
    """One axis of a sweep as its range: 'T 233.1–423.1 K (39 points, linear)'."""
    first, unit = _trade(axis, axis.values[0])
    last, _ = _trade(axis, axis.values[-1])
    return f"{label} {first}–{last} {unit} ({len(axis.values)} points, {axis.spacing})"


def sweep_ranges(axes) -> str:
    """Every swept axis of a calculation (its ``sweep``) as a range, joined by ×."""
    return " × ".join(axis_text(axis_label(axis), axis) for axis in axes)


def _runs_text(axis, runs) -> str:
    label = axis_label(axis)
    parts = []
    for run in runs:
        if run.low is None and run.high is None:
            parts.append("on the whole range")
        elif run.low is None:
            parts.append(f"for {label} ≤ {axis_value(axis, run.high)}")
        elif run.high is None:
            parts.append(f"for {label} ≥ {axis_value(axis, run.low)}")
        else:
            parts.append(
                f"for {axis_value(axis, run.low)} ≤ {label} ≤ {axis_value(axis, run.high)}"
            )
    return " and ".join(parts) or "nowhere"


def boundary_lines(summary) -> list:
    """Lines saying where on the grid the rule fails (engine.regime.sweep.SweepSummary)."""
    if summary.row_axis is None:
        return [f"fails {_runs_text(summary.axis, row.runs)}" for row in summary.rows]
    row_axis = summary.row_axis
    label = axis_label(row_axis)
    lines = []
    for row in summary.rows:
        first, last, middle = row.rows
        if row.single:
            where = f"at {label} = {axis_value(row_axis, first)}"
        else:
            span = (
                f"every {label}"
                if row.every
                else (f"{label} = {axis_value(row_axis, first)} … {axis_value(row_axis, last)}")
            )
            edge = f" (edge at {axis_value(row_axis, middle)})" if summary.interpolated else ""
            where = f"at {span}{edge}"
        lines.append(f"{where}: fails {_runs_text(summary.axis, row.runs)}")
    return lines


def worst_point(summary) -> dict:
    """Axis label -> the worst grid point's value in trade units."""
    return {axis_label(axis): axis_value(axis, value) for axis, value in summary.worst_point}


def finding_message(finding) -> str:
    """The message of a finding; for a sweep, where on the grid it fails first."""
    summary = finding.sweep
    if summary is None:
        return finding.message
    where = ", ".join(f"{k} = {v}" for k, v in worst_point(summary).items())
    return (
        f"On {summary.failing_fraction:.1%} of the sweep; "
        f"{'; '.join(boundary_lines(summary))}. Worst at {where}: {finding.message}"
    )
