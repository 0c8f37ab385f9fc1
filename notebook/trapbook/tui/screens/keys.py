"""Keys: every key of every screen, read from the screens' own bindings so it cannot drift."""

from __future__ import annotations

from rich.console import Group
from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Static

from ..theme import tone

# Keys of the forms that are not bindings (Textual's own widgets handle them).
FORM_KEYS = [
    ("Tab / Shift+Tab", "next / previous field (Shift+Tab from a form's first field: its table)"),
    ("Enter", "in a line, step or product field: keep the row being written (ctrl+s keeps it too)"),
    ("Enter", "on a table row: open the run, or load the row into the form to change it"),
    ("→", "at the end of a field: accept the suggested completion (roles, status, screen, levels, products)"),
    ("Space", "on a tick box: tick or untick"),
    ("mouse", "click a row, a tab, a header to sort, a button"),
]


#: Where the footer's short label covers several keys, the help says which key does what.
LONGER = {
    "Move": "Move the row under the cursor up (ctrl+↓: down)",
    "Remove": "Remove the row under the cursor (line, step or product result)",
    "New row": "Empty the form for a new line, step or product result",
    "Limiting": "Mark the line under the cursor limiting: equiv and yields refer to it (again: unmark)",
    "To the table": "Back to the run table (Enter too: it searches at once, then goes back)",
}


def _key_text(b: Binding) -> str:
    if b.key_display and "/" in b.key_display:
        return b.key_display
    if b.key == "escape":
        return "Esc"
    return b.key.replace("left_square_bracket", "[").replace("right_square_bracket", "]").replace("slash", "/")


def key_table() -> Group:
    from ...search_query import help_rows as filter_help_rows
    from ..app import TrapbookApp
    from ..widgets.lines_tab import LinesTab
    from ..widgets.logbook_filter import LogbookFilter
    from ..widgets.outcome_tab import OutcomeTab
    from ..widgets.row_tabs import RowsTab
    from .campaign import CampaignScreen
    from .dialogs import LeaveDialog, ReasonDialog
    from .editor import WorkbenchScreen
    from .history import TrailScreen
    from .review import BoardScreen
    from .runs import LogbookScreen

    screens = [
        ("Everywhere", TrapbookApp),
        ("Logbook (runs)", LogbookScreen),
        ("Logbook filter box (/)", LogbookFilter),
        ("Workbench (run editor)", WorkbenchScreen),
        ("Workbench tables (Lines, Steps, Outcome tabs)", RowsTab),
        ("Workbench Lines tab", LinesTab),
        ("Workbench Outcome tab", OutcomeTab),
        ("Screen board (review)", BoardScreen),
        ("Version trail (history)", TrailScreen),
        ("Campaigns (a)", CampaignScreen),
        ("Leaving with unsaved changes", LeaveDialog),
        ("Reason for a change", ReasonDialog),
    ]
    parts = []

    def section(title: str, rows: list[tuple[str, str]]) -> None:
        t = Table(box=None, padding=(0, 2), show_header=False)
        t.add_column(style=f"bold {tone('attention')}", width=16)
        t.add_column()
        for k, d in rows:
            t.add_row(Text(k), Text(d))  # plain text: a SMARTS such as c1cc[nH]c1 is not markup
        parts.extend([Text(title, style=f"bold {tone('accent')} underline"), t, Text("")])

    for title, cls in screens:
        rows = []
        for b in cls.BINDINGS:
            if isinstance(b, tuple):
                b = Binding(*b)
            if b.key == "ctrl+down":
                continue  # said with ctrl+↑ ("^↑/^↓")
            rows.append((_key_text(b), LONGER.get(b.description, b.description or b.action)))
        section(title, rows)
    section("In forms and tables", FORM_KEYS)
    section("Logbook filter (/): the query of trapbook search; every part must hold", filter_help_rows())
    return Group(*parts[:-1])


class KeysScreen(ModalScreen):
    BINDINGS = [Binding("escape,f1,q", "app.pop_screen", "Close")]

    def compose(self) -> ComposeResult:
        with VerticalScroll(id="keys-box"):
            yield Static(Text("Keys  (Esc closes)", style="bold"), id="keys-title")
            yield Static(key_table(), id="keys-table")
