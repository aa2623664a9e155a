"""Regime map and η(T) curve, drawn with matplotlib (object API, no pyplot, no display).

matplotlib is imported only here and only when a plot is asked for; it draws SVG
(inline in the HTML report) or PNG.
"""

from __future__ import annotations

import io

import numpy as np

from ..physics.carriers import DEGENERATE_ETA, IONIZED_FRACTION, REGIMES
from .safe_text import visible

COLOURS = {
    "extrinsic": "#d9ead3",
    "incomplete ionization": "#cfe2f3",
    "intrinsic": "#fff2cc",
    "degenerate": "#f9cb9c",
    "metallic": "#d9d2e9",
}
SEVERITY_COLOURS = {None: "#2e7d32", "info": "#0277bd", "warning": "#ef6c00", "error": "#c62828"}
CRITERIA = {
    "extrinsic": "extrinsic, non-degenerate",
    "incomplete ionization": f"incomplete ionization: < {IONIZED_FRACTION:.0%} ionized",
    "intrinsic": "intrinsic: n_i > |N_D − N_A|",
    "degenerate": f"degenerate: η > {DEGENERATE_ETA:g} (3kT rule)",
    "metallic": "metallic: above the Mott density",
}


def _figure(size, right=0.95):
    import matplotlib

    matplotlib.rcParams["svg.hashsalt"] = "regimecheck"  # the same input draws the same SVG
    matplotlib.rcParams["svg.fonttype"] = "none"  # text stays text (small, fast)
    from matplotlib.figure import Figure

    # fixed margins: an automatic layout would draw every figure twice
    fig = Figure(figsize=size)
    fig.subplots_adjust(left=0.1, right=right, bottom=0.16, top=0.92)
    return fig


def _label(text) -> str:
    """User text (material, dopant) on a figure: visible, and a '$' never starts mathtext."""
    return visible(text).replace("$", r"\$")


def render(fig, fmt: str) -> bytes:
    buffer = io.BytesIO()
    fig.savefig(buffer, format=fmt, dpi=110, metadata={"Date": None} if fmt == "svg" else None)
    return buffer.getvalue()


def _notice(fig):
    from . import DISCLAIMER

    fig.text(0.01, 0.005, DISCLAIMER, fontsize=6, color="#666666", ha="left", va="bottom")


def _inside(cells):
    """A cell deep inside a region (erode it while something is left), for its label."""
    core = cells
    while True:
        shrunk = core.copy()
        shrunk[1:, :] &= core[:-1, :]
        shrunk[:-1, :] &= core[1:, :]
        shrunk[:, 1:] &= core[:, :-1]
        shrunk[:, :-1] &= core[:, 1:]
        shrunk[[0, -1], :] = False  # the plot's edge is a boundary too
        shrunk[:, [0, -1]] = False
        if not shrunk.any():
            break
        core = shrunk
    rows, cols = np.nonzero(core)
    k = int(np.argmin((rows - rows.mean()) ** 2 + (cols - cols.mean()) ** 2))
    return rows[k], cols[k]


def draw_map(grid, points=(), title=None, size=(7.8, 5.0), notice=True):
    """The regime map of ``grid`` (engine.regime_map.RegimeGrid) with ``points``;
    ``notice``: print the screening-check sentence on it (a standalone figure)."""
    from matplotlib.colors import BoundaryNorm, ListedColormap
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch, Rectangle

    fig = _figure(size, right=0.62)
    ax = fig.add_subplot()
    x = grid.doping * 1e-6
    cmap = ListedColormap([COLOURS[r] for r in REGIMES])
    ax.pcolormesh(
        x,
        grid.T,
        grid.codes,
        cmap=cmap,
        norm=BoundaryNorm(np.arange(len(REGIMES) + 1) - 0.5, len(REGIMES)),
        shading="nearest",
        rasterized=True,
    )
    X, Y = np.meshgrid(x, grid.T)
    carrier = grid.carrier
    lines = [
        (grid.eta, DEGENERATE_ETA, "#b45f06", f"η_{carrier} = {DEGENERATE_ETA:g}"),
        (grid.fraction, IONIZED_FRACTION, "#1155cc", f"{IONIZED_FRACTION:.0%} ionized"),
        (grid.ni_ratio, 1.0, "#bf9000", "n_i = N"),
    ]
    handles = []
    with np.errstate(all="ignore"):
        for field, level, colour, label in lines:
            data = np.where(np.isfinite(field), field, np.nan)
            if np.nanmin(data) < level < np.nanmax(data):
                ax.contour(X, Y, data, levels=[level], colors=colour, linewidths=1.2)
                handles.append(Line2D([], [], color=colour, lw=1.2, label=label))
    if np.isfinite(grid.mott) and x[0] < grid.mott * 1e-6 < x[-1]:
        ax.axvline(grid.mott * 1e-6, color="#674ea7", lw=1.2, ls="--")
        handles.append(
            Line2D(
                [],
                [],
                color="#674ea7",
                lw=1.2,
                ls="--",
                label=f"Mott density {grid.mott * 1e-6:.3g} cm⁻³",
            )
        )
    present = set(np.unique(grid.codes))
    for code, name in enumerate(REGIMES):
        cells = grid.codes == code
        if code in present and cells.sum() > 0.01 * cells.size:
            j, i = _inside(cells)
            ax.text(X[j, i], Y[j, i], name, ha="center", va="center", fontsize=8, color="#333333")
    for point in points:
        colour = SEVERITY_COLOURS[point.severity]
        if point.doping_span or point.T_span:
            dx = point.doping_span or (point.doping, point.doping)
            dy = point.T_span or (point.T, point.T)
            if dx[0] != dx[1] and dy[0] != dy[1]:
                ax.add_patch(
                    Rectangle(
                        (min(dx) * 1e-6, min(dy)),
                        abs(dx[1] - dx[0]) * 1e-6,
                        abs(dy[1] - dy[0]),
                        fill=False,
                        ec=colour,
                        lw=1.6,
                    )
                )
            else:
                ax.plot(np.array(dx) * 1e-6, dy, color=colour, lw=2.2)
        else:
            ax.plot(point.doping * 1e-6, point.T, "o", ms=6, mfc=colour, mec="black", mew=0.6)
    legend = [
        Patch(facecolor=COLOURS[r], edgecolor="#999999", label=CRITERIA[r])
        for r in REGIMES
        if REGIMES.index(r) in present
    ] + handles
    legend += [
        Line2D([], [], marker="o", ls="", mfc=c, mec="black", label=s or "no finding")
        for s, c in SEVERITY_COLOURS.items()
        if any(p.severity == s for p in points)
    ]
    ax.legend(
        handles=legend, fontsize=7, loc="upper left", bbox_to_anchor=(1.01, 1.0), frameon=False
    )
    ax.set_xscale("log")
    # plain "1e17" labels: the default 10^17 goes through mathtext, slow for many figures
    from matplotlib.ticker import FuncFormatter, LogLocator, NullLocator

    ax.xaxis.set_major_locator(LogLocator(base=10.0, numticks=12))
    ax.xaxis.set_major_formatter(FuncFormatter(lambda v, _: f"1e{np.log10(v):.0f}"))
    ax.xaxis.set_minor_locator(NullLocator())
    ax.set_xlim(x[0], x[-1])
    ax.set_ylim(grid.T[0], grid.T[-1])
    ax.set_xlabel(
        f"{_label(grid.species)} {'donor' if grid.kind == 'donor' else 'acceptor'} density (cm⁻³)"
    )
    ax.set_ylabel("temperature (K)")
    ax.set_title(
        _label(title or f"{grid.material.name}: regimes of {grid.species} doping"), fontsize=10
    )
    if notice:
        _notice(fig)
    return fig


def draw_eta_curve(curve, title=None, size=(6.4, 4.2), notice=True):
    """η of the majority carrier vs T at a fixed doping (``curve``: an
    engine.regime_map.EtaCurve), with the regimes along T."""
    from matplotlib.patches import Patch

    T, eta, codes = curve.T, curve.eta, curve.codes
    fig = _figure(size)
    ax = fig.add_subplot()
    edges = np.concatenate(([T[0]], (T[1:] + T[:-1]) / 2, [T[-1]]))  # cell edges in T
    for run in np.split(np.arange(T.size), np.flatnonzero(np.diff(codes)) + 1):
        ax.axvspan(edges[run[0]], edges[run[-1] + 1], color=COLOURS[REGIMES[codes[run[0]]]], lw=0)
    carrier = curve.carrier
    ax.plot(T, eta, color="black", lw=1.6, label=f"η_{carrier} (Fermi–Dirac solve)")
    ax.axhline(
        DEGENERATE_ETA,
        color="#b45f06",
        ls="--",
        lw=1.2,
        label=f"η = {DEGENERATE_ETA:g}: degenerate above (3kT rule)",
    )
    ax.axhline(0.0, color="#999999", ls=":", lw=1.0, label="η = 0: Fermi level at the band edge")
    handles, _ = ax.get_legend_handles_labels()
    handles += [Patch(facecolor=COLOURS[REGIMES[c]], label=REGIMES[c]) for c in np.unique(codes)]
    ax.legend(handles=handles, fontsize=7, loc="best")
    ax.set_xlabel("temperature (K)")
    ax.set_ylabel(f"η_{carrier} = (E_F − E_C)/kT" if carrier == "n" else "η_p = (E_V − E_F)/kT")
    ax.set_xlim(T[0], T[-1])
    ax.set_title(
        _label(title or f"{curve.material.name}, {curve.species} {curve.density * 1e-6:.3g} cm⁻³"),
        fontsize=10,
    )
    if notice:
        _notice(fig)
    return fig
