"""The table tabs' shared refill keeps one signature: no tab redefines it with another."""

from __future__ import annotations

import inspect

import pytest

pytest.importorskip("textual")

from trapbook.tui.widgets.lines_tab import LinesTab
from trapbook.tui.widgets.outcome_tab import OutcomeTab
from trapbook.tui.widgets.row_tabs import RowsTab
from trapbook.tui.widgets.steps_tab import StepsTab


def every_subclass(cls: type) -> set[type]:
    found = set(cls.__subclasses__())
    for sub in list(found):
        found |= every_subclass(sub)
    return found


def test_no_table_tab_overrides_the_base_refill():
    tabs = every_subclass(RowsTab)
    assert {LinesTab, StepsTab, OutcomeTab} <= tabs
    assert [cls.__name__ for cls in tabs if "fill_rows" in vars(cls)] == []
    assert list(inspect.signature(RowsTab.fill_rows).parameters) == ["self", "rows"]
