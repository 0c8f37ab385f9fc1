"""The Screen board's plot of best yield against strain, drawn for the size it is shown at.

Point names are placed in the plot's own cells (plot_labels.label_plan), so they depend on its
size: the figure is drawn again whenever the plot is rendered at a size it was not drawn for
(a new terminal size, or the note under it growing), never with names placed for another.
"""

from __future__ import annotations

from collections.abc import Callable

from textual.geometry import Size
from textual_plotext import PlotextPlot


class StrainPlot(PlotextPlot):
    """A plotext plot whose figure is drawn by `drawer(size)` for each size it is rendered at."""

    def __init__(self, **kwargs) -> None:
        super().__init__(**kwargs)
        # plotext caps a figure at the terminal size it read when the figure was made; the widget's
        # size is the real bound (and the one names are placed for), also after the terminal grows
        self.plt._limit_size(False, False)
        self.drawer: Callable[[Size], None] | None = None
        self._drawn_at: Size | None = None

    def replot(self, drawer: Callable[[Size], None]) -> None:
        """New data: draw it at the present size, and again at any new one."""
        self.drawer, self._drawn_at = drawer, None
        self.refresh()

    def render(self):
        if self.drawer is not None and self.size != self._drawn_at:
            self._drawn_at = self.size
            self.drawer(self.size)
        return super().render()
