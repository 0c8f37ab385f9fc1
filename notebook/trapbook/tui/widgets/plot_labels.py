"""Where the Screen board's plot writes the name of each point, so that no two names overlap.

A terminal plot has one character per cell: two names written near each other overwrite each
other, and a name near the frame is cut off. `label_plan` works in the plot's own cells (the
same arithmetic the plot uses to put a point in a cell) and gives each point, in turn, the
first free place beside it: its whole name just above, or just below; else a short number
there, with the name on a legend line under the plot; else only the legend line. A place is
free when it stays inside the frame, keeps one empty cell from every name already placed and
covers no point.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from rich.cells import cell_len

#: The frame around the plot's canvas, in cells: the y tick labels ("100.0") and their ┤ on the
#: left, the frame on the right; the title and top frame above; bottom frame, x ticks and the
#: axis labels below.
LEFT, RIGHT, TOP, BOTTOM = 6, 1, 2, 3


@dataclass(frozen=True)
class Placed:
    """One label on the canvas: its text, its first cell (col, row from the top) and the data
    point of that cell, which is what the plot is given."""

    text: str
    col: int
    row: int
    x: float
    y: float

    @property
    def span(self) -> tuple[int, int, int]:
        """(row, first col, last col + 1) of the cells the label covers."""
        return self.row, self.col, self.col + cell_len(self.text)


def canvas_size(width: int, height: int) -> tuple[int, int]:
    """Cells of the canvas inside a plot widget `width` × `height` (titled, with axis labels)."""
    return max(0, width - LEFT - RIGHT), max(0, height - TOP - BOTTOM)


def to_cell(value: float, lim: tuple[float, float], bins: int) -> int:
    """The cell a value falls in, as the plot counts it (nearest of `bins` cells across lim)."""
    return math.floor(round(0.5 + (bins - 1) * (value - lim[0]) / (lim[1] - lim[0]), 8))


def to_value(cell: int, lim: tuple[float, float], bins: int) -> float:
    """The value at the middle of a cell: given to the plot, it lands in exactly that cell."""
    return lim[0] + cell * (lim[1] - lim[0]) / max(bins - 1, 1)


def label_plan(
    points: list[tuple[str, float, float]], width: int, height: int, xlim: tuple[float, float], ylim: tuple[float, float]
) -> tuple[list[Placed], list[str]]:
    """Labels that fit beside their points without touching each other; the legend lines of the rest.

    `points` are (name, x, y); `width` × `height` the plot widget's size in cells.
    """
    cols, rows = canvas_size(width, height)
    if cols < 1 or rows < 1 or xlim[1] <= xlim[0] or ylim[1] <= ylim[0]:
        return [], [f"{name} ({x:.1f}, {y:.0f} %)" for name, x, y in points]
    cells = [(to_cell(x, xlim, cols), rows - 1 - to_cell(y, ylim, rows)) for _, x, y in points]
    taken: list[tuple[int, int, int]] = []  # (row, first col, last col + 1), names placed so far
    placed: list[Placed] = []
    legend: list[str] = []

    def free(row: int, start: int, end: int) -> bool:
        if row < 0 or row >= rows or start < 0 or end > cols:
            return False
        if any(r == row and start < e + 1 and s - 1 < end for r, s, e in taken):
            return False  # one empty cell kept between two names on a row
        return not any(r == row and start <= c < end for c, r in cells)

    def place(text: str, col: int, row: int) -> Placed | None:
        n = cell_len(text)
        for r in (row - 1, row + 1):
            for start in (col - n // 2, col + 1, col - n):  # centred on the point, then right of it, then left
                start = min(max(start, 0), cols - n)
                if free(r, start, start + n):
                    taken.append((r, start, start + n))
                    return Placed(text, start, r, to_value(start, xlim, cols), to_value(rows - 1 - r, ylim, rows))
        return None

    for i in sorted(range(len(points)), key=lambda k: (cells[k][1], cells[k][0])):  # top to bottom, left to right
        name, x, y = points[i]
        col, row = cells[i]
        whole = place(name, col, row) if cell_len(name) <= cols else None
        if whole is not None:
            placed.append(whole)
            continue
        key = str(len(legend) + 1)
        mark = place(key, col, row)
        if mark is not None:
            placed.append(mark)
            legend.append(f"{key} {name}")
        else:
            legend.append(f"{name} ({x:.1f}, {y:.0f} %)")
    return placed, legend


def axis_ticks(lim: tuple[float, float], cols: int, most: int = 5) -> tuple[list[float], list[str]]:
    """Ticks of the x axis whose numbers keep a space between them however narrow the plot is
    (the plot's own choice writes them into each other under about 30 cells)."""
    if cols < 1 or lim[1] <= lim[0]:
        return [], []
    longest = max(len(f"{v:.1f}") for v in lim)
    n = max(1, min(most, 1 + (cols - 1) // (longest + 2)))
    cells = [round(i * (cols - 1) / (n - 1)) for i in range(n)] if n > 1 else [(cols - 1) // 2]
    values = [to_value(c, lim, cols) for c in cells]
    return values, [f"{v:.1f}" for v in values]
