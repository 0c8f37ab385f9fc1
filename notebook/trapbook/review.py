"""Read a finished screen, and line outcomes up against strain across the notebook.

Two questions a PI asks: "which conditions won this screen?" and "where does trapping
stop working as the intermediate gets more strained?". Isolated and NMR yields are
never averaged together: a level's mean is given for each kind separately, and the
headline yield of a run (used for its cell in the matrix and to pick the best run) is
its isolated yield when there is one, otherwise its NMR yield, with the kind stated.

Strain numbers are read from the notebook's cache only; review never starts a strain
calculation (that is minutes of work and belongs to `trapbook strain`).
"""

from __future__ import annotations

from statistics import mean

from . import amounts
from .errors import TrapbookError
from .findings import findings_for
from .stability import BRIDGEHEAD, quantity_of, reading

#: The quantity bridgehead and ring alkenes are classed by (`stability.quantity_of`).
OLEFIN_QUANTITY = quantity_of(BRIDGEHEAD)

#: How the strain-vs-outcome ranking is computed; returned with every strain map.
RANKING_METHOD = (
    "Spearman rank correlation between each intermediate's strain (the quantity of its kind, kcal/mol: olefin "
    "strain for alkenes, ring strain for cycloalkynes and cyclic allenes, aryne strain for arynes) and its best "
    "yield over all its runs, within one kind only (the quantities of different kinds are not comparable); ties "
    "get their average rank; computed by hand (no fit is assumed). Negative rho: yields fall as strain rises."
)


def _yields(run) -> dict:
    """Isolated and NMR yield of the run's headline product, its dr and ee; empty when not worked out."""
    out = {"isolated_yield_pct": None, "nmr_yield_pct": None, "dr": None, "ee_pct": None, "product": None, "yield_problem": None}
    try:
        ys = amounts.product_yields(run)
    except TrapbookError as exc:
        out["yield_problem"] = exc.message
        return out
    if not ys:
        return out
    best = amounts.headline_product(ys)
    out.update(
        {
            "isolated_yield_pct": best.isolated_yield_pct,
            "nmr_yield_pct": best.nmr_yield_pct,
            "dr": best.dr,
            "ee_pct": best.ee_pct,
            "product": best.product,
        }
    )
    return out


def _summary(values: list[tuple[float, str]]) -> dict:
    """Mean and best of (yield, run id) pairs; None when there are none."""
    if not values:
        return {"n": 0, "mean_pct": None, "best_pct": None, "best_run": None}
    best = max(values, key=lambda v: (v[0], v[1]))
    return {"n": len(values), "mean_pct": mean(v[0] for v in values), "best_pct": best[0], "best_run": best[1]}


def _failed(row: dict) -> bool:
    y = row["yield_pct"]
    return row["status"] == "failed" or (row["status"] == "done" and (y is None or y == 0.0))


def review_screen(nb, screen_id: str) -> dict:
    """The screen as a table of runs by its varied conditions, per-level summaries, the best
    run, the failed runs with the findings that explain them, and a yield matrix."""
    screen = nb.get_screen(screen_id)
    runs = nb.screen_runs(screen)
    factors = dict(screen.factors)
    for run in runs:  # conditions a run names that the screen does not list
        for k, v in run.factors.items():
            factors.setdefault(k, [])
            if v not in factors[k]:
                factors[k].append(v)
    rows = [_row(nb, run, factors) for run in runs]
    failed = [
        {
            "run_id": r["run_id"],
            "title": r["title"],
            "status": r["status"],
            "yield_pct": r["yield_pct"],
            "findings": r["findings"] or [],
            "explained": bool(r["findings"]),
        }
        for r in rows
        if _failed(r)
    ]
    planned = [r["run_id"] for r in rows if r["status"] in ("planned", "running")]
    return {
        "screen_id": screen.id,
        "name": screen.name,
        "description": screen.description,
        "factors": factors,
        "rows": rows,
        "levels": _levels(rows, factors),
        "best": _best(rows),
        "failed": failed,
        "not_done": planned,
        "matrix": matrix(rows, factors),
        "yield_rule": "headline yield = isolated if recorded, else NMR; level means are also given per kind",
    }


def _row(nb, run, factors: dict[str, list[str]]) -> dict:
    """One run of the screen: its levels, yields (headline by `amounts.headline_yield`, the one
    rule every view uses) and the stop/warn findings that may explain it."""
    y = _yields(run)
    found = findings_for(nb, run)
    row = {
        "run_id": run.id,
        "title": run.title,
        "status": run.status,
        "factors": {k: run.factors.get(k) for k in factors},
        **y,
        "findings": [
            {"code": f.code, "severity": f.severity, "message": f.message} for f in found if f.severity in ("stop", "warn")
        ],
    }
    row["yield_pct"], row["yield_kind"] = (None, None) if y["yield_problem"] else amounts.headline_yield(run)
    return row


def _levels(rows: list[dict], factors: dict[str, list[str]]) -> dict[str, dict[str, dict]]:
    """Per level of each condition: its runs and the isolated, NMR and headline summaries kept apart."""
    levels: dict[str, dict[str, dict]] = {}
    for name, lv in factors.items():
        levels[name] = {}
        for level in lv:
            mine = [r for r in rows if r["factors"].get(name) == level]
            iso = [(r["isolated_yield_pct"], r["run_id"]) for r in mine if r["isolated_yield_pct"] is not None]
            nmr = [(r["nmr_yield_pct"], r["run_id"]) for r in mine if r["nmr_yield_pct"] is not None]
            head = [(r["yield_pct"], r["run_id"]) for r in mine if r["yield_pct"] is not None]
            levels[name][level] = {
                "runs": [r["run_id"] for r in mine],
                "isolated": _summary(iso),
                "nmr": _summary(nmr),
                "headline": _summary(head),
            }
    return levels


def _best(rows: list[dict]) -> dict | None:
    """The run with the highest headline yield, with a note when the screen mixes yield kinds."""
    done = [r for r in rows if r["yield_pct"] is not None]
    if not done:
        return None
    best = max(done, key=lambda r: (r["yield_pct"], r["run_id"]))
    kinds = {r["yield_kind"] for r in done if r["yield_kind"] in ("isolated", "NMR")}
    return {
        "run_id": best["run_id"],
        "title": best["title"],
        "factors": best["factors"],
        "yield_pct": best["yield_pct"],
        "yield_kind": best["yield_kind"],
        "note": None
        if len(kinds) == 1
        else "the screen mixes isolated and NMR yields; the best run is picked on each run's headline yield",
    }


def matrix(rows: list[dict], factors: dict[str, list[str]]) -> dict | None:
    """Headline yields in a grid of the first two varied conditions (the mean where a cell
    holds several runs, e.g. when a third condition is also varied)."""
    names = list(factors)
    if not names:
        return None
    row_f = names[0]
    col_f = names[1] if len(names) > 1 else None
    row_levels = factors[row_f]
    col_levels = factors[col_f] if col_f else [""]
    cells = []
    for rl in row_levels:
        line = []
        for cl in col_levels:
            mine = [r for r in rows if r["factors"].get(row_f) == rl and (col_f is None or r["factors"].get(col_f) == cl)]
            vals = [r["yield_pct"] for r in mine if r["yield_pct"] is not None]
            line.append(
                {
                    "yield_pct": mean(vals) if vals else None,
                    "n": len(vals),
                    "runs": [r["run_id"] for r in mine],
                    "kinds": sorted({r["yield_kind"] for r in mine if r["yield_kind"]}),
                }
            )
        cells.append(line)
    return {
        "rows": row_f,
        "columns": col_f,
        "row_levels": row_levels,
        "column_levels": col_levels if col_f else [],
        "cells": cells,
        "averaged_over": names[2:],
    }


# --- strain against outcome ------------------------------------------------------------------------


def _ranks(values: list[float]) -> list[float]:
    """1-based ranks, ties sharing their average rank."""
    order = sorted(range(len(values)), key=lambda i: values[i])
    ranks = [0.0] * len(values)
    i = 0
    while i < len(order):
        j = i
        while j + 1 < len(order) and values[order[j + 1]] == values[order[i]]:
            j += 1
        for k in range(i, j + 1):
            ranks[order[k]] = (i + j) / 2.0 + 1.0
        i = j + 1
    return ranks


def spearman(x: list[float], y: list[float]) -> float | None:
    """Spearman's rho as the Pearson correlation of the ranks (exact with ties); None if undefined."""
    if len(x) != len(y) or len(x) < 3:
        return None
    rx, ry = _ranks(x), _ranks(y)
    mx, my = mean(rx), mean(ry)
    sxy = sum((a - mx) * (b - my) for a, b in zip(rx, ry))
    sxx = sum((a - mx) ** 2 for a in rx)
    syy = sum((b - my) ** 2 for b in ry)
    if sxx == 0 or syy == 0:
        return None
    return sxy / (sxx * syy) ** 0.5


def _canonical(smiles: str) -> str:
    from .chemistry import molecules

    try:
        return molecules.canonical(smiles)
    except TrapbookError:
        return smiles


def shown_strain(nb, run) -> dict | None:
    """The cached strain to place a run's intermediate on the map: accurate tier, else the
    fast-tier prescreen (drawn, but never classed: `stability.judge` classes accurate results only)."""
    from .chemistry.strain_key import cache_key
    from .strain_link import intermediate_of, strain_for_run

    smiles = intermediate_of(run)
    if smiles is None:
        return None
    found = strain_for_run(nb, run)
    if found is None:
        found = nb.cache_get(cache_key(smiles, "fast"))
    return found


def strain_map(nb) -> dict:
    """For each intermediate of the notebook: its cached strain (its kind's own quantity) and class,
    and the best yield per trap."""
    from .strain_link import intermediate_of

    groups: dict[str, dict] = {}
    for run in nb.iter_runs(include_withdrawn=False):
        smi = intermediate_of(run)
        if not smi:
            continue
        key = _canonical(smi)
        g = groups.setdefault(key, {"smiles": key, "name": run.intermediate_name, "runs": [], "traps": {}, "strain": None})
        g["name"] = g["name"] or run.intermediate_name
        g["runs"].append(run.id)
        if g["strain"] is None:
            g["strain"] = shown_strain(nb, run)
        if run.status not in ("done", "failed"):
            continue
        try:
            y, kind = amounts.headline_yield(run)
        except TrapbookError:  # a yield that cannot be worked out has no point on the map ('yield-unknown' says why)
            y, kind = None, None
        for trap in run.lines_by_role("trap") or [None]:
            tname = trap.name if trap is not None else "(no trap)"
            cur = g["traps"].get(tname)
            if y is not None and (cur is None or cur["yield_pct"] is None or y > cur["yield_pct"]):
                g["traps"][tname] = {"yield_pct": y, "yield_kind": kind, "run_id": run.id}
            elif cur is None:
                g["traps"][tname] = {"yield_pct": None, "yield_kind": None, "run_id": run.id}
    out = []
    for g in groups.values():
        seen = reading(g["strain"])
        ys = [t["yield_pct"] for t in g["traps"].values() if t["yield_pct"] is not None]
        out.append(
            {
                "smiles": g["smiles"],
                "name": g["name"],
                "runs": g["runs"],
                "kind": seen["kind"],
                "strain_quantity": seen["strain_quantity"],
                "strain_kcal_mol": seen["strain_kcal_mol"],
                "strain_tier": seen["tier"],
                # kept for views that have not moved to strain_kcal_mol yet: the olefin strain of alkenes only
                "olefin_strain_kcal_mol": seen["strain_kcal_mol"] if seen["strain_quantity"] == OLEFIN_QUANTITY else None,
                "stability_class": seen["stability_class"],
                "needs_trap": seen["needs_trap"],
                "strain_method": (g["strain"] or {}).get("method") or seen["tier"],
                "strain_status": "cached" if g["strain"] else "not computed",
                "best_yield_pct": max(ys) if ys else None,
                "traps": [{"trap": k, **v} for k, v in sorted(g["traps"].items())],
            }
        )
    out.sort(key=map_order)
    return {
        "intermediates": out,
        "ranking": rank_by_kind(out),
        "missing_strain": [e["smiles"] for e in out if e["strain_status"] == "not computed"],
    }


#: The fields of a strain-map entry that come from its intermediate's cached strain (merged as one).
STRAIN_FIELDS = (
    "kind",
    "strain_quantity",
    "strain_kcal_mol",
    "strain_tier",
    "olefin_strain_kcal_mol",
    "stability_class",
    "needs_trap",
    "strain_method",
    "strain_status",
)


def map_order(entry: dict) -> tuple:
    """Intermediates with a strain first, grouped by kind, least strained first."""
    value = entry["strain_kcal_mol"]
    return (value is None, entry["kind"] or "", value if value is not None else 0.0, entry["smiles"])


def rank_by_kind(entries: list[dict]) -> dict:
    """Spearman's rho of strain against best yield for each kind, and overall only when one kind has points.

    Numbers of different kinds measure different things (an aryne's strain is not an olefin
    strain), so they are never ranked together.
    """
    by_kind: dict[str, list[tuple[float, float]]] = {}
    for e in entries:
        if e["strain_kcal_mol"] is not None and e["best_yield_pct"] is not None:
            by_kind.setdefault(e["kind"], []).append((e["strain_kcal_mol"], e["best_yield_pct"]))
    kinds = [
        {
            "kind": k,
            "strain_quantity": quantity_of(k),
            "n": len(p),
            "spearman_rho": spearman([x for x, _ in p], [y for _, y in p]),
        }
        for k, p in sorted(by_kind.items())
    ]
    only = kinds[0] if len(kinds) == 1 else None
    rho = only["spearman_rho"] if only else None
    if rho is not None:
        note = None
    elif len(kinds) > 1:
        note = "intermediates of different kinds carry different strain quantities: rho is given per kind"
    else:
        note = "needs at least 3 intermediates with both a cached strain and a yield, and not all tied"
    return {
        "method": RANKING_METHOD,
        "n": only["n"] if only else sum(k["n"] for k in kinds),
        "spearman_rho": rho,
        "kind": only["kind"] if only else None,
        "by_kind": kinds,
        "note": note,
    }
