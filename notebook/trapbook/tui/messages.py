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


class FilterLeft(Message):
    """The chemist is done with the Logbook's filter box (Enter, Esc or ↓): the run table takes the keys again."""


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


class StepKept(Message):
    """Enter on the Steps tab kept a step: new when `index` is None, else the one it changes."""

    def __init__(self, step: dict, index: int | None) -> None:
        super().__init__()
        self.step = step
        self.index = index


class LineKept(Message):
    """Enter on the Lines tab kept a line: new when `index` is None, else the one it changes."""

    def __init__(self, line: dict, index: int | None) -> None:
        super().__init__()
        self.line = line
        self.index = index


class LimitingMarked(Message):
    """ctrl+l on the Lines tab: line `index` marked limiting (every equiv refers to it), or unmarked."""

    def __init__(self, index: int, marked: bool) -> None:
        super().__init__()
        self.index = index
        self.marked = marked


class RowRemoved(Message):
    """ctrl+r on a table tab: row `index` of the run's `rows` ('lines', 'steps' or 'products') is to go."""

    def __init__(self, rows: str, index: int) -> None:
        super().__init__()
        self.rows = rows
        self.index = index


class RowMoved(Message):
    """ctrl+↑/↓ on a table tab: row `index` of the run's `rows` changes places with row `to`."""

    def __init__(self, rows: str, index: int, to: int) -> None:
        super().__init__()
        self.rows = rows
        self.index = index
        self.to = to


class RunFieldChanged(Message):
    """A box of the Run tab changed: the run's `key` is now `value` (tags a list, factors a dict)."""

    def __init__(self, key: str, value: Any) -> None:
        super().__init__()
        self.key = key
        self.value = value


class ResultKept(Message):
    """Enter on the Outcome tab kept a product result: new when `index` is None, else the one it changes."""

    def __init__(self, entry: dict, index: int | None) -> None:
        super().__init__()
        self.entry = entry
        self.index = index


class RunOutcomeTyped(Message):
    """A run-wide box of the Outcome tab changed: each field as it now reads (None: empty or refused)."""

    def __init__(self, values: dict[str, str | None]) -> None:
        super().__init__()
        self.values = values


class ExpectedPicked(Message):
    """ctrl+t on the Outcome tab picked an expected product: its product line (added if the run has
    none with that SMILES) becomes the product of the result being written."""

    def __init__(self, name: str, smiles: str) -> None:
        super().__init__()
        self.name = name
        self.smiles = smiles


class SpectrumWorked(Message):
    """The spectra behind a run's qNMR results, processed again from their records in a worker:
    for each, (product, attachment name, spectrum, integration, stored qNMR) or (product, name, error)."""

    def __init__(self, key: str, found: list[tuple]) -> None:
        super().__init__()
        self.key = key
        self.found = found


class CampaignProgress(Message):
    """A campaign running in a worker moved on: tasks done, failed and left, or a new stage in words."""

    def __init__(self, campaign_id: str | None, done: int, failed: int, left: int, stage: str | None = None) -> None:
        super().__init__()
        self.campaign_id = campaign_id
        self.done = done
        self.failed = failed
        self.left = left
        self.stage = stage


class CampaignEnded(Message):
    """A campaign's worker is done: its summary (run_campaign's), or the error that stopped it, or stopped on request."""

    def __init__(self, campaign_id: str | None, summary: dict | None, error: Any = None, stopped: bool = False) -> None:
        super().__init__()
        self.campaign_id = campaign_id
        self.summary = summary
        self.error = error
        self.stopped = stopped


class CampaignTableReady(Message):
    """A stored campaign's record and ranked rows (campaign.campaign_table), read off the UI thread."""

    def __init__(self, key: str, record: dict | None, rows: list[dict], error: Any = None) -> None:
        super().__init__()
        self.key = key
        self.record = record
        self.rows = rows
        self.error = error
