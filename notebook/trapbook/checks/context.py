"""What every check reads: the run, its settings, the strain and alignment results, when
each line went in, the reagent table, and the small wording helpers the messages share."""

from __future__ import annotations

from dataclasses import dataclass

from .. import amounts
from ..errors import TrapbookError
from ..records import Run
from .settings import CheckSettings


@dataclass
class Timeline:
    """When each line first went into the flask (0-based step index), from the ordered steps."""

    first: dict[str, int]
    unknown: dict[str, list[int]]  # name as written -> 1-based steps

    def step_of(self, name: str) -> int | None:
        return self.first.get(name.casefold())

    def present(self, run: Run, index: int) -> list:
        """Lines in the flask during step `index`; a line no step adds counts as present (the cautious view)."""
        return [ln for ln in run.lines if (s := self.step_of(ln.name)) is None or s <= index]


def timeline(run: Run) -> Timeline:
    first: dict[str, int] = {}
    unknown: dict[str, list[int]] = {}
    for i, step in enumerate(run.steps):
        for name in step.add:
            line = run.line(name)
            if line is None:
                unknown.setdefault(name, []).append(i + 1)
                continue
            first.setdefault(line.name.casefold(), i)
    return Timeline(first, unknown)


@dataclass
class Context:
    run: Run
    settings: CheckSettings
    strain: dict | None
    alignment: dict | None
    timeline: Timeline
    table: amounts.AmountTable | None = None
    table_error: TrapbookError | None = None

    def row(self, name: str):
        return self.table.line(name) if self.table is not None else None


def line_names(lines) -> list[str]:
    return [ln.name for ln in lines]


def join_and(parts: list[str]) -> str:
    if len(parts) <= 1:
        return "".join(parts)
    return ", ".join(parts[:-1]) + " and " + parts[-1]


def listing(names: list[str]) -> str:
    return join_and([f"'{n}'" for n in names])


def temp_c(step) -> float | None:
    """The step's highest temperature (the top of a ramp): what boiling-point and pressure checks use."""
    return step.max_temp_c()


def first_step(tl: Timeline, lines) -> int | None:
    found = [s for ln in lines if (s := tl.step_of(ln.name)) is not None]
    return min(found) if found else None
