"""The Logbook's filter box: text typed in the one query language, answered by the core's search.

The box reads `trapbook search`'s query typed (search_query.parse_query: `trap:furan`,
`temp:>100`, `sub:c1cc[nH]c1`, plain words for the full text, run ids and chemists' names)
and hands the Query to `search.search` (under --group, the group's search, which calls it on
every member). It never matches rows itself, so the filter and the CLI give the same runs.

It owns what filtering takes: the pause after the last key before a search starts (typing
does not search on every key), the worker that searches on a connection of its own (typing
never waits for RDKit), and the status line that says what the filter is doing, or why it
filters nothing (a text that cannot be read, or a search that refused). The answer goes up
as `FilterAnswered`; the screen only shows the runs it names.
"""

from __future__ import annotations

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.widgets import Input, Static

from ...errors import TrapbookError
from ...search_query import Query, parse_query
from ..messages import FilterAnswered, FilterLeft
from ..text import shown as stored_text
from ..theme import tone
from .in_order_input import InOrderInput

#: Seconds after the last key before the text is searched.
PAUSE_S = 0.12
PLACEHOLDER = "/ filter: words · TB-0012 · trap:furan · finding:trap-late · sub:SMILES or SMARTS"


class LogbookFilter(Vertical):
    """The filter box and its status line, with the core's answer to the text typed."""

    DEFAULT_CSS = """
    LogbookFilter {
        height: auto;
    }
    """

    BINDINGS = [
        # Enter leaves too (the box's own key: it searches at once, then the table takes the keys);
        # the f1 list says so (keys.LONGER)
        Binding("escape,down", "leave", "To the table", key_display="Esc/↓"),
    ]

    def __init__(self, **kwargs) -> None:
        super().__init__(**kwargs)
        #: The text being answered (None: ask again, the runs may have changed).
        self.text: str | None = None
        self.parsed: Query | None = None
        #: The runs of the last answer and the text it answers (kept while a new text is searched).
        self.found_ids: set[str] | None = None
        self.answered: str | None = None
        #: Why the text filters nothing: it cannot be read, or the search refused it.
        self.error: TrapbookError | None = None
        #: What the screen says beside the filter (counts, sort order).
        self.summary = Text()
        self._pause = None

    def compose(self) -> ComposeResult:
        yield InOrderInput(placeholder=PLACEHOLDER, id="filter")
        yield Static("", id="filter-status")

    # --- what the screen reads -----------------------------------------------------
    @property
    def run_ids(self) -> set[str] | None:
        """The runs to show, by the core's last answer; None: every run (no text, or it filters nothing)."""
        if not self.text or self.error is not None:
            return None
        return self.found_ids

    def show(self, summary: Text | str) -> None:
        """The status line: why the filter is not applied, the screen's summary, what is being searched."""
        self.summary = Text(summary) if isinstance(summary, str) else summary
        msg = Text()
        if self.error is not None:
            msg.append(f"filter not applied: {stored_text(self.error.message)}", style=f"bold {tone('warn')}")
            msg.append(f" · {stored_text(self.error.hint)}" if self.error.hint else "")
            msg.append(" · ")
        msg.append_text(self.summary)
        if self.error is None and self.text and self.answered != self.text:
            msg.append(f" · searching for {stored_text(self.text)} …")
        elif self.error is None and self.parsed is not None and self.parsed.substructure:
            msg.append(f" · structures searched for {stored_text(self.parsed.substructure)}")
        self.query_one("#filter-status", Static).update(msg)

    def focus_box(self) -> None:
        self.query_one("#filter", Input).focus()

    # --- asking the core ---------------------------------------------------------------
    def search_now(self) -> None:
        """Search the text in the box unless its answer is in hand or on the way."""
        self._stop_pause()
        text = self.query_one("#filter", Input).value.strip()
        if text != self.text:
            self.start(text)

    def ask_again(self) -> None:
        """The runs may have changed: the same text is searched afresh (its old answer shown meanwhile)."""
        self.text = None
        self.search_now()

    def start(self, text: str) -> None:
        """Read the text into a Query and ask the core for its runs (in a worker)."""
        self.text, self.parsed, self.error = text, None, None
        if not text:
            self.post_message(FilterAnswered(text, None))
            return
        try:
            self.parsed = parse_query(text)
        except TrapbookError as exc:
            self.post_message(FilterAnswered(text, None, exc))
            return
        self.show(self.summary)
        self.run_search(text, self.parsed)

    @work(thread=True, exclusive=True, group="filter", exit_on_error=False)
    def run_search(self, text: str, query: Query) -> None:
        """The core's search, on a connection of its own; the answer (or the refusal) is posted."""
        try:
            ids = self.ask_core(query)
        except TrapbookError as exc:
            self.post_message(FilterAnswered(text, None, exc))
            return
        except Exception as exc:  # shown in the status line as the failure it is, never as "no runs"
            failure = TrapbookError(f"the search failed ({type(exc).__name__}: {exc})", "please report it")
            self.post_message(FilterAnswered(text, None, failure))
            return
        self.post_message(FilterAnswered(text, ids))

    def ask_core(self, query: Query) -> set[str]:
        """The run ids (MEMBER:ID under --group) `trapbook search` gives for the query."""
        from ... import search
        from ...group import open_member
        from ...store import Notebook

        group = getattr(self.app, "group", None)
        if group is not None:  # the same Query on every member (the group's connections are read-only)
            return {h["ref"] for h in group.search(query)}
        path = self.app.nb.path
        with open_member(path) if getattr(self.app, "read_only", False) else Notebook.open(path) as nb:
            return {h.run_id for h in search.search(nb, query)}

    def on_filter_answered(self, message: FilterAnswered) -> None:
        """Keep the answer to the text in the box; an answer to an older text goes no further."""
        if message.text != self.text:
            message.stop()  # the text changed meanwhile; its own answer is on the way
            return
        self.found_ids, self.answered, self.error = message.run_ids, message.text, message.error
        self.show(self.summary)

    # --- keys ------------------------------------------------------------------------
    def _stop_pause(self) -> None:
        if self._pause is not None:
            self._pause.stop()
            self._pause = None

    @on(Input.Changed, "#filter")
    def _changed(self) -> None:
        self._stop_pause()
        self._pause = self.set_timer(PAUSE_S, self.search_now)

    @on(Input.Submitted, "#filter")
    def _submitted(self) -> None:
        self.search_now()
        self.post_message(FilterLeft())

    def action_leave(self) -> None:
        self.post_message(FilterLeft())
