"""Who is saving: the notebook's "you are" name, asked once and changeable at any time.

Every version records an author. Without a name the login name is recorded ("root" on a
shared lab machine), which tells a reader nothing, so the first save in a notebook that
has no name asks for one; f9 changes it later. The name is checked by the same core rule
the command line uses (`settings.clean_author`).
"""

from __future__ import annotations

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.widgets import Input, Label, Static

from ...errors import TrapbookError
from ...text_safety import printable
from .question import AnswerInput, QuestionScreen


class NameDialog(QuestionScreen[str | None]):
    """Asks for the name recorded on every save in this notebook; Esc keeps things as they are."""

    DEFAULT_CSS = """
    NameDialog { align: center middle; background: $background 60%; }
    """
    BINDINGS = [Binding("escape", "cancel", "Cancel")]

    def __init__(self, current: str | None, suggestion: str | None = None, first_save: bool = False):
        super().__init__()
        self.current = current
        self.suggestion = suggestion or current or ""
        self.first_save = first_save

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label("Who is saving in this notebook?", classes="dialog-title")
            said = (
                f"Saves are now recorded as {printable(self.current)}."
                if self.current
                else "No name is set: saves would be recorded under the computer's login name."
            )
            yield Static(said + " The name goes on every version you save here (author of the change).", markup=False)
            yield AnswerInput(value=self.suggestion, placeholder="e.g. A. Trial", id="author-name")
            yield Static("", id="author-msg", classes="field-msg", markup=False)
            yield self.set_aside_note()
            hint = "Enter keeps the name · Esc " + (
                "saves under the login name this time" if self.first_save else "changes nothing"
            )
            yield Static(hint, classes="dialog-hint")

    def on_mount(self) -> None:
        self.query_one("#author-name", Input).focus()

    @on(Input.Submitted, "#author-name")
    def _ok(self, event: Input.Submitted) -> None:
        from ...settings import clean_author

        try:
            name = clean_author(event.value)
        except TrapbookError as exc:
            self.query_one("#author-msg", Static).update(printable(exc.message))
            self.listen_again()
            return
        self.dismiss(name)

    def action_cancel(self) -> None:
        self.dismiss(None)


__all__ = ["NameDialog"]
