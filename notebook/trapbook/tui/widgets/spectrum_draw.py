"""A processed 1H spectrum drawn in braille dots, its integrated regions shaded and labelled.

Each character cell holds 2 × 4 dots, so a 72-column plot has 144 points across. The ppm
axis runs high to low, left to right, as a chemist reads a 1H spectrum. The plot shows the
integrated regions with a margin either side rather than the whole spectral window, which
would squeeze a 0.2 ppm region into a column or two. Each dot column shows the lowest and
highest intensity of the points under it, joined to its neighbour, so a sharp peak keeps
its full height however many points share a dot. Pure: arrays in, Rich text out.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from rich.text import Text
from textual.color import Color

from ...display import fmt_sig
from ..theme import tone

#: Rows of dots per character cell and columns of dots per cell (Unicode braille patterns).
DOT_ROWS, DOT_COLUMNS = 4, 2
#: The bit of each dot of a braille cell, [row][column] (Unicode Braille Patterns, U+2800 block).
DOT_BITS = ((0x01, 0x08), (0x02, 0x10), (0x04, 0x20), (0x40, 0x80))
BRAILLE_BLANK = 0x2800
#: Spectrum shown either side of the integrated regions, ppm: at least this, or half their span.
MARGIN_PPM = 0.5
#: Tick steps tried, ppm; the first that leaves room for its labels is used.
TICK_STEPS = (0.05, 0.1, 0.2, 0.25, 0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 50.0)
TICK_ROOM = 8
#: How each region is drawn: its role in the theme and its short label over the plot.
REGION_ROLES = {"standard": ("accent", "IS"), "product": ("attention", "P")}


@dataclass(frozen=True)
class Window:
    """The ppm shown: `left` (the higher shift) at the left edge, `right` at the right edge."""

    left: float
    right: float
    columns: int

    def column_of(self, ppm: float) -> float:
        """Where a shift falls, in character columns from the left edge (0 to `columns`)."""
        return (self.left - ppm) / (self.left - self.right) * self.columns

    def centre(self, column: int) -> float:
        """The shift at the middle of a character column."""
        return self.left - (column + 0.5) * (self.left - self.right) / self.columns


@dataclass(frozen=True)
class Marked:
    """An integrated region as the plot marks it: which one, its range, its integral and protons."""

    which: str  # "standard" or "product"
    low: float
    high: float
    integral: float
    protons: int


def window_for(marked: list[Marked], lowest: float, highest: float, columns: int) -> Window:
    """The regions with a margin either side, inside the spectrum's own range."""
    lo, hi = min(m.low for m in marked), max(m.high for m in marked)
    margin = max(MARGIN_PPM, 0.5 * (hi - lo))
    return Window(min(hi + margin, highest), max(lo - margin, lowest), columns)


def braille_cells(ppm, intensity, window: Window, rows: int) -> list[list[int]]:
    """The trace as braille dot masks, [row][column], the top row first."""
    import numpy as np

    dots_x, dots_y = window.columns * DOT_COLUMNS, rows * DOT_ROWS
    ppm, intensity = np.asarray(ppm, float), np.asarray(intensity, float)
    inside = (ppm <= window.left) & (ppm >= window.right) & np.isfinite(intensity)
    x, y = ppm[inside], intensity[inside]
    cells = [[0] * window.columns for _ in range(rows)]
    if x.size == 0:
        return cells
    where = np.clip(((window.left - x) / (window.left - window.right) * dots_x).astype(int), 0, dots_x - 1)
    top, bottom = np.full(dots_x, -np.inf), np.full(dots_x, np.inf)
    np.maximum.at(top, where, y)
    np.minimum.at(bottom, where, y)
    empty = ~np.isfinite(top)
    if empty.any():  # more dots than points: read the trace between its points
        centres = window.left - (np.arange(dots_x) + 0.5) * (window.left - window.right) / dots_x
        order = np.argsort(x)
        top[empty] = bottom[empty] = np.interp(centres[empty], x[order], y[order])
    high, low = float(top.max()), min(0.0, float(bottom.min()))
    scale = (dots_y - 1) / (high - low) if high > low else 0.0

    def row_of(v: float) -> int:
        return min(dots_y - 1, max(0, round((high - v) * scale)))

    previous = None
    for j in range(dots_x):
        upper, lower = row_of(float(top[j])), row_of(float(bottom[j]))
        if previous is not None:  # joined to the column before, so the trace reads as one line
            upper, lower = min(upper, previous[1]), max(lower, previous[0])
        previous = (row_of(float(top[j])), row_of(float(bottom[j])))
        for r in range(upper, lower + 1):
            cells[r // DOT_ROWS][j // DOT_COLUMNS] |= DOT_BITS[r % DOT_ROWS][j % DOT_COLUMNS]
    return cells


def region_columns(marked: list[Marked], window: Window) -> dict[int, str]:
    """The character columns each region shades: those whose middle lies inside its range."""
    out: dict[int, str] = {}
    for m in marked:
        for c in range(window.columns):
            if m.low <= window.centre(c) <= m.high:
                out[c] = m.which
    return out


def tick_marks(window: Window) -> list[tuple[int, str]]:
    """(column, label) of round shifts along the axis, as far apart as their labels need."""
    span = window.left - window.right
    step = next((s for s in TICK_STEPS if span / s <= window.columns / TICK_ROOM), TICK_STEPS[-1])
    decimals = 0 if step >= 1 else 1 if step in (0.1, 0.2, 0.5) else 2
    first = math.ceil(window.right / step - 1e-9)
    out = []
    for k in range(first, math.floor(window.left / step + 1e-9) + 1):
        value = k * step
        column = math.floor(window.column_of(value))
        if 0 <= column < window.columns:
            out.append((column, f"{value:.{decimals}f}"))
    return sorted(out)  # left to right: high ppm first


def _shade(role: str) -> str:
    """The ground of a region's columns: the theme's ground tinted with the region's colour."""
    return Color.parse(tone("ground")).blend(Color.parse(tone(role)), 0.3).hex


def _placed(labels: list[tuple[float, str, str]], columns: int) -> list[Text]:
    """Label rows: each label centred on its column, a label that would touch another goes a row down."""
    rows: list[list[tuple[int, str, str]]] = []
    for centre, words, style in labels:
        start = max(0, min(columns - len(words), round(centre - len(words) / 2)))
        row = next((r for r in rows if all(start > s + len(w) or start + len(words) < s for s, w, _ in r)), None)
        if row is None:
            rows.append(row := [])
        row.append((start, words, style))
    out = []
    for row in rows:
        line = Text()
        for start, words, style in sorted(row):
            line.append(" " * (start - len(line.plain)))
            line.append(words, style=style)
        out.append(line)
    return out


def plot_text(ppm, intensity, marked: list[Marked], columns: int, rows: int = 8) -> tuple[Text, Window]:
    """The spectrum around its regions: integral labels, the braille trace with the regions
    shaded, the axis with its shifts and 'ppm'; and the window it shows."""
    import numpy as np

    window = window_for(marked, float(np.min(ppm)), float(np.max(ppm)), columns)
    cells = braille_cells(ppm, intensity, window, rows)
    shaded = region_columns(marked, window)
    ink = tone("ink")
    styles = {m.which: f"{tone(REGION_ROLES[m.which][0])} on {_shade(REGION_ROLES[m.which][0])}" for m in marked}
    out = Text(no_wrap=True, overflow="crop")
    labels = []
    for m in marked:
        role, short = REGION_ROLES[m.which]
        centre = (window.column_of(min(m.high, window.left)) + window.column_of(max(m.low, window.right))) / 2
        labels.append((centre, f"{short} ∫ {fmt_sig(m.integral, 3)}", f"bold {tone(role)}"))
    for line in _placed(labels, columns):
        out.append_text(line)
        out.append("\n")
    for row in cells:
        for c, mask in enumerate(row):
            which = shaded.get(c)
            out.append(chr(BRAILLE_BLANK + mask) if mask else " ", style=styles[which] if which else ink)
        out.append("\n")
    ticks = tick_marks(window)
    axis = ["─"] * columns
    for c, _ in ticks:
        axis[c] = "┬"
    out.append("".join(axis) + "\n", style=tone("muted"))
    out.append(tick_labels(ticks, columns), style=tone("muted"))
    return out, window


def tick_labels(ticks: list[tuple[int, str]], columns: int) -> str:
    """Each shift centred under its tick, a label that would touch the one before left out; 'ppm' at the end."""
    line = ""
    for c, words in ticks:
        start = max(0, round(c + 0.5 - len(words) / 2))
        if (start > len(line) or not line) and start + len(words) <= columns - len(" ppm"):
            line += " " * (start - len(line)) + words
    return line + " " * (columns - len(line) - 3) + "ppm"
