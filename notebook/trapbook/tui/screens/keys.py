"""Keys: every key of every screen, read from the screens' own bindings so it cannot drift."""

from __future__ import annotations

from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Static

# Keys of the forms that are not bindings (Textual's own widgets handle them).
FORM_KEYS = [
    ("Tab / Shift+Tab", "next / previous field"),
    ("Enter (in a line, step or product field)", "keep the row being written (ctrl+s keeps it too)"),
    ("Enter (on a table row)", "open the run, or load the row into the form to change it"),
    ("→ (at the end of a field)", "accept the suggested completion (roles, status, screen, levels, products)"),
    ("Space (on a checkbox)", "tick or untick"),
    ("mouse", "click a row, a tab, a header to sort, a button"),
]


#: Where the footer's short label covers several keys, the help says which key does what.
LONGER = {
    "Tabs": "Run tab (f2-f5: Run, Lines, Steps, Outcome tabs)",
    "Move": "Move the row under the cursor up (ctrl+↓: down)",
    "Remove": "Remove the row under the cursor (line, step or product result)",
    "New row": "Empty the form for a new line, step or product result",
    "Limiting": "Mark the line under the cursor limiting: equiv and yields refer to it (again: unmark)",
}


def _key_text(b: Binding) -> str:
    if b.key_display and "/" in b.key_display:
        return b.key_display
    return b.key.replace("left_square_bracket", "[").replace("right_square_bracket", "]").replace("slash", "/")


def key_table() -> Table:
    from ..app import TrapbookApp
    from .dialogs import LeaveDialog, ReasonDialog
    from .editor import WorkbenchScreen
    from .history import TrailScreen
    from .review import BoardScreen
    from .runs import LogbookScreen

    screens = [("Everywhere", TrapbookApp), ("Logbook (runs)", LogbookScreen), ("Workbench (run editor)", WorkbenchScreen),
               ("Screen board (review)", BoardScreen), ("Version trail (history)", TrailScreen),
               ("Leaving with unsaved changes", LeaveDialog), ("Reason for a change", ReasonDialog)]
    t = Table(box=None, padding=(0, 2), show_header=False)
    t.add_column(style="bold #f0a83c", min_width=22)
    t.add_column()
    for title, cls in screens:
        t.add_row(Text(title, style="bold #7fb7be underline"), "")
        for b in cls.BINDINGS:
            if isinstance(b, tuple):
                b = Binding(*b)
            t.add_row(_key_text(b), LONGER.get(b.description, b.description or b.action))
        t.add_row("", "")
    t.add_row(Text("In forms and tables", style="bold #7fb7be underline"), "")
    for k, d in FORM_KEYS:
        t.add_row(k, d)
    return t


class KeysScreen(ModalScreen):
    BINDINGS = [Binding("escape,f1,q", "app.pop_screen", "Close")]

    def compose(self) -> ComposeResult:
        with VerticalScroll(id="keys-box"):
            yield Static(Text("Keys  (Esc closes)", style="bold"), id="keys-title")
            yield Static(key_table(), id="keys-table")
