"""Every message the TUI's widgets and workers post, in one module: the app's events at a glance.

Workers run the core off the UI thread and post one of these with the answer (Textual
delivers a message posted from a thread on the UI thread); widgets post them up to the
screen that composes them. Each carries data only; what to do with it is the receiver's.
"""

from __future__ import annotations

from typing import Any

from textual.message import Message


class FilterAnswered(Message):
    """The core's search answered a Logbook filter text: the runs it names, or why it refused."""

    def __init__(self, text: str, run_ids: set[str] | None, error: Any = None) -> None:
        super().__init__()
        self.text = text
        self.run_ids = run_ids
        self.error = error


class PreviewReady(Message):
    """The Logbook's preview of a run, worked out (amounts, track, outcome) and ready to show."""

    def __init__(self, row_key: str, content: Any) -> None:
        super().__init__()
        self.row_key = row_key
        self.content = content


class StrainProgress(Message):
    """A strain computation reached a stage (fraction of the work done, 0 to 1)."""

    def __init__(self, stage: str, fraction: float) -> None:
        super().__init__()
        self.stage = stage
        self.fraction = fraction


class StrainDone(Message):
    """A strain computation finished: the strain and alignment found (None if not), and a note."""

    def __init__(self, strain: dict | None, alignment: dict | None, note: str | None) -> None:
        super().__init__()
        self.strain = strain
        self.alignment = alignment
        self.note = note


class SidePanelToggled(Message):
    """The Workbench's side panel was shown or hidden (f7): what is drawn to its width follows."""

    def __init__(self, in_sight: bool) -> None:
        super().__init__()
        self.in_sight = in_sight


class RowCommand(Message):
    """A row key on a Workbench table tab: 'blank' (a new row), 'remove', 'move' (by delta), 'limiting' or 'expected'."""

    def __init__(self, command: str, delta: int = 0) -> None:
        super().__init__()
        self.command = command
        self.delta = delta


class StepKept(Message):
    """Enter on the Steps tab kept a step: new when `index` is None, else the one it changes."""

    def __init__(self, step: dict, index: int | None) -> None:
        super().__init__()
        self.step = step
        self.index = index
