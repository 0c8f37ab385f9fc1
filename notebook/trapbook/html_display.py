"""Runs, screen reviews and strain results as rich HTML in a Jupyter notebook (`_repr_html_`).

A PI reading a student's results in a notebook cell should see what the printed report
shows: structures drawn (RDKit SVG, through chemistry/molecules.py), the amounts, the
outcome, the bench findings, the strain card. The pieces are the report's own
(reports.py), so a cell and a report can never disagree. Every stored text is
HTML-escaped; the style is scoped to the `.trapbook` block so it leaves the rest of the
Jupyter page alone.

`Run._repr_html_` calls `run_html`; a review and a strain result are plain dicts, so the
Python API hands them back as `ScreenReview` and `StrainResult`: dicts that also display.
"""

from __future__ import annotations

import html

from .errors import TrapbookError

e = html.escape

_STYLE = (
    "<style>.trapbook{font-family:system-ui,sans-serif;line-height:1.35;max-width:60rem}"
    ".trapbook h3{margin:.2rem 0}.trapbook h4{margin:.8rem 0 .3rem;border-bottom:1px solid #6b3d7a}"
    ".trapbook table{border-collapse:collapse;font-size:.85rem}.trapbook td,.trapbook th{border:1px solid #c8c2b8;"
    "padding:.15rem .4rem;text-align:left}.trapbook td.n{text-align:right}.trapbook .meta{color:#666;font-size:.85rem}"
    ".trapbook .structs{display:flex;flex-wrap:wrap;gap:.5rem}.trapbook .struct{border:1px solid #ddd;padding:.2rem;width:270px}"
    ".trapbook .cap{font-size:.78rem}.trapbook .stop{color:#9b1111;font-weight:600}.trapbook .warn{color:#7a4a00}"
    ".trapbook .card{border:1px solid #6b3d7a;border-radius:4px;padding:.4rem .7rem;display:inline-block}</style>"
)


def _block(parts: list[str]) -> str:
    return _STYLE + "<div class='trapbook'>" + "\n".join(parts) + "</div>"


def run_html(run, nb=None) -> str:
    """A run as HTML: structures, amounts, outcome, bench findings (with `nb`: its settings and cached strain)."""
    from .findings import findings_for
    from .reports import _amounts_table, _findings_html, _intermediate, _outcome, _run_structures, _strain_card, _structures

    findings, problem = [], None
    try:
        findings = findings_for(nb, run)
    except TrapbookError as exc:  # shown as checks that could not run, never as a clean run
        problem = exc.message
    info = " · ".join(
        x
        for x in (
            run.chemist,
            run.date.isoformat() if run.date else None,
            f"screen {run.screen}" if run.screen else None,
            run.status,
        )
        if x
    )
    parts = [
        f"<h3>{e(run.id or 'unsaved run')} — {e(run.title)}</h3>",
        f"<p class='meta'>{e(info)}</p>",
        _structures(_run_structures(run)),
        "<h4>Amounts</h4>",
        _amounts_table(run),
        "<h4>Outcome</h4>",
        _outcome(run),
        "<h4>Bench checks</h4>",
        _findings_html(findings, problem),
    ]
    if nb is not None:
        from .review import shown_strain

        parts += ["<h4>Strain</h4>", _strain_card(shown_strain(nb, run), _intermediate(run))]
    return _block(parts)


def review_html(rv: dict) -> str:
    """A screen review as HTML: the yield map, the best run, the runs with yields and failures."""
    from .display import fmt_pct
    from .reports import heat_map_html

    names = list(rv["factors"])
    parts = [
        f"<h3>{e(rv['screen_id'])} — {e(rv['name'])}</h3>",
        "<p class='meta'>Varied: " + e("; ".join(f"{k}: {', '.join(v)}" for k, v in rv["factors"].items())) + "</p>",
        "<h4>Yield map</h4>",
        heat_map_html(rv.get("matrix")),
    ]
    best = rv.get("best")
    if best:
        parts.append(
            f"<p><b>Best:</b> {e(best['run_id'])} — {e(', '.join(f'{k} {v}' for k, v in best['factors'].items()))}: "
            f"{e(fmt_pct(best['yield_pct']))} ({e(str(best['yield_kind']))})</p>"
        )
    head = "".join(f"<th>{e(n)}</th>" for n in names)
    rows = [f"<table><tr><th>run</th>{head}<th>status</th><th>isolated</th><th>NMR</th><th>findings</th></tr>"]
    for r in rv["rows"]:
        cells = "".join(f"<td>{e(str(r['factors'].get(n) or '—'))}</td>" for n in names)
        worst = ", ".join(f"{f['severity']} {f['code']}" for f in r.get("findings", [])[:3])
        rows.append(
            f"<tr><td>{e(r['run_id'])}</td>{cells}<td>{e(r['status'])}</td>"
            f"<td class='n'>{e(fmt_pct(r['isolated_yield_pct']))}</td><td class='n'>{e(fmt_pct(r['nmr_yield_pct']))}</td>"
            f"<td>{e(worst)}</td></tr>"
        )
    rows.append("</table>")
    parts += ["<h4>Runs</h4>", "\n".join(rows)]
    if rv.get("not_done"):
        parts.append(f"<p class='meta'>Not done yet: {e(', '.join(rv['not_done']))}</p>")
    return _block(parts)


def strain_html(result: dict) -> str:
    """A strain result as HTML: the intermediate drawn and the strain card (class only for the accurate tier)."""
    from .reports import _strain_card, _structures

    smiles = str(result.get("smiles") or "")
    parts = [f"<h3>Strain of {e(smiles)}</h3>"]
    if smiles:
        parts.append(_structures([("intermediate", str(result.get("kind") or "strained unit"), smiles)]))
    parts.append(_strain_card(result))
    return _block(parts)


class ScreenReview(dict):
    """The review of a screen (review.review_screen's dict) that shows as a table in Jupyter."""

    def _repr_html_(self) -> str:
        return review_html(self)


class StrainResult(dict):
    """A strain result (strain_link.get_strain's dict) that shows as a card with its structure in Jupyter."""

    def _repr_html_(self) -> str:
        return strain_html(self)
