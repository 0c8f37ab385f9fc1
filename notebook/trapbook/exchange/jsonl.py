"""JSON lines: one run per line, in the run-file format of schemas/run.schema.json.

Import is all or nothing: every line is validated first, and a single bad record stops
the import with its line number and field, before anything is written.
"""

from __future__ import annotations

import json
from pathlib import Path

from ..errors import ExchangeError, RecordError
from ..files import write_atomic
from ..json_text import loads_once
from ..records import Run, canonical_json, load_run, read_text_limited
from ..text_rules import quoted_in_reason


def runs_for_export(nb, screen: str | None = None, include_withdrawn: bool = False) -> list[Run]:
    if screen:
        sc = nb.get_screen(screen)
        return nb.screen_runs(sc)
    return list(nb.iter_runs(include_withdrawn=include_withdrawn))


def to_jsonl(runs: list[Run]) -> str:
    return "".join(json.dumps(r.to_json_dict(), ensure_ascii=False, sort_keys=True) + "\n" for r in runs)


def export_runs(nb, fmt: str = "jsonl", screen: str | None = None, output: str | None = None, include_withdrawn: bool = False):
    """Export runs as text (returned) or to a file (path returned)."""
    fmt = (fmt or "jsonl").lower()
    runs = runs_for_export(nb, screen, include_withdrawn)
    if fmt == "jsonl":
        text = to_jsonl(runs)
        if output:
            write_atomic(Path(output), text)
            return output
        return text
    from . import registry

    return registry.export(nb, fmt, runs, screen=screen, output=output)


def parse_jsonl(text: str, source: str) -> list[Run]:
    runs = []
    for n, raw in enumerate(text.splitlines(), 1):
        if not raw.strip():
            continue
        try:
            data = loads_once(raw, f"{source} line {n}")
        except RecordError as exc:
            raise ExchangeError(exc.message, f"{exc.hint}; nothing was imported", field=exc.field) from None
        except json.JSONDecodeError as exc:
            raise ExchangeError(
                f"{source} line {n} is not valid JSON ({exc.msg})", "fix that line; nothing was imported"
            ) from None
        except RecursionError:
            raise ExchangeError(
                f"{source} line {n} is nested too deeply to be a run", "fix that line; nothing was imported"
            ) from None
        try:
            runs.append(load_run(data))
        except RecordError as exc:
            raise ExchangeError(f"{source} line {n}: {exc.message}", "fix that record; nothing was imported") from None
    return runs


#: Largest file of runs read, the same bound as an ORD file (ord_import.MAX_IMPORT_BYTES).
MAX_IMPORT_BYTES = 200 * 2**20


def read_import_text(path: str, stream=None) -> str:
    """The text of a file of runs ('-': standard input), refused past MAX_IMPORT_BYTES."""
    try:
        return read_text_limited(path, MAX_IMPORT_BYTES, stream=stream, what="a file of runs")
    except RecordError as exc:
        raise ExchangeError(exc.message, exc.hint) from None


def read_runs(path: Path) -> list[Run]:
    return read_runs_text(read_import_text(str(path)), str(path))


def read_runs_text(text: str, path: str) -> list[Run]:
    """Runs from JSON lines, a JSON list of runs or one run file; `path` names the source in messages."""
    stripped = text.lstrip()
    if stripped.startswith("["):
        try:
            items = loads_once(text, path)
        except RecordError as exc:
            raise ExchangeError(exc.message, f"{exc.hint}; nothing was imported", field=exc.field) from None
        except json.JSONDecodeError as exc:
            raise ExchangeError(
                f"{path} is not valid JSON ({exc.msg}, line {exc.lineno})", "fix the file; nothing was imported"
            ) from None
        except RecursionError:
            raise ExchangeError(f"{path} is nested too deeply to hold runs", "fix the file; nothing was imported") from None
        if not isinstance(items, list):
            raise ExchangeError(f"{path} is not a list of runs", "fix the file; nothing was imported")
        out = []
        for i, item in enumerate(items, 1):
            try:
                out.append(load_run(item))
            except RecordError as exc:
                raise ExchangeError(f"{path} record {i}: {exc.message}", "fix that record; nothing was imported") from None
        return out
    if stripped.startswith("{") and "\n{" not in stripped.strip():
        try:
            data = loads_once(text, path)
        except (json.JSONDecodeError, RecursionError):
            pass  # not one JSON object: read as JSON lines below, which names the line at fault
        except RecordError as exc:
            raise ExchangeError(exc.message, f"{exc.hint}; nothing was imported", field=exc.field) from None
        else:
            try:
                return [load_run(data)]
            except RecordError as exc:
                raise ExchangeError(f"{path}: {exc.message}", "fix the record; nothing was imported") from None
    return parse_jsonl(text, str(path))


def import_path(nb, path: Path, author: str | None = None) -> dict:
    """Recognise the file's format and import it atomically; report what was imported."""
    from . import registry

    path = Path(path)
    if path.is_dir() or registry.format_of(path) is not None:
        return registry.import_other(nb, path, author=author)
    return import_runs(nb, read_runs(path), str(path), path.name, author)


def import_text(nb, text: str, source: str = "standard input", author: str | None = None) -> dict:
    """Import JSON lines (or a run file, or a JSON list of runs) given as text, e.g. piped in."""
    return import_runs(nb, read_runs_text(text, source), source, source, author)


def import_runs(nb, runs: list[Run], source: str, name: str, author: str | None) -> dict:
    if not runs:
        raise ExchangeError(f"{source} holds no runs", "check the file")
    results = nb.import_runs(runs, author=author, reason=f"imported from {quoted_in_reason(name)}")
    notes = [f"{r.id} was already taken; stored as {res.run_id}" for r, res in zip(runs, results) if r.id and r.id != res.run_id]
    return {"format": "jsonl", "imported": [r.run_id for r in results], "screens": [], "skipped": [], "notes": notes}


__all__ = ["export_runs", "import_path", "import_text", "to_jsonl", "read_runs", "read_runs_text", "canonical_json"]
