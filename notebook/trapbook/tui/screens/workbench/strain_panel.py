"""The Workbench's strain card: cached strain shown live, a computation only on ctrl+g.

Strain and precursor alignment are read from the notebook's cache on every rebuild; the
slow computation is the side panel's (widgets/bench_side.py), which reports its progress on
its bar and posts the result to the screen, and the card follows once it is done. The
alignment is read and computed at the run's release temperature, the one the checks use.
"""

from __future__ import annotations

from ....errors import TrapbookError


class StrainPanelMixin:
    """The intermediate and precursor of the run, their cached strain, and ctrl+g to compute it."""

    def intermediate_found(self) -> tuple[str, str] | None:
        """(SMILES, how it was found) of the run's intermediate, from the one core rule."""
        if self.run is not None:
            from ....strain_link import intermediate_of_run

            try:
                return intermediate_of_run(self.run)
            except TrapbookError:
                pass
        typed = (self.data.get("intermediate") or "").strip()
        return (typed, "as typed on the Run tab") if typed else None

    def intermediate_smiles(self) -> str | None:
        found = self.intermediate_found()
        return found[0] if found else None

    def look_up_strain(self) -> None:
        """Cached strain and alignment for the current structures (never computed here)."""
        from ....findings import cached_alignment
        from ....strain_link import strain_for_run

        try:
            self.strain = strain_for_run(self.nb, self.run)
        except TrapbookError:
            self.strain = None
        try:
            self.alignment = cached_alignment(self.nb, self.run)
        except TrapbookError:
            self.alignment = None

    def precursor_smiles(self) -> str | None:
        if self.run is None:
            return None
        from ....findings import precursor_of

        return precursor_of(self.run)

    def release_temperature_c(self) -> float:
        """The run's release temperature (°C), at which the precursor's alignment is judged."""
        from ....strain_link import run_temperature_c

        return run_temperature_c(self.run) if self.run is not None else 25.0

    def action_strain(self) -> None:
        smiles = self.intermediate_smiles()
        if not smiles:
            self.notify("Give the intermediate's SMILES on the Run tab first.", severity="warning")
            return
        from ...widgets.bench_side import BenchSide

        self.query_one(BenchSide).start_strain(self.nb.path, smiles, self.precursor_smiles(), self.release_temperature_c())
