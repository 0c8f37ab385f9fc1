"""The Workbench's Steps tab (f4): the order of additions, written one step at a time.

A step names the lines it adds (by number, name or role), its temperature, hold and
addition time; the table marks the steps where the trap and the fluoride enter. The tab
owns its form and its row keys (widgets/row_tabs.py): it checks a step against the run's
lines (so 'reflux' is the boiling point of the run's solvent), says what it will keep while
it is typed, and posts `StepKept` when Enter keeps it. The screen puts the step into the
run and shows the tab the run's steps and lines again (`show`).
"""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Vertical
from textual.widgets import Checkbox, DataTable, Input, Static

from .. import forms
from ..messages import StepKept
from ..text import clip, qtext
from ..theme import tone
from .field import Field, FormCheck
from .row_tabs import FormRowsTab

STEP_FIELDS = (
    ("add", "Adds", "1 + 3 · precursor; trap · names", None, None),
    ("temperature", "Temperature", "e.g. -78 °C", forms.check_kind("temperature", "a temperature"), None),
    ("hold", "Hold", "stirred after adding, e.g. 2 h", forms.check_kind("duration", "a time"), None),
    ("over", "Added over", "e.g. 10 min (dropwise)", forms.check_kind("duration", "a time"), None),
    ("atmosphere", "Atmosphere", "e.g. N2", None, None),
    ("note", "Note", "", None, None),
)
STEP_COLUMNS = (("#", 3), ("adds", 27), ("T", 9), ("hold", 7), ("over", 7), ("seal", 5), ("enters", 12))


class StepsTab(FormRowsTab):
    """The steps table and the form that writes one step; `index` is the step being changed."""

    rows_key = "steps"

    def __init__(self, title: str, **kwargs) -> None:
        super().__init__(title, **kwargs)
        self.index: int | None = None
        self.steps: list[dict] = []
        self.lines: list[dict] = []
        self._loading = False

    def compose(self) -> ComposeResult:
        yield DataTable(id="steps", cursor_type="row", cell_padding=0)
        yield Static("", id="step-head", classes="form-head")
        with Vertical(classes="form"):
            for key, label, ph, check, sugg in STEP_FIELDS:
                yield Field(label, f"step-{key}", ph, check, sugg)
            yield FormCheck("sealed vessel (pressure builds on heating)", id="step-sealed")
        yield Static("", id="step-msg", classes="form-msg")

    def on_mount(self) -> None:
        table = self.query_one("#steps", DataTable)
        for label, width in STEP_COLUMNS:
            table.add_column(label, width=width)

    # --- what the screen hands it and asks of it ---------------------------------------
    def show(self, steps: list[dict], lines: list[dict]) -> None:
        """The run's steps in the table, each marked where the trap or the fluoride source enters."""
        self.steps, self.lines = steps, lines
        roles = {ln.get("name", "").casefold(): ln.get("role") for ln in lines}
        rows = []
        for i, step in enumerate(steps):
            adds = step.get("add", [])
            marks = []
            if any(roles.get(n.casefold()) == "trap" for n in adds):
                marks.append("● trap")
            if any(roles.get(n.casefold()) == "fluoride source" for n in adds):
                marks.append("● F⁻")
            rows.append(
                [
                    str(i + 1),
                    clip("; ".join(adds) or "—", 26),
                    qtext(step.get("temperature")) or "—",
                    qtext(step.get("hold")) or "",
                    qtext(step.get("over")) or "",
                    "▣" if step.get("sealed") else "",
                    " ".join(marks),
                ]
            )
        self.fill_rows(rows)

    def rows(self) -> list[dict]:
        return self.steps

    def row_label(self, index: int) -> str:
        return f"step {index + 1}"

    def form(self) -> tuple[dict | None, str | None]:
        """(step, None), (None, why not), or (None, None) for an empty form."""
        v = {k: self.query_one(f"#step-{k}", Input).value.strip() for k, *_ in STEP_FIELDS}
        sealed = self.query_one("#step-sealed", Checkbox).value
        if not any(v.values()) and not sealed:
            return None, None
        names, problems = forms.resolve_adds(v["add"], self.lines)
        if problems:
            return None, "; ".join(problems)
        step: dict = {"add": names}
        for k in ("temperature", "hold", "over", "atmosphere", "note"):
            if v[k]:
                step[k] = v[k]
        if sealed:
            step["sealed"] = True
        invalid = forms.step_problem(step, self.lines)
        if invalid is not None:
            return None, invalid
        return step, None

    def blank(self) -> None:
        self.index = None
        self._loading = True
        for k, *_ in STEP_FIELDS:
            self.query_one(f"#step-{k}", Input).value = ""
        self.query_one("#step-sealed", Checkbox).value = False
        self._loading = False
        self.query_one("#step-head", Static).update(
            Text("New step — Enter keeps it; pick a row above to change one", style=tone("muted"))
        )
        self.say(Text(""))

    def edit(self, index: int) -> None:
        if not 0 <= index < len(self.steps):
            return
        step = self.steps[index]
        self.index = index
        self._loading = True
        self.query_one("#step-add", Input).value = "; ".join(step.get("add", []))
        for k in ("temperature", "hold", "over", "atmosphere", "note"):
            self.query_one(f"#step-{k}", Input).value = qtext(step.get(k, ""))
        self.query_one("#step-sealed", Checkbox).value = bool(step.get("sealed"))
        self._loading = False
        self.query_one("#step-head", Static).update(
            Text(f"Changing step {index + 1} — Enter keeps it; ctrl+n for a new step", style=tone("warn"))
        )
        self.query_one("#step-add", Input).focus()

    def preview(self) -> None:
        """While typing: what Enter will keep, or why it cannot yet."""
        step, why = self.form()
        bad = next((f.problem for f in self.query(Field) if f.problem), None)
        if bad:  # the field's own words in full, not only what fits beside it
            self.say(Text(bad, style=tone("stop")))
        elif step is None:
            self.say(Text(why or "", style=tone("stop")))
        else:
            adds = f"adds {', '.join(step['add'])}" if step["add"] else "nothing added (a hold or temperature change)"
            if "reflux" in str(step.get("temperature", "")).lower():
                from ... import bench_words

                adds += f"; {bench_words.run_reflux(self.lines).basis}"
            self.say(Text(f"→ {adds}   (Enter keeps this step)", style=tone("ok")))

    def say(self, text: Text) -> None:
        self.query_one("#step-msg", Static).update(text, layout=False)

    # --- its own events -------------------------------------------------------------------
    def keep(self) -> None:
        step, index = self.take()
        if step is not None:
            self.post_message(StepKept(step, index))
