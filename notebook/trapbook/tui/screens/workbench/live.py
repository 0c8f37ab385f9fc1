"""The live run of the Workbench: the form rebuilt with `records.load_run` after every change.

If what was typed loads, the amounts, the addition track, the bench checks and the strain
card follow it; if it does not, the reason goes to the checks panel and the status line, and
nothing can be saved. A run that lacks only its title is worked out with a stand-in title,
so a chemist who starts with the lines sees the amounts at once.
"""

from __future__ import annotations

import json

from rich.text import Text
from textual.widgets import Static

from ....errors import TrapbookError
from ...rundata import build_run
from ...theme import tone

#: The side panel's width beside the tabs (app.tcss `#bench-side`).
SIDE_WIDTH = 44


class LiveRunMixin:
    """Rebuild the run from `self.data` and refresh every computed panel and the status line."""

    def put(self, selector: str, content, key=None, layout: bool = True) -> None:
        """Update a Static only when what it shows changed: every keystroke rebuilds the run, and
        each repaint costs a layout (`repaint_colours` forgets what was shown, to draw it anew)."""
        if key is None:
            key = content.markup if isinstance(content, Text) else content
        shown = self.__dict__.setdefault("_shown", {})
        if shown.get(selector) == key:
            return
        shown[selector] = key
        self.query_one(selector, Static).update(content, layout=layout)

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
        """The run as typed, as it will be saved (`rundata.build_run`): the live amounts and checks show that."""
        return build_run(self.nb, data if data is not None else self.data)

    def recompute(self) -> None:
        """Rebuild the run from the form and refresh every computed panel."""
        from .... import amounts

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
        self.lines_tab.show(self.data, self.run, self.table)
        self.steps_tab.show(self.data.get("steps", []), self.data.get("lines", []))
        self.outcome_tab.show(self.data, self.run, self.table, self.problem, self.run_id)
        from ...widgets.findings import findings_text
        from ...widgets.strain_card import card
        from ...widgets.timeline import track

        findings = self.findings if self.run else None
        if self.run is not None:
            self.put("#track", track(self.run, findings, self.query_one("#track").content_size.width or None))
        else:
            self.put("#track", Text("the run is not complete yet", style=f"italic {tone('muted')}"))
        if self.run is None:
            self.put(
                "#checks",
                Text("Checks start once the run has its lines: " + (self.problem or ""), style=f"italic {tone('warn')}"),
            )
        else:
            self.put(
                "#checks", findings_text(findings, table_problem or (f"not saved yet: {self.problem}" if self.problem else None))
            )
        found = self.intermediate_found()
        smiles, origin = found if found else (None, None)
        derived = smiles if smiles and not (self.data.get("intermediate") or "").strip() else None
        self.run_tab.show_derived(derived)
        self.put(
            "#strain",
            card(smiles, self.strain, self.alignment, self.strain_note, origin),
            key=(
                smiles,
                origin,
                json.dumps(self.strain, sort_keys=True, default=str),
                json.dumps(self.alignment, sort_keys=True, default=str),
                self.strain_note,
            ),
        )
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
        """The form's findings: the notebook's settings, with the strain and alignment the editor holds."""
        from ....findings import findings_for

        return findings_for(self.nb, self.run, strain=self.strain, alignment=self.alignment)

    def refresh_status(self) -> None:
        """The status line, fitted to its width (`status_line.fit_status`) so nothing runs off the edge."""
        from .status_line import fit_status, wrapped_line_count

        status = self.query_one("#status", Static)
        width = status.content_size.width or self.app.size.width - 2  # before the first layout
        text = fit_status(self.status_parts(), width)
        lines = wrapped_line_count(text.plain, width)
        # a change of height needs a layout; a change of words in the same lines does not
        self.put("#status", text, key=(text.markup, width), layout=lines != self.__dict__.get("_status_lines"))
        self._status_lines = lines

    def status_parts(self) -> list:
        """Where the run stands, each part with shorter readings for a narrow screen; what
        matters most (can it be saved, which run, unsaved work) is given up last."""
        from .status_line import Part

        if self.problem:
            why = self.problem.replace("\n", " ")
            verdict = (f"cannot be saved yet: {why}", f"not savable yet: {why}")
        else:
            verdict = ("complete: ctrl+s saves", "ctrl+s saves")
        where = (f"{self.run_id} v{self.base_version}",) if self.run_id else ("new run (not yet in the notebook)", "new run")
        parts = [Part(tuple(Text(w) for w in where), rank=1, droppable=False)]
        if self.dirty:
            parts.append(Part((Text("unsaved changes, kept as a draft"), Text("unsaved, draft kept"), Text("unsaved")), 2, False))
        else:
            parts.append(Part((Text("no unsaved changes"), Text("no changes")), rank=4))
        style = tone("stop") if self.problem else tone("ok")
        parts.append(Part(tuple(Text(v, style=style) for v in verdict), rank=0, droppable=False))
        if not self.side_in_sight():
            parts.append(Part((self.checks_summary(),), rank=3))
        return parts

    def fit_name_column(self) -> None:
        """The Lines tab's table gets the width the tabs have: the app's, less the side panel beside them."""
        side_beside = self.has_class("-wide") and not self.has_class("-side-toggled")
        self.lines_tab.fit(self.app.size.width - (SIDE_WIDTH if side_beside else 0) - 1)  # one for the scroll bar

    def side_in_sight(self) -> bool:
        """Whether the addition track and the checks are on the screen (app.tcss, f7)."""
        return self.has_class("-wide") != self.has_class("-side-toggled")

    def checks_summary(self) -> Text:
        """The checks in a few marks, for when their panel is out of sight: where to look is f7."""
        from ...text import SEVERITY_MARK
        from ...theme import severity_style

        out = Text("checks: ")
        if self.run is None or self.findings is None:
            return out.append("not run yet", style=tone("muted"))
        counts = {sev: sum(f.severity == sev for f in self.findings) for sev in ("stop", "warn")}
        marks = [(f"{SEVERITY_MARK[sev]}{n} ", severity_style(sev)) for sev, n in counts.items() if n]
        for mark, style in marks or [("nothing to flag ", tone("ok"))]:
            out.append(mark, style=style)
        return out.append("(f7)", style=tone("muted"))
