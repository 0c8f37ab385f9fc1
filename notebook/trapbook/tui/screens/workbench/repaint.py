"""Repaint a Static or a DataTable of the Workbench only when what it shows has changed.

Every keystroke rebuilds the run and refreshes every panel; an update that changes nothing
would still cost a layout, so each panel goes through `put` and each table through
`_fill_table`, which remember what they last showed.
"""

from __future__ import annotations

from rich.text import Text
from textual.widgets import DataTable, Static


class RepaintMixin:
    """`put` for Statics, `_fill_table` for the row tables."""

    def put(self, selector: str, content, key=None, layout: bool = True) -> None:
        """Update a Static only when what it shows changed (each repaint costs a layout)."""
        if key is None:
            key = content.markup if isinstance(content, Text) else content
        shown = self.__dict__.setdefault("_shown", {})
        if shown.get(selector) == key:
            return
        shown[selector] = key
        self.query_one(selector, Static).update(content, layout=layout)

    def _fill_table(self, t: DataTable, rows: list[list]) -> None:
        """Refill a table only if its rows changed, keeping the cursor where it was."""
        shown = self.__dict__.setdefault("_table_rows", {})
        if shown.get(t.id) == rows:
            return
        shown[t.id] = rows
        keep = t.cursor_row
        t.clear()
        for i, cells in enumerate(rows):
            t.add_row(*cells, key=str(i))
        if t.row_count:
            t.move_cursor(row=min(max(keep, 0), t.row_count - 1), animate=False)
