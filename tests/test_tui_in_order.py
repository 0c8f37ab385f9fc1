"""Keys that arrive together (a fast typist, a burst over SSH) are applied in the order typed,
in every form box, not only in the dialogs' answer boxes (common practice, no source: a text
box holds what was typed)."""

from __future__ import annotations

from test_tui_questions import SIZE, rush, until
from trapbook.tui.app import TrapbookApp
from trapbook.tui.screens.editor import WorkbenchScreen


async def _title_box(pilot):
    await pilot.press("e")  # TB-0001 in the Workbench
    await until(pilot, lambda: isinstance(pilot.app.screen, WorkbenchScreen), "the Workbench opened")
    await pilot.press("f2")
    await pilot.pause()
    return pilot.app.screen.query_one("#run-title")


async def test_end_then_typing_in_one_burst_adds_to_the_title(demo_path):
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        box = await _title_box(pilot)
        before = box.value
        await rush(pilot, "end", *" (rerun)")
        await until(pilot, lambda: box.value != before, "the title changed")
        assert box.value == before + " (rerun)"


async def test_backspace_in_a_burst_removes_the_character_before_it(demo_path):
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        box = await _title_box(pilot)
        before = box.value
        await rush(pilot, "end", "a", "b", "backspace", "c", "home", "left", "right", "delete")
        await until(pilot, lambda: box.value != before, "the title changed")
        assert box.value == before[:1] + before[2:] + "ac"  # the delete after home, left, right takes the second character
