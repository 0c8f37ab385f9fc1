"""The yield grid of a screen: one cell per pair of levels, shaded by yield.

The shade runs from the theme's panel colour (nothing) to its amber accent (quantitative), so
the eye finds the best corner first; the number and the run id are always written in the
cell, so nothing depends on telling colours apart.

A level's name is never wrapped, cut off by the frame, or written over its neighbour: the
grid is laid out for the width it is drawn at (`grid_layout`). Every label is written whole
when it fits its cell; otherwise the levels of that side are shown by short keys (A, B, …
for columns, 1, 2, … for rows) and a legend line under the grid gives each key its full
name. Columns that do not fit across are drawn as further bands, one under the other.
"""

from __future__ import annotations

from dataclasses import dataclass

from rich.cells import cell_len
from rich.console import Console, ConsoleOptions, RenderResult
from rich.table import Table
from rich.text import Text
from textual.color import Color

from ..text import shown
from ..theme import tone

#: Narrowest level column: "100 %ⁿ ◆" (a yield, its kind and the best mark) fits.
MIN_CELL = 8
#: Widest level column: wider cells only spread the numbers apart.
MAX_CELL = 16
#: The row-label column: at least this wide, at most this share of the width.
MIN_LABEL, LABEL_SHARE = 6, 0.34
ELLIPSIS = "…"


def shade(pct: float | None) -> str:
    """Ink on ground for a cell: the ground blends from the theme's ground to its amber by yield."""
    if pct is None:
        return f"{tone('ink')} on {tone('faint')}"
    f = max(0.0, min(1.0, pct / 100.0))
    ground = Color.parse(tone("ground")).blend(Color.parse(tone("attention")), 0.15 + 0.85 * f)
    # the ink that reads best on this ground: the theme's ground or its ink, whichever is further in lightness
    ink = tone("ground") if abs(ground.brightness - Color.parse(tone("ground")).brightness) > 0.45 else tone("ink")
    return f"{ink} on {ground.hex}"


def fit(text: str, width: int) -> str:
    """Display text (already through `shown`) on one line of `width` cells: whole, or cut with an ellipsis."""
    text = " ".join(text.split())
    if cell_len(text) <= width:
        return text
    kept = ""
    for ch in text:
        if cell_len(kept + ch) > width - 1:
            break
        kept += ch
    return kept.rstrip() + ELLIPSIS


def column_key(i: int) -> str:
    """A, B, …, Z, AA, AB, …: the key of the i-th column level when names do not fit."""
    key = ""
    i += 1
    while i:
        i, r = divmod(i - 1, 26)
        key = chr(ord("A") + r) + key
    return key


@dataclass(frozen=True)
class GridLayout:
    """Where each label goes: widths in terminal cells, the bands of columns, labels and legend."""

    label_width: int
    cell_width: int
    bands: tuple[tuple[int, ...], ...]  # column indexes of each band, left to right
    headers: tuple[str, ...]  # one line per column level: its name, or its key
    row_labels: tuple[str, ...]  # one line per row level: its name, or its key
    corner: tuple[str, str]  # the rows' condition, then ╲ the columns' condition
    legend: tuple[str, ...]  # "A = full name" lines for keyed levels

    def width(self, band: tuple[int, ...]) -> int:
        """Cells a band takes: the label column, its level columns and the borders between."""
        return self.label_width + len(band) * self.cell_width + len(band) + 2


def grid_layout(matrix: dict, width: int) -> GridLayout:
    """The grid's labels laid out in `width` cells, none wrapped, cut by the frame or overlapping."""
    rows = [shown(r) for r in matrix["row_levels"]]
    cols = [shown(c) for c in (matrix.get("column_levels") or [])] or ["yield"]
    keyed_cols = bool(matrix.get("column_levels")) and any(cell_len(c) > MAX_CELL for c in cols)
    headers = [column_key(i) for i in range(len(cols))] if keyed_cols else cols
    cell = max(MIN_CELL, min(MAX_CELL, max(cell_len(h) for h in headers)))
    # the row labels take what is left after one band of at least one column, up to a share of the width
    room = max(MIN_LABEL, min(int(width * LABEL_SHARE), width - cell - 3))
    label = max(MIN_LABEL, min(room, max([cell_len(r) for r in rows] + [MIN_LABEL])))
    # a row label is cut with an ellipsis (the level lines under the grid name it in full);
    # keys stand in only when cutting would make two rows read the same
    keyed_rows = len({fit(r, label) for r in rows}) < len(rows)
    row_labels = [str(i + 1) for i in range(len(rows))] if keyed_rows else rows
    if keyed_rows:  # keys are short: the column gives its room back to the levels across
        label = max(MIN_LABEL, min(room, cell_len(shown(matrix["rows"]))))
    per_band = max(1, (width - label - 2) // (cell + 1))
    bands = tuple(tuple(range(i, min(i + per_band, len(cols)))) for i in range(0, len(cols), per_band))
    legend = []
    if keyed_rows:
        legend.append(f"{shown(matrix['rows'])}: " + " · ".join(f"{k} = {r}" for k, r in zip(row_labels, rows)))
    if keyed_cols:
        legend.append(f"{shown(matrix.get('columns') or '')}: " + " · ".join(f"{k} = {c}" for k, c in zip(headers, cols)))
    corner_cols = f"╲ {shown(matrix['columns'])}" if matrix.get("columns") else ""
    return GridLayout(
        label_width=label,
        cell_width=cell,
        bands=bands,
        headers=tuple(fit(h, cell) for h in headers),
        row_labels=tuple(fit(r, label) for r in row_labels),
        corner=(fit(shown(matrix["rows"]), label), fit(corner_cols, label)),
        legend=tuple(legend),
    )


def _cell(cell: dict, width: int, best_run: str | None) -> Text:
    y = cell.get("yield_pct")
    runs = [shown(r) for r in cell.get("runs") or []]
    mark = " ◆" if best_run and best_run in (cell.get("runs") or []) else ""
    kind = "ⁿ" if cell.get("kinds") == ["NMR"] else ""
    body = ("—" if y is None else f"{y:.0f} %{kind}") + mark
    sub = ", ".join(runs)
    if cell_len(sub) > width and len(runs) > 1:
        sub = f"{len(runs)} runs"
    return Text(f"{fit(body, width)}\n{fit(sub, width)}", style=shade(y), justify="center")


def band_table(matrix: dict, layout: GridLayout, band: tuple[int, ...], best_run: str | None) -> Table:
    t = Table(show_lines=True, header_style="bold", border_style=tone("faint"), pad_edge=False, padding=(0, 0))
    corner = "\n".join(part for part in layout.corner if part)
    t.add_column(corner, style=f"bold {tone('accent')}", width=layout.label_width, no_wrap=True, overflow="ellipsis")
    for i in band:
        t.add_column(layout.headers[i], justify="center", width=layout.cell_width, no_wrap=True, overflow="ellipsis")
    for label, line in zip(layout.row_labels, matrix["cells"]):
        t.add_row(Text(label), *(_cell(line[i], layout.cell_width, best_run) for i in band))
    return t


@dataclass
class HeatGrid:
    """The grid as a Rich renderable that lays itself out for the width it is given."""

    matrix: dict
    best_run: str | None = None

    def __rich_console__(self, console: Console, options: ConsoleOptions) -> RenderResult:
        layout = grid_layout(self.matrix, options.max_width)
        for band in layout.bands:
            yield band_table(self.matrix, layout, band, self.best_run)
        for line in layout.legend:
            yield Text(line, style=f"italic {tone('muted')}")


def grid(matrix: dict | None, best_run: str | None = None) -> HeatGrid | Text:
    if not matrix:
        return Text("This screen names no varied conditions.", style="italic")
    return HeatGrid(matrix, best_run)
