"""Logbook: every run in the notebook, sortable and filterable, with a preview.

The filter box reads plain words (matched against title, id, chemist, intermediate, trap,
fluoride source, solvent and worst finding) and a few prefixes: `trap:furan`,
`chemist:iyer`, `finding:trap-late` and `sub:SMILES-or-SMARTS`. A structure query is
passed to the core's search in a worker, with its own notebook connection, so typing
never waits for RDKit.
"""

from __future__ import annotations

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Header, Input, Static

from ...errors import TrapbookError
from ..text import clip, minutes_text, temp_text, worst_text, yield_text

#: (row key, header, width) of the run table.
COLUMNS = (
    ("id", "Run", 8),
    ("title", "Title", 21),
    ("date", "Date", 11),
    ("chemist", "Chemist", 10),
    ("intermediate", "Intermediate", 13),
    ("trap", "Trap", 11),
    ("fluoride", "Fluoride", 10),
    ("temp_max_c", "T max", 7),
    ("time_min", "Time", 6),
    ("yield_pct", "Yield", 6),
    ("worst", "Worst finding", 16),
)
WIDTH = {key: width - 1 for key, _, width in COLUMNS}
#: Rows put into the table at a time: a terminal table pays for every row it holds, so a
#: notebook of 10 000 runs shows the first page and adds the next as the cursor nears the end.
PAGE = 300
TEXT_KEYS = ("id", "title", "chemist", "intermediate", "trap", "fluoride", "solvent", "worst", "screen")
PREFIXES = {"trap": ("trap",), "chemist": ("chemist",), "finding": ("worst",), "fluoride": ("fluoride",),
            "solvent": ("solvent",), "screen": ("screen",)}


def parse_filter(text: str) -> tuple[list[tuple[tuple[str, ...], str]], str | None]:
    """Filter text -> ([(columns, needle)], substructure query or None)."""
    terms: list[tuple[tuple[str, ...], str]] = []
    sub = None
    for word in text.split():
        key, sep, rest = word.partition(":")
        if sep and key.lower() in ("sub", "s") and rest:
            sub = rest
        elif sep and key.lower() in PREFIXES and rest:
            terms.append((PREFIXES[key.lower()], rest.casefold()))
        else:
            terms.append((TEXT_KEYS, word.casefold()))
    return terms, sub


def row_matches(row: dict, terms) -> bool:
    for cols, needle in terms:
        if not any(needle in str(row.get(c) or "").casefold() for c in cols):
            return False
    return True


def _sort_value(row: dict, key: str):
    v = row.get(key)
    return (v is None, v if not isinstance(v, str) else v.casefold())


def cells(row: dict) -> tuple:
    worst, style = worst_text(row.get("worst"))
    w = WIDTH
    inter = (row.get("intermediate") or "").replace("bicyclo", "")
    return (
        row["id"],
        clip(row.get("title"), w["title"]),
        row.get("date") or "",
        clip(row.get("chemist"), w["chemist"]),
        clip(inter, w["intermediate"]),
        clip(row.get("trap"), w["trap"]),
        clip(row.get("fluoride"), w["fluoride"]),
        temp_text(row.get("temp_max_c")),
        minutes_text(row.get("time_min")),
        yield_text(row.get("yield_pct"), row.get("yield_kind")),
        Text(clip(worst, w["worst"]), style=style),
    )


class LogbookScreen(Screen):
    """The run table: the first screen of the app."""

    BINDINGS = [
        Binding("slash", "focus_filter", "Filter"),
        Binding("n", "new_run", "New run"),
        Binding("c", "copy_run", "Copy as plan"),
        Binding("e", "open_run", "Open", key_display="e/⏎"),
        Binding("s", "sort", "Sort"),
        Binding("S", "reverse", "Reverse", show=False),
        Binding("h", "history", "History"),
        Binding("b", "board", "Screen board"),
        Binding("m", "more", "More rows", show=False),
        Binding("escape", "leave_filter", "Back to table", show=False),
        Binding("q", "app.quit", "Quit", show=False),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.rows: list[dict] = []
        self.shown: list[dict] = []
        self.sort_index = 0
        self.sort_reverse = False
        self.sub_ids: set[str] | None = None
        self.sub_query: str | None = None
        self.sub_error: str | None = None
        self.limit = PAGE

    def compose(self) -> ComposeResult:
        yield Header()
        yield Input(placeholder="/ filter: words · trap:furan · finding:trap-late · sub:SMILES or SMARTS", id="filter")
        yield Static("", id="filter-status")
        table = DataTable(id="runs", cursor_type="row", zebra_stripes=False, cell_padding=0)
        yield table
        with Vertical(id="preview-box"):
            yield Static("", id="preview")
        yield Footer()

    def on_mount(self) -> None:
        table = self.query_one("#runs", DataTable)
        for key, label, width in COLUMNS:
            table.add_column(label, key=key, width=width)
        self.reload()
        table.focus()

    def on_screen_resume(self) -> None:
        """Back from another screen: fresh rows, and the cursor on the run just worked on."""
        wanted = getattr(self.app, "last_run", None)
        self.app.last_run = None
        self.reload(select=wanted)
        if wanted and wanted not in {r["id"] for r in self.shown}:
            self.notify(f"{wanted} is hidden by the filter; / and clear it to see every run.", timeout=5)

    # --- data -------------------------------------------------------------------
    @property
    def nb(self):
        return self.app.nb

    def reload(self, select: str | None = None) -> None:
        self.rows = self.nb.list_runs()
        self.apply(select=select)

    def apply(self, select: str | None = None) -> None:
        """Filter and sort `rows` into the table, keeping the cursor on the same run (or on `select`)."""
        text = self.query_one("#filter", Input).value
        terms, sub = parse_filter(text)
        shown = [r for r in self.rows if row_matches(r, terms)]
        if sub:
            if sub != self.sub_query:
                self.sub_ids = None
                self.sub_query = sub
                self.sub_error = None
                self.run_substructure(sub)
            if self.sub_ids is not None:
                shown = [r for r in shown if r["id"] in self.sub_ids]
        else:
            self.sub_query, self.sub_ids, self.sub_error = None, None, None
        key = COLUMNS[self.sort_index][0]
        shown.sort(key=lambda r: _sort_value(r, key), reverse=self.sort_reverse)
        self.shown = shown
        table = self.query_one("#runs", DataTable)
        current = select or self.current_id()
        table.clear()
        self.limit = PAGE
        if current:
            pos = next((i for i, r in enumerate(shown) if r["id"] == current), None)
            if pos is not None:
                self.limit = max(PAGE, (pos // PAGE + 1) * PAGE)
        for r in shown[: self.limit]:
            table.add_row(*cells(r), key=r["id"])
        if current and table.row_count and current in table.rows:
            table.move_cursor(row=table.get_row_index(current), animate=False)
        self.show_status()
        self.schedule_preview()

    def action_more(self) -> None:
        """Add the next page of rows to the table (also done when the cursor reaches the end)."""
        table = self.query_one("#runs", DataTable)
        start = table.row_count
        if start >= len(self.shown):
            return
        self.limit = start + PAGE
        for r in self.shown[start: self.limit]:
            table.add_row(*cells(r), key=r["id"])
        self.show_status()

    def show_status(self) -> None:
        status = self.query_one("#filter-status", Static)
        arrow = "▼" if self.sort_reverse else "▲"
        msg = f"{len(self.shown)} of {len(self.rows)} runs · sorted by {COLUMNS[self.sort_index][1]} {arrow}"
        if len(self.shown) > self.limit:
            msg += f" · first {self.limit} listed, more as you scroll (m)"
        if self.sub_query:
            if self.sub_error:
                msg += f" · structure query: {self.sub_error}"
            elif self.sub_ids is None:
                msg += f" · searching structures for {self.sub_query} …"
            else:
                msg += f" · {len(self.sub_ids)} runs contain {self.sub_query}"
        status.update(msg)

    @work(thread=True, exclusive=True, group="substructure", exit_on_error=False)
    def run_substructure(self, query: str) -> None:
        """Structure search through the core, on a connection of its own."""
        from ...store import Notebook

        try:
            from ... import search
        except ImportError:
            self.app.call_from_thread(self._sub_done, query, None, "structure search not available in this installation")
            return
        try:
            with Notebook.open(self.nb.path) as nb:
                hits = search.search(nb, substructure=query)
            ids = {h.run_id for h in hits}
            self.app.call_from_thread(self._sub_done, query, ids, None)
        except TrapbookError as exc:
            self.app.call_from_thread(self._sub_done, query, set(), exc.message)

    def _sub_done(self, query: str, ids: set[str] | None, error: str | None) -> None:
        if query != self.sub_query:
            return
        self.sub_ids = ids if ids is not None else set()
        self.sub_error = error
        self.apply()

    # --- preview ----------------------------------------------------------------
    def current_id(self) -> str | None:
        table = self.query_one("#runs", DataTable)
        if table.row_count == 0:
            return None
        try:
            return table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value
        except Exception:
            return None

    @on(DataTable.RowHighlighted, "#runs")
    def _highlighted(self, event: DataTable.RowHighlighted) -> None:
        if event.cursor_row >= event.data_table.row_count - 1:
            self.action_more()
        self.schedule_preview()

    def schedule_preview(self) -> None:
        if getattr(self, "_preview_timer", None) is not None:
            self._preview_timer.stop()
        self._preview_timer = self.set_timer(0.08, self.show_preview)

    def show_preview(self) -> None:
        from ..preview import preview

        self._preview_timer = None
        rid = self.current_id()
        box = self.query_one("#preview", Static)
        if rid is None:
            box.update(Text("No run here yet: press n for a new run.", style="italic"))
            return
        try:
            box.update(preview(self.nb, rid))
        except TrapbookError as exc:
            box.update(Text(exc.message, style="italic"))

    # --- filter -----------------------------------------------------------------
    @on(Input.Changed, "#filter")
    def _filter_changed(self) -> None:
        if getattr(self, "_filter_timer", None) is not None:
            self._filter_timer.stop()
        self._filter_timer = self.set_timer(0.12, self.apply)

    @on(Input.Submitted, "#filter")
    def _filter_submitted(self) -> None:
        self.apply()
        self.query_one("#runs", DataTable).focus()

    def action_focus_filter(self) -> None:
        self.query_one("#filter", Input).focus()

    def action_leave_filter(self) -> None:
        self.query_one("#runs", DataTable).focus()

    @on(DataTable.HeaderSelected, "#runs")
    def _header(self, event: DataTable.HeaderSelected) -> None:
        idx = event.column_index
        self.sort_reverse = (not self.sort_reverse) if idx == self.sort_index else False
        self.sort_index = idx
        self.apply()

    def action_sort(self) -> None:
        self.sort_index = (self.sort_index + 1) % len(COLUMNS)
        self.sort_reverse = False
        self.apply()

    def action_reverse(self) -> None:
        self.sort_reverse = not self.sort_reverse
        self.apply()

    # --- going elsewhere --------------------------------------------------------
    @on(DataTable.RowSelected, "#runs")
    def _selected(self, event: DataTable.RowSelected) -> None:
        self.action_open_run()

    def action_open_run(self) -> None:
        from .editor import WorkbenchScreen

        rid = self.current_id()
        if rid:
            self.app.push_screen(WorkbenchScreen(run_id=rid))

    def action_new_run(self) -> None:
        from .editor import WorkbenchScreen

        self.app.push_screen(WorkbenchScreen())

    def action_copy_run(self) -> None:
        from .editor import WorkbenchScreen

        rid = self.current_id()
        if rid:
            self.app.push_screen(WorkbenchScreen(copy_of=rid))

    def action_history(self) -> None:
        from .history import TrailScreen

        rid = self.current_id()
        if rid:
            self.app.push_screen(TrailScreen(rid))

    def action_board(self) -> None:
        from .review import BoardScreen

        rid = self.current_id()
        screen = next((r.get("screen") for r in self.shown if r["id"] == rid), None)
        self.app.push_screen(BoardScreen(screen_id=screen))
