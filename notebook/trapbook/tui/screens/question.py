"""A question asked in a dialog takes only the keys typed while it is on the screen.

Textual gives each key to whatever has focus when the key is read, but runs a key's binding
(Enter's submit, ctrl+s's save) only once the key has bubbled up to the app; by then the
keys typed quickly behind it are already in the focused box. A fast "name ⏎ reason ⏎" so
put the reason into the name box, and keys typed before a dialog was drawn fell into the
form beneath it. So from the moment a question is asked or answered until the next one is
drawn the keyboard is shut: keys typed meanwhile are set aside (never replayed anywhere,
since nobody saw what they would answer) and the dialog says so.
"""

from __future__ import annotations

from typing import TypeVar

from textual import events
from textual.message import Message
from textual.screen import ModalScreen
from textual.widgets import Static

from ..widgets.in_order_input import InOrderInput

#: Quitting always gets through, so a question can never lock the keyboard.
NEVER_SET_ASIDE = frozenset({"ctrl+q"})

SET_ASIDE_NOTE = "Keys typed before this question appeared were not used."

AnswerType = TypeVar("AnswerType")


def event_clock() -> float:
    """Now, on the clock Textual stamps every event with (`Message.time`), so a key's
    stamp can be compared with the moment a question appeared."""
    return Message().time


class TypeAheadGate:
    """Whether a key typed at a given moment may be used, while questions come and go."""

    def __init__(self) -> None:
        self.shut = False
        self.open_since: float | None = None
        self.set_aside = 0

    def close(self) -> None:
        """A question is being asked or answered: nothing typed now is meant for what is on the screen."""
        self.shut = True

    def open(self, since: float) -> int:
        """A question is on the screen since `since`; returns how many keys were set aside before it."""
        self.shut = False
        self.open_since = since
        set_aside, self.set_aside = self.set_aside, 0
        return set_aside

    def release(self) -> None:
        """No question any more: keys go where they always went."""
        self.shut = False
        self.open_since = None
        self.set_aside = 0

    def admits(self, event: events.Key | events.Paste) -> bool:
        if isinstance(event, events.Key) and event.key in NEVER_SET_ASIDE:
            return True
        if self.shut:
            return False
        return self.open_since is None or event.time >= self.open_since


class AnswerInput(InOrderInput):
    """The answer box: its editing keys act in the order typed (InOrderInput), and what is
    typed after its Enter belongs to whatever comes next, never to this answer."""

    answered = False

    async def on_key(self, event: events.Key) -> None:
        if self.answered:
            self._set_aside(event)
            return
        if event.key == "enter":
            self.answered = True
            if getattr(self.screen, "asked", False):
                self.app.typeahead.close()
        await super().on_key(event)

    def on_paste(self, event: events.Paste) -> None:
        if self.answered:
            self._set_aside(event)

    def _set_aside(self, event: events.Key | events.Paste) -> None:
        event.prevent_default()
        event.stop()
        self.app.typeahead.set_aside += 1


class QuestionScreen(ModalScreen[AnswerType]):
    """A dialog asked through `TrapbookApp.ask`: its keys are the ones typed after it appeared."""

    DEFAULT_CSS = """
    QuestionScreen #set-aside { color: $warning; height: auto; padding: 0 1; }
    """

    #: Set by `TrapbookApp.ask`, whose callback opens the keyboard again once the answer is used;
    #: a dialog pushed any other way must not shut it on leaving.
    asked = False

    def on_screen_resume(self) -> None:
        self.call_after_refresh(self._on_the_screen)

    def _on_the_screen(self) -> None:
        if self.app.screen is self:
            self.listen_again()

    def listen_again(self) -> None:
        """Take keys again from now on (shown, or an answer refused); say if some were set aside."""
        for box in self.query(AnswerInput):
            box.answered = False
        if self.app.typeahead.open(event_clock()):
            self.say_set_aside()

    def say_set_aside(self) -> None:
        note = self.query_one("#set-aside", Static)
        note.update(SET_ASIDE_NOTE)
        note.display = True

    def set_aside_note(self) -> Static:
        """Where the dialog says that keys typed ahead of it were not used (hidden until then)."""
        note = Static("", id="set-aside", markup=False)
        note.display = False
        return note

    def dismiss(self, result=None):
        if self.asked:
            self.app.typeahead.close()  # until the answer's callback has run (TrapbookApp.ask settles it)
        return super().dismiss(result)


__all__ = ["AnswerInput", "QuestionScreen", "TypeAheadGate", "event_clock"]
