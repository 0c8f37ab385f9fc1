"""The expected products of a run, to pick one as a product result.

The products come from `trapping.products_report`, the same answer `trapbook products`
gives: the adducts of each trap with the run's intermediate and the by-products its
precursor can give. Working them out (stereoisomers, force-field energies) can take seconds,
so it runs in a worker while the dialog says so; Enter picks one, Esc picks none.
"""

from __future__ import annotations

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Label, OptionList, Static
from textual.widgets.option_list import Option

from ...errors import TrapbookError
from ..text import shown
from ..theme import tone


def product_line_name(product: dict) -> str:
    """A short name for a product line: '<trap> <reaction> adduct, <stereo>', or the by-product's words."""
    if product.get("kind") == "adduct":
        name = f"{product.get('trap_label') or product.get('trap')} {product.get('reaction') or ''} adduct".replace("  ", " ")
        return f"{name}, {product['stereo']}" if product.get("stereo") else name
    words = str(product.get("words") or product.get("smiles") or "product")
    return words.removeprefix("by-product: ").split(",")[0][:80]


def option_text(product: dict) -> Text:
    out = Text(shown(product.get("words") or product_line_name(product)), style="bold")
    formula = product.get("formula")
    out.append(f"\n  {shown(product['smiles'])}" + (f"  {formula}" if formula else ""), style=tone("muted"))
    return out


class ExpectedProductsDialog(ModalScreen[dict | None]):
    """Pick one of the run's expected products; the answer is the product dict, or None."""

    BINDINGS = [Binding("escape", "cancel", "Cancel")]

    def __init__(self, run):
        super().__init__()
        self.run = run
        self.products: list[dict] = []

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog", id="expected-box"):
            yield Label("Expected products of this run", classes="dialog-title")
            yield Static(Text("working them out (adducts, stereoisomers, by-products)…", style="italic"), id="expected-state")
            yield OptionList(id="expected-list")
            yield Static("Enter picks one as a product result · Esc goes back", classes="dialog-hint")

    def on_mount(self) -> None:
        self.query_one("#expected-list").display = False
        self.work_out()

    @work(thread=True, exclusive=True, group="expected-products", exit_on_error=False)
    def work_out(self) -> None:
        from ...trapping import products_report

        try:
            report = products_report(self.run)
        except TrapbookError as exc:
            self.app.call_from_thread(self.show_problem, exc)
            return
        self.app.call_from_thread(self.show_products, report)

    def show_problem(self, exc: TrapbookError) -> None:
        words = Text(exc.message, style=tone("stop"))
        if exc.hint:
            words.append(f"\n{exc.hint}", style="italic")
        self.query_one("#expected-state", Static).update(words)

    def show_products(self, report: dict) -> None:
        self.products = list(report.get("products") or [])
        state = self.query_one("#expected-state", Static)
        if not self.products:
            state.update(Text("No product is expected from this run's intermediate and traps.", style="italic"))
            return
        origin = report.get("intermediate_origin")
        state.update(
            Text(
                f"intermediate {shown(report.get('intermediate') or '')}" + (f" ({shown(origin)})" if origin else ""),
                style=tone("muted"),
                overflow="fold",
            )
        )
        options = self.query_one("#expected-list", OptionList)
        options.add_options([Option(option_text(p), id=str(i)) for i, p in enumerate(self.products)])
        options.display = True
        options.highlighted = 0
        options.focus()

    @on(OptionList.OptionSelected, "#expected-list")
    def _picked(self, event: OptionList.OptionSelected) -> None:
        self.dismiss(self.products[int(event.option.id)])

    def action_cancel(self) -> None:
        self.dismiss(None)
