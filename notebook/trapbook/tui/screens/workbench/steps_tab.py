"""The screen's side of the Steps tab (widgets/steps_tab.py): a kept step goes into the run.

The tab owns its form, its checks and its row selection; here the step it keeps is put
into the run the screen holds, and the tab is shown the run's steps and lines again.
"""

from __future__ import annotations

from ...messages import StepKept
from ...widgets.steps_tab import StepsTab


class StepsTabMixin:
    """Put the steps the Steps tab keeps into the run, and show it the run's steps."""

    @property
    def steps_tab(self) -> StepsTab:
        return self.query_one(StepsTab)

    @property
    def step_index(self) -> int | None:
        """The step the tab's form is changing (None: it writes a new one)."""
        return self.steps_tab.index

    def step_form(self) -> tuple[dict | None, str | None]:
        return self.steps_tab.form()

    def commit_step(self, focus: bool = True) -> bool:
        """Keep the step in the tab's form now (before a save or on leaving), if it is complete."""
        step, index = self.steps_tab.take(focus)
        if step is None:
            return False
        self.keep_step(step, index)
        return True

    def on_step_kept(self, message: StepKept) -> None:
        message.stop()
        self.keep_step(message.step, message.index)

    def keep_step(self, step: dict, index: int | None) -> None:
        steps = self.data.setdefault("steps", [])
        if index is None or index >= len(steps):
            steps.append(step)
        else:
            steps[index] = step
        self.changed()
        self.recompute()

    def blank_step(self) -> None:
        self.steps_tab.blank()

    def refresh_steps(self) -> None:
        self.steps_tab.show(self.data.get("steps", []), self.data.get("lines", []))
