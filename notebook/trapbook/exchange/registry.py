"""Formats beyond JSON lines, looked up by name; other packages add theirs through the
``trapbook.exporters`` entry-point group."""

from __future__ import annotations

from ..errors import ExchangeError

BUILTIN: dict[str, str] = {}


def export(nb, fmt: str, runs, screen=None, output=None):
    raise ExchangeError(f"export format '{fmt}' is not known", "use --format jsonl")


def import_other(nb, path, author=None):
    raise ExchangeError(f"cannot tell the format of {path}", "import a .jsonl or .json run file")
