"""The strain card: how strained the run's intermediate is, and whether the precursor can fire."""

from __future__ import annotations

from rich.table import Table
from rich.text import Text
from textual.widgets import Static

from ...display import fmt_fixed
from ..text import shown
from ..theme import tone


def card(smiles: str | None, strain: dict | None, alignment: dict | None, note: str | None = None):
    if not smiles:
        return Text("No intermediate SMILES on this run (Run tab).", style=f"italic {tone('muted')}")
    t = Table.grid(padding=(0, 1))
    t.add_column(style=f"{tone('muted')}", width=13)
    t.add_column()
    t.add_row("intermediate", Text(shown(smiles), overflow="fold"))
    if strain:
        rough = " (rough)" if strain.get("rough") else ""
        t.add_row("S value", str(strain.get("s_value") if strain.get("s_value") is not None else "—"))
        t.add_row("OS", fmt_fixed(strain.get("olefin_strain_kcal_mol"), 1, " kcal/mol"))
        cls = strain.get("stability_class") or "—"
        t.add_row("class", Text(cls, style=f"bold {tone('attention')}" if cls == "unstable" else "bold"))
        t.add_row("twist τ", fmt_fixed(strain.get("twist_deg"), 1, "°"))
        t.add_row("pyramid. χ", fmt_fixed(strain.get("pyramidalization_deg"), 1, "°"))
        t.add_row("method", Text(f"{strain.get('method', '?')}{rough}", style="italic", overflow="fold"))
        if strain.get("message"):
            t.add_row("", Text(strain["message"], style="italic", overflow="fold"))
    else:
        t.add_row("strain", Text("not computed — ctrl+g computes it", style="italic"))
    if alignment:
        t.add_row("Si–C–C–X", f"{fmt_fixed(alignment.get('weighted_dihedral_deg'), 1, '°')} (weighted)")
        t.add_row("alignment", Text(str(alignment.get("verdict", "—")), overflow="fold"))
    if note:
        t.add_row("", Text(note, style=f"italic {tone('warn')}", overflow="fold"))
    return t


class StrainCard(Static):
    def show(self, smiles: str | None, strain: dict | None, alignment: dict | None, note: str | None = None) -> None:
        self.update(card(smiles, strain, alignment, note))
