"""Stored text made safe to print: the one place that decides how a terminal sees it.

Titles, names, reasons, authors, ids and notes come from people and from imported files.
New input with control characters is refused at validation (text_rules.py), but old notebooks and
imports may still hold them, so every view prints stored text through `printable`:
an escape sequence (ESC ] 52 writes the clipboard, ESC [ 2 J clears the screen), a bell,
a carriage return or a bidirectional override is shown as visible text, spelled as JSON
spells it (``\\u001b``, ``\\u202e``, ``\\n``), instead of reaching the terminal, and a
newline cannot fake a table row. Error messages quote hostile input the same way
(units.shown_input).
"""

from __future__ import annotations

import re
from typing import Any

#: Bidirectional marks, overrides and isolates (they reorder what follows them on screen) and
#: the Unicode line and paragraph separators (some terminals break lines on them).
_INVISIBLE_FORMATTING = "\u061c\u200e\u200f\u202a-\u202e\u2066-\u2069\u2028\u2029"

#: The one list of characters text must not carry into a terminal, as regex class bodies:
#: validation refuses them in new input (text_rules) and printing escapes them (below).
#: In a single line: C0 controls, DEL, C1 controls and the formatting characters above.
UNSAFE_IN_A_LINE = f"\x00-\x1f\x7f-\x9f{_INVISIBLE_FORMATTING}"
#: In notes: the same, less tab and line feed (and carriage return, refused only on input
#: as part of a line break, escaped on output).
UNSAFE_IN_NOTES = f"\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f{_INVISIBLE_FORMATTING}"

_UNSAFE = re.compile(f"[{UNSAFE_IN_A_LINE}]")
_UNSAFE_KEEP_LINES = re.compile(f"[\x00-\x08\x0b-\x1f\x7f-\x9f{_INVISIBLE_FORMATTING}]")

_NAMED = {"\n": "\\n", "\r": "\\r", "\t": "\\t"}


def _visible(match: re.Match) -> str:
    ch = match.group(0)
    if ch in _NAMED:
        return _NAMED[ch]
    return f"\\u{ord(ch):04x}"


def printable(value: Any, multiline: bool = False) -> str:
    """`value` as text that cannot drive a terminal: control characters shown as escapes.

    Single-line (the default, for table cells, titles, names, ids) also shows newlines
    and tabs as ``\\n`` and ``\\t``, so one record stays one row. `multiline=True` (notes,
    observations) keeps newlines and tabs and escapes everything else.
    """
    if value is None:
        return ""
    text = value if isinstance(value, str) else str(value)
    pattern = _UNSAFE_KEEP_LINES if multiline else _UNSAFE
    return pattern.sub(_visible, text)


_JSON_UNSAFE = re.compile(f"[\x7f-\x9f{_INVISIBLE_FORMATTING}]")


def json_safe(text: str) -> str:
    """JSON text with DEL, C1 and bidi characters written as \\u escapes (json.dumps leaves
    them raw with ensure_ascii=False). They only occur inside strings, so the result is the
    same JSON value."""
    return _JSON_UNSAFE.sub(lambda m: f"\\u{ord(m.group(0)):04x}", text)
