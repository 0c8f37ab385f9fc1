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
from textual.containers import Horizontal
from textual.screen import Screen
from textual.widgets import Header, Input, Static, TabbedContent

from ...errors import StaleVersionError, TrapbookError
from ..messages import (
    ExpectedPicked,
    LimitingMarked,
    LineKept,
    ResultKept,
    RowMoved,
    RowRemoved,
    RunFieldChanged,
    RunOutcomeTyped,
    StepKept,
    StrainDone,
)
from ..outcome_form import with_product_line, with_result, with_result_moved, with_run_outcome, without_result
from ..rundata import form_data, plan_from, with_limiting, with_line, with_step
from ..widgets.bench_side import BenchSide
from ..widgets.keybar import KeyBar
from ..widgets.lines_tab import LINE_COLUMNS, LINE_FIELDS, LinesTab  # noqa: F401  (for tests)
from ..widgets.outcome_tab import OutcomeTab
from ..widgets.run_tab import MAX_FACTORS, RUN_FIELDS, RunTab  # noqa: F401  (for tests)
from ..widgets.steps_tab import StepsTab
from .workbench.live import LiveRunMixin
from .workbench.strain_panel import StrainPanelMixin

NEW_DRAFT = "draft:new"


class WorkbenchScreen(StrainPanelMixin, LiveRunMixin, Screen):
    """The run editor: its layout, keys and event routing, and opening, saving and leaving a run.

    The Run, Lines, Steps and Outcome tabs are widgets (widgets/run_tab.py, lines_tab.py,
    steps_tab.py, outcome_tab.py) that own their forms and keys and post what they keep; the
    screen puts it into the run it holds and hands the tabs the rebuilt run. The live rebuild
    and the strain card are mixins from `screens/workbench/`; the state they share is set up here.
    """

    BINDINGS = [  # in order of importance: the footer shows the first that fit, f1 lists them all
        # priority: the save (and the questions it asks) starts before the keys typed behind it
        # are handed to the focused field
        Binding("ctrl+s", "save", "Save", priority=True),
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
        self.provisional = False
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
                yield RunTab("Run F2", {sc.id: sc for sc in self.nb.list_screens()}, id="tab-run")
                yield LinesTab("Lines F3", id="tab-lines")
                yield StepsTab("Steps F4", id="tab-steps")
                yield OutcomeTab("Outcome F5", id="tab-outcome")
            yield BenchSide(id="bench-side")
        yield Static("", id="status")
        yield KeyBar()

    def on_mount(self) -> None:
        self.fit_name_column()
        self.load()
        self.query_one("#line-role", Input).focus()

    def on_resize(self) -> None:
        self.call_after_refresh(self.fit_name_column)
        if self.run is not None:  # the addition track is drawn to the width the side panel has
            self.call_after_refresh(self.recompute)
        else:  # the status line is fitted to the width it has
            self.call_after_refresh(self.refresh_status)

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

    # --- what the tabs post ------------------------------------------------------
    @property
    def run_tab(self) -> RunTab:
        return self.query_one(RunTab)

    @property
    def lines_tab(self) -> LinesTab:
        return self.query_one(LinesTab)

    @property
    def steps_tab(self) -> StepsTab:
        return self.query_one(StepsTab)

    @property
    def outcome_tab(self) -> OutcomeTab:
        return self.query_one(OutcomeTab)

    def on_run_field_changed(self, message: RunFieldChanged) -> None:
        message.stop()
        self.data[message.key] = message.value
        self.changed()

    def on_line_kept(self, message: LineKept) -> None:
        message.stop()
        self.take_in(with_line(self.data, message.line, message.index))

    def on_step_kept(self, message: StepKept) -> None:
        message.stop()
        self.take_in(with_step(self.data, message.step, message.index))

    def on_limiting_marked(self, message: LimitingMarked) -> None:
        message.stop()
        self.take_in(with_limiting(self.data, message.index, message.marked))

    def on_row_removed(self, message: RowRemoved) -> None:
        message.stop()
        if message.rows == "products":  # the results live in the run's outcome
            self.take_in(without_result(self.data, message.index))
            return
        rows = self.data.setdefault(message.rows, [])
        if 0 <= message.index < len(rows):
            rows.pop(message.index)
            self.changed()
            self.recompute()

    def on_row_moved(self, message: RowMoved) -> None:
        message.stop()
        if message.rows == "products":
            self.take_in(with_result_moved(self.data, message.index, message.to))
            return
        rows = self.data.setdefault(message.rows, [])
        i, j = message.index, message.to
        if 0 <= i < len(rows) and 0 <= j < len(rows):
            rows[i], rows[j] = rows[j], rows[i]
            self.recompute()
            self.changed()

    def take_in(self, data: dict) -> None:
        """The run with a row a tab kept: the panels follow, the draft is kept."""
        self.data = data
        self.changed()
        self.recompute()

    def commit_line(self, focus: bool = True) -> bool:
        """Keep the line in the Lines tab's form now (before a save or on leaving), if it is complete."""
        line, index = self.lines_tab.take(focus)
        if line is not None:
            self.take_in(with_line(self.data, line, index))
        return line is not None

    def commit_step(self, focus: bool = True) -> bool:
        """Keep the step in the Steps tab's form now, if it is complete."""
        step, index = self.steps_tab.take(focus)
        if step is not None:
            self.take_in(with_step(self.data, step, index))
        return step is not None

    def on_result_kept(self, message: ResultKept) -> None:
        message.stop()
        self.take_in(with_result(self.data, message.entry, message.index))

    def commit_product(self, focus: bool = True) -> bool:
        """Keep the product result in the Outcome tab's form now, if it is complete."""
        entry, index = self.outcome_tab.take(focus)
        if entry is not None:
            self.take_in(with_result(self.data, entry, index))
        return entry is not None

    def on_run_outcome_typed(self, message: RunOutcomeTyped) -> None:
        message.stop()
        self.data = with_run_outcome(self.data, message.values)
        self.changed()

    def on_expected_picked(self, message: ExpectedPicked) -> None:
        """The picked product's line (added when the run has none with its SMILES) is the new result's product."""
        message.stop()
        data, name, added = with_product_line(self.data, message.name, message.smiles)
        if added:
            self.notify(f"Added the product line '{name}' ({message.smiles}).", title="Product line", markup=False)
        self.take_in(data)
        self.outcome_tab.start_result(name)

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
        self.run_tab.fill(self.data)
        self.outcome_tab.fill(self.data)
        self.lines_tab.blank(focus=True)
        self.steps_tab.blank()
        self.outcome_tab.blank()
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
            ("line", "Lines", self.lines_tab.form, self.commit_line, lambda: self.lines_tab.index),
            ("step", "Steps", self.steps_tab.form, self.commit_step, lambda: self.steps_tab.index),
            ("product result", "Outcome", self.outcome_tab.form, self.commit_product, lambda: self.outcome_tab.index),
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
            sc = self.run_tab.find_screen(screen_text)
            if sc is None:
                self.notify(
                    f"No screen '{screen_text}' in this notebook: give one of {', '.join(sorted(self.run_tab.screens)) or '(none)'} "
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

        self.app.ask(ReasonDialog(self.run_id, self.base_version), self._save_with_reason)

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

        def plain(value):  # an unticked box reads the same as one never set
            if isinstance(value, dict):
                return {k: plain(v) for k, v in value.items() if v not in (False, None, "")}
            return [plain(v) for v in value] if isinstance(value, list) else value

        same = plain(self.data)
        for (row, why), index, apply in (
            (self.lines_tab.form(), self.lines_tab.index, lambda row: with_line(self.data, row, self.lines_tab.index)),
            (self.steps_tab.form(), self.steps_tab.index, lambda row: with_step(self.data, row, self.steps_tab.index)),
            (self.outcome_tab.form(), self.outcome_tab.index, lambda row: with_result(self.data, row, self.outcome_tab.index)),
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
                (self.lines_tab.form, self.commit_line),
                (self.steps_tab.form, self.commit_step),
                (self.outcome_tab.form, self.commit_product),
            ):
                if form()[0] is not None:  # a complete row still in its form goes into the draft
                    commit(focus=False)
            self.keep_draft()
            self.app.pop_screen()
        elif answer == "discard":
            self.drop_draft()
            self.app.pop_screen()
