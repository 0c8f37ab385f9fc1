"""The bench findings of a run: the one place every view asks.

A run's findings depend on three things besides the run itself: the thresholds the lab set
for its notebook, the cached strain of the run's intermediate and the cached alignment of
its precursor. Every view (the CLI, the TUI, reports, exports, planning, the search index)
calls `findings_for`, so a threshold changed with `trapbook settings` changes them all alike.

Nothing is computed here that is not already cached (no strain job is started), and nothing
is swallowed: a failing check is an error for the caller to show, never an empty list that
would read as a clean run. The store calls this from inside its save transaction, so this
module must not import the store.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:  # pragma: no cover - typing only
    from .checks import Finding
    from .records import Run

#: Marks an override that was not given (None is a real value: "no strain known").
_UNSET: Any = object()


def precursor_of(run: Run) -> str | None:
    """SMILES of the run's first precursor line that has one (the alignment is judged on it)."""
    return next((ln.smiles for ln in run.lines_by_role("precursor") if ln.smiles), None)


def cached_alignment(nb, run: Run) -> dict | None:
    """The precursor's Si–C–C–X alignment from the notebook's cache at the run's temperature
    (that of the step adding the fluoride source: populations depend on it); never computed here.

    `trapbook alignment SMILES --temperature T` stores under the same key, so a run at −78 °C
    reads the −78 °C entry and never a room-temperature one.
    """
    smiles = precursor_of(run)
    if nb is None or not smiles:
        return None
    from .strain_link import get_alignment, run_temperature_c

    return get_alignment(nb, smiles, compute=False, temperature_c=run_temperature_c(run))


def findings_for(nb, run: Run, *, strain: Any = _UNSET, alignment: Any = _UNSET) -> list[Finding]:
    """The run's bench findings under the notebook's settings (defaults when `nb` is None).

    `strain` and `alignment` override the cached values: the live editor holds results for
    structures that are not saved yet. Errors propagate.
    """
    from .checks import run_checks
    from .settings import notebook_check_settings
    from .strain_link import strain_for_run

    settings = notebook_check_settings(nb)
    if strain is _UNSET:
        strain = strain_for_run(nb, run)
    if alignment is _UNSET:
        alignment = cached_alignment(nb, run)
    return run_checks(run, strain=strain, alignment=alignment, settings=settings)
