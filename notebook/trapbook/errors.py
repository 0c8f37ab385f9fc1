"""The one error hierarchy.

Every failure a user can cause (bad unit, bad SMILES, a stale save, a malformed import)
is a `TrapbookError` carrying a plain-words message and a hint, so the CLI can print it
and exit 2 and the TUI can show it beside the field, without either knowing the cause.
"""

from __future__ import annotations


class TrapbookError(Exception):
    """A problem the user can fix: `message` says what is wrong, `hint` what to do.

    The words are for people; the data fields are for code. `field` names the input that
    was refused (a record field, a CLI option, a form box), `got` what was given and
    `expected` what would have been accepted. A caller that needs to react to one kind of
    refusal branches on these fields (or on the subclass), never on the message text,
    so rewording a message cannot change behaviour.
    """

    def __init__(
        self, message: str, hint: str | None = None, *, field: str | None = None, got: object = None, expected: object = None
    ):
        super().__init__(message)
        self.message = message
        self.hint = hint
        self.field = field
        self.got = got
        self.expected = expected

    def __str__(self) -> str:  # pragma: no cover - trivial
        return self.message if not self.hint else f"{self.message}\n  hint: {self.hint}"

    def to_dict(self) -> dict:
        """The error as the CLI prints it under --json (stable keys: error, hint, field)."""
        return {"error": self.message, "hint": self.hint, "field": self.field}


class UnitError(TrapbookError, ValueError):
    """A quantity that cannot be read, or has the wrong dimension for its field.

    Also a ValueError so that pydantic reports it with the field's location.
    """


class ChemistryError(TrapbookError):
    """A structure that cannot be parsed, embedded or computed."""


class RecordError(TrapbookError):
    """A run, screen or line that breaks the record rules."""


class StoreError(TrapbookError):
    """The notebook file cannot be opened, read or written as asked."""


class StaleVersionError(StoreError):
    """A save made from an older version than the one now stored."""


class NotFoundError(StoreError):
    """A run, screen or version id that the notebook does not hold."""


class ExchangeError(TrapbookError):
    """An import or export that cannot be carried out; nothing was written."""


class SpectrumError(TrapbookError):
    """Raw NMR data that cannot be read, processed or integrated as asked; nothing was saved."""
