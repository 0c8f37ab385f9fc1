"""Plain-text views of runs and reagent tables, with chemists' rounding, for the CLI.

Numbers are written by display.py (the same rule as the terminal UI and the reports);
every piece of stored text goes through text_safety.printable before it is padded into
a column, so a control character shows as an escape and a newline cannot fake a row.
"""

from __future__ import annotations

from .amounts import AmountTable, ProductYield
from .display import fmt_equiv, fmt_fixed, fmt_mg, fmt_mmol, fmt_molarity, fmt_temp_c, fmt_ul, fmt_yield
from .phrases import step_phrases, yield_phrases
from .records import Run
from .text_safety import printable


def cell(value, width: int) -> str:
    """Stored text cut to a column `width` and padded, escaped first so the width holds."""
    text = printable(value)
    return f"{text[:width]:{width}}"


def amounts_text(table: AmountTable) -> str:
    head = f"{'line':28} {'role':17} {'MW g/mol':>9} {'equiv':>7} {'mmol':>8} {'mass mg':>9} {'volume µL':>10}"
    rows = [head, "-" * len(head)]
    for x in table.lines:
        rows.append(
            f"{cell(x.name, 28)} {cell(x.role, 17)} {fmt_fixed(x.mw_g_mol, 2):>9} {fmt_equiv(x.equiv):>7} "
            f"{fmt_mmol(x.mmol):>8} {fmt_mg(x.mass_mg):>9} {fmt_ul(x.volume_ul):>10}"
        )
    rows.append("")
    rows.append(f"limiting: {printable(table.limiting)} ({fmt_mmol(table.limiting_mmol)} mmol)")
    if table.concentration_M is not None:
        rows.append(f"concentration: {fmt_molarity(table.concentration_M)} M — {printable(table.concentration_basis)}")
    else:
        rows.append(f"concentration: not known ({printable(table.concentration_basis)})")
    return "\n".join(rows)


def steps_text(run: Run) -> list[str]:
    return [f"  {i}. " + printable("; ".join(step_phrases(s))) for i, s in enumerate(run.steps, 1)]


def yields_text(yields: list[ProductYield]) -> list[str]:
    return [f"  {printable(y.product)}: " + (printable(", ".join(yield_phrases(y))) or "no yield recorded") for y in yields]


def run_text(run: Run, meta: dict, table: AmountTable | None, yields: list[ProductYield], problem: str | None) -> str:
    current = f" of {meta['current_version']}: an earlier version, not the current one" if meta.get("current_version") else ""
    head = [
        f"{printable(meta['id'])}  {printable(run.title)}  (version {meta['version']}{current}{', WITHDRAWN' if meta.get('withdrawn') else ''})"
    ]
    info = [
        x
        for x in (
            run.chemist,
            run.date.isoformat() if run.date else None,
            f"page {run.page}" if run.page else None,
            f"screen {run.screen}" if run.screen else None,
            run.status,
        )
        if x
    ]
    head.append("  " + printable(" · ".join(info)))
    if run.intermediate:
        head.append(printable(f"  intermediate: {run.intermediate_name or ''} {run.intermediate}".rstrip()))
    body = [""]
    body.append(amounts_text(table) if table else f"amounts: {printable(problem)}")
    body.extend(weighed_text(run))
    body.append("")
    body.append("steps:")
    body.extend(steps_text(run) or ["  (no steps recorded)"])
    if run.outcome:
        body.append("outcome:")
        body.extend(yields_text(yields))
        if run.outcome.observations:
            body.append(f"  observations: {printable(run.outcome.observations, multiline=True)}")
        body.extend(outcome_words_text(run.outcome))
    if run.notes:
        body.append(f"notes: {printable(run.notes, multiline=True)}")
    return "\n".join(head + body)


def weighed_text(run: Run) -> list[str]:
    """Planned against weighed for each line that records what went in (numbers above are from what was weighed)."""
    from .errors import TrapbookError
    from .weighed import planned_vs_weighed

    try:
        rows = planned_vs_weighed(run)
    except TrapbookError as exc:
        return [f"planned against weighed: cannot be compared ({printable(exc.message)})"]
    fmt = {"mg": fmt_mg, "µL": fmt_ul, "mmol": fmt_mmol}
    out = ["weighed (equiv, concentration and yields above are worked out from these):"] if rows else []
    for w in rows:
        diff = f"{w.difference_pct:+.1f} %" if w.difference_pct is not None else "—"
        out.append(
            f"  {cell(w.name, 28)} planned {fmt[w.unit](w.planned)} {w.unit}, weighed {fmt[w.unit](w.weighed)} {w.unit} ({diff})"
        )
    return out


def outcome_words_text(outcome) -> list[str]:
    """Work-up, eluent and each product's appearance, Rf and NMR text, as recorded."""
    out = [f"  work-up: {printable(outcome.workup, multiline=True)}"] if outcome.workup else []
    if outcome.eluent:
        out.append(f"  eluent: {printable(outcome.eluent)}")
    for res in outcome.products:
        bits = [printable(res.appearance) if res.appearance else "", f"Rf {res.rf:.2f}" if res.rf is not None else ""]
        if any(bits):
            out.append(f"  {printable(res.product)}: " + ", ".join(b for b in bits if b))
        if res.nmr_text:
            out.append(f"  NMR of {printable(res.product)}: {printable(res.nmr_text, multiline=True)}")
    return out


#: The last column holds a whole finding code ("stop:strain-untrapped"); cut only past this.
WORST_WIDTH = 32


def run_rows_text(rows: list[dict]) -> str:
    head = f"{'id':8} {'date':10} {'chemist':10} {'title':38} {'trap':18} {'T max':>7} {'yield':>6} worst"
    out = [head, "-" * len(head)]
    for r in rows:
        title = printable(r["title"])
        if r.get("withdrawn"):
            title = "[withdrawn] " + title
        out.append(
            f"{printable(r['id']):8} {cell(r.get('date'), 10)} {cell(r.get('chemist'), 10)} {cell(title, 38)} "
            f"{cell(r.get('trap') or '—', 18)} {fmt_temp_c(r.get('temp_max_c')):>7} "
            f"{fmt_yield(r.get('yield_pct'), r.get('yield_kind')):>6} {cell(r.get('worst'), WORST_WIDTH)}".rstrip()
        )
    return "\n".join(out)
