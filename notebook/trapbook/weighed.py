"""Planned against weighed: for each line that records what actually went into the flask,
the planned quantity of the same kind beside it and how far apart they are.

The comparison is made in the kind the chemist measured (mg on a balance, µL in a
syringe, mmol when counted another way), since that is where a slip happens; amounts.py
works out the planned side from the plan alone (`compute(run, planned=True)`) and every
other number from what was weighed (`as_weighed`).
"""

from __future__ import annotations

from dataclasses import asdict, dataclass

from . import amounts
from .records import Run
from .units import measured_kind, to_canonical

#: The planned-table field and the display unit of each measured kind.
_FIELD = {"mass": ("mass_mg", "mg"), "volume": ("volume_ul", "µL"), "amount": ("mmol", "mmol")}


@dataclass
class WeighedLine:
    name: str
    role: str
    kind: str  # mass, volume or amount
    unit: str  # mg, µL or mmol
    planned: float | None
    weighed: float
    difference_pct: float | None  # (weighed - planned) / planned * 100; None when nothing was planned in this kind

    def to_dict(self) -> dict:
        return asdict(self)


def planned_vs_weighed(run: Run) -> list[WeighedLine]:
    """Every line with a recorded `actual`, its planned value in the same kind, and the difference in %.

    Raises (as amounts.compute does) when the plan's amounts cannot be worked out.
    """
    lines = [ln for ln in run.lines if ln.actual is not None]
    if not lines:
        return []
    plan = amounts.compute(run, planned=True)
    out = []
    for line in lines:
        kind = measured_kind(line.actual)
        field, unit = _FIELD[kind]
        weighed = to_canonical(line.actual, kind)
        row = plan.line(line.name)
        planned = getattr(row, field) if row is not None else None
        diff = 100.0 * (weighed - planned) / planned if planned else None
        out.append(WeighedLine(line.name, line.role, kind, unit, planned, weighed, diff))
    return out
