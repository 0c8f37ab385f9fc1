"""The printable map of a campaign: strain against S, coloured by class, with the group's
trapped intermediates overlaid with their best yields, the ranked table and the structures.

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
_BAND_SHADES = ("#e3f0e0", "#eef3e4", "#f7edd5", "#f4e0e0")
_NO_CLASS = "#7a7a7a"


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
                "s_value": (res or {}).get("s_value"),
                "strain_kcal_mol": (res or {}).get("strain_kcal_mol"),
                "tier": (res or {}).get("tier"),
            }
        )
    return out


def _band_kind(rows: list[dict]) -> str | None:
    kinds = [r["kind"] for r in rows if r["strain_kcal_mol"] is not None]
    return max(set(kinds), key=kinds.count) if kinds else None


def map_svg(rows: list[dict], group: list[dict], tier: str) -> str:
    """Strain against S: candidates coloured by class, the group's trapped ones as stars with their yields."""
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure
    from matplotlib.ticker import MaxNLocator

    from .stability import class_limits

    fig = Figure(figsize=(6.6, 3.8), dpi=100)
    ax = fig.add_subplot(1, 1, 1)
    pts = [r for r in rows if r["strain_kcal_mol"] is not None and (r["s_value"] or r["ring_size"])]
    theirs = [g for g in group if g["strain_kcal_mol"] is not None and g["s_value"] is not None]
    ys = [r["strain_kcal_mol"] for r in pts] + [g["strain_kcal_mol"] for g in theirs] + [0.0, 30.0]
    lo, hi = min(ys) - 4, max(ys) + 4
    kind = _band_kind(rows)
    if tier == "accurate" and kind:
        for k, (low, high, name) in enumerate(class_limits(kind)):
            y0, y1 = max(lo, low if low is not None else lo), min(hi, high if high is not None else hi)
            if y1 > y0:
                ax.axhspan(y0, y1, color=_BAND_SHADES[k % len(_BAND_SHADES)], zorder=0)
                ax.text(
                    0.99,
                    (y0 + y1) / 2,
                    name,
                    transform=ax.get_yaxis_transform(),
                    fontsize=7,
                    color="#555",
                    va="center",
                    ha="right",
                )
    for r in pts:
        colour = _CLASS_COLOURS.get(r["stability_class"], _NO_CLASS)
        ax.scatter([r["s_value"] or r["ring_size"]], [r["strain_kcal_mol"]], s=40, color=colour, zorder=3)
        ax.annotate(
            r["name"],
            (r["s_value"] or r["ring_size"], r["strain_kcal_mol"]),
            fontsize=7,
            xytext=(4, 2),
            textcoords="offset points",
        )
    for g in theirs:
        ax.scatter([g["s_value"]], [g["strain_kcal_mol"]], marker="*", s=110, color="#5c2d6e", zorder=4)
        ax.annotate(
            f"{g['name']}: {g['best_yield_pct']:.0f} %",
            (g["s_value"], g["strain_kcal_mol"]),
            fontsize=7,
            xytext=(4, -9),
            textcoords="offset points",
            color="#5c2d6e",
        )
    xs = [r["s_value"] or r["ring_size"] for r in pts] + [g["s_value"] for g in theirs] or [5, 9]
    ax.set_xlim(min(xs) - 0.5, max(xs) + 1.5)  # room on the right for the labels and class names
    ax.xaxis.set_major_locator(MaxNLocator(integer=True))
    ax.set_ylim(lo, hi)
    ax.set_xlabel("S (sum of the bridges; ring size for allenes and alkynes)")
    ax.set_ylabel(f"strain (kcal/mol, {tier} tier)")
    ax.set_title(
        "Candidates (dots, coloured by class) and the group's trapped intermediates (stars, best yield)"
        if tier == "accurate"
        else "Fast-tier prescreen: no classes (grey); stars: the group's trapped intermediates",
        fontsize=8,
    )
    fig.tight_layout()
    buf = io.StringIO()
    fig.savefig(buf, format="svg")
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
    items = [("candidate", r["name"], r["smiles"]) for r in rows if r["kind"] != "unreadable"]
    items += [("best precursor", r["name"], r["best_precursor"]["smiles"]) for r in rows if r["best_precursor"]]
    body += ["<h2>Structures</h2>", _structures(items)]
    return _page(f"Campaign {record['id']}", body)
