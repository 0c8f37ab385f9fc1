"""The Workbench's Outcome tab (f5): one result row per product, the run-wide outcome, the yields,
and the spectrum behind an NMR yield.

Each product result (isolated mass, qNMR integrals, dr, er, ee) is written one row at a
time and its yield worked out while it is typed; `outcome_form.product_entry` turns a row's
text into the stored shape. The tab owns its form and its keys: Enter posts `ResultKept`,
the run-wide boxes post `RunOutcomeTyped` as they are typed, ctrl+t offers the expected
products and posts `ExpectedPicked`, and removing or moving a row posts `RowRemoved` /
`RowMoved` with the rows "products". The screen changes the run and shows the tab the run
again (`show`).
"""

from __future__ import annotations

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical, VerticalScroll
from textual.suggester import SuggestFromList
from textual.widgets import DataTable, Input, Static

from ...errors import TrapbookError
from .. import forms
from ..messages import ExpectedPicked, ResultKept, RunOutcomeTyped
from ..outcome_form import PRODUCT_FIELDS, RUN_OUTCOME_KEYS, form_values, product_entry, with_result
from ..text import clip, qtext
from ..theme import tone
from .field import Field
from .row_tabs import RowsTab
from .spectrum_plot import SpectrumPlot

PRODUCT_CHECKS = {
    "isolated_mass": forms.check_kind("mass", "a mass"),
    "standard_integral": forms.check_number(positive=True),
    "standard_protons": forms.check_number(positive=True, integer=True),
    "integral": forms.check_number(),
    "protons": forms.check_number(positive=True, integer=True),
    "dr": forms.check_ratio,
    "er": forms.check_ratio,
    "ee": forms.check_number(),
}
#: The outcome of the run as a whole, below the product rows (kept as typed, no Enter needed).
OUTCOME_FIELDS = (
    ("recovered_precursor", "Recovered", "mass of precursor recovered", forms.check_kind("mass", "a mass"), None),
    ("observations", "Observations", "colour change, gas, solids, TLC…", None, None),
)
assert tuple(k for k, *_ in OUTCOME_FIELDS) == RUN_OUTCOME_KEYS  # the boxes are the keys the run takes
PRODUCT_COLUMNS = (
    ("#", 3),
    ("product", 16),
    ("isolated", 9),
    ("yield", 7),
    ("qNMR ∫P:∫IS", 14),
    ("NMR", 7),
    ("dr", 7),
    ("ee", 9),
)


def yield_words(y) -> str:
    """One product's yields and selectivity, as a chemist would say them."""
    from ...phrases import yield_phrases

    return ", ".join(yield_phrases(y, digits=1, with_mmol=True))


def yields_each(run, table) -> list[tuple[str, object, str | None]]:
    """(product, ProductYield or None, why not) for every result, each worked out on its own,
    so one product without a SMILES does not hide the yields of the others."""
    from ... import amounts

    if run is None or run.outcome is None:
        return []
    out = []
    for res in run.outcome.products:
        alone = run.model_copy(update={"outcome": run.outcome.model_copy(update={"products": [res]})})
        try:
            out.append((res.product, amounts.product_yields(alone, table)[0], None))
        except TrapbookError as exc:
            out.append((res.product, None, exc.message))
    return out


class OutcomeTab(RowsTab):
    """The product results table and the form that writes one; the run-wide outcome; the yields;
    the spectrum. `index` is the result being changed (None: the form writes a new one)."""

    BINDINGS = [
        Binding("ctrl+t", "expected", "Expected products"),
    ]
    rows_key = "products"

    def __init__(self, title: str, **kwargs) -> None:
        super().__init__(title, **kwargs)
        self.index: int | None = None
        self.data: dict = {}
        self.run = None
        self.amount_table = None
        self.problem: str | None = None
        self._names: list[str] | None = None
        self._shown: dict[str, str] = {}
        self._rows: list[list] | None = None
        self._loading = False

    def compose(self) -> ComposeResult:
        with VerticalScroll(id="outcome-scroll"):
            yield DataTable(id="products", cursor_type="row", cell_padding=0)
            yield Static("", id="prod-head", classes="form-head")
            with Vertical(classes="form"):
                for key, label, ph in PRODUCT_FIELDS:
                    yield Field(label, f"prod-{key}", ph, PRODUCT_CHECKS.get(key), None)
            yield Static("", id="prod-msg", classes="form-msg")
            yield Static("For the run as a whole", classes="form-head form-title")
            with Vertical(classes="form"):
                for key, label, ph, check, sugg in OUTCOME_FIELDS:
                    yield Field(label, f"out-{key}", ph, check, sugg)
            yield Static("", id="yields")
            yield SpectrumPlot(id="spectrum")

    def on_mount(self) -> None:
        products = self.query_one("#products", DataTable)
        for label, width in PRODUCT_COLUMNS:
            products.add_column(label, width=width)

    # --- what the screen hands it and asks of it ---------------------------------------
    def show(self, data: dict, run, amounts_table, problem: str | None, run_id: str | None) -> None:
        """The run as the screen holds it: the results with their yields, and the spectrum behind them."""
        self.data, self.run, self.amount_table, self.problem = data, run, amounts_table, problem
        names = self.product_lines()
        if names != self._names:
            self._names = names
            self.query_one("#prod-product", Input).suggester = SuggestFromList(names, case_sensitive=False) if names else None
        self._fill_products()
        self._show_yields()
        self.query_one(SpectrumPlot).show(run, run_id)

    def fill(self, data: dict) -> None:
        """The run-wide boxes from the run (on opening it), quietly."""
        out = data.get("outcome") or {}
        self._loading = True
        for key, *_ in OUTCOME_FIELDS:
            self.query_one(f"#out-{key}", Input).value = qtext(out.get(key))
        self._loading = False

    def product_lines(self) -> list[str]:
        return [ln.get("name", "") for ln in self.data.get("lines", []) if ln.get("role") == "product"]

    def rows(self) -> list[dict]:
        return list((self.data.get("outcome") or {}).get("products") or [])

    def row_label(self, index: int) -> str:
        return f"the result for {self.rows()[index].get('product')}"

    def form(self) -> tuple[dict | None, str | None]:
        """(result, None), (None, why not), or (None, None) for an empty form."""
        values = {k: self.query_one(f"#prod-{k}", Input).value for k, *_ in PRODUCT_FIELDS}
        return product_entry(values, self.product_lines(), self.rows(), self.index)

    def blank(self) -> None:
        self.index = None
        self._loading = True
        for k, *_ in PRODUCT_FIELDS:
            self.query_one(f"#prod-{k}", Input).value = ""
        self._loading = False
        self._put(
            "#prod-head",
            Text("New product result — Enter keeps it; pick a row above to change one", style=tone("muted")),
            layout=False,
        )
        self.say(Text(""))

    def edit(self, index: int) -> None:
        rows = self.rows()
        if not 0 <= index < len(rows):
            return
        self.index = index
        values = form_values(rows[index])
        self._loading = True
        for k, *_ in PRODUCT_FIELDS:
            self.query_one(f"#prod-{k}", Input).value = values.get(k, "")
        self._loading = False
        head = f"Changing result {index + 1} ({rows[index].get('product')}) — Enter keeps it; ctrl+n for a new one"
        self._put("#prod-head", Text(head, style=tone("warn")), layout=False)
        self.query_one("#prod-isolated_mass", Input).focus()

    def start_result(self, product: str) -> None:
        """A new result for this product line: its name in the form, the focus on the isolated mass."""
        self.blank()
        self.query_one("#prod-product", Input).value = product
        self.query_one("#prod-isolated_mass", Input).focus()

    def preview(self) -> None:
        """While typing: the yield this result comes to, worked out with the rest of the run."""
        from ... import amounts
        from ..rundata import build_run

        entry, why = self.form()
        bad = next((f.problem for f in self.query(Field) if f.id.startswith("row-prod-") and f.problem), None)
        if entry is None or bad:
            self.say(Text(bad or why or "", style=tone("stop")))
            return
        data = with_result(self.data, entry, self.index)
        if not (data.get("title") or "").strip():
            data["title"] = "(untitled)"
        try:
            ys = amounts.product_yields(build_run(self.app.nb, data))
            y = next(y for y in ys if y.product.casefold() == entry["product"].casefold())
            self.say(Text("→ " + (yield_words(y) or "kept as given") + "   (Enter keeps this result)", style=tone("ok")))
        except (TrapbookError, StopIteration) as exc:
            why = exc.message if isinstance(exc, TrapbookError) else "no yield"
            self.say(Text(f"valid result; yield not worked out yet: {why}   (Enter keeps it)", style=tone("warn")))

    # --- drawing ------------------------------------------------------------------------
    def _put(self, selector: str, text: Text, layout: bool = True) -> None:
        """Update a Static only when what it shows changed (each repaint costs a layout)."""
        key = f"{self.app.theme}:{text.markup}"  # a new theme draws it again in the new colours
        if self._shown.get(selector) != key:
            self._shown[selector] = key
            self.query_one(selector, Static).update(text, layout=layout)

    def say(self, text: Text) -> None:
        self._put("#prod-msg", text, layout=False)

    def _fill_products(self) -> None:
        """One row per product result, with the yields the core works out from it."""
        ys = {name.casefold(): y for name, y, _ in yields_each(self.run, self.amount_table) if y is not None}
        self.fill_rows([_product_row(i, p, ys.get(str(p.get("product", "")).casefold())) for i, p in enumerate(self.rows())])

    def _show_yields(self) -> None:
        from ...units import fmt_mmol

        run, table = self.run, self.amount_table
        if run is None or table is None or run.outcome is None or not run.outcome.products:
            words = "Yields appear here once the run has its lines and a product result."
            self._put("#yields", Text(words, style=f"italic {tone('muted')}"))
            return
        out = Text()
        for name, y, why in yields_each(run, table):
            out.append(f"{name}: ", style="bold")
            if y is None:
                out.append(why or "no yield", style=tone("warn"))
            else:
                out.append(yield_words(y) or "no yield yet")
            out.append("\n")
        limiting = f"yields on {fmt_mmol(table.limiting_mmol)} mmol of {table.limiting} (the limiting line)"
        out.append(limiting, style=f"italic {tone('muted')}")
        self._put("#yields", out)

    # --- its own events -------------------------------------------------------------------
    def keep(self) -> None:
        entry, index = self.take()
        if entry is not None:
            self.post_message(ResultKept(entry, index))

    def action_expected(self) -> None:
        """ctrl+t: the run's expected products (worked out in the dialog's worker), one to pick."""
        if self.run is None:
            why = self.problem or "the run is incomplete"
            self.notify(f"The expected products need the run's lines first: {why}.", severity="warning")
            return
        from ..screens.expected_dialog import ExpectedProductsDialog

        self.app.push_screen(ExpectedProductsDialog(self.run), self._picked)

    def _picked(self, product: dict | None) -> None:
        if product:
            from ..screens.expected_dialog import product_line_name

            self.post_message(ExpectedPicked(product_line_name(product), product["smiles"]))

    @on(Input.Changed)
    def _changed(self, event: Input.Changed) -> None:
        event.stop()
        row = event.input.parent
        if isinstance(row, Field):
            row.run_check()
        if self._loading:
            return
        if (event.input.id or "").startswith("prod-"):
            self.preview()
        else:
            self._typed_run_outcome()

    def _typed_run_outcome(self) -> None:
        """The run-wide boxes go in as typed; a box its check refuses is left out (and flagged beside it)."""
        values: dict[str, str | None] = {}
        for key, *_ in OUTCOME_FIELDS:
            text = self.query_one(f"#out-{key}", Input).value.strip()
            values[key] = text if text and self.query_one(f"#row-out-{key}", Field).run_check() else None
        self.post_message(RunOutcomeTyped(values))

    @on(Input.Submitted)
    def _submitted(self, event: Input.Submitted) -> None:
        event.stop()
        if (event.input.id or "").startswith("prod-"):
            self.keep()
        else:
            self.screen.focus_next()

    @on(DataTable.RowSelected, "#products")
    def _selected(self, event: DataTable.RowSelected) -> None:
        event.stop()
        self.edit(int(event.row_key.value))


def _product_row(i: int, p: dict, y) -> list[str]:
    """A result's cells: product, isolated mass and yield, qNMR integrals and NMR yield, dr, ee."""
    q = p.get("qnmr") or {}
    qn = ""
    if q:
        qn = "{:g}/{}:{:g}/{}".format(
            float(q.get("integral") or 0),
            q.get("protons", ""),
            float(q.get("standard_integral") or 0),
            q.get("standard_protons", ""),
        )
    ee = ""
    if y is not None and y.ee_pct is not None:
        ee = f"{y.ee_pct:.0f} %"
    elif p.get("ee") is not None:
        ee = f"{p['ee']} %"
    return [
        str(i + 1),
        clip(p.get("product"), 15),
        clip(qtext(p.get("isolated_mass")), 8) or "—",
        f"{y.isolated_yield_pct:.0f} %" if y and y.isolated_yield_pct is not None else "—",
        clip(qn, 13) or "—",
        f"{y.nmr_yield_pct:.0f} %" if y and y.nmr_yield_pct is not None else "—",
        clip(p.get("dr") or "", 6),
        clip(ee or p.get("er") or "", 8),
    ]
