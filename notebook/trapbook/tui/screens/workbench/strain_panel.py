"""The Workbench's strain card: cached strain shown live, a computation only on ctrl+g.

Strain and precursor alignment are read from the notebook's cache on every rebuild; the
slow computation runs in a worker thread that reports its progress to the bar under the
card, and the card follows once it is done.
"""

from __future__ import annotations

from rich.text import Text
from textual import work
from textual.widgets import ProgressBar, Static

from ....errors import TrapbookError
from ...theme import tone


class StrainPanelMixin:
    """The intermediate and precursor of the run, their cached strain, and ctrl+g to compute it."""

    def intermediate_smiles(self) -> str | None:
        if self.run is not None:
            from ....strain_link import intermediate_of

            try:
                return intermediate_of(self.run)
            except TrapbookError:
                return self.run.intermediate
        return (self.data.get("intermediate") or "").strip() or None

    def look_up_strain(self) -> None:
        """Cached strain and alignment for the current structures (never computed here)."""
        from ....strain_link import strain_for_run

        try:
            self.strain = strain_for_run(self.nb, self.run)
        except TrapbookError:
            self.strain = None
        self.alignment = None
        pre = self.precursor_smiles()
        if pre:
            from ....strain_link import get_alignment

            try:
                self.alignment = get_alignment(self.nb, pre, compute=False)
            except TrapbookError:
                self.alignment = None

    def precursor_smiles(self) -> str | None:
        if self.run is None:
            return None
        return next((ln.smiles for ln in self.run.lines_by_role("precursor") if ln.smiles), None)

    def action_strain(self) -> None:
        smiles = self.intermediate_smiles()
        if not smiles:
            self.notify("Give the intermediate's SMILES on the Run tab first.", severity="warning")
            return
        bar = self.query_one("#strain-progress", ProgressBar)
        bar.display = True
        bar.update(total=100, progress=0)
        self.compute_strain(smiles, self.precursor_smiles())

    @work(thread=True, exclusive=True, group="strain", exit_on_error=False)
    def compute_strain(self, smiles: str, precursor: str | None) -> None:
        from ...strainwork import strain_and_alignment

        def progress(stage: str, fraction: float) -> None:
            self.app.call_from_thread(self._strain_progress, stage, fraction)

        try:
            strain, alignment, note = strain_and_alignment(self.nb.path, smiles, precursor, progress)
        except TrapbookError as exc:
            self.app.call_from_thread(self._strain_done, None, None, exc.message)
            return
        self.app.call_from_thread(self._strain_done, strain, alignment, note)

    def _strain_progress(self, stage: str, fraction: float) -> None:
        if not self.is_mounted:
            return
        self.query_one("#strain-progress", ProgressBar).update(progress=round(100 * fraction))
        self.query_one("#strain-stage", Static).update(Text(stage, style=f"italic {tone('muted')}"))

    def _strain_done(self, strain: dict | None, alignment: dict | None, note: str | None) -> None:
        if not self.is_mounted:
            return
        self.query_one("#strain-progress", ProgressBar).display = False
        self.query_one("#strain-stage", Static).update("")
        if strain is not None:
            self.strain = strain
        if alignment is not None:
            self.alignment = alignment
        self.strain_note = note
        self.recompute()
