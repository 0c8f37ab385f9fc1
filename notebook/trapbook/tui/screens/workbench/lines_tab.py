"""The Workbench's Lines tab (f3): the table of lines and the form that writes one line at a time.

While a line is typed its amounts are worked out with the rest of the run; Enter keeps it,
and renaming a line renames it in the steps and product results that name it. ctrl+l marks
the limiting line that every equiv and yield refers to.
"""

from __future__ import annotations

import copy

from rich.text import Text
from textual.widgets import Checkbox, DataTable, Input

from ....errors import TrapbookError
from ... import forms
from ...text import clip, qtext
from ...theme import tone

LINE_FIELDS = (
    ("role", "Role", "precursor, trap, fluoride source…", forms.check_role, forms.ROLE_WORDS),
    ("name", "Name", "compound name as on the bottle", None, None),
    ("smiles", "SMILES", "as weighed (salt, hydrate)", forms.check_smiles, None),
    ("amount", "Amount", "10 equiv, 0.2 mmol, 25 mg, 143 µL", forms.check_amount, None),
    ("form", "Density / M", "0.951 g/mL neat, or 1.0 M stock", forms.check_form, None),
    ("purity", "Purity", "e.g. 98 %", forms.check_kind("fraction", "a fraction"), None),
    ("water", "Water", "e.g. 5 wt%", forms.check_kind("fraction", "a fraction"), None),
)
LIMIT_MARK = "◆"
#: "given" says which amount the line was given in, or "weighed" once it records what went into the flask;
#: then "planned" holds the plan in the kind that was measured, beside the amounts worked out from the weighing.
LINE_COLUMNS = (
    ("#", 3),
    ("role", 10),
    ("name", 19),
    ("given", 7),
    ("planned", 10),
    ("equiv", 6),
    ("mmol", 7),
    ("mg", 7),
    ("µL", 6),
    ("g/mol", 7),
)
#: The side panel's width beside the tabs (app.tcss `#bench-side`), and the name column's bounds.
SIDE_WIDTH = 44
NAME_MIN, NAME_MAX = 8, 40
ROLE_SHORT = {"fluoride source": "fluoride", "internal standard": "int. std"}


class LinesTabMixin:
    """Write, change and list the run's lines; mark the limiting one."""

    def line_form(self) -> tuple[dict | None, str | None]:
        """The line being written, as a stored-form dict, or why it is not one yet."""
        v = {k: self.query_one(f"#line-{k}", Input).value.strip() for k, *_ in LINE_FIELDS}
        if not v["role"] and not v["name"]:
            return None, None
        if not v["role"]:
            return None, "give the line a role"
        if not v["name"]:
            return None, "give the line a name"
        from ....records import _ROLE_ALIASES

        role = _ROLE_ALIASES.get(v["role"].casefold(), v["role"].casefold())
        line: dict = {"role": role, "name": v["name"]}
        if v["smiles"]:
            line["smiles"] = v["smiles"]
        try:
            if v["amount"]:
                kind, _ = forms.which_amount(v["amount"])
                line[kind] = v["amount"]
            if v["form"]:
                kind, _ = forms.which_form(v["form"])
                line[kind] = v["form"]
        except TrapbookError as exc:
            return None, exc.message
        for k in ("purity", "water"):
            if v[k]:
                line[k] = v[k]
        old = self.data["lines"][self.line_index] if self.line_index is not None else {}
        for k in ("molar_mass", "lot", "note", "actual"):  # recorded, not shown in this form: kept
            if k in old:
                line[k] = old[k]
        if self.query_one("#line-limiting", Checkbox).value:
            if role == "product":
                return None, "a product line cannot be the limiting line"
            line["limiting"] = True
        from ....records import Line

        invalid = forms.row_problem(Line, line)
        if invalid is not None:
            return None, invalid
        for i, other in enumerate(self.data["lines"]):
            if i != self.line_index and other.get("name", "").casefold() == line["name"].casefold():
                return None, f"another line is already called '{line['name']}'"
        return line, None

    def with_line(self, line: dict) -> dict:
        data = copy.deepcopy(self.data)
        if line.get("limiting"):  # one limiting line: this one takes the mark from any other
            for other in data["lines"]:
                other.pop("limiting", None)
            data.pop("limiting", None)
        if self.line_index is None:
            data["lines"].append(line)
        else:
            old = data["lines"][self.line_index].get("name")
            if not line.get("limiting") and old and (data.get("limiting") or "").casefold() == old.casefold():
                data.pop("limiting", None)  # unticked: the run-level mark goes too
            data["lines"][self.line_index] = line
            if old and old != line["name"]:
                for step in data.get("steps", []):
                    step["add"] = [line["name"] if n == old else n for n in step.get("add", [])]
                for p in (data.get("outcome") or {}).get("products", []):
                    if p.get("product") == old:
                        p["product"] = line["name"]
        return data

    def preview_line(self) -> None:
        """While typing: what the line would come to, worked out with the rest of the run."""
        from .... import amounts
        from ....units import fmt_mg, fmt_mmol, fmt_ul

        line, why = self.line_form()

        def say(text: Text) -> None:
            self.put("#line-msg", text, layout=False)

        bad = self.field_problem("line", LINE_FIELDS)
        if bad:  # the field's own words in full, not only what fits beside it
            say(Text(bad, style=f"{tone('stop')}"))
            return
        if line is None:
            say(Text(why or "", style=f"{tone('stop')}"))
            return
        if line["role"] == "product":
            say(Text("Enter keeps this line", style=f"{tone('muted')}"))
            return
        try:
            data = self.with_line(line)
            if not (data.get("title") or "").strip():
                data["title"] = "(untitled)"  # a title is not needed to work out amounts
            table = amounts.compute(self.build(data))
            row = table.line(line["name"])
            bits = [
                f"{fmt_mmol(row.mmol)} mmol" if row.mmol is not None else None,
                f"{row.equiv:.3g} equiv" if row.equiv is not None else None,
                f"{fmt_mg(row.mass_mg)} mg" if row.mass_mg is not None else None,
                f"{fmt_ul(row.volume_ul)} µL" if row.volume_ul is not None else None,
            ]
            say(Text("→ " + " · ".join(b for b in bits if b) + "   (Enter keeps this line)", style=f"{tone('ok')}"))
        except TrapbookError as exc:
            say(Text(f"valid line; amounts not yet worked out: {exc.message}   (Enter keeps it)", style=f"{tone('warn')}"))

    def commit_line(self, focus: bool = True) -> bool:
        return self.keep_row(self.line_form, "#line-msg", self.with_line, self.blank_line, focus)

    def blank_line(self, focus: bool = True) -> None:
        self.line_index = None
        self.clear_form("line", LINE_FIELDS, "#line-limiting")
        self.put(
            "#line-head",
            Text(
                f"New line — Enter keeps it · pick a row to change it · {LIMIT_MARK} limiting: ctrl+l", style=f"{tone('muted')}"
            ),
            layout=False,
        )
        self.put("#line-msg", Text(""), layout=False)
        if focus:
            self.query_one("#line-role", Input).focus()

    def edit_line(self, index: int) -> None:
        line = self.data["lines"][index]
        self.line_index = index
        amount = next((line[k] for k in forms.AMOUNT_FIELDS if line.get(k) not in (None, "")), "")
        values = {
            "role": line.get("role", ""),
            "name": line.get("name", ""),
            "smiles": line.get("smiles", ""),
            "amount": qtext(amount),
            "form": qtext(line.get("density") or line.get("molarity") or ""),
            "purity": qtext(line.get("purity", "")),
            "water": qtext(line.get("water", "")),
        }
        for k, *_ in LINE_FIELDS:
            self.query_one(f"#line-{k}", Input).value = values[k] or ""
        marked = bool(line.get("limiting")) or (self.data.get("limiting") or "").casefold() == line.get("name", "").casefold()
        self.query_one("#line-limiting", Checkbox).value = marked
        self.put(
            "#line-head",
            Text(f"Changing line {index + 1} — Enter keeps it; ctrl+n for a new line", style=f"{tone('warn')}"),
            layout=False,
        )
        self.query_one("#line-name", Input).focus()

    def name_width(self) -> int:
        """The name column takes what the amount columns leave: it is cut before any amount is."""
        side_beside = self.has_class("-wide") and not self.has_class("-side-toggled")
        room = self.app.size.width - (SIDE_WIDTH if side_beside else 0) - 1  # one for the scroll bar
        others = sum(w for label, w in LINE_COLUMNS if label != "name")
        return max(NAME_MIN, min(NAME_MAX, room - others))

    def fit_name_column(self) -> None:
        """Lay the line table's columns out again when the room for the name has changed."""
        t = self.query_one("#lines", DataTable)
        width = self.name_width()
        if getattr(self, "_name_width", None) == width and t.columns:
            return
        self._name_width = width
        t.clear(columns=True)
        for label, w in LINE_COLUMNS:
            t.add_column(label, width=width if label == "name" else w)
        self.__dict__.get("_table_rows", {}).pop("lines", None)
        if self.data:
            self.refresh_lines()

    def planned_cells(self) -> dict[str, str]:
        """Line name (casefolded) -> its planned amount in the kind that was weighed, for lines with one.

        The amount columns are worked out from what was weighed (`amounts.compute`); the plan
        beside them comes from `weighed.planned_vs_weighed`, the comparison `trapbook show` makes.
        """
        if self.run is None or not any(ln.actual is not None for ln in self.run.lines):
            return {}
        from ....display import fmt_sig
        from ....weighed import planned_vs_weighed

        try:
            compared = planned_vs_weighed(self.run)
        except TrapbookError:  # the plan alone cannot be worked out: said as unknown, the checks say why
            return {ln.name.casefold(): "?" for ln in self.run.lines if ln.actual is not None}
        return {
            w.name.casefold(): f"{fmt_sig(w.planned, 3)} {w.unit}" if w.planned is not None else "not planned" for w in compared
        }

    def refresh_lines(self) -> None:
        from ....units import fmt_equiv, fmt_mg, fmt_mmol, fmt_ul

        t = self.query_one("#lines", DataTable)
        rows = []
        limiting = (self.table.limiting if self.table else "").casefold()
        planned = self.planned_cells()
        for i, line in enumerate(self.data.get("lines", [])):
            row = self.table.line(line.get("name", "")) if self.table else None
            key = str(line.get("name", "")).casefold()
            given = "weighed" if key in planned else next((k for k in forms.AMOUNT_FIELDS if line.get(k) not in (None, "")), "—")
            role = line.get("role") or ""
            mark = LIMIT_MARK if limiting and key == limiting else ""
            cells = [
                f"{i + 1}{mark}",
                ROLE_SHORT.get(role, role)[:9],
                clip(line.get("name"), self._name_width - 1),
                given,
                clip(planned.get(key, ""), 10),
            ]
            if row is not None:
                cells += [
                    fmt_equiv(row.equiv),
                    fmt_mmol(row.mmol),
                    fmt_mg(row.mass_mg),
                    fmt_ul(row.volume_ul),
                    f"{row.mw_g_mol:.2f}" if row.mw_g_mol else "—",
                ]
            else:
                cells += ["", "", "", "", ""]
            rows.append(cells)
        self._fill_table(t, rows)

    def action_limiting(self) -> None:
        """Mark the line under the cursor limiting (every equiv then refers to it), or unmark it."""
        lines = self.data.get("lines") or []
        if not lines:
            self.notify("Add a line first (Lines tab).", severity="warning")
            return
        t = self.query_one("#lines", DataTable)
        i = self.line_index if self.line_index is not None else min(max(t.cursor_row, 0), len(lines) - 1)
        line = lines[i]
        name = line.get("name", "")
        marked = bool(line.get("limiting")) or (self.data.get("limiting") or "").casefold() == name.casefold()
        if marked:
            line.pop("limiting", None)
            self.data.pop("limiting", None)
            self.notify(f"'{name}' is no longer marked limiting: equiv refer to the precursor again.")
        elif line.get("role") == "product":
            self.notify("A product line cannot be the limiting line.", severity="warning")
            return
        elif line.get("equiv") not in (None, ""):
            self.notify(
                f"'{name}' is given in equiv; give it an amount, mass or volume first, then mark it limiting.",
                severity="warning",
                timeout=6,
            )
            return
        else:
            for other in lines:
                other.pop("limiting", None)
            self.data.pop("limiting", None)
            line["limiting"] = True
            self.notify(f"'{name}' is the limiting line now: every equiv and yield refers to it.")
        if self.line_index == i:
            self.query_one("#line-limiting", Checkbox).value = bool(line.get("limiting"))
        self.changed()
        self.recompute()
