"""Workbench: write a run as it happens at the bench, and see what the core makes of it.

The run is held as form text (what the chemist typed, "10 equiv", "-78 °C") and rebuilt
with `records.load_run` after every change: if it loads, the amounts, the addition track,
the bench checks and the strain card follow it live; if it does not, the reason is shown
and nothing can be saved. Unsaved work is kept as a draft in the notebook's settings, so
leaving (or a crash) loses nothing; saving a stored run asks why and refuses a stale save.
"""

from __future__ import annotations

import datetime as _dt
import json

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import Screen
from textual.widgets import Checkbox, DataTable, Header, Input, Static, TabbedContent, TabPane

from ...errors import StaleVersionError, TrapbookError
from ..messages import RowCommand, StrainDone
from ..outcome_form import PRODUCT_FIELDS
from ..rundata import form_data, plan_from
from ..widgets.bench_side import BenchSide
from ..widgets.field import Field, FormCheck
from ..widgets.keybar import KeyBar
from ..widgets.row_tabs import LinesTab, OutcomeTab
from ..widgets.steps_tab import StepsTab
from .workbench.lines_tab import LINE_COLUMNS, LINE_FIELDS, LinesTabMixin  # noqa: F401  (LINE_COLUMNS: for tests)
from .workbench.live import LiveRunMixin
from .workbench.outcome_tab import OUTCOME_FIELDS, PRODUCT_CHECKS, PRODUCT_COLUMNS, OutcomeTabMixin
from .workbench.repaint import RepaintMixin
from .workbench.rows import TabRowsMixin
from .workbench.run_tab import MAX_FACTORS, RUN_FIELDS, RunTabMixin
from .workbench.steps_tab import StepsTabMixin
from .workbench.strain_panel import StrainPanelMixin

NEW_DRAFT = "draft:new"


class WorkbenchScreen(
    RunTabMixin, LinesTabMixin, StepsTabMixin, OutcomeTabMixin, StrainPanelMixin, TabRowsMixin, LiveRunMixin, RepaintMixin, Screen
):
    """The run editor: its layout, keys and event routing, and opening, saving and leaving a run.

    Each tab's form, the strain card, the live rebuild and the row keys are mixins from
    `screens/workbench/`; the state they share is set up here.
    """

    BINDINGS = [  # in order of importance: the footer shows the first that fit, f1 lists them all
        Binding("ctrl+s", "save", "Save"),
        Binding("escape", "leave", "Back"),
        Binding("f7", "side", "Track/checks"),
        Binding("f2", "tab('tab-run')", "Run tab", show=False),  # the tab titles show f2-f5
        Binding("f3", "tab('tab-lines')", "Lines tab", show=False),
        Binding("f4", "tab('tab-steps')", "Steps tab", show=False),
        Binding("f5", "tab('tab-outcome')", "Outcome tab", show=False),
        Binding("ctrl+g", "strain", "Strain"),
        Binding("f6", "history", "History"),
        # the row keys (new, remove, move, limiting) belong to the table tabs: widgets/row_tabs.py
    ]

    def __init__(self, run_id: str | None = None, copy_of: str | None = None):
        super().__init__()
        self.run_id = run_id
        self.copy_of = copy_of
        self.base_version: int | None = None
        self.data: dict = {}
        self.original = ""
        self.line_index: int | None = None
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
                with LinesTab("Lines F3", id="tab-lines"):
                    yield DataTable(id="lines", cursor_type="row", cell_padding=0)
                    yield Static("", id="line-head", classes="form-head")
                    with Vertical(classes="form"):
                        for key, label, ph, check, sugg in LINE_FIELDS:
                            yield Field(label, f"line-{key}", ph, check, sugg)
                        yield FormCheck("limiting line: the other lines' equiv refer to it", id="line-limiting")
                    yield Static("", id="line-msg", classes="form-msg")
                yield StepsTab("Steps F4", id="tab-steps")
                with OutcomeTab("Outcome F5", id="tab-outcome"):
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
            yield BenchSide(id="bench-side")
        yield Static("", id="status")
        yield KeyBar()

    def on_mount(self) -> None:
        products = self.query_one("#products", DataTable)
        for label, width in PRODUCT_COLUMNS:
            products.add_column(label, width=width)
        self.fit_name_column()
        self.load()
        self.query_one("#line-role", Input).focus()

    def on_resize(self) -> None:
        self.call_after_refresh(self.fit_name_column)
        if self.run is not None:  # the addition track is drawn to the width the side panel has
            self.call_after_refresh(self.recompute)

    def action_side(self) -> None:
        """f7: the order of additions, strain card and checks — a pane of its own under 120 columns."""
        self.toggle_class("-side-toggled")
        narrow = self.has_class("-narrow")
        if narrow and self.has_class("-side-toggled"):
            self._focus_before_side = self.focused
            self.query_one("#checks-scroll").focus()
        elif narrow:
            back = getattr(self, "_focus_before_side", None)
            if back is not None and back.is_attached:
                back.focus()
            else:
                self.action_tab(self._active())
        self.call_after_refresh(self.fit_name_column)
        self.call_after_refresh(self.recompute)

    def on_row_command(self, message: RowCommand) -> None:
        """A table tab's row key: done here, on the run the screen holds (rows.py, lines_tab.py)."""
        message.stop()
        if message.command == "blank":
            self.action_blank()
        elif message.command == "remove":
            self.action_remove()
        elif message.command == "move":
            self.action_move(message.delta)
        elif message.command == "limiting":
            self.action_limiting()
        elif message.command == "expected":
            self.action_expected()

    def on_strain_done(self, message: StrainDone) -> None:
        """The side panel's strain computation finished: keep what it found and rebuild."""
        if message.strain is not None:
            self.strain = message.strain
        if message.alignment is not None:
            self.alignment = message.alignment
        self.strain_note = message.note
        self.recompute()

    def repaint_colours(self) -> None:
        """After a change of theme: every panel drawn again in the new colours."""
        self.__dict__.pop("_shown", None)
        self.__dict__.pop("_table_rows", None)
        self.recompute()

    @property
    def nb(self):
        return self.app.nb

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
            # The plan is the new run of whoever copies it, if they said who they are; a login
            # name ("root") never replaces the chemist the run's author chose.
            self.data["chemist"] = self.app.chosen_author or self.data.get("chemist")
        else:
            self.data = {
                "title": "",
                "chemist": self.app.chosen_author or "",
                "date": _dt.date.today().isoformat(),
                "status": "planned",
                "lines": [],
                "steps": [],
            }
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

    # --- drafts -----------------------------------------------------------------
    def keep_draft(self) -> None:
        self._draft_timer = None
        if self.dirty:
            self.nb.set_setting(
                self.draft_key,
                {"data": self.data, "base_version": self.base_version, "saved": _dt.datetime.now().isoformat(timespec="seconds")},
            )

    def drop_draft(self) -> None:
        if self._draft_timer is not None:
            self._draft_timer.stop()
            self._draft_timer = None
        if self.nb.get_setting(self.draft_key) is not None:
            self.nb.set_setting(self.draft_key, None)

    # --- events of the forms and tables -----------------------------------------
    @on(Input.Changed)
    def _input_changed(self, event: Input.Changed) -> None:
        fid = event.input.id or ""
        row = event.input.parent
        if isinstance(row, Field):
            row.run_check()
        if self._loading:
            return
        if fid.startswith("run-"):
            self.set_run_field(fid[4:], event.value)
        elif fid.startswith("fac-"):
            self.set_factor(row, event.value)
        elif fid.startswith("line-"):
            self.preview_line()
        elif fid.startswith("prod-"):
            self.preview_product()
        elif fid.startswith("out-"):
            self.apply_outcome()

    @on(Input.Submitted)
    def _submitted(self, event: Input.Submitted) -> None:
        fid = event.input.id or ""
        if fid.startswith("line-"):
            self.commit_line()
        elif fid.startswith("prod-"):
            self.commit_product()
        elif fid.startswith(("run-", "out-", "fac-")):
            self.focus_next()

    @on(FormCheck.Submitted)
    def _box_submitted(self, event: FormCheck.Submitted) -> None:
        if event.box.id == "line-limiting":
            self.commit_line()

    @on(Checkbox.Changed)
    def _box_changed(self, event: Checkbox.Changed) -> None:
        if self._loading:
            return
        if event.checkbox.id == "line-limiting":
            self.preview_line()

    @on(DataTable.RowSelected, "#lines")
    def _line_selected(self, event: DataTable.RowSelected) -> None:
        self.edit_line(int(event.row_key.value))

    @on(DataTable.RowSelected, "#products")
    def _product_selected(self, event: DataTable.RowSelected) -> None:
        self.edit_product(int(event.row_key.value))

    # --- tabs -------------------------------------------------------------------
    def _active(self) -> str:
        return self.query_one("#tabs", TabbedContent).active

    def action_tab(self, tab: str) -> None:
        self.query_one("#tabs", TabbedContent).active = tab
        first = {"tab-run": "#run-title", "tab-lines": "#line-role", "tab-steps": "#step-add", "tab-outcome": "#prod-product"}[
            tab
        ]
        self.query_one(first, Input).focus()
        self.refresh_bindings()

    @on(TabbedContent.TabActivated)
    def _tab_activated(self) -> None:
        self.refresh_bindings()  # the footer shows only the keys that work on this tab

    # --- saving and leaving -----------------------------------------------------
    def keep_pending(self) -> str | None:
        """Keep a line, step or product result still in its form; say why if one cannot be.

        A chemist who types the isolated mass and presses ctrl+s means it to be saved; an
        Enter forgotten must not lose it, and a half-written row must not be saved silently.
        """
        forms_ = (
            ("line", "Lines", self.line_form, self.commit_line, lambda: self.line_index),
            ("step", "Steps", self.step_form, self.commit_step, lambda: self.step_index),
            ("product result", "Outcome", self.product_form, self.commit_product, lambda: self.product_index),
        )
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
        chemist = str(self.data.get("chemist") or "").strip() or None
        if self.app.ask_name_then(chemist, self.action_save):  # the first save names who saves
            return
        pending = self.keep_pending()
        if pending:
            self.notify(pending, title="Not saved", severity="error", timeout=8)
            return
        screen_text = (self.data.get("screen") or "").strip()
        if screen_text:
            sc = self.find_screen(screen_text)
            if sc is None:
                self.notify(
                    f"No screen '{screen_text}' in this notebook: give one of {', '.join(sorted(self.screens)) or '(none)'} "
                    "or leave Screen blank (Run tab, f2).",
                    title="Not saved",
                    severity="error",
                    timeout=8,
                )
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

    def rows_in_forms(self) -> bool:
        """Whether a line, step or product result is typed into its form but not kept yet.

        A kept row only loaded into its form (to look at or change) counts once it differs.
        """

        def with_step(step: dict) -> dict:
            steps = list(self.data.get("steps", []))
            steps[self.step_index] = step
            return {**self.data, "steps": steps}

        def plain(value):  # an unticked box reads the same as one never set
            if isinstance(value, dict):
                return {k: plain(v) for k, v in value.items() if v not in (False, None, "")}
            return [plain(v) for v in value] if isinstance(value, list) else value

        same = plain(self.data)
        for (row, why), index, apply in (
            (self.line_form(), self.line_index, self.with_line),
            (self.step_form(), self.step_index, with_step),
            (self.product_form(), self.product_index, self.with_product),
        ):
            if index is None and (row is not None or why):
                return True
            if index is not None and (why or (row is not None and plain(apply(row)) != same)):
                return True
        return False

    def action_leave(self) -> None:
        if self.run_id:
            self.app.last_run = self.run_id
        if not self.dirty and not self.rows_in_forms():  # a row typed but not kept is unsaved work too
            self.drop_draft()
            self.app.pop_screen()
            return
        from .dialogs import LeaveDialog

        self.app.push_screen(LeaveDialog(), self._leave_answer)

    def _leave_answer(self, answer: str | None) -> None:
        if answer == "keep":
            for form, commit in (
                (self.line_form, self.commit_line),
                (self.step_form, self.commit_step),
                (self.product_form, self.commit_product),
            ):
                if form()[0] is not None:  # a complete row still in its form goes into the draft
                    commit(focus=False)
            self.keep_draft()
            self.app.pop_screen()
        elif answer == "discard":
            self.drop_draft()
            self.app.pop_screen()
