"""The Outcome tab's spectrum: the processed 1H spectrum behind each NMR yield, with its regions.

A qNMR result integrated from an attached FID (`trapbook nmr`) keeps a record of which bytes,
regions and phases gave its integrals. The plot is made again from that record by the same
core call the HTML report draws its picture with (`spectra.figures.stored_spectrum`), so it
shows the spectrum that gave the number. Reading and processing take most of a second the
first time (nmrglue loads), so they run in a thread worker, and only once the tab is on the
screen: opening the Workbench on another tab loads nothing. A record that cannot be drawn
again is shown as an error with its reason.
"""

from __future__ import annotations

import json
import math

from rich.text import Text
from textual import events, work
from textual.widget import Widget
from textual.widgets import Static

from ...display import fmt_sig
from ..messages import SpectrumWorked
from ..text import clip
from ..theme import tone
from .spectrum_draw import REGION_ROLES, Marked, plot_text

#: Columns of the plot: never narrower (a region would be a column wide), never wider (no gain).
MIN_COLUMNS, MAX_COLUMNS = 40, 100
#: Relative difference between a stored integral and the one its record gives again that counts
#: as a different number (the record keeps phases to 6 decimals). Common practice, no source.
SAME_INTEGRAL = 1e-6


def spectrum_results(run) -> list:
    """The run's product results whose qNMR integrals came from an attached spectrum."""
    if run is None or run.outcome is None:
        return []
    return [r for r in run.outcome.products if r.qnmr is not None and r.qnmr.spectrum is not None]


def no_spectrum_line(run_id: str | None) -> Text:
    """What the tab says when no result was integrated from a spectrum, with the command that does it."""
    target = run_id or "RUN"
    return Text.assemble(
        ("No ¹H spectrum: ", f"italic {tone('muted')}"),
        (f"trapbook nmr {target} --standard LO..HI --product LO..HI", tone("accent")),
    )


class SpectrumPlot(Static):
    """One plot per result integrated from a spectrum; a line saying how to make one when there is none.

    It takes the focus (Tab after the run-wide boxes), so the tab scrolls it into sight from
    the keyboard on a small terminal.
    """

    can_focus = True

    def __init__(self, **kwargs) -> None:
        super().__init__("", **kwargs)
        self._work_key: str | None = None  # the records the shown (or coming) drawing was made from
        self._pending: tuple | None = None  # (key, run) waiting for the tab to be on the screen
        self._found: list[tuple] | None = None  # what the worker found, kept to draw again at a new width
        self._drawn: tuple | None = None  # (key, columns, theme) last drawn

    def show(self, run, run_id: str | None) -> None:
        """Follow the run the Workbench holds: draw its spectra (in a worker), or say there are none."""
        if run is None:
            if self._work_key is None:
                self._say(Text("The spectrum is drawn once the run is complete.", style=f"italic {tone('muted')}"))
            return
        results = spectrum_results(run)
        if not results:
            self._work_key, self._found, self._pending = "", None, None
            self._say(no_spectrum_line(run_id))
            return
        key = json.dumps(
            [[r.product, r.qnmr.model_dump(mode="json"), [a.model_dump(mode="json") for a in run.attachments]] for r in results],
            sort_keys=True,
            default=str,
        )
        if key == self._work_key:
            self._draw()  # the same records: drawn again only for a new width or theme
            return
        self._work_key, self._found, self._drawn = key, None, None
        self._say(Text(f"reading the spectrum behind {clip(results[0].product, 40)}…", style=f"italic {tone('muted')}"))
        if self._in_sight():
            self._work(key, run)
        else:
            self._pending = (key, run)

    def _say(self, text: Text) -> None:
        """One line instead of a plot; repainted only when it reads differently (typing stays light)."""
        said = (text.markup, self.app.theme)
        if said != self._drawn:
            self._drawn = said
            self.update(text)

    def _in_sight(self) -> bool:
        return all(node.display for node in self.ancestors_with_self if isinstance(node, Widget))

    def on_show(self, event: events.Show) -> None:
        if self._pending is not None:
            key, run = self._pending
            self._pending = None
            self._work(key, run)

    def on_resize(self, event: events.Resize) -> None:
        if self._found is not None:
            self._draw()

    @work(thread=True, exclusive=True, group="spectrum-plot")
    def _work(self, key: str, run) -> None:
        from ...errors import TrapbookError
        from ...spectra.figures import stored_spectrum

        found: list[tuple] = []
        for res in spectrum_results(run):
            name = res.qnmr.spectrum.attachment_name or res.qnmr.spectrum.attachment_sha256[:12]
            try:
                spec, integ = stored_spectrum(self.app.nb, run, res)
            except TrapbookError as exc:
                found.append((res.product, name, exc.message + (f" ({exc.hint})" if exc.hint else "")))
            except Exception as exc:  # noqa: BLE001  a fault of the core is shown where the plot would be
                found.append((res.product, name, f"{type(exc).__name__}: {exc}"))
            else:
                found.append((res.product, name, spec, integ, res.qnmr))
        self.post_message(SpectrumWorked(key, found))

    def on_spectrum_worked(self, message: SpectrumWorked) -> None:
        message.stop()
        if message.key != self._work_key:  # the run changed while it was worked out
            return
        self._found = message.found
        self._drawn = None
        self._draw()

    def columns(self) -> int:
        width = self.content_size.width or (self.parent.content_size.width if self.parent else 0) or 72
        return max(MIN_COLUMNS, min(MAX_COLUMNS, width))

    def _draw(self) -> None:
        columns = self.columns()
        drawn = (self._work_key, columns, self.app.theme)
        if drawn == self._drawn or self._found is None:
            return
        self._drawn = drawn
        out = Text()
        for i, item in enumerate(self._found):
            if i:
                out.append("\n\n")
            out.append_text(result_text(item, columns))
        self.update(out)


def result_text(item: tuple, columns: int) -> Text:
    """One result's plot: a title, the regions with their ranges, the plot; or why it cannot be drawn."""
    product, name = item[0], item[1]
    head = Text(f"¹H spectrum of {clip(product, 30)} · {clip(name, 30)}", style="bold")
    if len(item) == 3:
        head.append("\n")
        head.append(f"cannot be drawn: {item[2]}", style=tone("stop"))
        return head
    spec, integ, stored = item[2], item[3], item[4]
    marked = [
        Marked(
            "standard", integ.standard_region.low, integ.standard_region.high, integ.standard_integral, integ.standard_protons
        ),
        Marked("product", integ.product_region.low, integ.product_region.high, integ.product_integral, integ.product_protons),
    ]
    legend = Text()
    for m in marked:
        role, short = REGION_ROLES[m.which]
        legend.append("■ ", style=tone(role))
        legend.append(f"{short} {m.which} {m.low:.2f}–{m.high:.2f} ppm, {m.protons} H   ", style=tone("muted"))
    plot, _ = plot_text(spec.ppm, spec.intensity, marked, columns)
    legend.rstrip()
    out = Text.assemble(head, "\n", legend, "\n", plot)
    differs = [
        f"{what} stored {fmt_sig(kept, 4)}, now {fmt_sig(now, 4)}"
        for what, kept, now in (
            ("IS ∫", stored.standard_integral, integ.standard_integral),
            ("P ∫", stored.integral, integ.product_integral),
        )
        if not math.isclose(kept, now, rel_tol=SAME_INTEGRAL, abs_tol=1e-12)
    ]
    if differs:
        out.append("\n")
        out.append(
            "the stored integrals are not what their record gives again ("
            + "; ".join(differs)
            + "): integrate again with trapbook nmr",
            style=tone("warn"),
        )
    return out
