"""Turning stored values into what a chemist reads in a cell, and back into form text.

Kept apart from the screens so the run table, the preview and the editor write numbers
the same way (mg to 0.1, µL to 1, mmol to 3 significant figures, as units.py does).
"""

from __future__ import annotations

from typing import Any

from rich.markup import escape

from ..display import fmt_minutes, fmt_temp_c, fmt_yield
from ..text_safety import printable

#: How a severity is marked in tables and the checks panel (our own marks).
SEVERITY_MARK = {"stop": "✖", "warn": "▲", "note": "·"}


def clip(text: Any, width: int) -> str:
    """Stored text as a cell: control characters made visible (text_safety.printable), cut to
    `width` with an ellipsis so columns stay aligned, and escaped for Rich markup, so a
    name holding '[bold]' or '[link=…]' is shown as written. For DataTable cells, Labels
    and Rich tables, which read a plain str as markup."""
    s = printable(text)
    s = s if len(s) <= width else s[: max(width - 1, 0)] + "…"
    return escape(s)


def shown(text: Any, multiline: bool = False) -> str:
    """Stored text for Text.append (which reads no markup): control characters made visible."""
    return printable(text, multiline=multiline)


def qtext(value: Any) -> str:
    """Stored quantity ({"value", "unit"}) or number -> the text a form field shows."""
    if value is None:
        return ""
    if isinstance(value, dict) and "value" in value:
        v = value["value"]
        unit = value.get("unit") or ""
        num = format(float(v), ".12g") if isinstance(v, (int, float)) else str(v)
        return f"{num} {unit}".strip()
    if isinstance(value, float):
        return format(value, ".12g")
    return str(value)


# Temperatures, durations and yields are written as everywhere else (display.py).
temp_text = fmt_temp_c
minutes_text = fmt_minutes
yield_text = fmt_yield


def worst_text(worst: str | None) -> tuple[str, str]:
    """'warn:water-brought' -> ('▲ water-brought', style)."""
    if not worst:
        return "", ""
    sev, _, code = worst.partition(":")
    from .theme import severity_style

    return f"{SEVERITY_MARK.get(sev, '?')} {code}", severity_style(sev)
