"""Records read back from a notebook are shown as they were saved.

The rules for new input (no control characters, bounded text, bounded numbers, one id
rule, holds longer than zero) tighten over time. A version saved under looser rules is
still a record: it must stay readable, listable and exportable, never turn into an error
that hides it. Inside ``reading_stored()`` those input-only rules stand aside; everything
printed from such text is escaped on output (``text_safety``), and any new version of
the run is validated by the full rules again.
"""

from __future__ import annotations

import contextlib
import contextvars
from collections.abc import Iterator

_READING_STORED: contextvars.ContextVar[bool] = contextvars.ContextVar("trapbook_reading_stored", default=False)


@contextlib.contextmanager
def reading_stored() -> Iterator[None]:
    """Validate what the notebook already holds: input-only rules do not apply."""
    token = _READING_STORED.set(True)
    try:
        yield
    finally:
        _READING_STORED.reset(token)


def input_rules_apply() -> bool:
    """False while reading a stored version back (see the module docstring)."""
    return not _READING_STORED.get()
