"""The Workbench's table tabs (Lines, Steps, Outcome): each owns the keys that act on its rows.

A tab holds a table of rows and the form that writes one row at a time; its keys — a new
row, remove, move up or down, and on the Lines tab the limiting mark — work while the focus
is anywhere in it, and post a `RowCommand` that the screen carries out on the run it holds.
The footer shows them only where they work.
"""

from __future__ import annotations

from textual.binding import Binding
from textual.widgets import TabPane

from ..messages import RowCommand


class RowsTab(TabPane):
    """A tab whose table rows can be added, removed and reordered from the keyboard."""

    BINDINGS = [
        Binding("ctrl+n", "row('blank')", "New row"),
        Binding("ctrl+r", "row('remove')", "Remove"),
        Binding("ctrl+up", "row('move', -1)", "Move", key_display="^↑/^↓"),
        Binding("ctrl+down", "row('move', 1)", "Move row down", show=False),
    ]

    def action_row(self, command: str, delta: int = 0) -> None:
        self.post_message(RowCommand(command, delta))


class LinesTab(RowsTab):
    """The Lines tab: its rows, and the mark of the limiting line that every equiv refers to."""

    BINDINGS = [
        Binding("ctrl+l", "row('limiting')", "Limiting"),
    ]


class OutcomeTab(RowsTab):
    """The Outcome tab: its rows, and the run's expected products to pick a result from."""

    BINDINGS = [
        Binding("ctrl+t", "row('expected')", "Expected products"),
    ]
