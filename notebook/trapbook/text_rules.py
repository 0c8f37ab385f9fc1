"""What text a record may hold: plain single lines, bounded notes, and one rule for ids.

Stored text is printed in terminals, tables, spreadsheets and file names. A control
character in a title can move the cursor, write the clipboard (ESC ] 52) or fake a table
row (a newline); a NUL breaks spreadsheet export; a direction override makes text read
differently from what is stored; an id such as ``../../x`` walks out of an export folder.
Such text is refused when a record is validated, with words that say which field and
what to do, so nothing downstream has to guess.
"""

from __future__ import annotations

import re
from typing import Annotated

from pydantic import AfterValidator, Field

from .errors import RecordError
from .stored_reading import input_rules_apply
from .text_safety import UNSAFE_IN_A_LINE, UNSAFE_IN_NOTES, printable
from .units import shown_input

#: Longest single-line field (names, chemist, reasons, tags) and title. Common practice, no source.
SINGLE_LINE_MAX = 200
TITLE_MAX = 300
#: Longest SMILES kept on a line (large natural products stay well below). Common practice, no source.
SMILES_MAX = 2000
#: Longest free-text note (about ten printed pages). Common practice, no source.
NOTE_MAX = 20_000

# C0 controls (tab, newline and carriage return are allowed in notes only), DEL, C1 controls,
# the line and paragraph separators, and the bidirectional marks, overrides and isolates:
# the same list printing escapes (text_safety), so what is refused and what is shown agree.
_NOT_IN_NOTES = re.compile(f"[{UNSAFE_IN_NOTES}]")
_NOT_IN_A_LINE = re.compile(f"[{UNSAFE_IN_A_LINE}]")

_CHARACTER_NAMES = {
    0x00: "a NUL character",
    0x09: "a tab",
    0x0A: "a line break",
    0x0D: "a carriage return",
    0x1B: "an escape character",
    0x7F: "a delete character",
    0x2028: "a line separator",
    0x2029: "a paragraph separator",
}

#: One rule for run and screen ids, whoever makes them (the notebook, a run file, every import):
#: a letter or digit, then up to 63 letters, digits, '.', '_' or '-', and never '..'.
RUN_ID = re.compile(r"[A-Za-z0-9][A-Za-z0-9._-]{0,63}")


def _character(ch: str) -> str:
    code = ord(ch)
    name = _CHARACTER_NAMES.get(code)
    if name is None:
        name = (
            "a direction mark or override"
            if code in (0x061C, 0x200E, 0x200F) or 0x202A <= code <= 0x202E or 0x2066 <= code <= 0x2069
            else "a control character"
        )
    return f"{name} (U+{code:04X})"


def check_line(text: str, limit: int = SINGLE_LINE_MAX) -> str:
    """A single-line field: plain printable text of at most `limit` characters."""
    if not input_rules_apply():
        return text
    bad = _NOT_IN_A_LINE.search(text)
    if bad:
        raise ValueError(
            f"contains {_character(bad.group())} at character {bad.start() + 1} "
            f"('{shown_input(text, 40)}'); a single-line field takes plain text only: "
            "remove it (no control characters, line breaks or direction overrides)"
        )
    if len(text) > limit:
        raise ValueError(
            f"is {len(text):,} characters long; at most {limit:,} are kept here: shorten it (longer text belongs in the notes)"
        )
    return text


def check_note(text: str) -> str:
    """A free-text note: line breaks and tabs are fine, other control characters and NUL are not."""
    if not input_rules_apply():
        return text
    bad = _NOT_IN_NOTES.search(text)
    if bad:
        raise ValueError(
            f"contains {_character(bad.group())} at character {bad.start() + 1}; "
            "notes take text, line breaks and tabs only: remove it"
        )
    if len(text) > NOTE_MAX:
        raise ValueError(
            f"is {len(text):,} characters long; notes hold at most {NOTE_MAX:,}: shorten it, or attach the full text as a file"
        )
    return text


#: Longest reason kept on a version: the same bound an imported history is read with
#: (store/history_import.py), so every reason a save accepts comes back from an export.
REASON_MAX = 2_000


def clean_reason(reason: str) -> str:
    """Why a save was made, as one line of plain text: it is kept in the hash-chained history,
    shown in every history view and exported with it, so it follows the single-line rule."""
    text = reason.strip() if isinstance(reason, str) else ""
    try:
        return check_line(text, REASON_MAX)
    except ValueError as exc:
        raise RecordError(
            f"the reason {exc}", "say why in one line of plain text, e.g. --reason 'corrected furan volume'", field="reason"
        ) from None


def quoted_in_reason(text: str, limit: int = 200) -> str:
    """A file or source name put into a reason Trapbook writes itself ('imported from NAME'):
    control characters shown as escapes and the name cut short, so the reason stays one clean line."""
    shown = printable(text)
    return shown if len(shown) <= limit else shown[: limit - 1] + "…"


def validate_run_id(text: str) -> str:
    """The id rule for runs and screens (see RUN_ID); raises ValueError in plain words."""
    if not isinstance(text, str):
        raise ValueError(f"id {shown_input(text)} is not text")
    if not input_rules_apply():
        return text
    if not RUN_ID.fullmatch(text) or ".." in text:
        if len(text) > 64:
            why = f"is {len(text):,} characters long (at most 64)"
        elif _NOT_IN_A_LINE.search(text):
            why = f"contains {_character(_NOT_IN_A_LINE.search(text).group())}"
        elif ".." in text or "/" in text or "\\" in text:
            why = "looks like a file path"
        else:
            why = "has characters other than letters, digits, '.', '_' and '-'"
        raise ValueError(
            f"'{shown_input(text, 40)}' {why}: an id starts with a letter or digit, then up to 63 "
            "letters, digits, '.', '_' or '-' (never '..'), e.g. TB-0042"
        )
    return text


# The same rules written into the JSON Schema, so a run file can be checked without Trapbook.
def _json_class(body: str) -> str:
    """A regex class body with every character spelled as a JSON Schema \\uXXXX escape."""
    return "".join(ch if ch == "-" else f"\\u{ord(ch):04x}" for ch in body)


_LINE_PATTERN = f"^[^{_json_class(UNSAFE_IN_A_LINE)}]*$"
_NOTE_PATTERN = f"^[^{_json_class(UNSAFE_IN_NOTES)}]*$"


def _schema(limit: int, pattern: str):
    return Field(json_schema_extra={"maxLength": limit, "pattern": pattern})


SingleLine = Annotated[str, AfterValidator(check_line), _schema(SINGLE_LINE_MAX, _LINE_PATTERN)]
Title = Annotated[str, AfterValidator(lambda v: check_line(v, TITLE_MAX)), _schema(TITLE_MAX, _LINE_PATTERN)]
SmilesText = Annotated[str, AfterValidator(lambda v: check_line(v, SMILES_MAX)), _schema(SMILES_MAX, _LINE_PATTERN)]
Note = Annotated[str, AfterValidator(check_note), _schema(NOTE_MAX, _NOTE_PATTERN)]
RunId = Annotated[
    str, AfterValidator(validate_run_id), Field(json_schema_extra={"pattern": r"^(?!.*\.\.)[A-Za-z0-9][A-Za-z0-9._-]{0,63}$"})
]
