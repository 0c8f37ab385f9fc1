"""The strain-against-outcome plot: one panel per kind of intermediate.

Each kind has its own strain quantity (olefin strain, ring strain, aryne strain) and its own
classes, so an aryne's number is never drawn on an olefin-strain axis or against
bridgehead-alkene bands. Each panel shades the classes of its kind from
`stability.class_limits`, and only when it holds an accurate-tier point: a fast-tier
prescreen is drawn hollow and labelled, but never set against classes it may not claim.
"""

from __future__ import annotations

import io

#: Shades of the stability classes, from no trap needed (green) to trapping only (red).
_CLASS_SHADES = ("#dfeedd", "#e8f0e0", "#f6ebcf", "#f3dede")
_TRAP_COLOURS = ("#5c2d6e", "#c0892f", "#3f6f5a", "#8a3b3b", "#2f4f7a")
_MARKERS = "osD^vP*X"
#: margin around the points and class limits of a panel, kcal/mol
_PAD = 3.0


def plot_panels(smap: dict) -> list[dict]:
    """One panel per kind with a strain number: its points, its axis words and the bands it may draw."""
    from .stability import class_limits

    by_kind: dict[str, list[dict]] = {}
    for x in smap["intermediates"]:
        if x["strain_kcal_mol"] is not None:
            by_kind.setdefault(x["kind"], []).append(x)
    rho = {k["kind"]: k for k in smap["ranking"].get("by_kind") or []}
    panels = []
    for kind, points in sorted(by_kind.items()):
        limits = class_limits(kind)
        finite = [v for low, high, _ in limits for v in (low, high) if v is not None]
        xs = [x["strain_kcal_mol"] for x in points]
        accurate = any(x["strain_tier"] == "accurate" for x in points)
        panels.append(
            {
                "kind": kind,
                "quantity": points[0]["strain_quantity"],
                "points": points,
                "bands": limits if accurate else [],
                "x_range": (min(xs + finite) - _PAD, max(xs + finite) + _PAD),
                "rho": rho.get(kind),
            }
        )
    return panels


def band_shade(k: int, n_bands: int) -> str:
    """The shade of a kind's k-th class band of n: counted from the top, so the last band (the
    one that needs a trap most) is always red, whatever the number of classes of the kind."""
    return _CLASS_SHADES[min(k + len(_CLASS_SHADES) - n_bands, len(_CLASS_SHADES) - 1)]


def _shade(ax, bands: list, lo: float, hi: float) -> None:
    for k, (low, high, name) in enumerate(bands):
        x0, x1 = max(lo, low if low is not None else lo), min(hi, high if high is not None else hi)
        if x1 <= x0:
            continue
        ax.axvspan(x0, x1, color=band_shade(k, len(bands)), zorder=0)
        # upright at the top of its band, so narrow neighbouring bands do not write over each other
        ax.text((x0 + x1) / 2, 108, name, fontsize=6, color="#555", rotation=90, ha="center", va="top", zorder=1)


def _draw_panel(ax, panel: dict, traps: list[str], highlight: str | None) -> None:
    lo, hi = panel["x_range"]
    _shade(ax, panel["bands"], lo, hi)
    for k, trap in enumerate(traps):
        colour = _TRAP_COLOURS[k % len(_TRAP_COLOURS)]
        for accurate in (True, False):
            pts = [
                (x["strain_kcal_mol"], t["yield_pct"])
                for x in panel["points"]
                for t in x["traps"]
                if t["trap"] == trap and t["yield_pct"] is not None and (x["strain_tier"] == "accurate") == accurate
            ]
            if pts:
                ax.scatter(
                    [p[0] for p in pts],
                    [p[1] for p in pts],
                    marker=_MARKERS[k % len(_MARKERS)],
                    s=36,
                    facecolors=colour if accurate else "none",
                    edgecolors=colour,
                    zorder=3,
                )
    for x in panel["points"]:
        if x["best_yield_pct"] is not None:
            label = (x["name"] or x["smiles"]) + ("" if x["strain_tier"] == "accurate" else " (prescreen)")
            ax.annotate(
                label,
                (x["strain_kcal_mol"], x["best_yield_pct"]),
                fontsize=6,
                xytext=(3, 3),
                textcoords="offset points",
                fontweight="bold" if highlight and x["smiles"] == highlight else "normal",
            )
    ax.set_xlim(lo, hi)
    ax.set_xlabel(f"{panel['quantity'].split(' (')[0]} (kcal/mol)", fontsize=7)
    rho = panel["rho"]
    ax.set_title(
        panel["kind"]
        + (f"\nSpearman ρ = {rho['spearman_rho']:.2f} (n = {rho['n']})" if rho and rho["spearman_rho"] is not None else ""),
        fontsize=8,
    )


def _legend(ax, panels: list[dict], traps: list[str]) -> None:
    """One entry per trap, and one saying what a hollow marker is, beside the last panel."""
    from matplotlib.lines import Line2D

    handles = [
        Line2D([], [], linestyle="", marker=_MARKERS[k % len(_MARKERS)], color=_TRAP_COLOURS[k % len(_TRAP_COLOURS)], label=trap)
        for k, trap in enumerate(traps)
    ]
    if any(x["strain_tier"] != "accurate" for p in panels for x in p["points"]):
        handles.append(
            Line2D(
                [],
                [],
                linestyle="",
                marker="o",
                markerfacecolor="none",
                color="#555",
                label="hollow: fast prescreen, not classed",
            )
        )
    if handles:
        ax.legend(handles=handles, fontsize=6, loc="upper left", bbox_to_anchor=(1.02, 1.0), borderaxespad=0)


def strain_plot_svg(smap: dict, highlight: str | None = None) -> str:
    """Best yield against strain per intermediate and trap, one panel per kind with its own classes shaded."""
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure

    panels = plot_panels(smap)
    fig = Figure(figsize=(max(6.4, 3.2 * len(panels) + 2.2), 3.8), dpi=100)
    if panels:
        axes = fig.subplots(1, len(panels), sharey=True, squeeze=False)[0]
        traps = sorted({t["trap"] for p in panels for x in p["points"] for t in x["traps"]})
        for ax, panel in zip(axes, panels):
            _draw_panel(ax, panel, traps, highlight)
        _legend(axes[-1], panels, traps)
    else:
        ax = fig.add_subplot(1, 1, 1)
        entries = smap["intermediates"]
        names = [x["name"] or x["smiles"] for x in entries]
        ax.bar(range(len(names)), [x["best_yield_pct"] or 0.0 for x in entries], color="#c0892f")
        ax.set_xticks(range(len(names)))
        ax.set_xticklabels(names, rotation=20, fontsize=6, ha="right")
        ax.set_title("Best yield per intermediate — strain not computed yet (run 'trapbook strain')", fontsize=8)
        axes = [ax]
    for ax in axes:
        ax.set_ylim(0, 110)
    axes[0].set_ylabel("best yield (%)")
    fig.tight_layout()
    buf = io.StringIO()
    fig.savefig(buf, format="svg")
    svg = buf.getvalue()
    return svg[svg.index("<svg") :]
