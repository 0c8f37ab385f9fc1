"""The Trapbook terminal app: opens a notebook on the Logbook and keeps it open.

Startup imports only Textual and the store; RDKit (through amounts/checks) is warmed in
a background thread right after the first screen is drawn, so the run table is on the
screen in well under two seconds and the first run opened does not wait for RDKit.
"""

from __future__ import annotations

import time
from pathlib import Path

from textual import work
from textual.app import App
from textual.binding import Binding

from ..errors import TrapbookError


class TrapbookApp(App):
    """One notebook file, browsed and edited from the keyboard."""

    CSS_PATH = "app.tcss"
    TITLE = "Trapbook"
    ENABLE_COMMAND_PALETTE = False
    #: Under 120 columns the side panels give the forms room (`.-narrow` in app.tcss).
    HORIZONTAL_BREAKPOINTS = [(0, "-narrow"), (120, "-wide")]
    BINDINGS = [
        Binding("f1", "keys", "Keys"),
        Binding("ctrl+q", "quit", "Quit", priority=True),
    ]

    def __init__(self, path: str | Path, author: str | None = None, warm: bool = True):
        super().__init__()
        from ..store.notebook import default_author

        self.path = Path(path).expanduser()
        self.author = author or default_author()
        self.warm = warm
        self.nb = None
        self.started = time.perf_counter()
        self.ready_seconds: float | None = None
        #: The run last saved or left in the Workbench: the Logbook's cursor goes back to it.
        self.last_run: str | None = None

    def on_mount(self) -> None:
        from ..store import Notebook
        from .screens.runs import LogbookScreen

        try:
            self.nb = Notebook.open(self.path, create=True)
        except TrapbookError as exc:
            self.exit(message=f"error: {exc.message}\n  what to do: {exc.hint or ''}")
            return
        self.sub_title = self.path.name
        self.push_screen(LogbookScreen())
        self.ready_seconds = time.perf_counter() - self.started
        if self.warm:
            self.warm_up()

    @work(thread=True, group="warm", exit_on_error=False)
    def warm_up(self) -> None:
        """Import the RDKit-backed core off the UI thread, before the user needs it."""
        from .. import amounts  # noqa: F401
        from .. import strain_link  # noqa: F401

        try:
            from .. import checks  # noqa: F401
        except ImportError:
            pass

    def action_keys(self) -> None:
        from .screens.keys import KeysScreen

        if not isinstance(self.screen, KeysScreen):
            self.push_screen(KeysScreen())

    def report(self, exc: TrapbookError, title: str = "Not done") -> None:
        """Show a core error in words, with what to do, instead of a traceback."""
        text = exc.message + (f"\nwhat to do: {exc.hint}" if exc.hint else "")
        self.notify(text, title=title, severity="error", timeout=8)

    def on_unmount(self) -> None:
        if self.nb is not None:
            self.nb.close()


def run_app(path: str | Path, author: str | None = None) -> None:
    """Entry point used by `trapbook`, `trapbook open [DB]` and `trapbook demo`."""
    TrapbookApp(path, author=author).run()
