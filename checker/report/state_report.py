"""Render solved operating points for the console (rich) or as JSON."""

from __future__ import annotations

import json

from . import DISCLAIMER
from .safe_text import visible, visible_data

# (key of engine.regime.trade_summary, label, format)
ROWS = [
    ("regime", "regime", "{}"),
    ("EF_minus_EC_eV", "E_F - E_C", "{:+.4f} eV"),
    ("EF_minus_EV_eV", "E_F - E_V", "{:+.4f} eV"),
    ("eta_n", "η_n = (E_F - E_C)/kT", "{:+.3f}"),
    ("eta_p", "η_p = (E_V - E_F)/kT", "{:+.3f}"),
    ("n_cm3", "n", "{:.4g} cm^-3"),
    ("p_cm3", "p", "{:.4g} cm^-3"),
    ("donors_ionized_fraction", "donors ionized", "{:.1%}"),
    ("acceptors_ionized_fraction", "acceptors ionized", "{:.1%}"),
    ("ni_cm3", "n_i", "{:.4g} cm^-3"),
    ("band_gap_eV", "E_g", "{:.4f} eV"),
    ("Nc_cm3", "N_c", "{:.4g} cm^-3"),
    ("Nv_cm3", "N_v", "{:.4g} cm^-3"),
    ("above_mott_density", "above Mott density", "{}"),
    ("neutrality_residual", "neutrality residual", "{:.1e}"),
]


def render_console(entries, errors, console) -> None:
    """entries: list of (title, subtitle, summary dict)."""
    from rich.table import Table
    from rich.text import Text

    # user text as Text, never as a string rich would read as markup ("[/]" fails)
    for title, subtitle, summary in entries:
        table = Table(
            title=Text(visible(title)),
            caption=Text(visible(subtitle)),
            show_header=False,
            title_justify="left",
            caption_justify="left",
        )
        table.add_column("quantity")
        table.add_column("value", justify="right")
        for key, label, fmt in ROWS:
            table.add_row(label, fmt.format(summary[key]))
        console.print(table)
    for message in errors:
        console.print(Text("error ", style="bold red") + Text(visible(message)), highlight=False)
    console.print(
        f"{len(entries)} operating point(s) solved, {len(errors)} input error(s).", highlight=False
    )
    console.print(DISCLAIMER, highlight=False)


def render_json(entries, errors) -> str:
    return json.dumps(
        visible_data(
            {
                "points": [{"name": t, "where": sub, "state": s} for t, sub, s in entries],
                "errors": errors,
                "notice": DISCLAIMER,
            }
        ),
        indent=2,
    )
