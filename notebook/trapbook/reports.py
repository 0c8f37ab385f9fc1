"""Printable one-file HTML reports of a run and of a screen.

A report is something a chemist mails to a PI or staples into a paper notebook, so it
carries everything inside itself: structures as inline SVG drawn by RDKit, plots as
inline SVG drawn by matplotlib (Agg, no display needed), styles in the page, no
scripts and no links to fetch. The colour scale of the yield map is our own: paper
white through ochre to deep plum, with the number always printed in the cell so the
page reads the same in black and white.
"""

from __future__ import annotations

import datetime as _dt
import html
from pathlib import Path

from .display import fmt_equiv, fmt_fixed, fmt_mg, fmt_mmol, fmt_molarity, fmt_pct, fmt_ul
from .errors import ExchangeError, NotFoundError, TrapbookError
from .files import write_atomic
from .reports_outcome import outcome_data_html, screen_products, screen_raw_rows_html, version_html, weighed_html
from .reports_strain import strain_plot_svg

e = html.escape

_CSS = """
body{font-family:system-ui,-apple-system,'Segoe UI',sans-serif;color:#1d1d1d;margin:1.5rem auto;max-width:62rem;line-height:1.35}
h1{font-size:1.35rem;margin:0 0 .2rem}h2{font-size:1.05rem;margin:1.3rem 0 .4rem;padding-bottom:.15rem;border-bottom:2px solid #6b3d7a}
.meta{color:#555;font-size:.9rem}
table{border-collapse:collapse;font-size:.88rem;margin:.3rem 0}td,th{border:1px solid #c8c2b8;padding:.22rem .45rem;text-align:left;vertical-align:top}
th{background:#f1ece3}td.n{text-align:right;font-variant-numeric:tabular-nums}
.structs{display:flex;flex-wrap:wrap;gap:.6rem}.struct{border:1px solid #d9d3c8;padding:.3rem;width:270px}
.struct .cap{font-size:.8rem;color:#444}.stop{color:#9b1111;font-weight:600}.warn{color:#7a4a00}.note{color:#44546a}
.card{border:1px solid #6b3d7a;border-radius:4px;padding:.5rem .8rem;background:#faf7fb;display:inline-block}
.heat td.cell{text-align:center;min-width:5.5rem;font-weight:600}.legend span{display:inline-block;width:2.2rem;height:.8rem}
.safety{font-size:.82rem;border-top:1px solid #aaa;margin-top:1.5rem;padding-top:.4rem;color:#444}
@media print{body{margin:.6cm;max-width:none}.struct,table,.card{break-inside:avoid}}
"""


def _safety() -> str:
    """The cautions every trapping run shares, worded once in `materials.caution_text`."""
    from .materials import GENERAL_HAZARDS, caution_text

    return "Cautions: " + caution_text(GENERAL_HAZARDS)


#: Yield colour stops (fraction of 100 %, RGB): our own scale.
_STOPS = ((0.0, (244, 239, 230)), (0.5, (224, 170, 80)), (1.0, (92, 45, 110)))


def yield_colour(pct: float | None) -> tuple[str, str]:
    """(background, text colour) of a heat-map cell for a yield in %; grey hatch-free blank when unknown."""
    if pct is None:
        return "#ffffff", "#777777"
    x = min(max(pct / 100.0, 0.0), 1.0)
    for (x0, c0), (x1, c1) in zip(_STOPS, _STOPS[1:]):
        if x <= x1:
            t = (x - x0) / (x1 - x0)
            rgb = tuple(round(a + (b - a) * t) for a, b in zip(c0, c1))
            break
    lum = 0.2126 * rgb[0] + 0.7152 * rgb[1] + 0.0722 * rgb[2]
    return "#{:02x}{:02x}{:02x}".format(*rgb), ("#ffffff" if lum < 140 else "#1d1d1d")


def _page(title: str, body: list[str]) -> str:
    stamp = _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%d %H:%M UTC")
    return (
        "<!DOCTYPE html>\n<html lang='en'><head><meta charset='utf-8'>"
        f"<title>{e(title)}</title><style>{_CSS}</style></head><body>\n"
        + "\n".join(body)
        + f"\n<p class='safety'>{e(_safety())}</p><p class='meta'>Trapbook report, generated {stamp}.</p></body></html>\n"
    )


def _svg(smiles: str) -> str:
    from .chemistry import molecules

    try:
        return molecules.depict_svg(smiles)
    except TrapbookError as exc:
        return f"<p class='warn'>cannot draw: {e(exc.message)}</p>"


def _structures(items: list[tuple[str, str, str]]) -> str:
    seen, out = set(), ["<div class='structs'>"]
    for role, name, smi in items:
        if (role, smi) in seen:
            continue
        seen.add((role, smi))
        out.append(
            f"<div class='struct'>{_svg(smi)}<div class='cap'><b>{e(role)}</b>: {e(name)}<br><code>{e(smi)}</code></div></div>"
        )
    out.append("</div>")
    return "\n".join(out)


def _intermediate(run) -> tuple[str, str] | None:
    """The run's intermediate and how it was found, as `strain_link.intermediate_of_run` decides."""
    from .strain_link import intermediate_of_run

    return intermediate_of_run(run)


def _run_structures(run) -> list[tuple[str, str, str]]:
    items = [(ln.role, ln.name, ln.smiles) for ln in run.lines if ln.role == "precursor" and ln.smiles]
    found = _intermediate(run)
    if found:
        items.append(
            (
                "intermediate",
                run.intermediate_name or ("intermediate" if run.intermediate else "intermediate (derived)"),
                found[0],
            )
        )
    items += [(ln.role, ln.name, ln.smiles) for ln in run.lines if ln.role in ("trap", "product") and ln.smiles]
    return items


def _amounts_table(run) -> str:
    from . import amounts

    try:
        t = amounts.compute(run)
    except TrapbookError as exc:
        return f"<p class='warn'>Amounts cannot be worked out: {e(exc.message)}</p>"
    rows = [
        "<table><tr><th>line</th><th>role</th><th>MW (g/mol)</th><th>equiv</th><th>amount (mmol)</th>"
        "<th>mass (mg)</th><th>volume (µL)</th></tr>"
    ]
    for x in t.lines:
        rows.append(
            f"<tr><td>{e(x.name)}</td><td>{e(x.role)}</td><td class='n'>{fmt_fixed(x.mw_g_mol, 2)}</td>"
            f"<td class='n'>{fmt_equiv(x.equiv)}</td><td class='n'>{fmt_mmol(x.mmol)}</td>"
            f"<td class='n'>{fmt_mg(x.mass_mg)}</td><td class='n'>{fmt_ul(x.volume_ul)}</td></tr>"
        )
    rows.append("</table>")
    conc = f"{fmt_molarity(t.concentration_M)} M" if t.concentration_M is not None else "not known"
    rows.append(
        f"<p class='meta'>Limiting: {e(t.limiting)} ({fmt_mmol(t.limiting_mmol)} mmol); concentration {e(conc)} — {e(t.concentration_basis)}.</p>"
    )
    return "\n".join(rows)


def _steps(run) -> str:
    from .reports_text import steps_text

    items = steps_text(run)
    if not items:
        return "<p>No steps recorded.</p>"
    return "<ol>" + "".join(f"<li>{e(s.split('. ', 1)[1] if '. ' in s else s.strip())}</li>" for s in items) + "</ol>"


def _findings_html(findings: list, problem: str | None = None) -> str:
    if problem is not None:  # a check that could not run is never shown as a clean run
        return f"<p class='stop'>The bench checks could not run: {e(problem)}</p>"
    if not findings:
        return "<p>Nothing to flag.</p>"
    out = ["<table><tr><th>severity</th><th>check</th><th>what</th></tr>"]
    for f in findings:
        c = f"<br><i>caution: {e(f.caution)}</i>" if f.caution else ""
        out.append(f"<tr><td class='{e(f.severity)}'>{e(f.severity)}</td><td>{e(f.code)}</td><td>{e(f.message)}{c}</td></tr>")
    out.append("</table>")
    return "\n".join(out)


def _outcome(run) -> str:
    from . import amounts

    if run.outcome is None:
        return "<p>No outcome recorded yet.</p>"
    try:
        ys = amounts.product_yields(run)
    except TrapbookError as exc:
        return f"<p class='warn'>Yields cannot be worked out: {e(exc.message)}</p>"
    out = ["<table><tr><th>product</th><th>isolated yield (%)</th><th>NMR yield (%)</th><th>dr</th><th>ee (%)</th></tr>"]
    for y in ys:
        out.append(
            f"<tr><td>{e(y.product)}</td><td class='n'>{fmt_pct(y.isolated_yield_pct, '')}</td>"
            f"<td class='n'>{fmt_pct(y.nmr_yield_pct, '')}</td><td>{e(y.dr or '—')}</td>"
            f"<td class='n'>{fmt_pct(y.ee_pct, '')}</td></tr>"
        )
    out.append("</table>")
    if run.outcome.observations:
        out.append(f"<p><b>Observations:</b> {e(run.outcome.observations)}</p>")
    return "\n".join(out)


def _strain_card(strain: dict | None, intermediate: tuple[str, str] | None = None) -> str:
    """The intermediate (and how it was found), its strain in its kind's own quantity, and the class
    from `stability.judge` (read through `stability.reading`); a prescreen is never classed."""
    from .stability import reading

    where = f"<p>Intermediate: <code>{e(intermediate[0])}</code> — {e(intermediate[1])}</p>" if intermediate else ""
    if not strain:
        return (
            where + "<p class='meta'>Strain not computed for this intermediate (run <code>trapbook strain</code> to add it).</p>"
        )
    seen = reading(strain)
    value = (
        f"{seen['strain_quantity']} {seen['strain_kcal_mol']:.1f} kcal/mol"
        if seen["strain_kcal_mol"] is not None
        else "no strain number"
    )
    if seen["stability_class"]:
        cls = f"class: {seen['stability_class']} — {'needs a trap' if seen['needs_trap'] else 'may survive without a trap'}"
    elif seen["prescreen"]:
        cls = "class: not judged (fast-tier prescreen; compute the accurate tier to class it)"
    else:
        cls = "class: not judged (no class for this result)"
    bits = [seen["kind"] or "no strained unit found", value, cls]
    if strain.get("s_value") is not None:
        bits.append(f"S value {strain['s_value']}")
    if strain.get("twist_deg") is not None:
        bits.append(f"twist {strain['twist_deg']:.0f}°")
    words = f"<br><span>{e(seen['judgement_words'])}</span>" if seen["judgement_words"] else ""
    return (
        f"{where}<div class='card'><b>{e(' · '.join(bits))}</b>{words}<br><span class='meta'>method: "
        f"{e(str(strain.get('method') or strain.get('tier') or 'not stated'))}</span></div>"
    )


def run_report_html(nb, run_id: str) -> str:
    """The whole run on one page: structures, amounts, steps, checks, outcome, strain."""
    from .findings import findings_for
    from .review import shown_strain
    from .spectra.figures import run_spectra_html

    run = nb.get_run(run_id)
    meta = nb.run_meta(run_id)
    strain = shown_strain(nb, run)
    findings, problem = [], None
    try:
        findings = findings_for(nb, run)
    except TrapbookError as exc:
        problem = exc.message
    info = " · ".join(
        x
        for x in (
            run.chemist,
            run.date.isoformat() if run.date else None,
            f"page {run.page}" if run.page else None,
            f"screen {run.screen}" if run.screen else None,
            run.status,
            f"version {meta['version']}",
            "WITHDRAWN" if meta.get("withdrawn") else None,
        )
        if x
    )
    body = [
        f"<h1>{e(run.id)} — {e(run.title)}</h1>",
        f"<p class='meta'>{e(info)}</p>",
        "<h2>Structures</h2>",
        _structures(_run_structures(run)),
        "<h2>Amounts</h2>",
        _amounts_table(run),
        weighed_html(run, nb),
        "<h2>Steps</h2>",
        _steps(run),
        "<h2>Bench checks</h2>",
        _findings_html(findings, problem),
        "<h2>Outcome</h2>",
        _outcome(run),
        outcome_data_html(run),
        run_spectra_html(nb, run),
        "<h2>Version</h2>",
        version_html(nb, run_id),
        "<h2>Strain</h2>",
        _strain_card(strain, _intermediate(run)),
    ]
    if run.notes:
        body += ["<h2>Notes</h2>", f"<p>{e(run.notes)}</p>"]
    body.append(f"<p class='meta'>Record hash {e(meta['hash'])}</p>")
    return _page(f"{run.id} {run.title}", body)


# --- screen ------------------------------------------------------------------------------------


def heat_map_html(mx: dict | None) -> str:
    if not mx:
        return "<p>No varied conditions recorded.</p>"
    cols = mx["column_levels"] or [""]
    out = ["<table class='heat'><tr><th>" + e(mx["rows"]) + (" \\ " + e(mx["columns"]) if mx["columns"] else "") + "</th>"]
    out += [f"<th>{e(c)}</th>" for c in cols]
    out.append("</tr>")
    for rl, line in zip(mx["row_levels"], mx["cells"]):
        out.append(f"<tr><th>{e(rl)}</th>")
        for cell in line:
            bg, fg = yield_colour(cell["yield_pct"])
            label = "—" if cell["yield_pct"] is None else f"{cell['yield_pct']:.0f} %"
            kinds = "/".join(cell["kinds"])
            tip = ", ".join(cell["runs"]) + (f" ({kinds})" if kinds else "")
            out.append(
                f"<td class='cell' style='background:{bg};color:{fg}' title='{e(tip)}'>{e(label)}"
                f"<br><small>{e(', '.join(cell['runs']))}</small></td>"
            )
        out.append("</tr>")
    out.append("</table>")
    legend = "".join(f"<span style='background:{yield_colour(p)[0]}'></span>" for p in range(0, 101, 10))
    out.append(
        f"<p class='legend meta'>0 % {legend} 100 % &nbsp; headline yield: isolated where recorded, else NMR"
        + (f"; mean over {e(', '.join(mx['averaged_over']))}" if mx.get("averaged_over") else "")
        + "</p>"
    )
    return "\n".join(out)


def screen_report_html(nb, screen_id: str) -> str:
    """A screen on one page: structures, yield map, per-level summaries, failures, strain plot, runs."""
    from . import review

    rv = review.review_screen(nb, screen_id)
    screen = nb.get_screen(screen_id)
    runs = nb.screen_runs(screen)
    items, traps = [], []
    for run in runs[:1]:
        items += [x for x in _run_structures(run) if x[0] in ("precursor", "intermediate")]
    for run in runs:
        traps += [(ln.role, ln.name, ln.smiles) for ln in run.lines if ln.role == "trap" and ln.smiles]
    body = [f"<h1>{e(rv['screen_id'])} — {e(rv['name'])}</h1>"]
    if rv.get("description"):
        body.append(f"<p>{e(rv['description'])}</p>")
    body.append(
        "<p class='meta'>Varied: "
        + e("; ".join(f"{k}: {', '.join(v)}" for k, v in rv["factors"].items()))
        + (f" · scale {e(screen.scale)}" if screen.scale else "")
        + "</p>"
    )
    body += ["<h2>Structures</h2>", _structures(items + traps + screen_products(runs))]
    body += ["<h2>Yield map</h2>", heat_map_html(rv["matrix"])]
    if rv["best"]:
        b = rv["best"]
        body.append(
            f"<p><b>Best run:</b> {e(b['run_id'])} — {e(', '.join(f'{k} {v}' for k, v in b['factors'].items()))}: "
            f"{b['yield_pct']:.0f} % ({e(b['yield_kind'])})" + (f" <i>{e(b['note'])}</i>" if b.get("note") else "") + "</p>"
        )
    body += _screen_levels_html(rv) + _screen_failed_html(rv) + _screen_strain_html(nb, runs)
    body.append(
        "<h2>Runs</h2><table><tr><th>run</th><th>conditions</th><th>status</th><th>isolated (%)</th><th>NMR (%)</th><th>dr</th><th>ee (%)</th></tr>"
    )
    for r in rv["rows"]:
        body.append(
            f"<tr><td>{e(r['run_id'])}</td><td>{e(', '.join(f'{k} {v}' for k, v in r['factors'].items() if v))}</td>"
            f"<td>{e(r['status'])}</td><td class='n'>{fmt_pct(r['isolated_yield_pct'], '')}</td>"
            f"<td class='n'>{fmt_pct(r['nmr_yield_pct'], '')}</td><td>{e(r['dr'] or '—')}</td>"
            f"<td class='n'>{fmt_pct(r['ee_pct'], '')}</td></tr>"
        )
    body.append("</table>")
    body += ["<h2>Raw outcome data</h2>", screen_raw_rows_html(runs, nb)]
    return _page(f"{rv['screen_id']} {rv['name']}", body)


def _screen_levels_html(rv: dict) -> list[str]:
    """Per level of each condition, isolated and NMR summaries side by side (never averaged together)."""
    body: list[str] = []
    body.append(
        "<h2>By level</h2><table><tr><th>condition</th><th>level</th><th>runs</th><th>mean isolated (%)</th>"
        "<th>best isolated (%)</th><th>mean NMR (%)</th><th>best NMR (%)</th></tr>"
    )
    for f, lv in rv["levels"].items():
        for level, s in lv.items():
            body.append(
                f"<tr><td>{e(f)}</td><td>{e(level)}</td><td>{e(', '.join(s['runs']))}</td>"
                f"<td class='n'>{fmt_pct(s['isolated']['mean_pct'], '')}</td>"
                f"<td class='n'>{fmt_pct(s['isolated']['best_pct'], '')}</td>"
                f"<td class='n'>{fmt_pct(s['nmr']['mean_pct'], '')}</td>"
                f"<td class='n'>{fmt_pct(s['nmr']['best_pct'], '')}</td></tr>"
            )
    body.append("</table>")
    return body


def _screen_failed_html(rv: dict) -> list[str]:
    """The failed runs with the findings that may explain them, or a plain 'none'."""
    body: list[str] = []
    body.append("<h2>Runs that failed</h2>")
    if rv["failed"]:
        body.append("<ul>")
        for fr in rv["failed"]:
            why = (
                "; ".join(f"{x['severity']} {x['code']}: {x['message']}" for x in fr["findings"]) or "no bench check explains it"
            )
            body.append(f"<li><b>{e(fr['run_id'])}</b> {e(fr['title'])} — {e(why)}</li>")
        body.append("</ul>")
    else:
        body.append("<p>None.</p>")
    return body


def _screen_strain_html(nb, runs: list) -> list[str]:
    """The whole notebook's strain-against-outcome plot with this screen's intermediate marked."""
    body: list[str] = []
    from . import review
    from .chemistry import molecules

    smap = review.strain_map(nb)
    highlight = None
    for run in runs[:1]:
        found = _intermediate(run)
        if found:
            try:
                highlight = molecules.canonical(found[0])
            except TrapbookError:
                highlight = None
    body += [
        "<h2>Strain against outcome (whole notebook)</h2>",
        f"<figure>{strain_plot_svg(smap, highlight)}</figure>",
        f"<p class='meta'>{e(smap['ranking']['method'])}</p>",
    ]
    return body


def write_report(nb, ref: str, output: str | Path) -> dict:
    """Write the report of a run id or screen id/name to `output`; returns {path, kind, id}."""
    path = Path(output)
    if path.suffix.lower() not in (".html", ".htm"):
        raise ExchangeError(f"report file {path} does not end in .html", "give a file name like report.html")
    kind = None
    if ref.startswith("CP-"):  # a campaign's map (reports_campaign)
        from .reports_campaign import campaign_report_html

        text = campaign_report_html(nb, ref)
        write_atomic(path, text)
        return {"path": str(path), "kind": "campaign", "id": ref, "bytes": len(text.encode())}
    try:
        nb.run_meta(ref)
        kind, text = "run", run_report_html(nb, ref)
    except NotFoundError:
        try:
            sid = nb.get_screen(ref).id
        except NotFoundError:
            raise NotFoundError(
                f"no run or screen '{ref}' in this notebook", "list them with 'trapbook list' and 'trapbook screens'"
            ) from None
        kind, text, ref = "screen", screen_report_html(nb, sid), sid
    write_atomic(path, text)
    return {"path": str(path), "kind": kind, "id": ref, "bytes": len(text.encode())}
