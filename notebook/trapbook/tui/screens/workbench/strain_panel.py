"""The Workbench's strain card: cached strain shown live, a computation only on ctrl+g.

Strain and precursor alignment are read from the notebook's cache on every rebuild; the
slow computation is the side panel's (widgets/bench_side.py), which reports its progress on
its bar and posts the result to the screen, and the card follows once it is done.
"""

from __future__ import annotations

from ....errors import TrapbookError


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
        from ...widgets.bench_side import BenchSide

        self.query_one(BenchSide).start_strain(self.nb.path, smiles, self.precursor_smiles())
