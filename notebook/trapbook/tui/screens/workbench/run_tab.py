"""The Workbench's Run tab (f2): the run's own fields, its condition screen and its factor levels.

Naming a screen of the notebook brings up one row per condition that screen varies, with
the screen's levels to complete from, so the run lands in the right cell of the board.
"""

from __future__ import annotations

from rich.text import Text
from textual.suggester import SuggestFromList
from textual.widgets import Input, Label

from ... import forms
from ...text import clip
from ...theme import tone
from ...widgets.field import Field

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


class RunTabMixin:
    """The Run tab's fields, the screen they name, and the factor rows that screen brings."""

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

    def set_run_field(self, key: str, value: str) -> None:
        """A Run-tab box changed: its text goes into the run as typed (tags as a list)."""
        if key == "tags":
            value = [t.strip() for t in value.split(",") if t.strip()]
        self.data[key] = value
        if key == "screen":
            self.refresh_factor_rows()
        self.changed()

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
            hint = Text(
                f"{sc.id} varies {', '.join(self.factor_names) or 'nothing yet'}: give this run's level of each "
                "(→ completes a level)",
                style=f"{tone('muted')}",
            )
        elif (self.data.get("screen") or "").strip():
            hint = Text("")
        else:
            hint = Text("In a condition screen? Give its id above; its varied conditions appear here.", style=f"{tone('muted')}")
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
