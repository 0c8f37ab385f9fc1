"""The Workbench's Run tab (f2): the run's own fields, its condition screen and its factor levels.

Naming a screen of the notebook brings up one row per condition that screen varies, with
the screen's levels to complete from, so the run lands in the right cell of the board. The
tab owns its boxes: it checks them as they are typed and posts `RunFieldChanged` with what
goes into the run (tags as a list, the factor levels as the screen spells them); the
screen keeps it and hands the tab a run to show (`fill`) when one is opened.
"""

from __future__ import annotations

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import VerticalScroll
from textual.suggester import SuggestFromList
from textual.widgets import Input, Label, Static, TabPane

from .. import forms
from ..messages import RunFieldChanged
from ..text import clip
from ..theme import tone
from .field import Field

RUN_FIELDS = (
    # (data key, label, placeholder, check, suggestions)
    ("title", "Title", "what the run is, in a line", None, None),
    ("chemist", "Chemist", "", None, None),
    ("date", "Date", "YYYY-MM-DD", forms.check_date, None),
    ("status", "Status", "planned · running · done · failed", forms.check_status, list(forms.STATUSES)),
    ("page", "Page", "paper notebook page", None, None),
    ("screen", "Screen", "condition screen id, e.g. SC-0001", None, None),
    ("intermediate", "Intermediate", "SMILES of the strained intermediate", forms.check_smiles, None),
    ("intermediate_name", "Its name", "e.g. bicyclo[3.3.1]non-1-ene", None, None),
    ("tags", "Tags", "comma separated", None, None),
    ("notes", "Notes", "", None, None),
)
#: Factor rows on the Run tab: one per varied condition of the run's screen.
MAX_FACTORS = 6
INTERMEDIATE_PLACEHOLDER = "SMILES of the strained intermediate"


class FactorField(Field):
    """One varied condition of the run's screen and this run's level of it (`factor_name`: which)."""

    factor_name: str | None = None


class RunTab(TabPane):
    """The run's fields and the factor rows its screen brings; `screens` are the notebook's (id -> screen)."""

    def __init__(self, title: str, screens: dict, **kwargs) -> None:
        super().__init__(title, **kwargs)
        self.screens = screens
        self.screen_text = ""  # the Screen box as typed
        self.factors: dict[str, str] = {}  # the run's level of each varied condition
        self.factor_names: list[str] = []
        self._keys = {f"run-{key}": key for key, *_ in RUN_FIELDS}
        self._derived: str | None = None

    def compose(self) -> ComposeResult:
        with VerticalScroll(classes="form"):
            for key, label, ph, check, sugg in RUN_FIELDS:
                if key == "screen":
                    yield Field(label, "run-screen", ph, self.check_screen, sorted(self.screens))
                    yield Static("", id="factor-hint", classes="form-note")
                    for i in range(MAX_FACTORS):
                        yield FactorField("", f"fac-{i}", "", None, None)
                else:
                    yield Field(label, f"run-{key}", ph, check, sugg)

    # --- what the screen hands it and asks of it ---------------------------------------
    def fill(self, data: dict) -> None:
        """Show an opened run's fields (and its screen's factor rows)."""
        for key, *_ in RUN_FIELDS:
            v = data.get(key)
            if key == "tags" and isinstance(v, list):
                v = ", ".join(v)
            box = self.query_one(f"#run-{key}", Input)
            box.value = "" if v is None else str(v)
            box.cursor_position = 0  # show a long title from its start
        self.screen_text = str(data.get("screen") or "")
        self.factors = dict(data.get("factors") or {})
        self.refresh_factor_rows()

    def find_screen(self, text: str):
        """The notebook's screen an id (any case) or exact name means, or None."""
        key = (text or "").strip().casefold()
        if not key:
            return None
        return next((sc for sid, sc in self.screens.items() if sid.casefold() == key or sc.name.casefold() == key), None)

    def show_derived(self, smiles: str | None) -> None:
        """The intermediate worked out from the precursor, as the Intermediate box's placeholder."""
        if smiles != self._derived:
            self._derived = smiles
            self.query_one("#run-intermediate", Input).placeholder = (
                f"from precursor: {smiles}" if smiles else INTERMEDIATE_PLACEHOLDER
            )

    # --- the screen and its factor rows ----------------------------------------------------
    def check_screen(self, text: str) -> tuple[bool, str]:
        sc = self.find_screen(text)
        if sc is not None:
            return True, clip(sc.name, 24)
        known = ", ".join(sorted(self.screens)) or "none yet"
        return False, f"no such screen (here: {known})"

    def refresh_factor_rows(self) -> None:
        """One row per varied condition of the run's screen, with its levels to complete from."""
        sc = self.find_screen(self.screen_text)
        levels: dict[str, list[str]] = {k: list(v) for k, v in (sc.factors if sc else {}).items()}
        for k in self.factors:
            levels.setdefault(k, [])
        self.factor_names = list(levels)[:MAX_FACTORS]
        for i, row in enumerate(self.query(FactorField)):
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
            row.check = level_check(opts)
            value = str(self.factors.get(name) or "")
            if row.input.value != value:
                row.input.value = value
            row.run_check()
        if sc is not None:
            hint = Text(
                f"{sc.id} varies {', '.join(self.factor_names) or 'nothing yet'}: give this run's level of each "
                "(→ completes a level)",
                style=tone("muted"),
            )
        elif self.screen_text.strip():
            hint = Text("")
        else:
            hint = Text("In a condition screen? Give its id above; its varied conditions appear here.", style=tone("muted"))
        self.query_one("#factor-hint", Static).update(hint)

    def set_factor(self, row: FactorField, value: str) -> None:
        """A level typed: written as the screen lists it, so the run lands in the right cell."""
        if not row.factor_name:
            return
        factors = dict(self.factors)
        sc = self.find_screen(self.screen_text)
        if sc is not None:
            value = next((lv for lv in sc.factors.get(row.factor_name, []) if lv.casefold() == value.strip().casefold()), value)
        if value.strip():
            factors[row.factor_name] = value.strip()
        else:
            factors.pop(row.factor_name, None)
        if factors != self.factors:
            self.factors = factors
            self.post_message(RunFieldChanged("factors", dict(factors)))

    def set_field(self, key: str, value: str) -> None:
        """A box of the run changed: its text goes into the run as typed (tags as a list)."""
        if key == "screen":
            self.screen_text = value
            self.refresh_factor_rows()
        self.post_message(RunFieldChanged(key, [t.strip() for t in value.split(",") if t.strip()] if key == "tags" else value))

    # --- its own events -------------------------------------------------------------------
    @on(Input.Changed)
    def _changed(self, event: Input.Changed) -> None:
        event.stop()
        row = event.input.parent
        if isinstance(row, Field):
            row.run_check()
        if isinstance(row, FactorField):
            self.set_factor(row, event.value)
        elif event.input.id in self._keys:
            self.set_field(self._keys[event.input.id], event.value)

    @on(Input.Submitted)
    def _submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self.screen.focus_next()


def level_check(levels: list[str]):
    """A factor row's check: a level of the screen, or said to be a new one."""

    def check(text: str) -> tuple[bool, str]:
        if not levels or text.strip().casefold() in (lv.casefold() for lv in levels):
            return True, ""
        return False, "new level, not in screen"

    return check
