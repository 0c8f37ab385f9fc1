"""Small questions the app asks: why a stored run changes, and what to do with unsaved work."""

from __future__ import annotations

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, Static

from .question import AnswerInput, QuestionScreen


class ReasonDialog(QuestionScreen[str | None]):
    """A stored run only changes with a reason, recorded in its version trail."""

    BINDINGS = [Binding("escape", "cancel", "Cancel")]

    def __init__(self, run_id: str, version: int | None):
        super().__init__()
        self.run_id = run_id
        self.version = version

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(f"Why does {self.run_id} change? (it becomes version {(self.version or 0) + 1})", classes="dialog-title")
            yield AnswerInput(placeholder="e.g. corrected furan volume; added isolated mass", id="reason")
            yield Static("", id="reason-msg", classes="field-msg")
            yield self.set_aside_note()
            yield Static("Enter saves · Esc goes back without saving", classes="dialog-hint")

    def on_mount(self) -> None:
        self.query_one("#reason", Input).focus()

    @on(Input.Submitted, "#reason")
    def _ok(self, event: Input.Submitted) -> None:
        if not event.value.strip():
            self.query_one("#reason-msg", Static).update("a reason is needed")
            self.listen_again()
            return
        self.dismiss(event.value.strip())

    def action_cancel(self) -> None:
        self.dismiss(None)


class LeaveDialog(ModalScreen[str | None]):
    """Asked on leaving the Workbench with unsaved changes."""

    BINDINGS = [
        Binding("k", "answer('keep')", "Keep draft, leave"),
        Binding("d", "answer('discard')", "Discard changes"),
        Binding("escape", "answer(None)", "Stay"),
    ]

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label("This run has unsaved changes.", classes="dialog-title")
            yield Static("They are kept as a draft in the notebook until you save or discard them.")
            with Horizontal(classes="dialog-buttons"):
                yield Button("k  keep draft and leave", id="keep", variant="primary")
                yield Button("d  discard changes", id="discard", variant="error")
                yield Button("Esc  stay", id="stay")

    @on(Button.Pressed)
    def _pressed(self, event: Button.Pressed) -> None:
        self.dismiss({"keep": "keep", "discard": "discard"}.get(event.button.id or ""))

    def action_answer(self, answer: str | None) -> None:
        self.dismiss(answer)
