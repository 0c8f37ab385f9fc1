"""Version trail: every saved version of a run, who saved it, when, why, and what changed."""

from __future__ import annotations

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import DataTable, Header, Static

from ..text import clip, shown
from ..theme import tone
from ..widgets.keybar import KeyBar


class TrailScreen(Screen):
    BINDINGS = [Binding("escape", "app.pop_screen", "Back")]

    def __init__(self, run_id: str):
        super().__init__()
        self.run_id = run_id
        self.versions = []

    def compose(self) -> ComposeResult:
        yield Header()
        yield Static("", id="trail-title")
        yield DataTable(id="trail", cursor_type="row")
        yield Static("", id="trail-changes")
        yield KeyBar()

    def on_mount(self) -> None:
        nb = self.app.nb
        self.versions = nb.history(self.run_id)
        meta = nb.run_meta(self.run_id)
        title = Text()
        title.append(f" {self.run_id} ", style=f"bold {tone('ground')} on {tone('accent')}")
        title.append(f"  {shown(meta['title'])}", style="bold")
        title.append(
            f"   {len(self.versions)} version(s)" + (" · withdrawn" if meta["withdrawn"] else ""), style=f"{tone('muted')}"
        )
        self.query_one("#trail-title", Static).update(title)
        t = self.query_one("#trail", DataTable)
        for label, width in (("v", 3), ("saved (UTC)", 19), ("by", 14), ("action", 8), ("reason", 36), ("hash", 12)):
            t.add_column(label, width=width)
        for v in self.versions:
            t.add_row(
                str(v.version),
                v.time[:19].replace("T", " "),
                clip(v.author, 14),
                v.action,
                clip(v.reason, 36),
                v.hash[:12],
                key=str(v.version),
            )
        t.move_cursor(row=len(self.versions) - 1, animate=False)
        t.focus()
        self.show_changes(len(self.versions) - 1)

    @on(DataTable.RowHighlighted, "#trail")
    def _highlighted(self, event: DataTable.RowHighlighted) -> None:
        self.show_changes(event.cursor_row)

    def show_changes(self, index: int) -> None:
        if not self.versions:
            return
        v = self.versions[max(0, min(index, len(self.versions) - 1))]
        out = Text()
        out.append(f"Version {v.version}: {shown(v.reason)}\n", style="bold")
        out.append(
            f"previous hash {v.prev_hash[:12] if v.prev_hash else '— (first version)'} → {v.hash[:12]}\n\n",
            style=f"{tone('muted')}",
        )
        for c in v.changes:
            out.append("  • " + shown(c) + "\n")
        self.query_one("#trail-changes", Static).update(out)
