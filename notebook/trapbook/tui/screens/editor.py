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
from textual.suggester import SuggestFromList
from textual.widgets import Checkbox, DataTable, Footer, Header, Input, Label, ProgressBar, Static, TabbedContent, TabPane
from pydantic import ValidationError

from ...errors import StaleVersionError, TrapbookError
from .. import forms
from ..outcome_form import PRODUCT_FIELDS, form_values, product_entry
from ..rundata import clean, form_data, plan_from
from ..text import clip, qtext
from ..widgets.field import Field, FormCheck
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
    ("screen", "Screen", "id of its condition screen, e.g. SC-0001", None, None),
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
#: Factor rows on the Run tab: one per varied condition of the run's screen.
MAX_FACTORS = 6
LIMIT_MARK = "◆"
LINE_COLUMNS = (("#", 3), ("role", 10), ("name", 19), ("given", 7), ("equiv", 6), ("mmol", 7), ("mg", 7), ("µL", 6), ("g/mol", 7))
STEP_COLUMNS = (("#", 3), ("adds", 27), ("T", 9), ("hold", 7), ("over", 7), ("seal", 5), ("enters", 12))
PRODUCT_COLUMNS = (("#", 3), ("product", 16), ("isolated", 9), ("yield", 7), ("qNMR ∫P:∫IS", 14), ("NMR", 7),
                   ("dr", 7), ("ee", 9))
ROLE_SHORT = {"fluoride source": "fluoride", "internal standard": "int. std"}


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
        Binding("ctrl+n", "blank", "New row"),
        Binding("ctrl+r", "remove", "Remove"),
        Binding("ctrl+up", "move(-1)", "Move", key_display="^↑/^↓"),
        Binding("ctrl+down", "move(1)", "Move row down", show=False),
        Binding("ctrl+l", "limiting", "Limiting"),
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
        self.product_index: int | None = None
        self.provisional = False
        self.screens: dict = {}
        self.factor_names: list[str] = []
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
        self.screens = {sc.id: sc for sc in self.nb.list_screens()}
        yield Header()
        with Horizontal(id="bench"):
            with TabbedContent(id="tabs", initial="tab-lines"):
                with TabPane("Run F2", id="tab-run"):
                    with VerticalScroll(classes="form"):
                        for key, label, ph, check, sugg in RUN_FIELDS:
                            if key == "screen":
                                yield Field(label, "run-screen", ph, self.check_screen, sorted(self.screens))
                                yield Static("", id="factor-hint", classes="form-note")
                                for i in range(MAX_FACTORS):
                                    yield Field("", f"fac-{i}", "", None, None)
                            else:
                                yield Field(label, f"run-{key}", ph, check, sugg)
                with TabPane("Lines F3", id="tab-lines"):
                    yield DataTable(id="lines", cursor_type="row", cell_padding=0)
                    yield Static("", id="line-head", classes="form-head")
                    with Vertical(classes="form"):
                        for key, label, ph, check, sugg in LINE_FIELDS:
                            yield Field(label, f"line-{key}", ph, check, sugg)
                        yield FormCheck("limiting line: the other lines' equiv refer to it", id="line-limiting")
                    yield Static("", id="line-msg", classes="form-msg")
                with TabPane("Steps F4", id="tab-steps"):
                    yield DataTable(id="steps", cursor_type="row", cell_padding=0)
                    yield Static("", id="step-head", classes="form-head")
                    with Vertical(classes="form"):
                        for key, label, ph, check, sugg in STEP_FIELDS:
                            yield Field(label, f"step-{key}", ph, check, sugg)
                        yield FormCheck("sealed vessel (pressure builds on heating)", id="step-sealed")
                    yield Static("", id="step-msg", classes="form-msg")
                with TabPane("Outcome F5", id="tab-outcome"):
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
        products = self.query_one("#products", DataTable)
        for label, width in PRODUCT_COLUMNS:
            products.add_column(label, width=width)
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
        self.blank_product(focus=False)
        self.recompute()

    def fill_run_fields(self) -> None:
        self._loading = True
        for key, *_ in RUN_FIELDS:
            v = self.data.get(key)
            if key == "tags" and isinstance(v, list):
                v = ", ".join(v)
            box = self.query_one(f"#run-{key}", Input)
            box.value = "" if v is None else str(v)
            box.cursor_position = 0  # show a long title from its start
        self._loading = False
        self.refresh_factor_rows()

    def fill_outcome_fields(self) -> None:
        self._loading = True
        out = self.data.get("outcome") or {}
        values = {"recovered_precursor": out.get("recovered_precursor", ""), "observations": out.get("observations", "")}
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
        self.run, self.problem, self.provisional = self.provisional_run()
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
        self.refresh_products()
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
            self.put("#checks", Text("Checks start once the run has its lines: " + (self.problem or ""), style="italic #f2c14e"))
        else:
            self.put("#checks", findings_text(findings, table_problem or (f"not saved yet: {self.problem}" if self.problem else None)))
        smiles = self.intermediate_smiles()
        derived = smiles if smiles and not (self.data.get("intermediate") or "").strip() else None
        if getattr(self, "_derived_shown", None) != derived:
            self._derived_shown = derived
            self.query_one("#run-intermediate", Input).placeholder = (
                f"from the precursor: {derived}" if derived else "SMILES of the strained intermediate")
        self.put("#strain", card(smiles, self.strain, self.alignment, self.strain_note),
                 key=(smiles, json.dumps(self.strain, sort_keys=True, default=str),
                      json.dumps(self.alignment, sort_keys=True, default=str), self.strain_note))
        self.refresh_status()

    def provisional_run(self):
        """(run, problem, provisional): the run as typed, or as it will be once it has a title.

        A missing title should not keep the amounts and the checks from the chemist who
        starts with the lines, so the run is tried again with a stand-in title; it still
        cannot be saved until it has a real one.
        """
        try:
            return self.build(), None, False
        except TrapbookError as exc:
            message = exc.message
        titled = bool((self.data.get("title") or "").strip())
        has_lines = bool(self.data.get("lines"))
        missing = ([] if titled else ["a title (Run tab, f2)"]) + ([] if has_lines else ["its lines (Lines tab, f3)"])
        if not missing:
            return None, message, False
        problem = "give the run " + " and ".join(missing)
        if not has_lines:
            return None, problem, False
        try:
            return self.build({**self.data, "title": "(untitled)"}), problem, True
        except TrapbookError as exc:
            return None, f"{problem}; also {exc.message}", False

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
            if key == "screen":
                self.refresh_factor_rows()
            self.changed()
        elif fid.startswith("fac-"):
            self.set_factor(row, event.value)
        elif fid.startswith("line-"):
            self.preview_line()
        elif fid.startswith("step-"):
            self.preview_step()
        elif fid.startswith("prod-"):
            self.preview_product()
        elif fid.startswith("out-"):
            self.apply_outcome()

    @on(Input.Submitted)
    def _submitted(self, event: Input.Submitted) -> None:
        fid = event.input.id or ""
        if fid.startswith("line-"):
            self.commit_line()
        elif fid.startswith("step-"):
            self.commit_step()
        elif fid.startswith("prod-"):
            self.commit_product()
        elif fid.startswith(("run-", "out-", "fac-")):
            self.focus_next()

    @on(FormCheck.Submitted)
    def _box_submitted(self, event: FormCheck.Submitted) -> None:
        if event.box.id == "line-limiting":
            self.commit_line()
        elif event.box.id == "step-sealed":
            self.commit_step()

    @on(Checkbox.Changed)
    def _box_changed(self, event: Checkbox.Changed) -> None:
        if self._loading:
            return
        if event.checkbox.id == "line-limiting":
            self.preview_line()
        elif event.checkbox.id == "step-sealed":
            self.preview_step()

    # --- screen and factors (Run tab) -------------------------------------------
    def find_screen(self, text: str):
        """The notebook's screen an id (any case) or exact name means, or None."""
        key = (text or "").strip().casefold()
        if not key:
            return None
        return next((sc for sid, sc in self.screens.items() if sid.casefold() == key or sc.name.casefold() == key), None)

    def check_screen(self, text: str) -> tuple[bool, str]:
        sc = self.find_screen(text)
        if sc is not None:
            return True, clip(sc.name, 24)
        known = ", ".join(sorted(self.screens)) or "none yet"
        return False, f"no such screen (here: {known})"

    def refresh_factor_rows(self) -> None:
        """One row per varied condition of the run's screen, with its levels to complete from."""
        sc = self.find_screen(self.data.get("screen") or "")
        levels: dict[str, list[str]] = {k: list(v) for k, v in (sc.factors if sc else {}).items()}
        for k in self.data.get("factors") or {}:
            levels.setdefault(k, [])
        self.factor_names = list(levels)[:MAX_FACTORS]
        given = self.data.get("factors") or {}
        self._loading = True
        for i in range(MAX_FACTORS):
            row = self.query_one(f"#row-fac-{i}", Field)
            if i >= len(self.factor_names):
                row.display = False
                row.factor_name = None
                continue
            name = self.factor_names[i]
            opts = levels[name]
            row.display = True
            row.factor_name = name
            row.query_one(Label).update(clip(name, 12))
            row.input.placeholder = ("level: " + " · ".join(opts)) if opts else "level of this condition in the run"
            row.input.suggester = SuggestFromList(opts, case_sensitive=False) if opts else None
            row.check = self.level_check(opts)
            value = str(given.get(name) or "")
            if row.input.value != value:
                row.input.value = value
            row.run_check()
        self._loading = False
        if sc is not None:
            hint = Text(f"{sc.id} varies {', '.join(self.factor_names) or 'nothing yet'}: give this run's level of each "
                        "(→ completes a level)", style="#8fa3b8")
        elif (self.data.get("screen") or "").strip():
            hint = Text("")
        else:
            hint = Text("In a condition screen? Give its id above; its varied conditions appear here.", style="#8fa3b8")
        self.put("#factor-hint", hint, layout=True)

    @staticmethod
    def level_check(levels: list[str]):
        def check(text: str) -> tuple[bool, str]:
            if not levels or text.strip().casefold() in (lv.casefold() for lv in levels):
                return True, ""
            return False, "new level, not in screen"

        return check

    def set_factor(self, row, value: str) -> None:
        name = getattr(row, "factor_name", None)
        if not name:
            return
        factors = dict(self.data.get("factors") or {})
        sc = self.find_screen(self.data.get("screen") or "")
        if sc is not None:  # written as the screen lists it, so the run lands in the right cell
            value = next((lv for lv in sc.factors.get(name, []) if lv.casefold() == value.strip().casefold()), value)
        if value.strip():
            factors[name] = value.strip()
        else:
            factors.pop(name, None)
        if factors != (self.data.get("factors") or {}):
            self.data["factors"] = factors
            self.changed()

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
        from ...records import _ROLE_ALIASES

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
        for k in ("molar_mass", "lot", "note"):
            if k in old:
                line[k] = old[k]
        if self.query_one("#line-limiting", Checkbox).value:
            if role == "product":
                return None, "a product line cannot be the limiting line"
            line["limiting"] = True
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
            data = self.with_line(line)
            if not (data.get("title") or "").strip():
                data["title"] = "(untitled)"  # a title is not needed to work out amounts
            table = amounts.compute(self.build(data))
            row = table.line(line["name"])
            bits = [f"{fmt_mmol(row.mmol)} mmol" if row.mmol is not None else None,
                    f"{row.equiv:.3g} equiv" if row.equiv is not None else None,
                    f"{fmt_mg(row.mass_mg)} mg" if row.mass_mg is not None else None,
                    f"{fmt_ul(row.volume_ul)} µL" if row.volume_ul is not None else None]
            say(Text("→ " + " · ".join(b for b in bits if b) + "   (Enter keeps this line)", style="#9be564"))
        except TrapbookError as exc:
            say(Text(f"valid line; amounts not yet worked out: {exc.message}   (Enter keeps it)", style="#f2c14e"))

    def commit_line(self, focus: bool = True) -> bool:
        line, why = self.line_form()
        if line is None:
            self.put("#line-msg", Text(why or "the form is empty", style="#ff6f59"), layout=False)
            return False
        self.data = self.with_line(line)
        self.blank_line(focus=focus)
        self.changed()
        self.recompute()
        return True

    def blank_line(self, focus: bool = True) -> None:
        self.line_index = None
        self._loading = True
        for k, *_ in LINE_FIELDS:
            self.query_one(f"#line-{k}", Input).value = ""
        self.query_one("#line-limiting", Checkbox).value = False
        self._loading = False
        self.put("#line-head", Text(f"New line — Enter keeps it · pick a row to change it · {LIMIT_MARK} limiting: ctrl+l",
                                    style="#8fa3b8"), layout=False)
        self.put("#line-msg", Text(""), layout=False)
        if focus:
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
        marked = bool(line.get("limiting")) or (self.data.get("limiting") or "").casefold() == line.get("name", "").casefold()
        self.query_one("#line-limiting", Checkbox).value = marked
        self.put("#line-head", Text(f"Changing line {index + 1} — Enter keeps it; ctrl+n for a new line", style="#f2c14e"), layout=False)
        self.query_one("#line-name", Input).focus()

    def refresh_lines(self) -> None:
        from ...units import fmt_equiv, fmt_mg, fmt_mmol, fmt_ul

        t = self.query_one("#lines", DataTable)
        rows = []
        limiting = (self.table.limiting if self.table else "").casefold()
        for i, line in enumerate(self.data.get("lines", [])):
            row = self.table.line(line.get("name", "")) if self.table else None
            given = next((k for k in forms.AMOUNT_FIELDS if line.get(k) not in (None, "")), "—")
            role = line.get("role") or ""
            mark = LIMIT_MARK if limiting and line.get("name", "").casefold() == limiting else ""
            cells = [f"{i + 1}{mark}", ROLE_SHORT.get(role, role)[:9], clip(line.get("name"), 18), given]
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

    def commit_step(self, focus: bool = True) -> bool:
        step, why = self.step_form()
        if step is None:
            self.put("#step-msg", Text(why or "the form is empty", style="#ff6f59"), layout=False)
            return False
        steps = self.data.setdefault("steps", [])
        if self.step_index is None:
            steps.append(step)
        else:
            steps[self.step_index] = step
        self.blank_step()
        if focus:
            self.query_one("#step-add", Input).focus()
        self.changed()
        self.recompute()
        return True

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
        from ... import amounts

        entry, why = self.product_form()
        if entry is None:
            self.put("#prod-msg", Text(why or "", style="#ff6f59"), layout=False)
            return
        data = self.with_product(entry)
        if not (data.get("title") or "").strip():
            data["title"] = "(untitled)"
        try:
            run = self.build(data)
            ys = amounts.product_yields(run)
            y = next(y for y in ys if y.product.casefold() == entry["product"].casefold())
            text = "→ " + (yield_words(y) or "kept as given") + "   (Enter keeps this result)"
            self.put("#prod-msg", Text(text, style="#9be564"), layout=False)
        except (TrapbookError, StopIteration) as exc:
            why = exc.message if isinstance(exc, TrapbookError) else "no yield"
            self.put("#prod-msg", Text(f"valid result; yield not worked out yet: {why}   (Enter keeps it)", style="#f2c14e"),
                     layout=False)

    def commit_product(self, focus: bool = True) -> bool:
        entry, why = self.product_form()
        if entry is None:
            self.put("#prod-msg", Text(why or "the form is empty", style="#ff6f59"), layout=False)
            return False
        self.data = self.with_product(entry)
        self.blank_product(focus=focus)
        self.changed()
        self.recompute()
        return True

    def blank_product(self, focus: bool = True) -> None:
        self.product_index = None
        self._loading = True
        for k, *_ in PRODUCT_FIELDS:
            self.query_one(f"#prod-{k}", Input).value = ""
        self._loading = False
        self.put("#prod-head", Text("New product result — Enter keeps it; pick a row above to change one", style="#8fa3b8"),
                 layout=False)
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
        self.put("#prod-head", Text(f"Changing result {index + 1} ({rows[index].get('product')}) — Enter keeps it; "
                                    "ctrl+n for a new one", style="#f2c14e"), layout=False)
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
                qn = "{:g}/{}:{:g}/{}".format(float(q.get("integral") or 0), q.get("protons", ""),
                                              float(q.get("standard_integral") or 0), q.get("standard_protons", ""))
            ee = ""
            if y is not None and y.ee_pct is not None:
                ee = f"{y.ee_pct:.0f} %"
            elif p.get("ee") is not None:
                ee = f"{p['ee']} %"
            rows.append([str(i + 1), clip(p.get("product"), 15), clip(qtext(p.get("isolated_mass")), 8) or "—",
                         f"{y.isolated_yield_pct:.0f} %" if y and y.isolated_yield_pct is not None else "—",
                         clip(qn, 13) or "—",
                         f"{y.nmr_yield_pct:.0f} %" if y and y.nmr_yield_pct is not None else "—",
                         clip(p.get("dr") or "", 6), clip(ee or p.get("er") or "", 8)])
        self._fill_table(self.query_one("#products", DataTable), rows)

    @on(DataTable.RowSelected, "#products")
    def _product_selected(self, event: DataTable.RowSelected) -> None:
        self.edit_product(int(event.row_key.value))

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
        if out is not None and not out.get("products") and not any(out.get(k) for k, *_ in OUTCOME_FIELDS):
            self.data.pop("outcome", None)

    def refresh_yields(self) -> None:
        from ...units import fmt_mmol

        if self.run is None or self.table is None or self.run.outcome is None or not self.run.outcome.products:
            self.put("#yields", Text("Yields appear here once the run has its lines and a product result.",
                                     style="italic #8fa3b8"))
            return
        out = Text()
        for name, y, why in yields_each(self.run, self.table):
            out.append(f"{name}: ", style="bold")
            if y is None:
                out.append(why or "no yield", style="#f2c14e")
            else:
                out.append(yield_words(y) or "no yield yet")
            out.append("\n")
        out.append(f"yields on {fmt_mmol(self.table.limiting_mmol)} mmol of {self.table.limiting} (the limiting line)",
                   style="italic #8fa3b8")
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
            from ...strain_link import get_alignment

            try:
                self.alignment = get_alignment(self.nb, pre, compute=False)
            except TrapbookError:
                self.alignment = None

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
                 "tab-outcome": "#prod-product"}[tab]
        self.query_one(first, Input).focus()
        self.refresh_bindings()

    @on(TabbedContent.TabActivated)
    def _tab_activated(self) -> None:
        self.refresh_bindings()  # the footer shows only the keys that work on this tab

    def check_action(self, action: str, parameters: tuple) -> bool | None:
        """Row keys only where there are rows; the limiting mark only on the Lines tab."""
        if action not in ("blank", "remove", "move", "limiting"):
            return True
        try:
            tab = self._active()
        except Exception:  # not composed yet
            return True
        if action == "limiting":
            return tab == "tab-lines"
        return tab in ("tab-lines", "tab-steps", "tab-outcome")

    def action_blank(self) -> None:
        tab = self._active()
        if tab == "tab-steps":
            self.blank_step()
            self.query_one("#step-add", Input).focus()
        elif tab == "tab-outcome":
            self.blank_product()
        elif tab == "tab-lines":
            self.blank_line()

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
            self.notify(f"'{name}' is given in equiv; give it an amount, mass or volume first, then mark it limiting.",
                        severity="warning", timeout=6)
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

    def _rows(self) -> tuple[str, list, DataTable] | None:
        tab = self._active()
        if tab == "tab-lines":
            return "lines", self.data.setdefault("lines", []), self.query_one("#lines", DataTable)
        if tab == "tab-steps":
            return "steps", self.data.setdefault("steps", []), self.query_one("#steps", DataTable)
        if tab == "tab-outcome":
            out = self.data.get("outcome") or {}  # no empty outcome is made just by looking
            return "products", out.get("products") or [], self.query_one("#products", DataTable)
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
            label = f"line {i + 1} ({removed.get('name')})"
        elif what == "steps":
            self.blank_step()
            label = f"step {i + 1}"
        else:
            self.tidy_outcome()
            self.blank_product()
            label = f"the result for {removed.get('product')}"
        self.notify(f"Removed {label}.")
        self.changed()
        self.recompute()

    def action_move(self, delta: int) -> None:
        found = self._rows()
        if not found or not found[1]:
            return
        what, rows, table = found
        if not rows:
            return
        i = min(table.cursor_row, len(rows) - 1)
        j = i + delta
        if not 0 <= j < len(rows):
            return
        rows[i], rows[j] = rows[j], rows[i]
        self.recompute()
        table.move_cursor(row=j, animate=False)
        self.changed()

    # --- saving and leaving -----------------------------------------------------
    def keep_pending(self) -> str | None:
        """Keep a line, step or product result still in its form; say why if one cannot be.

        A chemist who types the isolated mass and presses ctrl+s means it to be saved; an
        Enter forgotten must not lose it, and a half-written row must not be saved silently.
        """
        forms_ = (("line", "Lines", self.line_form, self.commit_line, lambda: self.line_index),
                  ("step", "Steps", self.step_form, self.commit_step, lambda: self.step_index),
                  ("product result", "Outcome", self.product_form, self.commit_product, lambda: self.product_index))
        kept = []
        for what, tab, form, commit, index in forms_:
            row, why = form()
            if row is None and why:
                return f"the {tab} tab holds an unfinished {what}: {why}. Finish it (Enter) or clear it (ctrl+n)."
            if row is not None:
                new = index() is None
                commit(focus=False)
                if new:
                    kept.append(what)
        if kept:
            self.notify("Kept the " + " and the ".join(kept) + " still in the form.", title="Kept")
        return None

    def action_save(self) -> None:
        pending = self.keep_pending()
        if pending:
            self.notify(pending, title="Not saved", severity="error", timeout=8)
            return
        screen_text = (self.data.get("screen") or "").strip()
        if screen_text:
            sc = self.find_screen(screen_text)
            if sc is None:
                self.notify(f"No screen '{screen_text}' in this notebook: give one of {', '.join(sorted(self.screens)) or '(none)'} "
                            "or leave Screen blank (Run tab, f2).", title="Not saved", severity="error", timeout=8)
                return
            self.data["screen"] = sc.id
        try:
            run = self.build()
        except TrapbookError as exc:
            if self.problem:
                self.notify(f"The run cannot be saved yet: {self.problem}.", title="Not saved", severity="error", timeout=8)
            else:
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
        self.app.last_run = res.run_id  # the Logbook puts its cursor here on the way back
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
        if self.run_id:
            self.app.last_run = self.run_id
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
