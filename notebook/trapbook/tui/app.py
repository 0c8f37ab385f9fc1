"""The Trapbook terminal app: opens a notebook on the Logbook and keeps it open.

Startup imports only Textual and the store; RDKit (through amounts/checks) is warmed in
a background thread right after the first screen is drawn, so the run table is on the
screen in well under two seconds and the first run opened does not wait for RDKit.
"""

from __future__ import annotations

import time
from pathlib import Path

from textual import events, work
from textual.app import App
from textual.binding import Binding

from ..errors import TrapbookError
from ..text_safety import printable
from .screens.question import QuestionScreen, TypeAheadGate


class TrapbookApp(App):
    """One notebook file, browsed and edited from the keyboard."""

    CSS_PATH = "app.tcss"
    TITLE = "Trapbook"
    ENABLE_COMMAND_PALETTE = False
    #: Under 120 columns the side panels give the forms room (`.-narrow` in app.tcss); under
    #: 32 lines the tables and the preview give up height (`.-short`).
    HORIZONTAL_BREAKPOINTS = [(0, "-narrow"), (120, "-wide")]
    VERTICAL_BREAKPOINTS = [(0, "-short"), (32, "-tall")]
    BINDINGS = [
        Binding("f1", "keys", "Keys"),
        Binding("f8", "light_dark", "Light / dark", show=False),
        Binding("f9", "whoami", "Your name on saves", show=False),
        Binding("ctrl+q", "quit", "Quit", priority=True),
    ]

    #: Actions that write to a notebook: refused (hidden, and said) when the app is read-only.
    WRITE_ACTIONS = frozenset({"new_run", "copy_run", "whoami", "fill_strain", "open_best"})

    def __init__(
        self,
        path: str | Path | None,
        author: str | None = None,
        warm: bool = True,
        group: tuple[str, ...] = (),
        read_only: bool = False,
    ):
        super().__init__()
        from .theme import register

        register(self)
        #: --group paths: every member's runs in one Logbook (trapbook.group), always read-only.
        self.group_paths = tuple(group)
        self.group = None
        #: Nothing is written in this session: write keys are hidden and say so when pressed.
        self.read_only = read_only or bool(group)
        self.path = Path(path).expanduser() if path is not None else None
        #: --author for this session; otherwise the notebook's "you are" name (f9) is used.
        self.given_author = author
        self.name_asked = False
        #: Keys typed while a question is being asked or answered are set aside (screens/question.py).
        self.typeahead = TypeAheadGate()
        self.warm = warm
        self.nb = None
        self.started = time.perf_counter()
        self.ready_seconds: float | None = None
        #: When the Logbook's first rows were painted (time.perf_counter); benchmarks/tui.py reads it.
        self.rows_drawn_at: float | None = None
        #: The run last saved or left in the Workbench: the Logbook's cursor goes back to it.
        self.last_run: str | None = None

    def on_mount(self) -> None:
        from .screens.runs import LogbookScreen

        try:
            self.nb = self.open_notebook()  # only `trapbook init` creates a notebook
        except TrapbookError as exc:
            self.exit(message=f"error: {exc.message}\n  what to do: {exc.hint or ''}")
            return
        self.sub_title = self.where() + (" · read-only" if self.read_only else "")
        try:
            self.author_and_source()  # a bad --author is said now, not at the first save
        except TrapbookError as exc:
            self.exit(message=f"error: {printable(exc.message)}\n  what to do: {printable(exc.hint or '')}")
            return
        self.push_screen(LogbookScreen())
        self.ready_seconds = time.perf_counter() - self.started
        if self.warm:  # after the first frame: the import must not hold up the rows being drawn
            self.call_after_refresh(self.warm_up)

    def rows_on_screen(self) -> None:
        """The Logbook's first rows are on the screen: for the chemist, the start is over."""
        if self.rows_drawn_at is None:
            self.rows_drawn_at = time.perf_counter()

    def open_notebook(self):
        """The notebook this session shows: read-only when asked, the group's first readable member under --group."""
        from ..group import Group, open_member
        from ..store import Notebook

        if self.group_paths:
            self.group = Group.open(self.group_paths)
            first = next(self.group.readable(), None)
            if first is None:
                raise TrapbookError("no member's notebook passed its check", "run 'trapbook --db FILE verify' on each")
            return first.nb
        return open_member(self.path) if self.read_only else Notebook.open(self.path)

    def where(self) -> str:
        if self.group is None:
            return self.path.name
        return "group: " + ", ".join(m.label if m.ok else f"{m.label} (NOT VERIFIED, left out)" for m in self.group.members)

    def allows(self, action: str) -> bool:
        """Whether an action may run in this session (a write in a read-only session may not)."""
        return not (self.read_only and action in self.WRITE_ACTIONS)

    def say_read_only(self) -> None:
        self.notify("read-only: this view does not write to any notebook.", title="Read-only", severity="warning", timeout=4)

    def check_action(self, action: str, parameters: tuple) -> bool | None:
        return self.allows(action)

    @work(thread=True, group="warm", exit_on_error=False)
    def warm_up(self) -> None:
        """Import the RDKit-backed core, and sqlite-utils for the first save, off the UI thread,
        before the user needs them (the store reads a notebook without sqlite-utils)."""
        import sqlite_utils  # noqa: F401

        from .. import (
            amounts,  # noqa: F401
            checks,  # noqa: F401
            strain_link,  # noqa: F401
        )

    # --- who saves ---------------------------------------------------------------
    def author_and_source(self) -> tuple[str, str]:
        """(name, 'given' | 'notebook' | 'login'): the same rule as every CLI save."""
        from ..settings import author_for
        from ..store.notebook import login_name

        if self.nb is None:
            return (self.given_author, "given") if self.given_author else (login_name(), "login")
        return author_for(self.nb, self.given_author)

    @property
    def author(self) -> str:
        """The name recorded on the versions saved in this session."""
        return self.author_and_source()[0]

    @property
    def chosen_author(self) -> str | None:
        """A name someone chose (--author or the notebook's); None when only the login name is known."""
        name, source = self.author_and_source()
        return None if source == "login" else name

    async def on_event(self, event: events.Event) -> None:
        """Keys reach the screens only through the type-ahead gate (see `ask`)."""
        if isinstance(event, (events.Key, events.Paste)) and not event.is_forwarded and not self.typeahead.admits(event):
            self.typeahead.set_aside += 1
            if isinstance(self.screen, QuestionScreen) and not self.typeahead.shut:
                self.screen.say_set_aside()  # typed before the question appeared, read only now
            return
        await super().on_event(event)

    def ask(self, question: QuestionScreen, answered) -> None:
        """Show a question; `answered(answer)` runs once it is answered.

        From now until the question is drawn, and from its answer until `answered` has run
        (which may ask the next question), keys typed are set aside rather than landing in
        the screen beneath or in a box that was not yet on the screen.
        """
        question.asked = True
        self.typeahead.close()

        def settle(answer) -> None:
            try:
                answered(answer)
            finally:
                if not isinstance(self.screen, QuestionScreen):  # a next question opens the gate when drawn
                    self.typeahead.release()

        self.push_screen(question, settle)

    def action_whoami(self) -> None:
        from .screens.name_dialog import NameDialog

        self.ask(NameDialog(self.chosen_author), self._name_chosen)

    def ask_name_then(self, suggestion: str | None, proceed) -> bool:
        """Before the first save in a notebook without a name, ask for one; True if asked.

        `proceed` runs after the answer (a name is stored first; Esc saves under the login
        name and is not asked again in this session).
        """
        if self.chosen_author is not None or self.name_asked:
            return False
        from .screens.name_dialog import NameDialog

        self.name_asked = True
        self.ask(NameDialog(None, suggestion, first_save=True), lambda name: (self._name_chosen(name), proceed()))
        return True

    def _name_chosen(self, name: str | None) -> None:
        from ..settings import set_notebook_author

        if not name:
            return
        try:
            set_notebook_author(self.nb, name, author=self.given_author)
        except TrapbookError as exc:
            self.report(exc, "Name not kept")
            return
        self.notify(f"Saves in this notebook are recorded as {printable(name)}.", title="Your name", markup=False)

    def action_light_dark(self) -> None:
        """Switch between the dark and the light variant of Trapbook's theme."""
        from .theme import DARK, LIGHT

        self.theme = LIGHT.name if self.theme == DARK.name else DARK.name
        for screen in self.screen_stack:  # text drawn in Python took its colours when it was drawn
            repaint = getattr(screen, "repaint_colours", None)
            if repaint is not None:
                repaint()

    def action_keys(self) -> None:
        from .screens.keys import KeysScreen

        if not isinstance(self.screen, KeysScreen):
            self.push_screen(KeysScreen())

    def report(self, exc: TrapbookError, title: str = "Not done") -> None:
        """Show a core error in words, with what to do, instead of a traceback."""
        text = printable(exc.message) + (f"\nwhat to do: {printable(exc.hint)}" if exc.hint else "")
        self.notify(text, title=title, severity="error", timeout=8, markup=False)

    def on_unmount(self) -> None:
        if self.group is not None:
            self.group.close()
        elif self.nb is not None:
            self.nb.close()


def run_app(path: str | Path | None, author: str | None = None, group: tuple[str, ...] = (), read_only: bool = False) -> None:
    """Entry point used by `trapbook`, `trapbook open [DB]`, `trapbook demo` and `trapbook serve`."""
    TrapbookApp(path, author=author, group=group, read_only=read_only).run()
