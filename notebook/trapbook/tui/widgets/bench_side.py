"""The Workbench's side panel: the order of additions, the strain card and the bench checks.

It shows what the screen hands it (the run rebuilt from the form) and owns the one slow
job on it, the strain computation: a worker on its own notebook connection that posts its
stages (`StrainProgress`, shown on the bar here) and its result (`StrainDone`, which goes
on up to the screen, whose rebuild then shows the new strain and the checks that follow).
"""

from __future__ import annotations

from pathlib import Path

from rich.text import Text
from textual import work
from textual.app import ComposeResult
from textual.containers import Vertical, VerticalScroll
from textual.widgets import ProgressBar, Static

from ...errors import TrapbookError
from ..messages import StrainDone, StrainProgress
from ..theme import tone
from .findings import ChecksPanel
from .strain_card import StrainCard
from .timeline import AdditionTrack


class BenchSide(Vertical):
    """Order of additions, strain card (with its progress bar) and bench checks, top to bottom."""

    def compose(self) -> ComposeResult:
        yield Static("Order of additions", classes="side-head")
        yield AdditionTrack(id="track")
        yield Static("Strain card", classes="side-head")
        yield StrainCard(id="strain")
        yield ProgressBar(id="strain-progress", show_eta=False)
        yield Static("", id="strain-stage")
        yield Static("Bench checks", classes="side-head")
        with VerticalScroll(id="checks-scroll"):
            yield ChecksPanel(id="checks")

    def on_mount(self) -> None:
        self.query_one("#strain-progress").display = False

    def start_strain(self, nb_path: Path, smiles: str, precursor: str | None, temperature_c: float = 25.0) -> None:
        """Compute strain (and the precursor's alignment) in the background; the bar shows how far."""
        bar = self.query_one("#strain-progress", ProgressBar)
        bar.display = True
        bar.update(total=100, progress=0)
        self.compute_strain(nb_path, smiles, precursor, temperature_c)

    @work(thread=True, exclusive=True, group="strain", exit_on_error=False)
    def compute_strain(self, nb_path: Path, smiles: str, precursor: str | None, temperature_c: float) -> None:
        from ..strainwork import strain_and_alignment

        def progress(stage: str, fraction: float) -> None:
            self.post_message(StrainProgress(stage, fraction))

        try:
            strain, alignment, note = strain_and_alignment(nb_path, smiles, precursor, progress, temperature_c)
        except TrapbookError as exc:
            self.post_message(StrainDone(None, None, exc.message))
            return
        self.post_message(StrainDone(strain, alignment, note))

    def on_strain_progress(self, message: StrainProgress) -> None:
        message.stop()  # the bar is all that shows it
        self.query_one("#strain-progress", ProgressBar).update(progress=round(100 * message.fraction))
        self.query_one("#strain-stage", Static).update(Text(message.stage, style=f"italic {tone('muted')}"))

    def on_strain_done(self, message: StrainDone) -> None:
        """The bar goes; the message goes on to the screen, which keeps the result and rebuilds."""
        self.query_one("#strain-progress", ProgressBar).display = False
        self.query_one("#strain-stage", Static).update("")
