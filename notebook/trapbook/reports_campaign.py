"""The printable map of a campaign: strain against S, coloured by class, with the group's
trapped intermediates overlaid with their best yields, the ranked table and the structures.

The map has one panel per kind (bridgehead alkenes, cyclic allenes, cycloalkynes, ...), as
the strain-against-outcome plot does (reports_strain.py): each kind has its own strain
quantity and its own classes, so each panel has its own axis and shades its own bands.

The page is built from the notebook alone (the campaign's record and the strain cache),
so it can be drawn again at any time without recomputing. Classes come from
`stability.judge` and the class bands from `stability.class_limits`; a fast-tier campaign
is drawn in grey with no bands, because a prescreen is never classed.
"""

from __future__ import annotations

import html
import io

from .campaign import campaign_table, load_record
from .errors import NotFoundError
from .reports import _page, _structures

e = html.escape

_CLASS_COLOURS = {
    "hyperstable": "#2e7d4f",
    "isolable": "#4f8f3a",
    "observable": "#c0892f",
    "unstable": "#9b2a2a",
    "cold and dilute only": "#c0892f",
    "trapping only": "#9b2a2a",
}
_NO_CLASS = "#7a7a7a"
#: margin around a panel's points and class limits, kcal/mol
_PAD = 4.0


def group_points(nb, tier: str) -> list[dict]:
    """The group's intermediates with a cached strain at this tier (accurate first) and their best yields."""
    from .chemistry.strain_key import cache_key
    from .review import strain_map

    out = []
    for item in strain_map(nb)["intermediates"]:
        if item["best_yield_pct"] is None:
            continue
        res = None
        for t in dict.fromkeys(("accurate", tier)):
            res = res or nb.cache_get(cache_key(item["smiles"], t))
        out.append(
            {
                "name": item["name"] or item["smiles"],
                "smiles": item["smiles"],
                "best_yield_pct": item["best_yield_pct"],
                "runs": item["runs"],
                "kind": (res or {}).get("kind") or item["kind"],
                "s_value": (res or {}).get("s_value"),
                "strain_kcal_mol": (res or {}).get("strain_kcal_mol"),
                "tier": (res or {}).get("tier"),
            }
        )
    return out


def map_panels(rows: list[dict], group: list[dict], tier: str) -> list[dict]:
    """One panel per kind: its candidates, the group's trapped intermediates of that kind, its
    own strain quantity and, for an accurate-tier campaign, its own class bands.

    Kinds are never drawn on one axis: an allene's ring strain and a bridgehead alkene's
    olefin strain are different quantities with different classes (stability.RULES).
    """
    from .stability import class_limits, quantity_of

    pts = [r for r in rows if r["strain_kcal_mol"] is not None and (r["s_value"] or r["ring_size"])]
    theirs = [g for g in group if g["strain_kcal_mol"] is not None and g["s_value"] is not None]
    panels = []
    for kind in sorted({r["kind"] for r in pts} | {g["kind"] for g in theirs}, key=str):
        mine = [r for r in pts if r["kind"] == kind]
        their = [g for g in theirs if g["kind"] == kind]
        bands = class_limits(kind) if tier == "accurate" else []
        finite = [v for low, high, _ in bands for v in (low, high) if v is not None]
        ys = [r["strain_kcal_mol"] for r in mine] + [g["strain_kcal_mol"] for g in their] + finite
        xs = [r["s_value"] or r["ring_size"] for r in mine] + [g["s_value"] for g in their]
        panels.append(
            {
                "kind": kind,
                "quantity": quantity_of(kind) or "strain",
                "points": mine,
                "group": their,
                "bands": bands,
                "y_range": (min(ys) - _PAD, max(ys) + _PAD),
                "x_range": (min(xs) - 0.5, max(xs) + 1.5),  # room on the right for the labels and class names
                "x_words": "S (sum of the bridges)" if any(r["s_value"] for r in mine) else "ring size",
            }
        )
    return panels


def _shade_classes(ax, bands: list, lo: float, hi: float) -> None:
    """The kind's class bands across the panel, each named at its right edge."""
    from .reports_strain import band_shade

    for k, (low, high, name) in enumerate(bands):
        y0, y1 = max(lo, low if low is not None else lo), min(hi, high if high is not None else hi)
        if y1 <= y0:
            continue
        ax.axhspan(y0, y1, color=band_shade(k, len(bands)), zorder=0)
        ax.text(0.99, (y0 + y1) / 2, name, transform=ax.get_yaxis_transform(), fontsize=7, color="#555", va="center", ha="right")


def _draw_map_panel(ax, panel: dict, tier: str) -> None:
    from matplotlib.ticker import MaxNLocator

    lo, hi = panel["y_range"]
    _shade_classes(ax, panel["bands"], lo, hi)
    for r in panel["points"]:
        x = r["s_value"] or r["ring_size"]
        ax.scatter([x], [r["strain_kcal_mol"]], s=40, color=_CLASS_COLOURS.get(r["stability_class"], _NO_CLASS), zorder=3)
        ax.annotate(r["name"], (x, r["strain_kcal_mol"]), fontsize=7, xytext=(4, 2), textcoords="offset points")
    for g in panel["group"]:
        ax.scatter([g["s_value"]], [g["strain_kcal_mol"]], marker="*", s=110, color="#5c2d6e", zorder=4)
        ax.annotate(
            f"{g['name']}: {g['best_yield_pct']:.0f} %",
            (g["s_value"], g["strain_kcal_mol"]),
            fontsize=7,
            xytext=(4, -9),
            textcoords="offset points",
            color="#5c2d6e",
        )
    ax.set_xlim(*panel["x_range"])
    ax.xaxis.set_major_locator(MaxNLocator(integer=True))
    ax.set_ylim(lo, hi)
    ax.set_xlabel(panel["x_words"], fontsize=8)
    ax.set_ylabel(f"{panel['quantity']} (kcal/mol, {tier} tier)", fontsize=8)
    ax.set_title(panel["kind"], fontsize=8)


def map_figure(rows: list[dict], group: list[dict], tier: str):
    """Strain against S, one panel per kind with its own classes: candidates coloured by class,
    the group's trapped ones as stars with their yields."""
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure

    panels = map_panels(rows, group, tier)
    fig = Figure(figsize=(max(6.6, 3.6 * len(panels) + 0.6), 3.8), dpi=100)
    for k, panel in enumerate(panels):
        _draw_map_panel(fig.add_subplot(1, len(panels), k + 1), panel, tier)
    if not panels:
        ax = fig.add_subplot(1, 1, 1)
        ax.text(0.5, 0.5, "no candidate has a strain yet", ha="center", va="center", transform=ax.transAxes)
        ax.set_axis_off()
    fig.suptitle(
        "Candidates (dots, coloured by class) and the group's trapped intermediates (stars, best yield)"
        if tier == "accurate"
        else "Fast-tier prescreen: no classes (grey); stars: the group's trapped intermediates",
        fontsize=8,
    )
    fig.tight_layout()
    return fig


def map_svg(rows: list[dict], group: list[dict], tier: str) -> str:
    buf = io.StringIO()
    map_figure(rows, group, tier).savefig(buf, format="svg")
    svg = buf.getvalue()
    return svg[svg.index("<svg") :]


def _num(v, spec: str = ".1f") -> str:
    return "—" if v is None else format(v, spec)


def table_html(rows: list[dict]) -> str:
    out = [
        "<table><tr><th>#</th><th>candidate</th><th>kind</th><th>S</th><th>trans ring</th><th>strain</th><th>class</th>"
        "<th>twist °</th><th>pyr. °</th><th>best precursor diastereomer</th><th>alignment</th><th>status</th></tr>"
    ]
    for r in rows:
        best = r["best_precursor"] or {}
        align = f"{best.get('verdict')} ({_num((best.get('aligned_fraction') or 0) * 100, '.0f')} % aligned)" if best else "—"
        out.append(
            f"<tr><td class='n'>{r['rank']}</td><td>{e(r['name'])}<br><code>{e(r['smiles'])}</code></td>"
            f"<td>{e(r['kind'] or '')}</td><td class='n'>{_num(r['s_value'], 'd')}</td>"
            f"<td class='n'>{_num(r['trans_ring_size'], 'd')}</td><td class='n'>{_num(r['strain_kcal_mol'])}</td>"
            f"<td>{e(r['stability_class'] or 'no class')}</td><td class='n'>{_num(r['twist_deg'])}</td>"
            f"<td class='n'>{_num(r['pyramidalization_deg'])}</td><td><code>{e(best.get('smiles') or '—')}</code></td>"
            f"<td>{e(align)}</td><td>{e(r['status'])}{(': ' + e(r['reason'])) if r['reason'] else ''}</td></tr>"
        )
    out.append("</table>")
    return "\n".join(out)


def campaign_report_html(nb, campaign_id: str) -> str:
    record = load_record(nb, campaign_id)
    if record is None:
        raise NotFoundError(f"no campaign {campaign_id} in this notebook", "run 'trapbook campaign SKELETON' first")
    rows = campaign_table(nb, record)
    group = group_points(nb, record["tier"])
    missing = [g["name"] for g in group if g["strain_kcal_mol"] is None]
    body = [
        f"<h1>Campaign {e(record['id'])}</h1>",
        f"<p class='meta'>{e(record['source'])} · {len(rows)} candidates · {e(record['tier'])} tier · "
        f"leaving groups {e(', '.join(record['leaving_groups']))} · alignment at {record['alignment_temperature_c']:g} °C</p>",
    ]
    if record["tier"] != "accurate":
        body.append(
            "<p class='warn'>Fast tier: an MMFF94 prescreen. No class is given; run the accurate tier before "
            "acting on any number.</p>"
        )
    body += ["<h2>Map</h2>", map_svg(rows, group, record["tier"])]
    if missing:
        body.append(
            f"<p class='note'>Trapped by the group but no cached strain (not on the map): {e(', '.join(missing))}; "
            "compute it with 'trapbook strain'.</p>"
        )
    body += ["<h2>Ranked candidates</h2>", table_html(rows)]
    failed = record.get("failed") or []
    if failed:
        body.append(
            "<h2>Failed</h2><ul>"
            + "".join(
                f"<li>{e(f['candidate'])} ({e(f['what'])}): <code>{e(f['smiles'])}</code> — {e(f['reason'] or '')}</li>"
                for f in failed
            )
            + "</ul>"
        )
    impossible = [(r["name"], i) for r in rows for i in r.get("impossible_diastereomers") or []]
    if impossible:
        body.append(
            "<h2>Precursor diastereomers that cannot exist</h2><ul>"
            + "".join(f"<li>{e(name)}: <code>{e(i['smiles'])}</code> — {e(i['why'])}</li>" for name, i in impossible)
            + "</ul>"
        )
    items = [("candidate", r["name"], r["smiles"]) for r in rows if r["kind"] != "unreadable"]
    items += [("best precursor", r["name"], r["best_precursor"]["smiles"]) for r in rows if r["best_precursor"]]
    body += ["<h2>Structures</h2>", _structures(items)]
    return _page(f"Campaign {record['id']}", body)
