"""The Workbench's status line at 80 columns: what it means to say is what is drawn, whole.

The fitting rules (screens/workbench/status_line.py) are checked on their own, then the
drawn line is read back from the screen at 80×24 in the states whose text is longest.
"""

from __future__ import annotations

import pytest

pytest.importorskip("textual")

from rich.text import Text
from textual.geometry import Region

from trapbook.tui.app import TrapbookApp
from trapbook.tui.screens.editor import WorkbenchScreen
from trapbook.tui.screens.workbench.status_line import Part, fit_status, wrapped_line_count

SIZE = (80, 24)


def part(*forms: str, rank: int, droppable: bool = True) -> Part:
    return Part(tuple(Text(f) for f in forms), rank, droppable)


def test_wrapped_line_count_breaks_at_spaces_and_folds_long_words():
    assert wrapped_line_count("aaa bbb", 7) == 1
    assert wrapped_line_count("aaa bbbb", 7) == 2
    assert wrapped_line_count("a" * 15, 7) == 3


def test_what_fits_is_said_in_full():
    parts = [part("TB-0001 v1", rank=1), part("complete: ctrl+s saves", "ctrl+s saves", rank=0)]
    assert fit_status(parts, 78).plain == "TB-0001 v1 · complete: ctrl+s saves"


def test_the_least_important_part_gives_way_first():
    parts = [
        part("run TB-0001 version 1", "TB-0001 v1", rank=1, droppable=False),
        part("no unsaved changes", "no changes", rank=4),
        part("complete: ctrl+s saves", rank=0, droppable=False),
    ]

    def said(width: int) -> str:
        return fit_status(parts, width, max_lines=1).plain

    assert said(70) == "run TB-0001 version 1 · no unsaved changes · complete: ctrl+s saves"
    assert said(60) == "run TB-0001 version 1 · no changes · complete: ctrl+s saves"  # the state shortened first
    assert said(50) == "TB-0001 v1 · no changes · complete: ctrl+s saves"
    assert said(40) == "TB-0001 v1 · complete: ctrl+s saves"  # then left out
    assert said(30) == "TB-0001 v1 · complete: ctrl+s…"  # the last resort: cut between words


def test_a_very_long_reason_is_cut_between_words_with_an_ellipsis():
    why = "cannot be saved yet: " + " ".join(f"word{i}" for i in range(40))
    said = fit_status([part("TB-0001 v1", rank=1, droppable=False), part(why, rank=0, droppable=False)], 40).plain
    assert wrapped_line_count(said, 40) <= 2
    assert said.endswith("…")
    last_word = said.split(" ")[-1].rstrip("…")
    assert last_word in why.split(" ")  # a whole word before the ellipsis


def drawn_rows(app) -> list[str]:
    """The status line as drawn: every row of its region, read from its rendering at its real size."""
    status = app.screen.query_one("#status")
    region = status.region
    assert region.bottom <= app.screen.query_one("KeyBar").region.y  # nothing of it under the footer
    return [strip.text.strip() for strip in status.render_lines(Region(0, 0, region.width, region.height))]


def meant(app) -> str:
    return str(app.screen.query_one("#status").render())


def assert_whole(app) -> None:
    rows = drawn_rows(app)
    text = meant(app)
    assert " ".join(r for r in rows if r) == " ".join(text.split()), (rows, text)
    assert all(len(r) <= SIZE[0] - 2 for r in rows)


async def test_the_status_line_is_whole_at_80_columns(demo_path):
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("e")
        await pilot.pause(0.3)
        assert isinstance(app.screen, WorkbenchScreen)
        assert_whole(app)
        assert meant(app).startswith("TB-0001 v1") and meant(app).endswith("(f7)")
        await pilot.press("f2", "end", "x")  # unsaved work: the longer state
        await pilot.pause(0.3)
        assert_whole(app)
        assert "unsaved" in meant(app) and "ctrl+s saves" in meant(app)
        await pilot.press("escape")
        await pilot.pause()
        await pilot.press("d")  # discard, back to the Logbook
        await pilot.pause()
        await pilot.press("n")  # a new run: the longest reason it cannot be saved yet
        await pilot.pause(0.3)
        assert_whole(app)
        said = meant(app)
        assert said.startswith("new run") and "a title (Run tab, f2) and its lines (Lines tab, f3)" in said
