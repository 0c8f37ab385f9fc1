"""The campaign map of a campaign mixing kinds: one panel per kind, each with its own strain
quantity and, at the accurate tier, its own class bands, never one kind's bands under another
kind's points."""

from __future__ import annotations

import pytest
from matplotlib.patches import Polygon, Rectangle

from trapbook import campaign as cp
from trapbook import stability
from trapbook.reports_campaign import campaign_report_html, map_figure

KINDS = (stability.BRIDGEHEAD, stability.ALLENE, stability.ALKYNE)
CLASS_NAMES = {name for kind in KINDS for _, _, name in stability.class_limits(kind)}


def _row(name: str, kind: str, strain: float, s_value: int | None, ring_size: int | None) -> dict:
    """A map row as campaign_table gives it (only the fields the map reads)."""
    return {
        "name": name,
        "kind": kind,
        "strain_kcal_mol": strain,
        "s_value": s_value,
        "ring_size": ring_size,
        "stability_class": stability.class_of(kind, strain),
    }


def _inside_every_band(kind: str) -> list[float]:
    """A strain inside each class of the kind: between its limits, or 1 beyond an open end
    (placed from the kind's own limits, so no number is made up here)."""
    out = []
    for low, high, _ in stability.class_limits(kind):
        out.append((low + high) / 2 if low is not None and high is not None else (high - 1 if low is None else low + 1))
    return out


def _bands_of(ax) -> list[tuple[float, float]]:
    """(bottom, top) of each horizontal span drawn on the panel."""
    out = []
    for patch in ax.patches:
        if isinstance(patch, Rectangle):
            out.append((round(patch.get_y(), 6), round(patch.get_y() + patch.get_height(), 6)))
        elif isinstance(patch, Polygon):
            ys = [y for _, y in patch.get_xy()]
            out.append((round(min(ys), 6), round(max(ys), 6)))
    return sorted(out)


def test_a_mixed_kind_campaign_shades_each_kinds_own_classes():
    rows = [
        _row(
            f"{kind[:3]}{k}",
            kind,
            strain,
            7 if kind == stability.BRIDGEHEAD else None,
            None if kind == stability.BRIDGEHEAD else 8,
        )
        for kind in KINDS
        for k, strain in enumerate(_inside_every_band(kind))
    ]
    fig = map_figure(rows, [], "accurate")
    panels = {ax.get_title(): ax for ax in fig.axes}
    assert set(panels) == set(KINDS)  # one panel per kind, none shared
    for kind, ax in panels.items():
        limits = stability.class_limits(kind)
        # Source: docs/sources.md "Campaign screen and map" and "Strain" — each kind's classes (Maier &
        # Schleyer for bridgehead alkenes; the cycloalkyne and cyclic-allene classes) as stability.class_limits holds them
        names = [t.get_text() for t in ax.texts if t.get_text() in CLASS_NAMES]
        assert names == [name for _, _, name in limits], kind
        edges = {edge for band in _bands_of(ax) for edge in band} - {round(v, 6) for v in ax.get_ylim()}
        assert edges == {v for low, high, _ in limits for v in (low, high) if v is not None}, kind
        assert stability.quantity_of(kind) in ax.get_ylabel()  # the kind's own quantity on its axis
        # every point of the panel is of its kind
        drawn = {t.get_text() for t in ax.texts} - set(names)
        assert drawn == {r["name"] for r in rows if r["kind"] == kind}


def test_a_fast_tier_map_keeps_kinds_apart_and_shades_nothing():
    # common practice, no source (docs/sources.md "Campaign screen and map"): a fast-tier number is never classed
    rows = [_row(f"{kind[:3]}", kind, _inside_every_band(kind)[0], None, 8) for kind in KINDS]
    for r in rows:
        r["stability_class"] = None
    fig = map_figure(rows, [], "fast")
    assert sorted(ax.get_title() for ax in fig.axes) == sorted(KINDS)
    assert all(_bands_of(ax) == [] for ax in fig.axes)


@pytest.fixture(scope="module")
def client():
    from distributed import Client

    from trapbook.chemistry import conformers

    threads = conformers.THREADS
    c = Client(processes=False, n_workers=1, threads_per_worker=1, dashboard_address=":0")
    yield c
    c.close()
    conformers.THREADS = threads


def test_a_mixed_kind_campaign_report_draws_a_panel_per_kind(notebook, client):
    """A real fast-tier campaign of bicyclo[2.2.2]octane with its allenes and alkynes: the page's
    map has as many panels as the table has kinds with a strain."""
    record = cp.plan("C1CC2CCC1CC2", tier="fast", kinds=("bridgehead", "allene", "alkyne"), precursors=False)
    cp.run_campaign(notebook, record, client=client)
    rows = cp.campaign_table(notebook, cp.load_record(notebook, record["id"]))
    kinds = {r["kind"] for r in rows if r["strain_kcal_mol"] is not None}
    assert kinds == set(KINDS)  # the skeleton gave all three kinds
    fig = map_figure(rows, [], "fast")
    assert sorted(ax.get_title() for ax in fig.axes) == sorted(kinds)
    page = campaign_report_html(notebook, record["id"])
    assert page.count("<svg") >= 1 and "no class" in page
