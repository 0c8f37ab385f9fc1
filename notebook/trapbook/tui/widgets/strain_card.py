"""The strain card: how strained the run's intermediate is, and whether the precursor can fire.

Every number and class comes through `stability.reading`, so the card shows each kind's own
quantity (an aryne's strain is never labelled an olefin strain), a fast-tier result is a
labelled prescreen with no class, and the highlight follows "needs a trap", which is what
the chemist acts on.
"""

from __future__ import annotations

from rich.table import Table
from rich.text import Text
from textual.widgets import Static

from ...display import fmt_fixed
from ...stability import reading
from ..text import shown
from ..theme import tone

#: Distortion angles a result gives only for twisted alkenes; arynes and alkynes leave them None.
ANGLE_ROWS = (("S value", "s_value", None), ("twist τ", "twist_deg", "°"), ("pyramid. χ", "pyramidalization_deg", "°"))


def _strain_rows(t: Table, strain: dict) -> None:
    r = reading(strain)
    t.add_row("kind", r["kind"] or "—")
    quantity = r["strain_quantity"] or "strain"
    value = fmt_fixed(r["strain_kcal_mol"], 1, " kcal/mol")
    t.add_row("strain", Text(f"{quantity}: {value}", overflow="fold"))
    if r["prescreen"]:
        t.add_row(
            "class",
            Text(
                f"none: {r['tier'] or '?'}-tier prescreen, ctrl+g for the accurate tier",
                style=f"italic {tone('warn')}",
                overflow="fold",
            ),
        )
    else:
        cls = r["stability_class"] or "—"
        style = f"bold {tone('attention')}" if r["needs_trap"] else "bold"
        t.add_row("class", Text(cls + ("  (needs a trap)" if r["needs_trap"] else ""), style=style, overflow="fold"))
    for label, key, unit in ANGLE_ROWS:
        if strain.get(key) is not None:
            t.add_row(label, str(strain[key]) if unit is None else fmt_fixed(strain[key], 1, unit))
    rough = " (rough)" if strain.get("rough") else ""
    t.add_row("method", Text(f"{strain.get('method', '?')}{rough}", style="italic", overflow="fold"))
    if strain.get("message"):
        t.add_row("", Text(strain["message"], style="italic", overflow="fold"))


def card(smiles: str | None, strain: dict | None, alignment: dict | None, note: str | None = None, origin: str | None = None):
    """The card's table; `origin` says how the intermediate was found (recorded, or derived and how)."""
    if not smiles:
        return Text(
            "No intermediate: give its SMILES on the Run tab, or a silyl precursor line it can be derived from.",
            style=f"italic {tone('muted')}",
        )
    t = Table.grid(padding=(0, 1))
    t.add_column(style=f"{tone('muted')}", width=13)
    t.add_column()
    t.add_row("intermediate", Text(shown(smiles), overflow="fold"))
    if origin:
        t.add_row("found", Text(shown(origin), style="italic", overflow="fold"))
    if strain:
        _strain_rows(t, strain)
    else:
        t.add_row("strain", Text("not computed — ctrl+g computes it", style="italic"))
    if alignment:
        t.add_row("Si–C–C–X", f"{fmt_fixed(alignment.get('weighted_dihedral_deg'), 1, '°')} (weighted)")
        t.add_row("alignment", Text(str(alignment.get("verdict", "—")), overflow="fold"))
    if note:
        t.add_row("", Text(note, style=f"italic {tone('warn')}", overflow="fold"))
    return t


class StrainCard(Static):
    def show(
        self, smiles: str | None, strain: dict | None, alignment: dict | None, note: str | None = None, origin: str | None = None
    ) -> None:
        self.update(card(smiles, strain, alignment, note, origin))
