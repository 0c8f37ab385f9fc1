"""The Workbench's table tabs (Lines, Steps, Outcome): each owns the keys that act on its rows.

A tab holds a table of rows and the form that writes one row at a time; its keys — a new
row, remove, move up or down — work while the focus is anywhere in it, and the footer shows
them only where they work. A new row clears the tab's form; removing or moving a row posts
`RowRemoved` or `RowMoved`, naming the run's rows the tab shows (`rows_key`), for the screen
to do on the run it holds.
"""

from __future__ import annotations

from rich.text import Text
from textual import on
from textual.binding import Binding
from textual.widgets import Checkbox, DataTable, Input, TabPane

from ..messages import RowMoved, RowRemoved
from ..theme import tone
from .field import Field, FormCheck


class RowsTab(TabPane):
    """A tab whose table rows can be added, removed and reordered from the keyboard."""

    BINDINGS = [
        Binding("ctrl+n", "row('blank')", "New row"),
        Binding("ctrl+r", "row('remove')", "Remove"),
        Binding("ctrl+up", "row('move', -1)", "Move", key_display="^↑/^↓"),
        Binding("ctrl+down", "row('move', 1)", "Move row down", show=False),
    ]

    #: Which of the run's row lists the table shows: "lines", "steps" or "products" (the outcome's results).
    rows_key: str = ""
    _rows: list[list] | None = None  # the cells the table shows now

    def action_row(self, command: str, delta: int = 0) -> None:
        if command == "blank":
            self.blank()
            self.focus_form()
        elif command == "remove":
            self.remove_row()
        elif command == "move":
            self.move_row(delta)

    # --- what each tab gives ----------------------------------------------------------------
    @property
    def table(self) -> DataTable:
        return self.query_one(DataTable)

    def rows(self) -> list:
        """The rows the table shows, as the screen last handed them."""
        raise NotImplementedError

    def row_label(self, index: int) -> str:
        """How a notice names row `index` ("line 2 (furan)")."""
        raise NotImplementedError

    index: int | None = None  # the row the form changes (None: it writes a new one)

    def form(self) -> tuple[dict | None, str | None]:
        """The row the form holds, or (None, why not)."""
        raise NotImplementedError

    def say(self, text) -> None:
        """A line under the form."""
        raise NotImplementedError

    def take(self, focus: bool = True) -> tuple[dict | None, int | None]:
        """The row in the form and the row it changes (None: a new one), the form cleared; or
        (None, None) with the reason said below the form."""
        row, why = self.form()
        if row is None:
            self.say(Text(why or "the form is empty", style=tone("stop")))
            return None, None
        index = self.index
        self.blank()
        if focus:
            self.focus_form()
        return row, index

    def blank(self) -> None:
        """Clear the form: it writes a new row."""
        raise NotImplementedError

    def fill_rows(self, rows: list[list]) -> None:
        """Refill the table only if its rows changed (each refill costs a layout), keeping the cursor where it was."""
        if rows == self._rows:
            return
        self._rows = rows
        table = self.table
        keep = table.cursor_row
        table.clear()
        for i, cells in enumerate(rows):
            table.add_row(*cells, key=str(i))
        if table.row_count:
            table.move_cursor(row=min(max(keep, 0), table.row_count - 1), animate=False)

    # --- the row keys -------------------------------------------------------------------
    def focus_form(self) -> None:
        """The focus to the form's first box."""
        self.query(Input).first().focus()

    def cursor_index(self) -> int | None:
        """The row under the table's cursor (None: no rows)."""
        count = len(self.rows())
        return min(max(self.table.cursor_row, 0), count - 1) if count else None

    def remove_row(self) -> None:
        i = self.cursor_index()
        if i is None:
            return
        label = self.row_label(i)
        self.blank()
        self.focus_form()
        self.post_message(RowRemoved(self.rows_key, i))
        self.notify(f"Removed {label}.", markup=False)

    def move_row(self, delta: int) -> None:
        """The cursor goes ahead to where the row will be; the table follows once the screen moved it."""
        i = self.cursor_index()
        if i is None or not 0 <= i + delta < len(self.rows()):
            return
        self.table.move_cursor(row=i + delta, animate=False)
        self.post_message(RowMoved(self.rows_key, i, i + delta))


class FormRowsTab(RowsTab):
    """A table tab whose form writes one row (Lines, Steps): each box is checked as it is typed,
    the tab's preview follows, Enter keeps the row and picking a table row edits it."""

    _loading = False  # set while the tab fills its own form, so filling is no edit

    def keep(self) -> None:
        """Hand the form's row to the screen (the tab's own message)."""
        raise NotImplementedError

    def preview(self) -> None:
        """Show what the form's row would do to the run."""
        raise NotImplementedError

    def edit(self, index: int) -> None:
        """Fill the form with row `index`."""
        raise NotImplementedError

    @on(Input.Changed)
    def _changed(self, event: Input.Changed) -> None:
        event.stop()
        row = event.input.parent
        if isinstance(row, Field):
            row.run_check()
        if not self._loading:
            self.preview()

    @on(Input.Submitted)
    def _submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self.keep()

    @on(FormCheck.Submitted)
    def _box_submitted(self, event: FormCheck.Submitted) -> None:
        event.stop()
        self.keep()

    @on(Checkbox.Changed)
    def _box_changed(self, event: Checkbox.Changed) -> None:
        event.stop()
        if not self._loading:
            self.preview()

    @on(DataTable.RowSelected)
    def _selected(self, event: DataTable.RowSelected) -> None:
        if event.data_table is not self.table:
            return
        event.stop()
        self.edit(int(event.row_key.value))
