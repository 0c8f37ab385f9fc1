"""The Workbench's Steps tab (f4): the order of additions, written one step at a time.

A step names the lines it adds (by number, name or role), its temperature, hold and
addition time; the table marks the steps where the trap and the fluoride enter.
"""

from __future__ import annotations

from rich.text import Text
from textual.widgets import Checkbox, DataTable, Input

from ... import forms
from ...text import clip, qtext
from ...theme import tone

STEP_FIELDS = (
    ("add", "Adds", "1 + 3 · precursor; trap · names", None, None),
    ("temperature", "Temperature", "e.g. -78 °C", forms.check_kind("temperature", "a temperature"), None),
    ("hold", "Hold", "stirred after adding, e.g. 2 h", forms.check_kind("duration", "a time"), None),
    ("over", "Added over", "e.g. 10 min (dropwise)", forms.check_kind("duration", "a time"), None),
    ("atmosphere", "Atmosphere", "e.g. N2", None, None),
    ("note", "Note", "", None, None),
)
STEP_COLUMNS = (("#", 3), ("adds", 27), ("T", 9), ("hold", 7), ("over", 7), ("seal", 5), ("enters", 12))


class StepsTabMixin:
    """Write, change and list the run's steps."""

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
        invalid = forms.step_problem(step, self.data.get("lines", []))
        if invalid is not None:
            return None, invalid
        return step, None

    def preview_step(self) -> None:
        step, why = self.step_form()
        bad = self.field_problem("step", STEP_FIELDS)
        if bad:  # the field's own words in full, not only what fits beside it
            self.put("#step-msg", Text(bad, style=f"{tone('stop')}"), layout=False)
        elif step is None:
            self.put("#step-msg", Text(why or "", style=f"{tone('stop')}"), layout=False)
        else:
            adds = f"adds {', '.join(step['add'])}" if step["add"] else "nothing added (a hold or temperature change)"
            if "reflux" in str(step.get("temperature", "")).lower():
                from .... import bench_words

                adds += f"; {bench_words.run_reflux(self.data.get('lines', [])).basis}"
            self.put("#step-msg", Text(f"→ {adds}   (Enter keeps this step)", style=f"{tone('ok')}"), layout=False)

    def commit_step(self, focus: bool = True) -> bool:
        step, why = self.step_form()
        if step is None:
            self.put("#step-msg", Text(why or "the form is empty", style=f"{tone('stop')}"), layout=False)
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
        self.clear_form("step", STEP_FIELDS, "#step-sealed")
        self.put("#step-head", Text("New step — Enter keeps it; pick a row above to change one", style=f"{tone('muted')}"), layout=False)
        self.put("#step-msg", Text(""), layout=False)

    def edit_step(self, index: int) -> None:
        step = self.data["steps"][index]
        self.step_index = index
        self.query_one("#step-add", Input).value = "; ".join(step.get("add", []))
        for k in ("temperature", "hold", "over", "atmosphere", "note"):
            self.query_one(f"#step-{k}", Input).value = qtext(step.get(k, ""))
        self.query_one("#step-sealed", Checkbox).value = bool(step.get("sealed"))
        self.put("#step-head", Text(f"Changing step {index + 1} — Enter keeps it; ctrl+n for a new step", style=f"{tone('warn')}"), layout=False)
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
