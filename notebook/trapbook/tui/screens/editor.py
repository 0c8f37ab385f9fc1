"""Workbench: write a run as it happens at the bench, and see what the core makes of it.

The run is held as form text (what the chemist typed, "10 equiv", "-78 °C") and rebuilt
with `records.load_run` after every change: if it loads, the amounts, the addition track,
the bench checks and the strain card follow it live; if it does not, the reason is shown
and nothing can be saved. Unsaved work is kept as a draft in the notebook's settings, so
leaving (or a crash) loses nothing; saving a stored run asks why and refuses a stale save.
"""

from __future__ import annotations

import copy
import datetime as _dt
import json

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import Screen
from textual.widgets import Checkbox, DataTable, Footer, Header, Input, ProgressBar, Static, TabbedContent, TabPane
from pydantic import ValidationError

from ...errors import StaleVersionError, TrapbookError
from .. import forms
from ..rundata import clean, form_data, plan_from
from ..text import clip, qtext
from ..widgets.field import Field
from ..widgets.findings import ChecksPanel
from ..widgets.strain_card import StrainCard
from ..widgets.timeline import AdditionTrack

NEW_DRAFT = "draft:new"

RUN_FIELDS = (
    # (data key, label, placeholder, check, suggestions)
    ("title", "Title", "what the run is, in a line", None, None),
    ("chemist", "Chemist", "", None, None),
    ("date", "Date", "YYYY-MM-DD", forms.check_date, None),
    ("status", "Status", "planned · running · done · failed", forms.check_status, list(forms.STATUSES)),
    ("page", "Page", "paper notebook page", None, None),
    ("intermediate", "Intermediate", "SMILES of the strained intermediate", forms.check_smiles, None),
    ("intermediate_name", "Its name", "e.g. bicyclo[3.3.1]non-1-ene", None, None),
    ("tags", "Tags", "comma separated", None, None),
    ("notes", "Notes", "", None, None),
)
LINE_FIELDS = (
    ("role", "Role", "precursor, trap, fluoride source, solvent…", forms.check_role, forms.ROLE_WORDS),
    ("name", "Name", "compound name as on the bottle", None, None),
    ("smiles", "SMILES", "of the form weighed, salts and water in", forms.check_smiles, None),
    ("amount", "Amount", "10 equiv · 0.200 mmol · 25 mg · 143 µL", forms.check_amount, None),
    ("form", "Density / M", "0.951 g/mL (liquid) or 1.0 M (solution)", forms.check_form, None),
    ("purity", "Purity", "e.g. 98 %", forms.check_kind("fraction", "a fraction"), None),
    ("water", "Water", "e.g. 5 wt%", forms.check_kind("fraction", "a fraction"), None),
)
STEP_FIELDS = (
    ("add", "Adds", "1 + 3 · precursor; trap · names", None, None),
    ("temperature", "Temperature", "e.g. -78 °C", forms.check_kind("temperature", "a temperature"), None),
    ("hold", "Hold", "time kept after the additions, e.g. 2 h", forms.check_kind("duration", "a time"), None),
    ("over", "Added over", "e.g. 10 min (dropwise)", forms.check_kind("duration", "a time"), None),
    ("atmosphere", "Atmosphere", "e.g. N2", None, None),
    ("note", "Note", "", None, None),
)
OUTCOME_FIELDS = (
    ("product", "Product", "name of a product line", None, None),
    ("isolated_mass", "Isolated", "mass obtained, e.g. 11.8 mg", forms.check_kind("mass", "a mass"), None),
    ("standard_integral", "qNMR IS ∫", "integral of the internal standard", forms.check_number(positive=True), None),
    ("standard_protons", "IS protons", "protons of that signal", forms.check_number(positive=True, integer=True), None),
    ("integral", "Product ∫", "integral of the product signal", forms.check_number(), None),
    ("protons", "Product H", "protons of that signal", forms.check_number(positive=True, integer=True), None),
    ("dr", "dr", "major:minor, e.g. 5:1", forms.check_ratio, None),
    ("er", "er", "major:minor, e.g. 95:5", forms.check_ratio, None),
    ("ee", "ee %", "if measured directly", forms.check_number(), None),
    ("recovered_precursor", "Recovered", "mass of precursor recovered", forms.check_kind("mass", "a mass"), None),
    ("observations", "Observations", "", None, None),
)
QNMR_KEYS = ("standard_integral", "standard_protons", "integral", "protons")
LINE_COLUMNS = (("#", 3), ("role", 10), ("name", 19), ("given", 7), ("equiv", 6), ("mmol", 7), ("mg", 7), ("µL", 6), ("g/mol", 7))
STEP_COLUMNS = (("#", 3), ("adds", 27), ("T", 9), ("hold", 7), ("over", 7), ("seal", 5), ("enters", 12))
ROLE_SHORT = {"fluoride source": "fluoride", "internal standard": "int. std"}


def _pydantic_words(exc: ValidationError) -> str:
    msgs = []
    for err in exc.errors():
        where = ".".join(str(x) for x in err.get("loc", ()) if isinstance(x, str))
        msg = str(err.get("msg", "invalid")).removeprefix("Value error, ")
        msgs.append(f"{where}: {msg}" if where else msg)
    return "; ".join(msgs)


class WorkbenchScreen(Screen):
    """The run editor."""

    BINDINGS = [
        Binding("ctrl+s", "save", "Save"),
        Binding("f2", "tab('tab-run')", "Tabs", key_display="f2-f5"),
        Binding("f3", "tab('tab-lines')", "Lines tab", show=False),
        Binding("f4", "tab('tab-steps')", "Steps tab", show=False),
        Binding("f5", "tab('tab-outcome')", "Outcome tab", show=False),
        Binding("ctrl+n", "blank", "Clear form"),
        Binding("ctrl+r", "remove", "Remove row"),
        Binding("ctrl+up", "move(-1)", "Move row", key_display="^↑/^↓"),
        Binding("ctrl+down", "move(1)", "Move row down", show=False),
        Binding("ctrl+g", "strain", "Strain"),
        Binding("f6", "history", "History"),
        Binding("escape", "leave", "Back"),
    ]

    def __init__(self, run_id: str | None = None, copy_of: str | None = None):
        super().__init__()
        self.run_id = run_id
        self.copy_of = copy_of
        self.base_version: int | None = None
        self.data: dict = {}
        self.original = ""
        self.line_index: int | None = None
        self.step_index: int | None = None
        self.run = None
        self.table = None
        self.findings: list | None = None
        self.problem: str | None = None
        self.strain: dict | None = None
        self.alignment: dict | None = None
        self.strain_note: str | None = None
        self._recompute_timer = None
        self._draft_timer = None
        self._loading = False

    # --- layout -----------------------------------------------------------------
    def compose(self) -> ComposeResult:
        yield Header()
        with Horizontal(id="bench"):
            with TabbedContent(id="tabs", initial="tab-lines"):
                with TabPane("Run F2", id="tab-run"):
                    with VerticalScroll(classes="form"):
                        for key, label, ph, check, sugg in RUN_FIELDS:
                            yield Field(label, f"run-{key}", ph, check, sugg)
                with TabPane("Lines F3", id="tab-lines"):
                    yield DataTable(id="lines", cursor_type="row", cell_padding=0)
                    yield Static("", id="line-head", classes="form-head")
                    with Vertical(classes="form"):
                        for key, label, ph, check, sugg in LINE_FIELDS:
                            yield Field(label, f"line-{key}", ph, check, sugg)
                    yield Static("", id="line-msg", classes="form-msg")
                with TabPane("Steps F4", id="tab-steps"):
                    yield DataTable(id="steps", cursor_type="row", cell_padding=0)
                    yield Static("", id="step-head", classes="form-head")
                    with Vertical(classes="form"):
                        for key, label, ph, check, sugg in STEP_FIELDS:
                            yield Field(label, f"step-{key}", ph, check, sugg)
                        yield Checkbox("sealed vessel (pressure builds on heating)", id="step-sealed")
                    yield Static("", id="step-msg", classes="form-msg")
                with TabPane("Outcome F5", id="tab-outcome"):
                    with VerticalScroll(classes="form"):
                        for key, label, ph, check, sugg in OUTCOME_FIELDS:
                            yield Field(label, f"out-{key}", ph, check, sugg)
                        yield Static("", id="yields")
            with Vertical(id="bench-side"):
                yield Static("Order of additions", classes="side-head")
                yield AdditionTrack(id="track")
                yield Static("Strain card", classes="side-head")
                yield StrainCard(id="strain")
                yield ProgressBar(id="strain-progress", show_eta=False)
                yield Static("", id="strain-stage")
                yield Static("Bench checks", classes="side-head")
                with VerticalScroll(id="checks-scroll"):
                    yield ChecksPanel(id="checks")
        yield Static("", id="status")
        yield Footer()

    def on_mount(self) -> None:
        lines = self.query_one("#lines", DataTable)
        for label, width in LINE_COLUMNS:
            lines.add_column(label, width=width)
        steps = self.query_one("#steps", DataTable)
        for label, width in STEP_COLUMNS:
            steps.add_column(label, width=width)
        self.query_one("#strain-progress").display = False
        self.load()
        self.query_one("#line-role", Input).focus()

    @property
    def nb(self):
        return self.app.nb

    def put(self, selector: str, content, key=None, layout: bool = True) -> None:
        """Update a Static only when what it shows changed (each repaint costs a layout)."""
        if key is None:
            key = content.markup if isinstance(content, Text) else content
        shown = self.__dict__.setdefault("_shown", {})
        if shown.get(selector) == key:
            return
        shown[selector] = key
        self.query_one(selector, Static).update(content, layout=layout)

    @property
    def draft_key(self) -> str:
        return f"draft:{self.run_id}" if self.run_id else NEW_DRAFT

    # --- opening ----------------------------------------------------------------
    def load(self) -> None:
        if self.run_id:
            meta = self.nb.run_meta(self.run_id)
            self.base_version = meta["version"]
            self.data = form_data(self.nb.get_run(self.run_id).to_json_dict())
        elif self.copy_of:
            self.data = form_data(plan_from(self.nb.get_run(self.copy_of).to_json_dict()))
        else:
            self.data = {"title": "", "chemist": self.app.author, "date": _dt.date.today().isoformat(),
                         "status": "planned", "lines": [], "steps": []}
        self.original = json.dumps(self.data, sort_keys=True)
        draft = self.nb.get_setting(self.draft_key) if not self.copy_of else None
        if draft and isinstance(draft, dict) and draft.get("data"):
            self.data = draft["data"]
            if self.run_id and draft.get("base_version"):
                self.base_version = draft["base_version"]
            self.notify(f"Restored your unsaved draft from {str(draft.get('saved', ''))[:16]}.", title="Draft")
        self.fill_run_fields()
        self.fill_outcome_fields()
        self.blank_line()
        self.blank_step()
        self.recompute()

    def fill_run_fields(self) -> None:
        self._loading = True
        for key, *_ in RUN_FIELDS:
            v = self.data.get(key)
            if key == "tags" and isinstance(v, list):
                v = ", ".join(v)
            self.query_one(f"#run-{key}", Input).value = "" if v is None else str(v)
        self._loading = False

    def fill_outcome_fields(self) -> None:
        self._loading = True
        out = self.data.get("outcome") or {}
        prods = out.get("products") or []
        p = prods[0] if prods else {}
        q = p.get("qnmr") or {}
        values = {"product": p.get("product", ""), "isolated_mass": p.get("isolated_mass", ""), "dr": p.get("dr", ""),
                  "er": p.get("er", ""), "ee": p.get("ee", ""), "recovered_precursor": out.get("recovered_precursor", ""),
                  "observations": out.get("observations", "")}
        for k in QNMR_KEYS:
            values[k] = q.get(k, "")
        for key, *_ in OUTCOME_FIELDS:
            v = values.get(key)
            self.query_one(f"#out-{key}", Input).value = "" if v is None else qtext(v)
        self._loading = False

    # --- live recompute ---------------------------------------------------------
    def changed(self) -> None:
        if self._recompute_timer is not None:
            self._recompute_timer.stop()
        self._recompute_timer = self.set_timer(0.05, self.recompute)
        if self._draft_timer is not None:
            self._draft_timer.stop()
        self._draft_timer = self.set_timer(0.6, self.keep_draft)

    @property
    def dirty(self) -> bool:
        return json.dumps(self.data, sort_keys=True) != self.original

    def build(self, data: dict | None = None):
        from ...records import load_run

        return load_run(clean(data if data is not None else self.data))

    def recompute(self) -> None:
        """Rebuild the run from the form and refresh every computed panel."""
        from ... import amounts

        self._recompute_timer = None
        table_problem = None
        try:
            self.run = self.build()
            self.problem = None
        except TrapbookError as exc:
            self.run = None
            self.problem = exc.message
        self.table = None
        if self.run is not None:
            try:
                self.table = amounts.compute(self.run)
            except TrapbookError as exc:
                table_problem = exc.message
            self.look_up_strain()
            try:
                self.findings = self._findings()
            except TrapbookError as exc:
                self.findings, table_problem = [], exc.message
        self.refresh_lines()
        self.refresh_steps()
        self.refresh_yields()
        from ..widgets.findings import findings_text
        from ..widgets.strain_card import card
        from ..widgets.timeline import track

        findings = self.findings if self.run else None
        if self.run is not None:
            self.put("#track", track(self.run, findings))
        else:
            self.put("#track", Text("the run is not complete yet", style="italic #8fa3b8"))
        if self.run is None:
            self.put("#checks", findings_text([], "run not complete: " + (self.problem or "")))
        else:
            self.put("#checks", findings_text(findings, table_problem))
        smiles = self.intermediate_smiles()
        self.put("#strain", card(smiles, self.strain, self.alignment, self.strain_note),
                 key=(smiles, json.dumps(self.strain, sort_keys=True, default=str),
                      json.dumps(self.alignment, sort_keys=True, default=str), self.strain_note))
        self.refresh_status()

    def _findings(self):
        try:
            from ... import checks
        except ImportError:
            return None
        from ...strain_link import settings_for

        return checks.run_checks(self.run, strain=self.strain, alignment=self.alignment, settings=settings_for(self.nb))

    def refresh_status(self) -> None:
        where = f"{self.run_id} v{self.base_version}" if self.run_id else "new run (not yet in the notebook)"
        state = "unsaved changes, kept as a draft" if self.dirty else "no unsaved changes"
        text = Text(f"{where} · {state} · ")
        if self.problem:
            text.append("cannot be saved yet: " + self.problem.replace("\n", " "), style="#ff6f59")
        else:
            text.append("complete: ctrl+s saves", style="#9be564")
        self.put("#status", text, layout=False)

    def keep_draft(self) -> None:
        self._draft_timer = None
        if self.dirty:
            self.nb.set_setting(self.draft_key, {"data": self.data, "base_version": self.base_version,
                                                 "saved": _dt.datetime.now().isoformat(timespec="seconds")})

    def drop_draft(self) -> None:
        if self._draft_timer is not None:
            self._draft_timer.stop()
            self._draft_timer = None
        if self.nb.get_setting(self.draft_key) is not None:
            self.nb.set_setting(self.draft_key, None)

    # --- the Run tab ------------------------------------------------------------
    @on(Input.Changed)
    def _input_changed(self, event: Input.Changed) -> None:
        fid = event.input.id or ""
        row = event.input.parent
        if isinstance(row, Field):
            row.run_check()
        if self._loading:
            return
        if fid.startswith("run-"):
            key = fid[4:]
            value = event.value
            if key == "tags":
                value = [t.strip() for t in value.split(",") if t.strip()]
            self.data[key] = value
            self.changed()
        elif fid.startswith("line-"):
            self.preview_line()
        elif fid.startswith("step-"):
            self.preview_step()
        elif fid.startswith("out-"):
            self.apply_outcome()

    @on(Input.Submitted)
    def _submitted(self, event: Input.Submitted) -> None:
        fid = event.input.id or ""
        if fid.startswith("line-"):
            self.commit_line()
        elif fid.startswith("step-"):
            self.commit_step()
        elif fid.startswith("run-") or fid.startswith("out-"):
            self.focus_next()

    # --- lines ------------------------------------------------------------------
    def line_form(self) -> tuple[dict | None, str | None]:
        """The line being written, as a stored-form dict, or why it is not one yet."""
        v = {k: self.query_one(f"#line-{k}", Input).value.strip() for k, *_ in LINE_FIELDS}
        if not v["role"] and not v["name"]:
            return None, None
        if not v["role"]:
            return None, "give the line a role"
        if not v["name"]:
            return None, "give the line a name"
        line: dict = {"role": v["role"], "name": v["name"]}
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
        for k in ("molar_mass", "limiting", "lot", "note"):
            if k in old:
                line[k] = old[k]
        from ...records import Line

        try:
            Line.model_validate(line)
        except ValidationError as exc:
            return None, _pydantic_words(exc)
        except TrapbookError as exc:
            return None, exc.message
        for i, other in enumerate(self.data["lines"]):
            if i != self.line_index and other.get("name", "").casefold() == line["name"].casefold():
                return None, f"another line is already called '{line['name']}'"
        return line, None

    def with_line(self, line: dict) -> dict:
        data = copy.deepcopy(self.data)
        if self.line_index is None:
            data["lines"].append(line)
        else:
            old = data["lines"][self.line_index].get("name")
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
        from ... import amounts
        from ...units import fmt_mg, fmt_mmol, fmt_ul

        line, why = self.line_form()

        def say(text: Text) -> None:
            self.put("#line-msg", text, layout=False)

        if line is None:
            say(Text(why or "", style="#ff6f59"))
            return
        if line["role"] == "product":
            say(Text("Enter keeps this line", style="#8fa3b8"))
            return
        try:
            table = amounts.compute(self.build(self.with_line(line)))
            row = table.line(line["name"])
            bits = [f"{fmt_mmol(row.mmol)} mmol" if row.mmol is not None else None,
                    f"{row.equiv:.3g} equiv" if row.equiv is not None else None,
                    f"{fmt_mg(row.mass_mg)} mg" if row.mass_mg is not None else None,
                    f"{fmt_ul(row.volume_ul)} µL" if row.volume_ul is not None else None]
            say(Text("→ " + " · ".join(b for b in bits if b) + "   (Enter keeps this line)", style="#9be564"))
        except TrapbookError as exc:
            say(Text(f"valid line; amounts not yet worked out: {exc.message}   (Enter keeps it)", style="#f2c14e"))

    def commit_line(self) -> None:
        line, why = self.line_form()
        if line is None:
            self.put("#line-msg", Text(why or "the form is empty", style="#ff6f59"), layout=False)
            return
        self.data = self.with_line(line)
        self.blank_line()
        self.changed()
        self.recompute()

    def blank_line(self) -> None:
        self.line_index = None
        self._loading = True
        for k, *_ in LINE_FIELDS:
            self.query_one(f"#line-{k}", Input).value = ""
        self._loading = False
        self.put("#line-head", Text("New line — Enter keeps it; pick a row above to change one", style="#8fa3b8"), layout=False)
        self.put("#line-msg", Text(""), layout=False)
        self.query_one("#line-role", Input).focus()

    def edit_line(self, index: int) -> None:
        line = self.data["lines"][index]
        self.line_index = index
        amount = next((line[k] for k in forms.AMOUNT_FIELDS if line.get(k) not in (None, "")), "")
        values = {"role": line.get("role", ""), "name": line.get("name", ""), "smiles": line.get("smiles", ""),
                  "amount": qtext(amount), "form": qtext(line.get("density") or line.get("molarity") or ""),
                  "purity": qtext(line.get("purity", "")), "water": qtext(line.get("water", ""))}
        for k, *_ in LINE_FIELDS:
            self.query_one(f"#line-{k}", Input).value = values[k] or ""
        self.put("#line-head", Text(f"Changing line {index + 1} — Enter keeps it; ctrl+n for a new line", style="#f2c14e"), layout=False)
        self.query_one("#line-name", Input).focus()

    def refresh_lines(self) -> None:
        from ...units import fmt_equiv, fmt_mg, fmt_mmol, fmt_ul

        t = self.query_one("#lines", DataTable)
        rows = []
        for i, line in enumerate(self.data.get("lines", [])):
            row = self.table.line(line.get("name", "")) if self.table else None
            given = next((k for k in forms.AMOUNT_FIELDS if line.get(k) not in (None, "")), "—")
            role = line.get("role") or ""
            cells = [str(i + 1), ROLE_SHORT.get(role, role)[:9], clip(line.get("name"), 18), given]
            if row is not None:
                cells += [fmt_equiv(row.equiv), fmt_mmol(row.mmol), fmt_mg(row.mass_mg), fmt_ul(row.volume_ul),
                          f"{row.mw_g_mol:.2f}" if row.mw_g_mol else "—"]
            else:
                cells += ["", "", "", "", ""]
            rows.append(cells)
        self._fill_table(t, rows)

    def _fill_table(self, t: DataTable, rows: list[list]) -> None:
        """Refill a table only if its rows changed, keeping the cursor where it was."""
        shown = self.__dict__.setdefault("_table_rows", {})
        if shown.get(t.id) == rows:
            return
        shown[t.id] = rows
        keep = t.cursor_row
        t.clear()
        for i, cells in enumerate(rows):
            t.add_row(*cells, key=str(i))
        if t.row_count:
            t.move_cursor(row=min(max(keep, 0), t.row_count - 1), animate=False)

    @on(DataTable.RowSelected, "#lines")
    def _line_selected(self, event: DataTable.RowSelected) -> None:
        self.edit_line(int(event.row_key.value))

    # --- steps ------------------------------------------------------------------
    def step_form(self) -> tuple[dict | None, str | None]:
        v = {k: self.query_one(f"#step-{k}", Input).value.strip() for k, *_ in STEP_FIELDS}
        sealed = self.query_one("#step-sealed", Checkbox).value
        if not any(v.values()) and not sealed:
            return None, None
        names, problems = forms.resolve_adds(v["add"], self.data.get("lines", []))
        if problems:
            return None, "; ".join(problems)
        step: dict = {"add": names}
        for k in ("temperature", "hold", "over", "atmosphere", "note"):
            if v[k]:
                step[k] = v[k]
        if sealed:
            step["sealed"] = True
        from ...records import Step

        try:
            Step.model_validate(step)
        except ValidationError as exc:
            return None, _pydantic_words(exc)
        except TrapbookError as exc:
            return None, exc.message
        return step, None

    def preview_step(self) -> None:
        step, why = self.step_form()
        if step is None:
            self.put("#step-msg", Text(why or "", style="#ff6f59"), layout=False)
        else:
            adds = ", ".join(step["add"]) or "nothing added (a hold or temperature change)"
            self.put("#step-msg", Text(f"→ adds {adds}   (Enter keeps this step)", style="#9be564"), layout=False)

    def commit_step(self) -> None:
        step, why = self.step_form()
        if step is None:
            self.put("#step-msg", Text(why or "the form is empty", style="#ff6f59"), layout=False)
            return
        steps = self.data.setdefault("steps", [])
        if self.step_index is None:
            steps.append(step)
        else:
            steps[self.step_index] = step
        self.blank_step()
        self.query_one("#step-add", Input).focus()
        self.changed()
        self.recompute()

    def blank_step(self) -> None:
        self.step_index = None
        self._loading = True
        for k, *_ in STEP_FIELDS:
            self.query_one(f"#step-{k}", Input).value = ""
        self.query_one("#step-sealed", Checkbox).value = False
        self._loading = False
        self.put("#step-head", Text("New step — Enter keeps it; pick a row above to change one", style="#8fa3b8"), layout=False)
        self.put("#step-msg", Text(""), layout=False)

    def edit_step(self, index: int) -> None:
        step = self.data["steps"][index]
        self.step_index = index
        self.query_one("#step-add", Input).value = "; ".join(step.get("add", []))
        for k in ("temperature", "hold", "over", "atmosphere", "note"):
            self.query_one(f"#step-{k}", Input).value = qtext(step.get(k, ""))
        self.query_one("#step-sealed", Checkbox).value = bool(step.get("sealed"))
        self.put("#step-head", Text(f"Changing step {index + 1} — Enter keeps it; ctrl+n for a new step", style="#f2c14e"), layout=False)
        self.query_one("#step-add", Input).focus()

    def refresh_steps(self) -> None:
        t = self.query_one("#steps", DataTable)
        rows = []
        roles = {ln.get("name", "").casefold(): ln.get("role") for ln in self.data.get("lines", [])}
        for i, step in enumerate(self.data.get("steps", [])):
            adds = step.get("add", [])
            marks = []
            if any(roles.get(n.casefold()) == "trap" for n in adds):
                marks.append("● trap")
            if any(roles.get(n.casefold()) == "fluoride source" for n in adds):
                marks.append("● F⁻")
            rows.append([str(i + 1), clip("; ".join(adds) or "—", 26), qtext(step.get("temperature")) or "—",
                         qtext(step.get("hold")) or "", qtext(step.get("over")) or "", "▣" if step.get("sealed") else "",
                         " ".join(marks)])
        self._fill_table(t, rows)

    @on(DataTable.RowSelected, "#steps")
    def _step_selected(self, event: DataTable.RowSelected) -> None:
        self.edit_step(int(event.row_key.value))

    # --- outcome ----------------------------------------------------------------
    def apply_outcome(self) -> None:
        """Outcome fields go into the run as typed; bad fields are left out and flagged."""
        v = {k: self.query_one(f"#out-{k}", Input).value.strip() for k, *_ in OUTCOME_FIELDS}
        fields_ok = {k: self.query_one(f"#row-out-{k}", Field).run_check() for k, *_ in OUTCOME_FIELDS}
        products = [ln.get("name") for ln in self.data.get("lines", []) if ln.get("role") == "product"]
        name = v["product"] or (products[0] if len(products) == 1 else "")
        out = copy.deepcopy(self.data.get("outcome") or {})
        others = [p for p in out.get("products", []) if p.get("product") != name]
        entry: dict = {"product": name}
        for k in ("isolated_mass", "dr", "er"):
            if v[k] and fields_ok[k]:
                entry[k] = v[k]
        if v["ee"] and fields_ok["ee"]:
            entry["ee"] = float(v["ee"])
        given = [k for k in QNMR_KEYS if v[k]]
        row = self.query_one("#row-out-integral", Field)
        if given and len(given) < 4:
            row.message("give all four qNMR numbers", ok=False)
        elif given and all(fields_ok[k] for k in QNMR_KEYS):
            q = {k: (int(v[k]) if k.endswith("protons") else float(v[k])) for k in QNMR_KEYS}
            old = next((p.get("qnmr") for p in (self.data.get("outcome") or {}).get("products", []) if p.get("product") == name), None) or {}
            for k in ("standard", "standard_amount"):
                if k in old:
                    q[k] = old[k]
            entry["qnmr"] = q
        prow = self.query_one("#row-out-product", Field)
        has_data = len(entry) > 1
        if has_data and not name:
            prow.message("name the product line this is for", ok=False)
        elif name and name not in products:
            prow.message(f"no product line '{name}' (add one on the Lines tab)", ok=False)
        else:
            prow.message("")
        products_out = others + ([entry] if has_data and name else [])
        out["products"] = products_out
        for k in ("recovered_precursor", "observations"):
            if v[k] and fields_ok[k]:
                out[k] = v[k]
            else:
                out.pop(k, None)
        if not out["products"] and not out.get("recovered_precursor") and not out.get("observations"):
            self.data.pop("outcome", None)
        else:
            self.data["outcome"] = out
        self.changed()

    def refresh_yields(self) -> None:
        from ... import amounts

        if self.run is None or self.table is None or self.run.outcome is None:
            self.put("#yields", Text("Yields appear here once the run and its outcome are complete.", style="italic #8fa3b8"))
            return
        try:
            ys = amounts.product_yields(self.run, self.table)
        except TrapbookError as exc:
            self.put("#yields", Text(exc.message, style="#f2c14e"))
            return
        out = Text()
        for y in ys:
            out.append(f"{y.product}: ", style="bold")
            bits = []
            if y.isolated_yield_pct is not None:
                bits.append(f"{y.isolated_yield_pct:.1f} % isolated ({y.isolated_mmol:.3g} mmol)")
            if y.nmr_yield_pct is not None:
                bits.append(f"{y.nmr_yield_pct:.1f} % by qNMR ({y.nmr_mmol:.3g} mmol)")
            if y.dr:
                bits.append(f"dr {y.dr}")
            if y.ee_pct is not None:
                bits.append(f"ee {y.ee_pct:.1f} % ({y.ee_source})")
            out.append(", ".join(bits) or "no yield yet")
            out.append("\n")
        self.put("#yields", out)

    # --- strain -----------------------------------------------------------------
    def intermediate_smiles(self) -> str | None:
        if self.run is not None:
            from ...strain_link import intermediate_of

            try:
                return intermediate_of(self.run)
            except TrapbookError:
                return self.run.intermediate
        return (self.data.get("intermediate") or "").strip() or None

    def look_up_strain(self) -> None:
        """Cached strain and alignment for the current structures (never computed here)."""
        from ...strain_link import strain_for_run

        try:
            self.strain = strain_for_run(self.nb, self.run)
        except TrapbookError:
            self.strain = None
        self.alignment = None
        pre = self.precursor_smiles()
        if pre:
            from ..strainwork import alignment_key

            key = alignment_key(pre)
            self.alignment = self.nb.cache_get(key) if key else None

    def precursor_smiles(self) -> str | None:
        if self.run is None:
            return None
        return next((ln.smiles for ln in self.run.lines_by_role("precursor") if ln.smiles), None)

    def action_strain(self) -> None:
        smiles = self.intermediate_smiles()
        if not smiles:
            self.notify("Give the intermediate's SMILES on the Run tab first.", severity="warning")
            return
        bar = self.query_one("#strain-progress", ProgressBar)
        bar.display = True
        bar.update(total=100, progress=0)
        self.compute_strain(smiles, self.precursor_smiles())

    @work(thread=True, exclusive=True, group="strain", exit_on_error=False)
    def compute_strain(self, smiles: str, precursor: str | None) -> None:
        from ..strainwork import strain_and_alignment

        def progress(stage: str, fraction: float) -> None:
            self.app.call_from_thread(self._strain_progress, stage, fraction)

        try:
            strain, alignment, note = strain_and_alignment(self.nb.path, smiles, precursor, progress)
        except TrapbookError as exc:
            self.app.call_from_thread(self._strain_done, None, None, exc.message)
            return
        self.app.call_from_thread(self._strain_done, strain, alignment, note)

    def _strain_progress(self, stage: str, fraction: float) -> None:
        if not self.is_mounted:
            return
        self.query_one("#strain-progress", ProgressBar).update(progress=round(100 * fraction))
        self.query_one("#strain-stage", Static).update(Text(stage, style="italic #8fa3b8"))

    def _strain_done(self, strain: dict | None, alignment: dict | None, note: str | None) -> None:
        if not self.is_mounted:
            return
        self.query_one("#strain-progress", ProgressBar).display = False
        self.query_one("#strain-stage", Static).update("")
        if strain is not None:
            self.strain = strain
        if alignment is not None:
            self.alignment = alignment
        self.strain_note = note
        self.recompute()

    # --- moving rows ------------------------------------------------------------
    def _active(self) -> str:
        return self.query_one("#tabs", TabbedContent).active

    def action_tab(self, tab: str) -> None:
        self.query_one("#tabs", TabbedContent).active = tab
        first = {"tab-run": "#run-title", "tab-lines": "#line-role", "tab-steps": "#step-add",
                 "tab-outcome": "#out-product"}[tab]
        self.query_one(first, Input).focus()

    def action_blank(self) -> None:
        if self._active() == "tab-steps":
            self.blank_step()
            self.query_one("#step-add", Input).focus()
        else:
            self.blank_line()

    def _rows(self) -> tuple[str, list, DataTable] | None:
        tab = self._active()
        if tab == "tab-lines":
            return "lines", self.data.setdefault("lines", []), self.query_one("#lines", DataTable)
        if tab == "tab-steps":
            return "steps", self.data.setdefault("steps", []), self.query_one("#steps", DataTable)
        return None

    def action_remove(self) -> None:
        found = self._rows()
        if not found or not found[1]:
            return
        what, rows, table = found
        i = min(table.cursor_row, len(rows) - 1)
        removed = rows.pop(i)
        if what == "lines":
            self.blank_line()
        else:
            self.blank_step()
        self.notify(f"Removed {what[:-1]} {i + 1}" + (f" ({removed.get('name')})" if what == "lines" else ""))
        self.changed()
        self.recompute()

    def action_move(self, delta: int) -> None:
        found = self._rows()
        if not found or not found[1]:
            return
        what, rows, table = found
        i = min(table.cursor_row, len(rows) - 1)
        j = i + delta
        if not 0 <= j < len(rows):
            return
        rows[i], rows[j] = rows[j], rows[i]
        self.recompute()
        table.move_cursor(row=j, animate=False)
        self.changed()

    # --- saving and leaving -----------------------------------------------------
    def action_save(self) -> None:
        try:
            run = self.build()
        except TrapbookError as exc:
            self.app.report(exc, "Not saved")
            return
        if self.run_id is None:
            try:
                res = self.nb.add_run(run, author=self.app.author, reason="created")
            except TrapbookError as exc:
                self.app.report(exc, "Not saved")
                return
            self.drop_draft()
            self.saved(res, run)
            return
        from .dialogs import ReasonDialog

        self.app.push_screen(ReasonDialog(self.run_id, self.base_version), self._save_with_reason)

    def _save_with_reason(self, reason: str | None) -> None:
        if not reason:
            self.notify("Not saved: a reason is needed to change a stored run.", severity="warning")
            return
        try:
            run = self.build().model_copy(update={"id": self.run_id})
            res = self.nb.save_run(run, self.base_version, author=self.app.author, reason=reason)
        except StaleVersionError as exc:
            self.keep_draft()
            self.app.report(exc, "Not saved: someone saved first")
            return
        except TrapbookError as exc:
            self.app.report(exc, "Not saved")
            return
        self.drop_draft()
        self.saved(res, run)

    def saved(self, res, run) -> None:
        if self.run_id is None:
            self.drop_draft()
        self.run_id = res.run_id
        self.base_version = res.version
        self.data["id"] = res.run_id
        self.original = json.dumps(self.data, sort_keys=True)
        self.notify(f"{res.run_id} saved as version {res.version}.", title="Saved")
        self.refresh_status()

    def action_history(self) -> None:
        from .history import TrailScreen

        if self.run_id:
            self.app.push_screen(TrailScreen(self.run_id))
        else:
            self.notify("A new run has no history until it is saved (ctrl+s).")

    def action_leave(self) -> None:
        if not self.dirty:
            self.drop_draft()
            self.app.pop_screen()
            return
        from .dialogs import LeaveDialog

        self.app.push_screen(LeaveDialog(), self._leave_answer)

    def _leave_answer(self, answer: str | None) -> None:
        if answer == "keep":
            self.keep_draft()
            self.app.pop_screen()
        elif answer == "discard":
            self.drop_draft()
            self.app.pop_screen()
