"""Render solved operating points for the console (rich) or as JSON."""

from __future__ import annotations

import json

from ..quantity_registry.summary_fields import STATE_ROWS as ROWS  # (key, label, format)
from ..quantity_registry.summary_fields import shown_rows
from . import DISCLAIMER
from .safe_text import visible, visible_data


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
        for label, text in shown_rows(ROWS, summary):
            table.add_row(label, text)
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
