"""The yield grid of a screen: one cell per pair of levels, shaded by yield.

The shade runs from the theme's panel colour (nothing) to its amber accent (quantitative), so
the eye finds the best corner first; the number and the run id are always written in the
cell, so nothing depends on telling colours apart.
"""

from __future__ import annotations

from rich.table import Table
from rich.text import Text
from textual.color import Color

from ..text import clip, shown
from ..theme import tone


def shade(pct: float | None) -> str:
    """Ink on ground for a cell: the ground blends from the theme's ground to its amber by yield."""
    if pct is None:
        return f"{tone('ink')} on {tone('faint')}"
    f = max(0.0, min(1.0, pct / 100.0))
    ground = Color.parse(tone("ground")).blend(Color.parse(tone("attention")), 0.15 + 0.85 * f)
    # the ink that reads best on this ground: the theme's ground or its ink, whichever is further in lightness
    ink = tone("ground") if abs(ground.brightness - Color.parse(tone("ground")).brightness) > 0.45 else tone("ink")
    return f"{ink} on {ground.hex}"


def grid(matrix: dict | None, best_run: str | None = None) -> Table | Text:
    if not matrix:
        return Text("This screen names no varied conditions.", style="italic")
    cols = matrix.get("column_levels") or [""]
    t = Table(show_lines=True, header_style="bold", border_style=tone("faint"), pad_edge=False)
    corner = f"{matrix['rows']} ╲ {matrix['columns']}" if matrix.get("columns") else matrix["rows"]
    t.add_column(corner, style=f"bold {tone('accent')}", max_width=12)
    for c in cols:
        t.add_column(clip(c, 40) or "yield", justify="center", min_width=12, max_width=14)
    for level, line in zip(matrix["row_levels"], matrix["cells"]):
        row = [Text(shown(level))]
        for cell in line:
            y = cell.get("yield_pct")
            runs = cell.get("runs") or []
            mark = " ◆" if best_run and best_run in runs else ""
            kind = "ⁿ" if cell.get("kinds") == ["NMR"] else ""
            body = ("—" if y is None else f"{y:.0f} %{kind}") + mark
            sub = ", ".join(runs) if len(runs) <= 2 else f"{len(runs)} runs"
            row.append(Text(f"{body}\n{sub}", style=shade(y), justify="center"))
        t.add_row(*row)
    return t
