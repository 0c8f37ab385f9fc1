"""A labelled one-line form field with its message beside it.

Bad input is answered where it was typed: each field runs its own check on every key and
writes what is wrong (or what was understood, like a molar mass) in the message column.
"""

from __future__ import annotations

from collections.abc import Callable

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.message import Message
from textual.suggester import SuggestFromList
from textual.widgets import Checkbox, Input, Label, Static

from .in_order_input import InOrderInput

#: A check takes the text and returns (ok, message).
Check = Callable[[str], tuple[bool, str]]


class Field(Horizontal):
    """Label, input and message in one row; `check` runs as the user types."""

    DEFAULT_CLASSES = "field"

    def __init__(
        self,
        label: str,
        field_id: str,
        placeholder: str = "",
        check: Check | None = None,
        suggestions: list[str] | None = None,
        value: str = "",
    ):
        super().__init__(id=f"row-{field_id}")
        self.label = label
        self.field_id = field_id
        self.placeholder = placeholder
        self.check = check
        self.suggestions = suggestions
        self.initial = value

    def compose(self) -> ComposeResult:
        yield Label(self.label, classes="field-label")
        suggester = SuggestFromList(self.suggestions, case_sensitive=False) if self.suggestions else None
        yield InOrderInput(
            value=self.initial, placeholder=self.placeholder, id=self.field_id, suggester=suggester, classes="field-input"
        )
        yield Static("", id=f"msg-{self.field_id}", classes="field-msg")

    @property
    def input(self) -> Input:
        return self.query_one(Input)

    def message(self, text: str, ok: bool = True) -> None:
        if getattr(self, "_shown", None) == (text, ok):
            return  # unchanged: skip the repaint (typing stays light)
        self._shown = (text, ok)
        msg = self.query_one(f"#msg-{self.field_id}", Static)
        msg.update(text, layout=False)
        msg.set_class(not ok, "bad")

    @property
    def problem(self) -> str | None:
        """What the check refused, in full (the column beside the field may cut it short)."""
        text, ok = getattr(self, "_shown", ("", True))
        if ok or not text:
            return None
        return text if text.startswith(self.label) else f"{self.label}: {text}"

    def run_check(self) -> bool:
        """Check the current text; empty text is always fine (the field is optional)."""
        text = self.input.value.strip()
        if not text or self.check is None:
            ok, msg = True, ""
        else:
            ok, msg = self.check(text)
        self.message(msg, ok)
        if self.input.has_class("bad") == ok:
            self.input.set_class(not ok, "bad")
        return ok


class FormCheck(Checkbox):
    """A tick box inside a row form: Space ticks it, Enter keeps the row like the text fields do.

    It shows ✔ when ticked and an empty box otherwise, so the state reads without colour.
    """

    BINDINGS = [
        Binding("space", "toggle_button", "Tick", show=False),
        Binding("enter", "keep_row", "Keep the row", show=False),
    ]

    class Submitted(Message):
        def __init__(self, box: FormCheck) -> None:
            super().__init__()
            self.box = box

    @property
    def BUTTON_INNER(self) -> str:  # noqa: N802 (the name Textual reads)
        return "✔" if self.value else " "

    def action_keep_row(self) -> None:
        self.post_message(self.Submitted(self))
