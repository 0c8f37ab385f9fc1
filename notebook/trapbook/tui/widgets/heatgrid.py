"""The yield grid of a screen: one cell per pair of levels, shaded by yield.

The shade runs from a dark slate (nothing) to a warm amber (quantitative) on one hue, so
the eye finds the best corner first; the number and the run id are always written in the
cell, so nothing depends on telling colours apart.
"""

from __future__ import annotations

from rich.table import Table
from rich.text import Text

from ..text import clip, shown

LOW = (0x1d, 0x2b, 0x36)
HIGH = (0xf0, 0xa8, 0x3c)


def shade(pct: float | None) -> str:
    if pct is None:
        return "on #2a2a2a"
    f = max(0.0, min(1.0, pct / 100.0))
    r, g, b = (round(lo + (hi - lo) * f) for lo, hi in zip(LOW, HIGH))
    ink = "#101418" if f > 0.55 else "#e6edf3"
    return f"{ink} on #{r:02x}{g:02x}{b:02x}"


def grid(matrix: dict | None, best_run: str | None = None) -> Table | Text:
    if not matrix:
        return Text("This screen names no varied conditions.", style="italic")
    cols = matrix.get("column_levels") or [""]
    t = Table(show_lines=True, header_style="bold", border_style="#4a5866", pad_edge=False)
    corner = f"{matrix['rows']} ╲ {matrix['columns']}" if matrix.get("columns") else matrix["rows"]
    t.add_column(corner, style="bold #7fb7be", max_width=12)
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
