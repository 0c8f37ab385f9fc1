"""Logbook: every run in the notebook, sortable and filterable, with a preview.

The filter box (widgets/logbook_filter.py) reads the query language of `trapbook search`
and asks the core's search for the runs; the screen only shows the runs its answer names
(`FilterAnswered`), so the filter and the CLI give the same runs. The screen never matches
rows itself.
"""

from __future__ import annotations

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import Screen
from textual.widgets import DataTable, Header, Input, Static
from textual.widgets.data_table import CellDoesNotExist

from ...errors import TrapbookError
from ..messages import FilterAnswered, FilterLeft, PreviewReady
from ..text import clip, minutes_text, temp_text, worst_text, yield_text
from ..widgets.keybar import KeyBar
from ..widgets.logbook_filter import LogbookFilter

#: (row key, header, width) of the run table.
COLUMNS = (
    ("id", "Run", 8),
    ("member", "Member", 9),  # only in a group view (--group): whose notebook the run is in
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
#: Rows put into the table at a time: a terminal table pays for every row it holds, so a
#: notebook of 10 000 runs shows the first page and adds the next as the cursor nears the end.
PAGE = 120


def _sort_value(row: dict, key: str):
    v = row.get(key)
    return (v is None, v if not isinstance(v, str) else v.casefold())


#: Columns given up first when the terminal is narrower than the whole table (title flexes).
DROP_UNDER = {"chemist": 120, "fluoride": 120, "intermediate": 100, "time_min": 100}


def layout(width: int, group: bool = False) -> tuple[tuple[str, str, int], ...]:
    """The run table's columns for a terminal `width` wide: no sideways scroll at 80 or 100 columns."""
    cols = [c for c in COLUMNS if width >= DROP_UNDER.get(c[0], 0) and (group or c[0] != "member")]
    others = sum(w for key, _, w in cols if key != "title")
    title = max(12, min(40, width - 1 - others))  # one column for the scroll bar
    return tuple((key, label, title if key == "title" else w) for key, label, w in cols)


def cells(row: dict, columns=COLUMNS) -> tuple:
    worst, style = worst_text(row.get("worst"))
    width = {key: w - 1 for key, _, w in columns}
    inter = (row.get("intermediate") or "").replace("bicyclo", "")
    every = {
        "id": lambda: clip(row.get("run_id") or row["id"], 40),  # in a group view `id` is the MEMBER:ID key
        "member": lambda: clip(row.get("member"), width["member"]),
        "title": lambda: clip(row.get("title"), width["title"]),
        "date": lambda: clip(row.get("date"), 10),
        "chemist": lambda: clip(row.get("chemist"), width["chemist"]),
        "intermediate": lambda: clip(inter, width["intermediate"]),
        "trap": lambda: clip(row.get("trap"), width["trap"]),
        "fluoride": lambda: clip(row.get("fluoride"), width["fluoride"]),
        "temp_max_c": lambda: temp_text(row.get("temp_max_c")),
        "time_min": lambda: minutes_text(row.get("time_min")),
        "yield_pct": lambda: yield_text(row.get("yield_pct"), row.get("yield_kind")),
        "worst": lambda: Text(clip(worst, width["worst"]), style=style),
    }
    return tuple(every[key]() for key, _, _ in columns)


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
        Binding("a", "campaigns", "Campaigns"),
        Binding("p", "toggle_preview", "Preview"),
        Binding("m", "more", "More rows", show=False),
        Binding("q", "app.quit", "Quit", show=False),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.rows: list[dict] = []
        self.shown: list[dict] = []
        self.sort_index = 0
        self.sort_reverse = False
        self.limit = PAGE
        self.columns = COLUMNS
        self.shown_before = False

    def compose(self) -> ComposeResult:
        yield Header()
        yield LogbookFilter(id="logbook-filter")
        table = DataTable(id="runs", cursor_type="row", zebra_stripes=False, cell_padding=0)
        yield table
        with Vertical(id="preview-box"):
            yield Static("", id="preview")
        yield KeyBar()

    def on_mount(self) -> None:
        table = self.query_one("#runs", DataTable)
        self.columns = layout(self.app.size.width, self.in_group)
        for key, label, width in self.columns:
            table.add_column(label, key=key, width=width)
        self.reload()
        table.focus()
        if hasattr(self.app, "rows_on_screen"):
            self.call_after_refresh(self.app.rows_on_screen)

    def on_resize(self) -> None:
        """A new width may take or give back columns: the table is laid out again, rows and all."""
        wanted = layout(self.app.size.width, self.in_group)
        if wanted == self.columns:
            return
        self.columns = wanted
        table = self.query_one("#runs", DataTable)
        table.clear(columns=True)
        for key, label, width in wanted:
            table.add_column(label, key=key, width=width)
        self.apply()

    def repaint_colours(self) -> None:
        self.apply(force=True)

    def action_toggle_preview(self) -> None:
        """Hide or show the preview: hidden, the table takes the whole screen."""
        self.toggle_class("-no-preview")
        self.schedule_preview()

    def on_screen_resume(self) -> None:
        """Back from another screen: fresh rows, and the cursor on the run just worked on."""
        if not self.shown_before:  # the first resume is the first showing: on_mount has just read the rows
            self.shown_before = True
            return
        wanted = getattr(self.app, "last_run", None)
        self.app.last_run = None
        self.reload(select=wanted)
        if wanted and wanted not in {r["id"] for r in self.shown}:
            self.notify(f"{wanted} is hidden by the filter; / and clear it to see every run.", timeout=5)

    # --- data -------------------------------------------------------------------
    @property
    def filter_box(self) -> LogbookFilter:
        return self.query_one(LogbookFilter)

    @property
    def nb(self):
        return self.app.nb

    @property
    def in_group(self) -> bool:
        return getattr(self.app, "group", None) is not None

    def pick(self, key: str) -> str:
        """The run id of a table row; in a group view the row's member becomes the notebook the next screen reads."""
        if not self.in_group:
            return key
        label, rid = self.app.group.split_ref(key)
        self.app.nb = self.app.group.member(label).nb
        return rid

    def check_action(self, action: str, parameters: tuple) -> bool | None:
        return self.app.allows(action) if hasattr(self.app, "allows") else True

    def on_key(self, event) -> None:
        """A write key in a read-only session does nothing but say so."""
        if getattr(self.app, "read_only", False) and event.key in ("n", "c") and not isinstance(self.focused, Input):
            event.stop()
            self.app.say_read_only()

    def reload(self, select: str | None = None) -> None:
        if self.in_group:  # every member's runs, keyed MEMBER:ID (ids repeat between notebooks)
            self.rows = [{**r, "id": r["ref"]} for r in self.app.group.list_runs()]
        else:
            self.rows = self.nb.list_runs()
        self.filter_box.ask_again()  # runs may have changed since the last answer
        self.apply(select=select)

    def apply(self, select: str | None = None, force: bool = False) -> None:
        """Filter and sort `rows` into the table, keeping the cursor on the same run (or on `select`).

        While a new filter text is being searched the old answer stays; the table is refilled
        only when the rows it would list differ (a refill and its redraw slow the search).
        """
        self.shown = shown = self.filtered_rows()
        filled = (id(self.rows), self.columns, tuple(r["id"] for r in shown))
        if not force and select is None and filled == getattr(self, "_filled", None):
            self.show_status()
            return
        self._filled = filled
        table = self.query_one("#runs", DataTable)
        current = select or self.current_id()
        table.clear()
        self.limit = PAGE
        if current:
            pos = next((i for i, r in enumerate(shown) if r["id"] == current), None)
            if pos is not None:
                self.limit = max(PAGE, (pos // PAGE + 1) * PAGE)
        for r in shown[: self.limit]:
            table.add_row(*cells(r, self.columns), key=r["id"])
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
        for r in self.shown[start : self.limit]:
            table.add_row(*cells(r, self.columns), key=r["id"])
        self.show_status()

    def filtered_rows(self) -> list[dict]:
        """The rows of the runs the core's answer names; every row when there is no answer to show."""
        rows = self.sorted_rows()
        found = self.filter_box.run_ids
        return list(rows) if found is None else [r for r in rows if r["id"] in found]

    def sorted_rows(self) -> list[dict]:
        """Every row in the chosen order, sorted once per order and read of the rows, not per keystroke."""
        key = (self.sort_index, self.sort_reverse, id(self.rows))
        cached = getattr(self, "_sorted", None)
        if cached is None or cached[0] != key:
            column = COLUMNS[self.sort_index][0]
            rows = sorted(self.rows, key=lambda r: _sort_value(r, column), reverse=self.sort_reverse)
            self._sorted = cached = (key, rows)
        return cached[1]

    def show_status(self) -> None:
        """Counts and sort order, said on the filter's status line (which adds what the filter is doing)."""
        arrow = "▼" if self.sort_reverse else "▲"
        msg = f"{len(self.shown)} of {len(self.rows)} runs · sorted by {COLUMNS[self.sort_index][1]} {arrow}"
        if len(self.shown) > self.limit:
            msg += f" · first {self.limit} listed, more as you scroll (m)"
        self.filter_box.show(msg)

    def on_filter_answered(self, message: FilterAnswered) -> None:
        """The filter's answer is in: the table lists the runs it names (every run when it names none)."""
        self.apply()

    def on_filter_left(self, message: FilterLeft) -> None:
        self.query_one("#runs", DataTable).focus()

    # --- preview ----------------------------------------------------------------
    def current_id(self) -> str | None:
        table = self.query_one("#runs", DataTable)
        if table.row_count == 0:
            return None
        try:
            return table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value
        except CellDoesNotExist:  # the cursor sits past the rows while the table refills
            return None

    @on(DataTable.RowHighlighted, "#runs")
    def _highlighted(self, event: DataTable.RowHighlighted) -> None:
        if event.cursor_row >= event.data_table.row_count - 1:
            self.action_more()
        self.schedule_preview()

    def schedule_preview(self) -> None:
        if getattr(self, "_preview_timer", None) is not None:
            self._preview_timer.stop()
        # the first preview waits for the table to be on the screen (it loads RDKit and the units,
        # in a worker but on the same interpreter); later ones only for the cursor to settle
        if not getattr(self, "_previewed", False):
            self._previewed = True
            self.call_after_refresh(self.show_preview)
            return
        self._preview_timer = self.set_timer(0.08, self.show_preview)

    def show_preview(self) -> None:
        self._preview_timer = None
        rid = self.current_id()
        if rid is None:
            self.query_one("#preview", Static).update(Text("No run here yet: press n for a new run.", style="italic"))
            return
        if self.has_class("-no-preview"):
            return
        run_id = self.pick(rid)  # on the UI thread: in a group view it chooses the member's notebook
        self.draw_preview(rid, self.nb, run_id)

    @work(thread=True, exclusive=True, group="preview", exit_on_error=False)
    def draw_preview(self, rid: str, nb, run_id: str) -> None:
        """Work out the preview off the UI thread: the first one loads RDKit, which must not freeze the table.

        It reads through a connection of its own: the screen's connection is closed when the
        app quits, which may be while this thread still reads (SQLite does not survive that)."""
        from ...group import open_member
        from ..preview import preview

        try:
            with open_member(nb.path) as own:  # read-only: a preview never writes
                shown_now = preview(own, run_id)
        except TrapbookError as exc:
            shown_now = Text(exc.message, style="italic")
        self.post_message(PreviewReady(rid, shown_now))

    def on_preview_ready(self, message: PreviewReady) -> None:
        if message.row_key == self.current_id():  # the cursor may have moved on meanwhile
            self.query_one("#preview", Static).update(message.content)

    # --- filter -----------------------------------------------------------------
    def action_focus_filter(self) -> None:
        self.filter_box.focus_box()

    @on(DataTable.HeaderSelected, "#runs")
    def _header(self, event: DataTable.HeaderSelected) -> None:
        key = self.columns[event.column_index][0]
        idx = next(i for i, c in enumerate(COLUMNS) if c[0] == key)
        self.sort_reverse = (not self.sort_reverse) if idx == self.sort_index else False
        self.sort_index = idx
        self.apply()

    def action_sort(self) -> None:
        self.sort_index = (self.sort_index + 1) % len(COLUMNS)
        if COLUMNS[self.sort_index][0] == "member" and not self.in_group:
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
        if rid and getattr(self.app, "read_only", False):  # the Workbench saves drafts: a read-only view shows the trail
            return self.action_history()
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
            self.app.push_screen(TrailScreen(self.pick(rid)))

    def action_campaigns(self) -> None:
        from .campaign import show_campaigns

        show_campaigns(self.app)

    def action_board(self) -> None:
        from .review import BoardScreen

        rid = self.current_id()
        if rid:
            self.pick(rid)
        screen = next((r.get("screen") for r in self.shown if r["id"] == rid), None)
        self.app.push_screen(BoardScreen(screen_id=screen))
