"""Plan a condition screen from one base run, and print what to put in which vial.

A chemist writes the run they would do anyway (the base), then says what to vary —
trap, fluoride protocol, temperature, time, trap equiv, solvent — and at which levels.
Every combination (or a chosen subset) becomes a planned run with its own amounts at
the screen's scale and its own bench checks, so a vial that would be heated above the
boiling point of its solvent is flagged before it is made, not after.

How a level changes the base run:

- ``trap``: the base's trap line is replaced (amount in equiv kept) by a trap line of
  the base with that name, or by a trap from the table below. Product lines that
  belong to the old trap are dropped; add the new adduct when it is known.
- ``fluoride``: the fluoride source (and its helper salt) is replaced by a protocol of
  ``FLUORIDE_PROTOCOLS`` or a fluoride line of the base with that name.
- ``temperature`` / ``time``: the reaction step — the step after the fluoride source
  goes in with the longest hold (the last step with a temperature if none holds) —
  takes the new temperature or hold.
- ``trap equiv``: the equiv of every trap line.
- ``solvent``: the solvent line's compound (same volume).

The package: `levels` (what the planner knows and how a level changes the base run),
`plan` (the planned runs and storing them) and `sheet` (the bench sheet, text and HTML).
"""

from __future__ import annotations

from .levels import (
    FACTOR_NAMES,
    FLUORIDE_PROTOCOLS,
    KNOWN_TRAPS,
    FluorideProtocol,
    KnownTrap,
    apply_level,
    factor_name,
    find_protocol,
    find_trap,
)
from .plan import (
    PlannedRun,
    PlannedScreen,
    make_screen,
    not_yet_happened,
    parse_vary,
    plan_screen,
    split_levels,
    store_plan,
    totals,
)
from .sheet import bench_sheet_html, bench_sheet_text, vial_instructions

__all__ = [
    "FACTOR_NAMES",
    "FLUORIDE_PROTOCOLS",
    "KNOWN_TRAPS",
    "FluorideProtocol",
    "KnownTrap",
    "PlannedRun",
    "PlannedScreen",
    "apply_level",
    "bench_sheet_html",
    "bench_sheet_text",
    "factor_name",
    "find_protocol",
    "find_trap",
    "make_screen",
    "not_yet_happened",
    "parse_vary",
    "plan_screen",
    "split_levels",
    "store_plan",
    "totals",
    "vial_instructions",
]
