"""The Workbench's Outcome tab (f5): one result row per product, the run-wide outcome, the yields.

Each product result (isolated mass, qNMR integrals, dr, er, ee) is written one row at a
time and its yield worked out while it is typed; the fields for the run as a whole go in as
typed. `outcome_form.product_entry` turns a row's text into the stored shape.
"""

from __future__ import annotations

import copy

from rich.text import Text
from textual.suggester import SuggestFromList
from textual.widgets import DataTable, Input

from ....errors import TrapbookError
from ... import forms
from ...outcome_form import PRODUCT_FIELDS, form_values, product_entry
from ...text import clip, qtext
from ...theme import tone
from ...widgets.field import Field

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
    from ....phrases import yield_phrases

    return ", ".join(yield_phrases(y, digits=1, with_mmol=True))


def yields_each(run, table) -> list[tuple[str, object, str | None]]:
    """(product, ProductYield or None, why not) for every result, each worked out on its own,
    so one product without a SMILES does not hide the yields of the others."""
    from .... import amounts

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


class OutcomeTabMixin:
    """Write, change and list the product results; keep the run-wide outcome; show the yields."""

    def fill_outcome_fields(self) -> None:
        self._loading = True
        out = self.data.get("outcome") or {}
        values = {"recovered_precursor": out.get("recovered_precursor", ""), "observations": out.get("observations", "")}
        for key, *_ in OUTCOME_FIELDS:
            v = values.get(key)
            self.query_one(f"#out-{key}", Input).value = "" if v is None else qtext(v)
        self._loading = False

    def product_lines(self) -> list[str]:
        return [ln.get("name", "") for ln in self.data.get("lines", []) if ln.get("role") == "product"]

    def product_rows(self) -> list[dict]:
        return list((self.data.get("outcome") or {}).get("products") or [])

    def product_form(self) -> tuple[dict | None, str | None]:
        values = {k: self.query_one(f"#prod-{k}", Input).value for k, *_ in PRODUCT_FIELDS}
        return product_entry(values, self.product_lines(), self.product_rows(), self.product_index)

    def with_product(self, entry: dict) -> dict:
        data = copy.deepcopy(self.data)
        out = data.setdefault("outcome", {})
        prods = out.setdefault("products", [])
        if self.product_index is None or self.product_index >= len(prods):
            prods.append(entry)
        else:
            prods[self.product_index] = entry
        return data

    def preview_product(self) -> None:
        """While typing: the yield this result comes to, worked out with the rest of the run."""
        from .... import amounts

        entry, why = self.product_form()
        bad = self.field_problem("prod", PRODUCT_FIELDS)
        if entry is None or bad:
            self.put("#prod-msg", Text(bad or why or "", style=f"{tone('stop')}"), layout=False)
            return
        data = self.with_product(entry)
        if not (data.get("title") or "").strip():
            data["title"] = "(untitled)"
        try:
            run = self.build(data)
            ys = amounts.product_yields(run)
            y = next(y for y in ys if y.product.casefold() == entry["product"].casefold())
            text = "→ " + (yield_words(y) or "kept as given") + "   (Enter keeps this result)"
            self.put("#prod-msg", Text(text, style=f"{tone('ok')}"), layout=False)
        except (TrapbookError, StopIteration) as exc:
            why = exc.message if isinstance(exc, TrapbookError) else "no yield"
            self.put(
                "#prod-msg",
                Text(f"valid result; yield not worked out yet: {why}   (Enter keeps it)", style=f"{tone('warn')}"),
                layout=False,
            )

    def action_expected(self) -> None:
        """ctrl+t: the run's expected products (worked out in the dialog's worker), one to pick."""
        if self.run is None:
            self.notify(
                f"The expected products need the run's lines first: {self.problem or 'the run is incomplete'}.",
                severity="warning",
            )
            return
        from ..expected_dialog import ExpectedProductsDialog

        self.app.push_screen(ExpectedProductsDialog(self.run), self.pick_expected)

    def pick_expected(self, product: dict | None) -> None:
        """The picked product becomes the form's product: its line (added when the run has none
        with that SMILES) and the result row to write its mass or integrals into."""
        if not product:
            return
        from ..expected_dialog import product_line_name

        lines = self.data.setdefault("lines", [])
        line = next((ln for ln in lines if ln.get("role") == "product" and ln.get("smiles") == product["smiles"]), None)
        if line is None:
            line = {"role": "product", "name": self.free_line_name(product_line_name(product)), "smiles": product["smiles"]}
            lines.append(line)
            self.notify(f"Added the product line '{line['name']}' ({product['smiles']}).", title="Product line")
        self.changed()
        self.recompute()
        self.blank_product(focus=False)
        self.query_one("#prod-product", Input).value = line["name"]
        self.query_one("#prod-isolated_mass", Input).focus()

    def free_line_name(self, name: str) -> str:
        """NAME, or NAME 2, 3… when a line already has it (line names are the run's handles)."""
        taken = {str(ln.get("name", "")).casefold() for ln in self.data.get("lines", [])}
        n, candidate = 1, name
        while candidate.casefold() in taken:
            n += 1
            candidate = f"{name} {n}"
        return candidate

    def commit_product(self, focus: bool = True) -> bool:
        return self.keep_row(self.product_form, "#prod-msg", self.with_product, self.blank_product, focus)

    def blank_product(self, focus: bool = True) -> None:
        self.product_index = None
        self.clear_form("prod", PRODUCT_FIELDS)
        self.put(
            "#prod-head",
            Text("New product result — Enter keeps it; pick a row above to change one", style=f"{tone('muted')}"),
            layout=False,
        )
        self.put("#prod-msg", Text(""), layout=False)
        if focus:
            self.query_one("#prod-product", Input).focus()

    def edit_product(self, index: int) -> None:
        rows = self.product_rows()
        if not 0 <= index < len(rows):
            return
        self.product_index = index
        values = form_values(rows[index])
        self._loading = True
        for k, *_ in PRODUCT_FIELDS:
            self.query_one(f"#prod-{k}", Input).value = values.get(k, "")
        self._loading = False
        self.put(
            "#prod-head",
            Text(
                f"Changing result {index + 1} ({rows[index].get('product')}) — Enter keeps it; ctrl+n for a new one",
                style=f"{tone('warn')}",
            ),
            layout=False,
        )
        self.query_one("#prod-isolated_mass", Input).focus()

    def refresh_products(self) -> None:
        """One row per product result, with the yields the core works out from it."""
        names = self.product_lines()
        if getattr(self, "_product_names", None) != names:
            self._product_names = names
            self.query_one("#prod-product", Input).suggester = SuggestFromList(names, case_sensitive=False) if names else None
        ys = {name.casefold(): y for name, y, _ in yields_each(self.run, self.table) if y is not None}
        rows = []
        for i, p in enumerate(self.product_rows()):
            y = ys.get(str(p.get("product", "")).casefold())
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
            rows.append(
                [
                    str(i + 1),
                    clip(p.get("product"), 15),
                    clip(qtext(p.get("isolated_mass")), 8) or "—",
                    f"{y.isolated_yield_pct:.0f} %" if y and y.isolated_yield_pct is not None else "—",
                    clip(qn, 13) or "—",
                    f"{y.nmr_yield_pct:.0f} %" if y and y.nmr_yield_pct is not None else "—",
                    clip(p.get("dr") or "", 6),
                    clip(ee or p.get("er") or "", 8),
                ]
            )
        self._fill_table(self.query_one("#products", DataTable), rows)

    def apply_outcome(self) -> None:
        """The run-wide outcome fields go in as typed; bad ones are left out and flagged."""
        out = copy.deepcopy(self.data.get("outcome") or {})
        for k, *_ in OUTCOME_FIELDS:
            value = self.query_one(f"#out-{k}", Input).value.strip()
            ok = self.query_one(f"#row-out-{k}", Field).run_check()
            if value and ok:
                out[k] = value
            else:
                out.pop(k, None)
        self.data["outcome"] = out
        self.tidy_outcome()
        self.changed()

    def tidy_outcome(self) -> None:
        out = self.data.get("outcome")
        if out is not None and not out.get("products") and not any(v for k, v in out.items() if k != "products"):
            self.data.pop("outcome", None)

    def refresh_yields(self) -> None:
        from ....units import fmt_mmol

        if self.run is None or self.table is None or self.run.outcome is None or not self.run.outcome.products:
            self.put(
                "#yields",
                Text("Yields appear here once the run has its lines and a product result.", style=f"italic {tone('muted')}"),
            )
            return
        out = Text()
        for name, y, why in yields_each(self.run, self.table):
            out.append(f"{name}: ", style="bold")
            if y is None:
                out.append(why or "no yield", style=f"{tone('warn')}")
            else:
                out.append(yield_words(y) or "no yield yet")
            out.append("\n")
        out.append(
            f"yields on {fmt_mmol(self.table.limiting_mmol)} mmol of {self.table.limiting} (the limiting line)",
            style=f"italic {tone('muted')}",
        )
        self.put("#yields", out)
