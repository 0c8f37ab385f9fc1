"""Pilot tests of the save's questions (who saves, why the run changes) under fast typing.

Keys go through the terminal driver's queue back to back, with no pause between them, as a
fast typist's or tmux's do: a question must take only what was typed while it was on the
screen, and nothing typed ahead of it may land in the form beneath.
"""

from __future__ import annotations

import pytest

pytest.importorskip("textual")

from trapbook.settings import notebook_author
from trapbook.store import Notebook
from trapbook.tui.app import TrapbookApp
from trapbook.tui.screens.dialogs import ReasonDialog
from trapbook.tui.screens.editor import WorkbenchScreen
from trapbook.tui.screens.name_dialog import NameDialog
from trapbook.tui.screens.question import SET_ASIDE_NOTE

SIZE = (80, 24)


async def rush(pilot, *keys: str) -> None:
    """Send keys ("ctrl+s", "enter", or single characters) through the driver without waiting between them."""
    from textual import events
    from textual.keys import _character_to_key

    for key in keys:
        if len(key) == 1:
            event = events.Key(key if key.isalnum() else _character_to_key(key), key)
        else:
            event = events.Key(key, None)
        event.set_sender(pilot.app)
        pilot.app._driver.send_message(event)
    await pilot.pause()


async def until(pilot, done, what: str) -> None:
    for _ in range(50):
        if done():
            return
        await pilot.pause(0.05)
    raise AssertionError(f"never happened: {what}")


async def edited_title(pilot) -> WorkbenchScreen:
    """TB-0001 open in the Workbench with " x" added to its title (an unsaved change)."""
    await pilot.press("e")
    await until(pilot, lambda: isinstance(pilot.app.screen, WorkbenchScreen), "the Workbench opened")
    await pilot.press("f2", "end")
    await rush(pilot, " ", "x")
    return pilot.app.screen


def note_of(screen) -> str:
    return str(screen.query_one("#set-aside").render())


def stored(path):
    with Notebook.open(path) as nb:
        return notebook_author(nb), [(v.author, v.reason) for v in nb.history("TB-0001")], nb.get_run("TB-0001").title


async def answer_reason(pilot, app, editor) -> None:
    """Type the reason at once and wait for the save to come back to the editor."""
    await rush(pilot, *"fixed title", "enter")
    await until(pilot, lambda: app.screen is editor, "the run was saved")


def assert_saved_by_trial(demo_path, title: str) -> None:
    """The save is A. Trial's, with the reason typed for it, and the title as it was before the questions."""
    author, versions, saved_title = stored(demo_path)
    assert author == "A. Trial"
    assert versions[-1] == ("A. Trial", "fixed title")
    assert saved_title == title


async def test_a_reason_typed_right_after_the_name_never_joins_the_name(demo_path):
    app = TrapbookApp(demo_path, warm=False)
    async with app.run_test(size=SIZE) as pilot:
        editor = await edited_title(pilot)
        title = editor.data["title"]
        await pilot.press("ctrl+s")
        await until(pilot, lambda: isinstance(app.screen, NameDialog), "the name was asked")
        await pilot.pause()  # on the screen: what is typed now is the answer
        await rush(pilot, *"A. Trial", "enter", *"fixed title", "enter")
        await until(pilot, lambda: isinstance(app.screen, ReasonDialog), "the reason was asked")
        await pilot.pause()
        assert app.author == "A. Trial"  # the name is what was typed before Enter, and only that
        reason_box = app.screen.query_one("#reason")
        assert reason_box.value == ""  # typed before this box was there: set aside, and said
        assert note_of(app.screen) == SET_ASIDE_NOTE
        assert editor.data["title"] == title  # nor did any of it reach the form between the two questions
        await answer_reason(pilot, app, editor)
    assert_saved_by_trial(demo_path, title)


async def test_keys_typed_before_the_name_is_asked_land_nowhere(demo_path):
    app = TrapbookApp(demo_path, warm=False)
    async with app.run_test(size=SIZE) as pilot:
        editor = await edited_title(pilot)
        title = editor.data["title"]
        # ctrl+s and, at once, a whole answer to a question not yet on the screen
        await rush(pilot, "ctrl+s", *"fixed title", "enter", *"more", "enter")
        await until(pilot, lambda: isinstance(app.screen, NameDialog), "the name was asked")
        await pilot.pause()
        dialog = app.screen
        assert dialog.query_one("#author-name").value == editor.data["chemist"]  # the suggestion, untouched
        assert note_of(dialog) == SET_ASIDE_NOTE
        assert editor.data["title"] == title
        assert stored(demo_path)[0] is None  # no name was taken from keys nobody saw a question for
        await rush(pilot, "ctrl+u", *"A. Trial", "enter")  # the box's editing keys act in the order typed
        await until(pilot, lambda: isinstance(app.screen, ReasonDialog), "the reason was asked")
        await pilot.pause()
        await answer_reason(pilot, app, editor)
    assert_saved_by_trial(demo_path, title)


async def test_a_refused_answer_takes_keys_again(demo_path):
    """An empty reason is refused; the box listens again, and the keys typed after are the reason."""
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        editor = await edited_title(pilot)
        await pilot.press("ctrl+s")
        await until(pilot, lambda: isinstance(app.screen, ReasonDialog), "the reason was asked")
        await pilot.pause()
        await rush(pilot, "enter")
        await pilot.pause()
        assert "a reason is needed" in str(app.screen.query_one("#reason-msg").render())
        await rush(pilot, *"typo in title", "enter")
        await until(pilot, lambda: app.screen is editor, "the run was saved")
    assert stored(demo_path)[1][-1] == ("pilot", "typo in title")
