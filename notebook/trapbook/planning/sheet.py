"""The bench sheet of a planned screen: what to have at hand and, vial by vial, what to add
in which order, as plain text or a printable HTML page, with each vial's findings."""

from __future__ import annotations

import html

from ..phrases import step_phrases
from .plan import PlannedRun, PlannedScreen, totals

# --- the bench sheet --------------------------------------------------------------------------


def _how(row) -> tuple[str, str]:
    """('weigh', '12.3 mg') or ('measure', '95 µL') — what the chemist does for one line."""
    from ..units import fmt_mg, fmt_ul

    if row.form == "solid":
        return ("weigh", f"{fmt_mg(row.mass_mg)} mg") if row.mass_mg is not None else ("weigh", "amount unknown")
    if row.volume_ul is not None:
        return "measure", f"{fmt_ul(row.volume_ul)} µL"
    if row.mass_mg is not None:
        return "weigh", f"{fmt_mg(row.mass_mg)} mg"
    return "add", "amount unknown"


def _weighed(run, name: str) -> str:
    """What the line records as actually weighed or measured, or '' (a box to fill in at the bench)."""
    from ..phrases import quantity_words

    line = run.line(name)
    return quantity_words(line.actual) if line is not None and line.actual is not None else ""


def vial_instructions(pr: PlannedRun) -> list[dict]:
    """Ordered actions for one vial: each addition with every amount, then heating and holds."""
    from ..units import fmt_mmol

    out: list[dict] = []
    table = pr.amounts
    added: set[str] = set()
    steps = pr.run.steps or []
    for i, s in enumerate(steps, 1):
        for name in s.add:
            row = table.line(name) if table is not None else None
            added.add(name.casefold())
            if row is None:
                out.append({"step": i, "action": "add", "line": name, "quantity": "see run (amount unknown)"})
                continue
            verb, qty = _how(row)
            extra = []
            if row.mmol is not None:
                extra.append(f"{fmt_mmol(row.mmol)} mmol")
            if row.equiv is not None:
                extra.append(f"{row.equiv:.3g} equiv")
            if row.molarity_M:
                extra.append(f"{row.molarity_M:g} M solution")
            out.append(
                {
                    "step": i,
                    "action": verb,
                    "line": name,
                    "role": row.role,
                    "quantity": qty,
                    "detail": ", ".join(extra),
                    "weighed": _weighed(pr.run, name),
                }
            )
        cond = step_phrases(s.model_copy(update={"note": None}), with_additions=False)
        if cond or s.note:
            out.append({"step": i, "action": "conditions", "line": "", "quantity": "; ".join(cond), "detail": s.note or ""})
    if table is not None:
        for row in table.lines:
            if row.role != "product" and row.name.casefold() not in added:
                verb, qty = _how(row)
                out.append(
                    {
                        "step": None,
                        "action": verb,
                        "line": row.name,
                        "role": row.role,
                        "quantity": qty,
                        "detail": "not named in any step — decide when it goes in",
                    }
                )
    return out


def _safety() -> str:
    """The cautions every trapping screen shares, worded once in `materials.caution_text`."""
    from ..materials import GENERAL_HAZARDS, caution_text

    return "Before you start: " + caution_text(GENERAL_HAZARDS)


def _total_text(t: dict) -> str:
    """A liquid's total as a volume, a solid's as a mass."""
    from ..units import fmt_mg, fmt_ul

    if t["form"] in ("neat liquid", "solution", "solvent") and t["volume_ul"]:
        return f"{fmt_ul(t['volume_ul'])} µL"
    if t["mass_mg"]:
        return f"{fmt_mg(t['mass_mg'])} mg"
    return f"{fmt_ul(t['volume_ul'])} µL" if t["volume_ul"] else "—"


def bench_sheet_text(plan: PlannedScreen) -> str:
    lines = [f"BENCH SHEET — {plan.screen.name}" + (f" ({plan.screen_id})" if plan.screen_id else "")]
    lines.append("varied: " + "; ".join(f"{k}: {', '.join(v)}" for k, v in plan.screen.factors.items()))
    if plan.screen.scale:
        lines.append(f"scale: {plan.screen.scale} of the limiting line")
    lines.append("")
    lines.append("safety: " + _safety())
    lines.append("")
    lines.append("have at hand (sum over vials, add your own excess):")
    for t in totals(plan):
        amt = _total_text(t)
        lines.append(f"  {t['line'][:40]:40} {t['role']:17} {amt:>12}  in {t['vials']} vial(s)")
    for i, pr in enumerate(plan.runs):
        rid = plan.run_ids[i] if i < len(plan.run_ids) else ""
        lines.append("")
        lines.append(f"[{pr.vial}] {rid}  " + ", ".join(f"{k}: {v}" for k, v in pr.run.factors.items()))
        if pr.problem:
            lines.append(f"   amounts cannot be worked out: {pr.problem}")
        for ins in vial_instructions(pr):
            step = f"{ins['step']}." if ins["step"] else "?."
            if ins["action"] == "conditions":
                lines.append(f"   {step:4} {ins['quantity']}" + (f" ({ins['detail']})" if ins["detail"] else ""))
            else:
                weighed = f"  weighed: {ins.get('weighed') or '________'}" if ins["action"] != "add" else ""
                lines.append(
                    f"   {step:4} [ ] {ins['action']:7} {ins['quantity']:>12}  {ins['line']}"
                    + (f"  ({ins['detail']})" if ins.get("detail") else "")
                    + weighed
                )
        for f in pr.findings:
            if f.severity in ("stop", "warn"):
                lines.append(f"   ! {f.severity.upper()} {f.code}: {f.message}")
                if f.caution:
                    lines.append(f"     caution: {f.caution}")
    return "\n".join(lines) + "\n"


def bench_sheet_html(plan: PlannedScreen) -> str:
    """A printable page: one block per vial with check boxes, in the order of addition."""
    e = html.escape
    out = [
        "<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'>",
        f"<title>Bench sheet — {e(plan.screen.name)}</title>",
        "<style>body{font-family:system-ui,sans-serif;margin:1.5rem;color:#222}"
        "h1{font-size:1.3rem}h2{font-size:1.05rem;margin:1.2rem 0 .3rem;border-bottom:2px solid #5a6f3c}"
        "table{border-collapse:collapse;width:100%;font-size:.9rem}td,th{border:1px solid #bbb;padding:.25rem .4rem;text-align:left}"
        "td.n{text-align:right;font-variant-numeric:tabular-nums}.box{width:1.2rem}.vial{break-inside:avoid}"
        ".warn{color:#7a3b00}.stop{color:#a00000;font-weight:bold}.safety{border:1px solid #a06000;padding:.5rem;background:#fff8ec}"
        "@media print{body{margin:.5cm}}</style></head><body>",
    ]
    out.append(f"<h1>Bench sheet — {e(plan.screen.name)}{' (' + e(plan.screen_id) + ')' if plan.screen_id else ''}</h1>")
    out.append("<p>Varied: " + "; ".join(f"<b>{e(k)}</b>: {e(', '.join(v))}" for k, v in plan.screen.factors.items()) + "</p>")
    if plan.screen.scale:
        out.append(f"<p>Scale: {e(plan.screen.scale)} of the limiting line.</p>")
    out.append(f"<p class='safety'>{e(_safety())}</p>")
    out.append("<h2>Have at hand</h2><table><tr><th>material</th><th>role</th><th>total</th><th>vials</th></tr>")
    for t in totals(plan):
        amt = _total_text(t)
        out.append(
            f"<tr><td>{e(t['line'])}</td><td>{e(t['role'])}</td><td class='n'>{e(amt)}</td><td class='n'>{t['vials']}</td></tr>"
        )
    out.append("</table>")
    for i, pr in enumerate(plan.runs):
        rid = plan.run_ids[i] if i < len(plan.run_ids) else ""
        out.append(
            f"<div class='vial'><h2>{e(pr.vial)} {e(rid)} — "
            + e(", ".join(f"{k}: {v}" for k, v in pr.run.factors.items()))
            + "</h2>"
        )
        if pr.problem:
            out.append(f"<p class='stop'>Amounts cannot be worked out: {e(pr.problem)}</p>")
        out.append(
            "<table><tr><th class='box'>✓</th><th>step</th><th>do</th><th>amount</th><th>weighed</th><th>line</th><th>detail</th></tr>"
        )
        for ins in vial_instructions(pr):
            out.append(
                f"<tr><td class='box'>☐</td><td>{ins['step'] or '?'}</td><td>{e(ins['action'])}</td>"
                f"<td class='n'>{e(ins['quantity'])}</td><td class='n weighed'>{e(ins.get('weighed') or '')}</td>"
                f"<td>{e(ins['line'])}</td><td>{e(ins.get('detail') or '')}</td></tr>"
            )
        out.append("</table>")
        for f in pr.findings:
            if f.severity in ("stop", "warn"):
                out.append(
                    f"<p class='{e(f.severity)}'>{e(f.severity.upper())} {e(f.code)}: {e(f.message)}"
                    + (f"<br><i>caution: {e(f.caution)}</i>" if f.caution else "")
                    + "</p>"
                )
        out.append("</div>")
    out.append("</body></html>")
    return "\n".join(out)
