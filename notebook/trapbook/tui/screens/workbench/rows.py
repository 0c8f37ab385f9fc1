"""What the Workbench's Lines, Steps and Outcome tabs share about their rows.

Each of those tabs holds a table of rows and a form below it that writes one row at a
time. Here: clearing a form, keeping the row a form holds (Enter), and the row keys —
ctrl+n, ctrl+r and ctrl+↑/↓ — on whichever tab is active.
"""

from __future__ import annotations

from rich.text import Text
from textual.widgets import Checkbox, DataTable, Input

from ...theme import tone


class TabRowsMixin:
    """Clear a row form, keep its row, and new / remove / move rows of the active tab's table."""

    def clear_form(self, prefix: str, fields, *boxes: str) -> None:
        """Empty a row form's boxes (`#<prefix>-<key>` for each field, then the tick boxes) quietly."""
        self._loading = True
        for k, *_ in fields:
            self.query_one(f"#{prefix}-{k}", Input).value = ""
        for box in boxes:
            self.query_one(box, Checkbox).value = False
        self._loading = False

    def field_problem(self, prefix: str, fields) -> str | None:
        """The first field of a row form whose check refuses its text, in full ("Amount: ...")."""
        from ...widgets.field import Field

        for key, *_ in fields:
            problem = self.query_one(f"#row-{prefix}-{key}", Field).problem
            if problem:
                return problem
        return None

    def keep_row(self, form, msg: str, with_row, blank, focus: bool = True) -> bool:
        """Enter on a row form: the run takes its row and the form starts afresh, or `msg` says why not."""
        row, why = form()
        if row is None:
            self.put(msg, Text(why or "the form is empty", style=f"{tone('stop')}"), layout=False)
            return False
        self.data = with_row(row)
        blank(focus=focus)
        self.changed()
        self.recompute()
        return True

    def _rows(self) -> tuple[str, list, DataTable] | None:
        tab = self._active()
        if tab == "tab-lines":
            return "lines", self.data.setdefault("lines", []), self.query_one("#lines", DataTable)
        if tab == "tab-steps":
            return "steps", self.data.setdefault("steps", []), self.query_one("#steps", DataTable)
        if tab == "tab-outcome":
            out = self.data.get("outcome") or {}  # no empty outcome is made just by looking
            return "products", out.get("products") or [], self.query_one("#products", DataTable)
        return None

    def action_blank(self) -> None:
        tab = self._active()
        if tab == "tab-steps":
            self.blank_step()
            self.query_one("#step-add", Input).focus()
        elif tab == "tab-outcome":
            self.blank_product()
        elif tab == "tab-lines":
            self.blank_line()

    def action_remove(self) -> None:
        found = self._rows()
        if not found or not found[1]:
            return
        what, rows, table = found
        i = min(table.cursor_row, len(rows) - 1)
        removed = rows.pop(i)
        if what == "lines":
            self.blank_line()
            label = f"line {i + 1} ({removed.get('name')})"
        elif what == "steps":
            self.blank_step()
            label = f"step {i + 1}"
        else:
            self.tidy_outcome()
            self.blank_product()
            label = f"the result for {removed.get('product')}"
        self.notify(f"Removed {label}.")
        self.changed()
        self.recompute()

    def action_move(self, delta: int) -> None:
        found = self._rows()
        if not found or not found[1]:
            return
        what, rows, table = found
        if not rows:
            return
        i = min(table.cursor_row, len(rows) - 1)
        j = i + delta
        if not 0 <= j < len(rows):
            return
        rows[i], rows[j] = rows[j], rows[i]
        self.recompute()
        table.move_cursor(row=j, animate=False)
        self.changed()
