"""The Logbook's preview of one run: amounts to weigh, the addition track, the outcome."""

from __future__ import annotations

from rich.console import Group
from rich.table import Table
from rich.text import Text

from ..errors import TrapbookError
from ..units import fmt_equiv, fmt_mg, fmt_mmol, fmt_ul
from .text import clip, shown
from .theme import tone


def amounts_table(table) -> Table:
    t = Table(box=None, padding=(0, 1), show_edge=False, header_style=f"bold {tone('muted')}")
    for col, just in (
        ("role", "left"),
        ("line", "left"),
        ("equiv", "right"),
        ("mmol", "right"),
        ("mg", "right"),
        ("µL", "right"),
    ):
        t.add_column(col, justify=just)
    for row in table.lines:
        if row.role == "product":
            continue
        t.add_row(
            row.role, clip(row.name, 34), fmt_equiv(row.equiv), fmt_mmol(row.mmol), fmt_mg(row.mass_mg), fmt_ul(row.volume_ul)
        )
    return t


def preview(nb, run_id: str):
    from .. import amounts
    from .widgets.timeline import track

    run = nb.get_run(run_id)
    meta = nb.run_meta(run_id)
    head = Text()
    head.append(f"{shown(run.id)}  ", style=f"bold {tone('accent')}")
    head.append(shown(run.title), style="bold")
    head.append(
        f"   v{meta['version']} · {run.status}" + (f" · screen {shown(run.screen)}" if run.screen else ""),
        style=f"{tone('muted')}",
    )
    if nb.get_setting(f"draft:{run_id}"):
        head.append("  ✎ unsaved draft", style=f"{tone('warn')}")
    parts = [head]
    try:
        table = amounts.compute(run)
        parts.append(amounts_table(table))
        yields = amounts.product_yields(run, table)
    except TrapbookError as exc:
        parts.append(Text(f"amounts: {shown(exc.message)}", style=f"italic {tone('warn')}"))
        yields = []
    from ..findings import findings_for

    checks_problem = None
    try:
        findings = findings_for(nb, run)
    except TrapbookError as exc:  # shown as a problem in the panel, never as a clean run
        findings, checks_problem = None, exc.message
    grid = Table.grid(padding=(0, 3))
    grid.add_column()
    grid.add_column()
    out = Text()
    for y in yields:
        out.append(f"{shown(y.product)}: ", style="bold")
        from ..phrases import yield_phrases

        out.append(", ".join(yield_phrases(y)) or "no yield recorded")
        out.append("\n")
    if checks_problem:
        out.append(f"checks could not run: {shown(checks_problem)}", style=f"italic {tone('stop')}")
    if findings:
        from .text import SEVERITY_MARK
        from .theme import severity_style

        codes: dict[str, list] = {}  # one mark per code, most severe first, with how often it came
        for f in findings:
            codes.setdefault(f.code, []).append(f)
        for code, same in list(codes.items())[:3]:
            times = f" ×{len(same)}" if len(same) > 1 else ""
            out.append(f"{SEVERITY_MARK[same[0].severity]} {code}{times} ", style=severity_style(same[0].severity))
        if len(codes) > 3:
            out.append(f"+{len(codes) - 3} more", style=f"{tone('muted')}")
    grid.add_row(track(run, findings), out)
    parts.append(grid)
    return Group(*parts)
