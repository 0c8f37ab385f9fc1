"""The strain card's background job: strain in both tiers and the precursor's alignment.

Runs in a worker thread on a notebook connection of its own (SQLite in WAL mode lets the
UI keep reading meanwhile). The fast tier answers in about a second and is shown first;
the alignment and the accurate tier follow. Results go into the notebook's cache, so the
next look at any run with the same intermediate or precursor is instant.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

from ..errors import TrapbookError


def strain_and_alignment(
    path: Path, smiles: str, precursor: str | None, progress: Callable[[str, float], None], temperature_c: float = 25.0
) -> tuple[dict | None, dict | None, str | None]:
    """(strain, alignment, note): the best strain result reached and the alignment, if any.

    The alignment is computed at `temperature_c`, the run's release temperature
    (`strain_link.run_temperature_c`): conformer populations, and so the verdict, depend on it.
    """
    import importlib

    importlib.import_module("..chemistry.strain", __package__)  # the engine's heavy parts, before opening anything
    from ..store import Notebook
    from ..strain_link import get_alignment, get_strain

    notes = []
    best = None
    alignment = None
    with Notebook.open(path) as nb:
        best = get_strain(nb, smiles, "fast", lambda s, f: progress(f"fast tier · {s}", 0.3 * f))
        progress("fast tier done; precursor alignment…", 0.3)
        if precursor:
            try:
                alignment = get_alignment(nb, precursor, temperature_c=temperature_c)
            except TrapbookError as exc:
                notes.append(f"alignment: {exc.message}")
        progress("accurate tier (GFN2-xTB)…", 0.45)
        try:
            best = get_strain(nb, smiles, "accurate", lambda s, f: progress(f"accurate tier · {s}", 0.45 + 0.55 * f))
        except TrapbookError as exc:
            notes.append(f"accurate tier failed, showing the fast tier: {exc.message}")
    progress("done", 1.0)
    return best, alignment, "; ".join(notes) or None
