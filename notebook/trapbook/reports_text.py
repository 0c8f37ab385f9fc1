"""Plain-text views of runs and reagent tables, with chemists' rounding, for the CLI."""

from __future__ import annotations

from .amounts import AmountTable, ProductYield
from .records import Run
from .phrases import step_phrases, yield_phrases
from .units import fmt_mg, fmt_mmol, fmt_ul, unit_text


def _num(x: float | None, fmt) -> str:
    return "—" if x is None else fmt(x)


def _equiv(x: float | None) -> str:
    if x is None:
        return "—"
    if x >= 1e5:  # a typo such as 1e300 equiv must still fit its column
        return f"{x:.2g}"
    return f"{x:.2f}" if x < 10 else f"{x:.1f}"


def amounts_text(table: AmountTable) -> str:
    head = f"{'line':28} {'role':17} {'MW g/mol':>9} {'equiv':>7} {'mmol':>8} {'mass mg':>9} {'volume µL':>10}"
    rows = [head, "-" * len(head)]
    for x in table.lines:
        rows.append(
            f"{x.name[:28]:28} {x.role[:17]:17} {_num(x.mw_g_mol, lambda v: f'{v:.2f}'):>9} {_equiv(x.equiv):>7} "
            f"{fmt_mmol(x.mmol) if x.mmol is not None else '—':>8} {fmt_mg(x.mass_mg):>9} {fmt_ul(x.volume_ul):>10}"
        )
    rows.append("")
    rows.append(f"limiting: {table.limiting} ({fmt_mmol(table.limiting_mmol)} mmol)")
    if table.concentration_M is not None:
        rows.append(f"concentration: {table.concentration_M:#.3g} M — {table.concentration_basis}")
    else:
        rows.append(f"concentration: not known ({table.concentration_basis})")
    return "\n".join(rows)


def _q(q) -> str:
    if q is None:
        return ""
    return f"{q.magnitude:g} {unit_text(q)}".strip()


def steps_text(run: Run) -> list[str]:
    return [f"  {i}. " + "; ".join(step_phrases(s)) for i, s in enumerate(run.steps, 1)]


def yields_text(yields: list[ProductYield]) -> list[str]:
    return [f"  {y.product}: " + (", ".join(yield_phrases(y)) or "no yield recorded") for y in yields]


def run_text(run: Run, meta: dict, table: AmountTable | None, yields: list[ProductYield], problem: str | None) -> str:
    current = f" of {meta['current_version']}: an earlier version, not the current one" if meta.get("current_version") else ""
    head = [f"{meta['id']}  {run.title}  (version {meta['version']}{current}{', WITHDRAWN' if meta.get('withdrawn') else ''})"]
    info = [x for x in (run.chemist, run.date.isoformat() if run.date else None, f"page {run.page}" if run.page else None,
                        f"screen {run.screen}" if run.screen else None, run.status) if x]
    head.append("  " + " · ".join(info))
    if run.intermediate:
        head.append(f"  intermediate: {run.intermediate_name or ''} {run.intermediate}".rstrip())
    body = [""]
    body.append(amounts_text(table) if table else f"amounts: {problem}")
    body.append("")
    body.append("steps:")
    body.extend(steps_text(run) or ["  (no steps recorded)"])
    if run.outcome:
        body.append("outcome:")
        body.extend(yields_text(yields))
        if run.outcome.observations:
            body.append(f"  observations: {run.outcome.observations}")
    if run.notes:
        body.append(f"notes: {run.notes}")
    return "\n".join(head + body)


def run_rows_text(rows: list[dict]) -> str:
    head = f"{'id':8} {'date':10} {'chemist':10} {'title':38} {'trap':18} {'T max':>6} {'yield':>6} {'worst':16}"
    out = [head, "-" * len(head)]
    for r in rows:
        y = "—" if r.get("yield_pct") is None else f"{r['yield_pct']:.0f}%"
        t = "—" if r.get("temp_max_c") is None else f"{r['temp_max_c']:.0f}°C"
        title = (r["title"] or "")[:38]
        if r.get("withdrawn"):
            title = ("[withdrawn] " + title)[:38]
        out.append(
            f"{r['id']:8} {(r.get('date') or ''):10} {(r.get('chemist') or '')[:10]:10} {title:38} "
            f"{(r.get('trap') or '—')[:18]:18} {t:>6} {y:>6} {(r.get('worst') or '')[:16]:16}"
        )
    return "\n".join(out)
