"""The Workbench's Lines tab (f3): the table of lines and the form that writes one line at a time.

While a line is typed its amounts are worked out with the rest of the run (the same build a
save goes through, `rundata.build_run`); Enter posts `LineKept`, and the screen puts the
line into the run (`rundata.with_line`, which also renames it in the steps and product
results that name it). ctrl+l marks the limiting line that every equiv and yield refers to
(`LimitingMarked`). What went into the flask is written in Weighed: the amounts of the row
then follow it, and the plan stays beside it in "planned" (`weighed.planned_vs_weighed`).
The screen shows the tab the run again after every change (`show`).
"""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.widgets import Checkbox, DataTable, Input, Static

from ...errors import TrapbookError
from .. import forms
from ..messages import LimitingMarked, LineKept
from ..rundata import build_run, is_limiting, with_line
from ..text import clip, qtext
from ..theme import tone
from .field import Field, FormCheck
from .row_tabs import FormRowsTab

LINE_FIELDS = (
    # (data key, label, placeholder, check, suggestions)
    ("role", "Role", "precursor, trap, fluoride source…", forms.check_role, forms.ROLE_WORDS),
    ("name", "Name", "compound name as on the bottle", None, None),
    ("smiles", "SMILES", "as weighed (salt, hydrate)", forms.check_smiles, None),
    ("amount", "Amount", "10 equiv, 0.2 mmol, 25 mg, 143 µL", forms.check_amount, None),
    ("form", "Density / M", "0.951 g/mL neat, or 1.0 M stock", forms.check_form, None),
    ("actual", "Weighed", "what went in: 31.2 mg, 150 µL", forms.check_measured, None),
    ("purity", "Purity", "e.g. 98 %", forms.check_kind("fraction", "a fraction"), None),
    ("water", "Water", "e.g. 5 wt%", forms.check_kind("fraction", "a fraction"), None),
)
#: Recorded on a line but not shown in the form: kept as they are when the line is changed.
KEPT_UNSHOWN = ("molar_mass", "lot", "note")
LIMIT_MARK = "◆"
#: "given" says which amount the line was given in, or "weighed" once it records what went into the flask;
#: then "planned" holds the plan in the kind that was measured, and the amount columns are worked out
#: from the weighing (so the weighed number itself is the one in its kind's column: mg, µL or mmol).
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
#: The bounds of the name column, which takes what the amount columns leave.
NAME_MIN, NAME_MAX = 8, 40
ROLE_SHORT = {"fluoride source": "fluoride", "internal standard": "int. std"}


def planned_cells(run) -> dict[str, str]:
    """Line name (casefolded) -> its planned amount in the kind that was weighed, for lines with one.

    The amount columns are worked out from what was weighed (`amounts.compute`); the plan
    beside them comes from `weighed.planned_vs_weighed`, the comparison `trapbook show` makes.
    """
    if run is None or not any(ln.actual is not None for ln in run.lines):
        return {}
    from ...display import fmt_sig
    from ...weighed import planned_vs_weighed

    try:
        compared = planned_vs_weighed(run)
    except TrapbookError:  # the plan alone cannot be worked out: said as unknown, the checks say why
        return {ln.name.casefold(): "?" for ln in run.lines if ln.actual is not None}
    return {w.name.casefold(): f"{fmt_sig(w.planned, 3)} {w.unit}" if w.planned is not None else "not planned" for w in compared}


class LinesTab(FormRowsTab):
    """The lines table and the form that writes one line; `index` is the line being changed."""

    BINDINGS = [
        Binding("ctrl+l", "limiting", "Limiting"),
    ]
    rows_key = "lines"

    def __init__(self, title: str, **kwargs) -> None:
        super().__init__(title, **kwargs)
        self.index: int | None = None
        self.data: dict = {"lines": []}  # the run as the screen last handed it (form text)
        self.run = None
        self.amounts = None
        self.name_width = NAME_MIN
        self._said: dict[str, tuple[str, int]] = {}  # what each Static shows: markup, length

    def compose(self) -> ComposeResult:
        yield DataTable(id="lines", cursor_type="row", cell_padding=0)
        yield Static("", id="line-head", classes="form-head")
        with Vertical(classes="form"):
            for key, label, ph, check, sugg in LINE_FIELDS:
                yield Field(label, f"line-{key}", ph, check, sugg)
            yield FormCheck("limiting line: the other lines' equiv refer to it", id="line-limiting")
        yield Static("", id="line-msg", classes="form-msg")

    # --- what the screen hands it and asks of it ---------------------------------------
    def fit(self, room: int) -> None:
        """Lay the columns out for `room` cells: the name is cut before any amount is."""
        others = sum(w for label, w in LINE_COLUMNS if label != "name")
        width = max(NAME_MIN, min(NAME_MAX, room - others))
        if width == self.name_width and self.table.columns:
            return
        self.name_width = width
        self.table.clear(columns=True)
        for label, w in LINE_COLUMNS:
            self.table.add_column(label, width=width if label == "name" else w)
        self._rows = None
        self.show(self.data, self.run, self.amounts)

    def show(self, data: dict, run, amounts) -> None:
        """The run's lines with the amounts worked out (`amounts`: its table), the limiting one marked."""
        self.data, self.run, self.amounts = data, run, amounts
        self.fill_rows(self.table_rows())

    def rows(self) -> list[dict]:
        return self.data.get("lines") or []

    def row_label(self, index: int) -> str:
        return f"line {index + 1} ({self.rows()[index].get('name')})"

    def table_rows(self) -> list[list[str]]:
        from ...units import fmt_equiv, fmt_mg, fmt_mmol, fmt_ul

        limiting = (self.amounts.limiting if self.amounts else "").casefold()
        planned = planned_cells(self.run)
        rows = []
        for i, line in enumerate(self.rows()):
            row = self.amounts.line(line.get("name", "")) if self.amounts else None
            key = str(line.get("name", "")).casefold()
            given = "weighed" if key in planned else next((k for k in forms.AMOUNT_FIELDS if line.get(k) not in (None, "")), "—")
            role = line.get("role") or ""
            cells = [
                f"{i + 1}{LIMIT_MARK if limiting and key == limiting else ''}",
                ROLE_SHORT.get(role, role)[:9],
                clip(line.get("name"), self.name_width - 1),
                given,
                clip(" " + planned[key], 10) if key in planned else "",  # apart from "weighed", which fills its column
            ]
            if row is None:
                cells += ["", "", "", "", ""]
            else:
                mw = f"{row.mw_g_mol:.2f}" if row.mw_g_mol else "—"
                cells += [fmt_equiv(row.equiv), fmt_mmol(row.mmol), fmt_mg(row.mass_mg), fmt_ul(row.volume_ul), mw]
            rows.append(cells)
        return rows

    def form(self) -> tuple[dict | None, str | None]:
        """(line, None), (None, why not), or (None, None) for an empty form."""
        v = {k: self.query_one(f"#line-{k}", Input).value.strip() for k, *_ in LINE_FIELDS}
        if not v["role"] and not v["name"]:
            return None, None
        if not v["role"]:
            return None, "give the line a role"
        if not v["name"]:
            return None, "give the line a name"
        from ...records import _ROLE_ALIASES, Line

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
        for k in ("actual", "purity", "water"):
            if v[k]:
                line[k] = v[k]
        old = self.rows()[self.index] if self.index is not None else {}
        line.update({k: old[k] for k in KEPT_UNSHOWN if k in old})
        if self.query_one("#line-limiting", Checkbox).value:
            if role == "product":
                return None, "a product line cannot be the limiting line"
            line["limiting"] = True
        invalid = forms.row_problem(Line, line)
        if invalid is not None:
            return None, invalid
        for i, other in enumerate(self.rows()):
            if i != self.index and other.get("name", "").casefold() == line["name"].casefold():
                return None, f"another line is already called '{line['name']}'"
        return line, None

    def blank(self, focus: bool = False) -> None:
        self.index = None
        for k, *_ in LINE_FIELDS:
            self.query_one(f"#line-{k}", Input).value = ""
        self.query_one("#line-limiting", Checkbox).value = False
        head = f"New line — Enter keeps it · pick a row to change it · {LIMIT_MARK} limiting: ctrl+l"
        self.say(Text(head, style=tone("muted")), "#line-head")
        self.say(Text(""))
        if focus:
            self.focus_form()

    def edit(self, index: int) -> None:
        if not 0 <= index < len(self.rows()):
            return
        line = self.rows()[index]
        self.index = index
        amount = next((line[k] for k in forms.AMOUNT_FIELDS if line.get(k) not in (None, "")), "")
        values = {
            **{k: qtext(line.get(k, "")) for k in ("role", "name", "smiles", "actual", "purity", "water")},
            "amount": qtext(amount),
            "form": qtext(line.get("density") or line.get("molarity") or ""),
        }
        for k, *_ in LINE_FIELDS:
            self.query_one(f"#line-{k}", Input).value = values[k] or ""
        self.query_one("#line-limiting", Checkbox).value = is_limiting(self.data, index)
        head = f"Changing line {index + 1} — Enter keeps it; ctrl+n for a new line"
        self.say(Text(head, style=tone("warn")), "#line-head")
        self.query_one("#line-name", Input).focus()

    def preview(self) -> None:
        """While typing: what the line would come to, worked out with the rest of the run."""
        line, why = self.form()
        bad = next((f.problem for f in self.query(Field) if f.problem), None)
        if bad:  # the field's own words in full, not only what fits beside it
            self.say(Text(bad, style=tone("stop")))
        elif line is None:
            self.say(Text(why or "", style=tone("stop")))
        elif line["role"] == "product":
            self.say(Text("Enter keeps this line", style=tone("muted")))
        else:
            self.say(self.comes_to(line))

    def comes_to(self, line: dict) -> Text:
        """The line's amounts (and, when weighed, how far from the plan), or why not yet."""
        from ... import amounts
        from ...units import fmt_mg, fmt_mmol, fmt_ul

        data = with_line(self.data, line, self.index)
        if not (data.get("title") or "").strip():
            data["title"] = "(untitled)"  # a title is not needed to work out amounts
        try:
            run = build_run(self.app.nb, data)
            row = amounts.compute(run).line(line["name"])
        except TrapbookError as exc:
            return Text(f"valid line; amounts not yet worked out: {exc.message}   (Enter keeps it)", style=tone("warn"))
        bits = [
            f"{fmt_mmol(row.mmol)} mmol" if row.mmol is not None else None,
            f"{row.equiv:.3g} equiv" if row.equiv is not None else None,
            f"{fmt_mg(row.mass_mg)} mg" if row.mass_mg is not None else None,
            f"{fmt_ul(row.volume_ul)} µL" if row.volume_ul is not None else None,
            planned_words(run, line["name"]) if line.get("actual") else None,
        ]
        return Text("→ " + " · ".join(b for b in bits if b) + "   (Enter keeps this line)", style=tone("ok"))

    def say(self, text: Text, where: str = "#line-msg") -> None:
        """Show `text` below the form; laid out again only when it may take more or fewer lines."""
        before = self._said.get(where, ("", 0))
        if before[0] == text.markup:  # unchanged: no repaint (typing stays light)
            return
        self._said[where] = (text.markup, len(text.plain))
        box = self.query_one(where, Static)
        room = max(box.content_size.width, 1)
        box.update(text, layout=max(before[1], len(text.plain)) > room)

    # --- its own keys and events ---------------------------------------------------------
    def action_limiting(self) -> None:
        """Mark the line under the cursor limiting (every equiv then refers to it), or unmark it."""
        lines = self.rows()
        if not lines:
            self.notify("Add a line first (Lines tab).", severity="warning")
            return
        i = self.index if self.index is not None else self.cursor_index()
        line = lines[i]
        name = line.get("name", "")
        marked = is_limiting(self.data, i)
        if marked:
            self.notify(f"'{name}' is no longer marked limiting: equiv refer to the precursor again.", markup=False)
        elif line.get("role") == "product":
            self.notify("A product line cannot be the limiting line.", severity="warning")
            return
        elif line.get("equiv") not in (None, ""):
            self.notify(
                f"'{name}' is given in equiv; give it an amount, mass or volume first, then mark it limiting.",
                severity="warning",
                timeout=6,
                markup=False,
            )
            return
        else:
            self.notify(f"'{name}' is the limiting line now: every equiv and yield refers to it.", markup=False)
        if self.index == i:
            self.query_one("#line-limiting", Checkbox).value = not marked
        self.post_message(LimitingMarked(i, not marked))

    def keep(self) -> None:
        line, index = self.take()
        if line is not None:
            self.post_message(LineKept(line, index))


def planned_words(run, name: str) -> str | None:
    """The plan of a weighed line and how far the weighing is from it: "planned 59.7 mg (+17 %)"."""
    from ...display import fmt_sig
    from ...weighed import planned_vs_weighed

    try:
        compared = planned_vs_weighed(run)
    except TrapbookError as exc:
        return f"plan not worked out: {exc.message}"
    w = next((w for w in compared if w.name.casefold() == name.casefold()), None)
    if w is None or not w.planned:
        return "nothing planned in this kind"
    return f"planned {fmt_sig(w.planned, 3)} {w.unit} ({w.difference_pct:+.0f} %)"
