"""Formats beyond JSON lines, looked up by name; other packages add theirs through the
``trapbook.exporters`` entry-point group.

A format is a pair of callables kept in `BUILTIN` under its name:
``export(nb, runs, screen=None, output=None) -> str`` (the text, or the path written)
and, optionally, ``import_(nb, path, author=None) -> report dict``. Each callable is
named as ``"module:function"`` so that a format costs nothing until it is used.

An entry point in the ``trapbook.exporters`` group names an object with an ``export``
callable of the same signature (and optionally ``import_`` and ``suffixes``); its name
becomes the ``--format`` name. A built-in name cannot be replaced by a plugin.
"""

from __future__ import annotations

import importlib
from collections.abc import Callable
from pathlib import Path
from typing import Any

from ..errors import ExchangeError, TrapbookError

ENTRY_POINT_GROUP = "trapbook.exporters"

#: name -> {"export": "module:function", "import": "module:function" (optional), "suffixes": (...)}
BUILTIN: dict[str, dict[str, Any]] = {
    "ord": {
        "export": "trapbook.exchange.ord:export",
        "import": "trapbook.exchange.ord:import_path",
        "suffixes": (".pb", ".pbtxt", ".ord.json"),
    },
    "rocrate": {
        "export": "trapbook.exchange.crate:export",
        "import": "trapbook.exchange.crate:import_path",
        "suffixes": (".zip",),
    },
    # Suffixes only so that an import of such a file says it is export-only.
    "csv": {"export": "trapbook.exchange.tables:export_csv", "suffixes": (".csv",)},
    "xlsx": {"export": "trapbook.exchange.tables:export_xlsx", "suffixes": (".xlsx",)},
}


def _resolve(ref: str | Callable) -> Callable:
    if callable(ref):
        return ref
    module, _, name = ref.partition(":")
    return getattr(importlib.import_module(module), name)


def plugin_formats() -> dict[str, Any]:
    """Formats other installed packages offer; a broken plugin is skipped, never fatal."""
    from importlib.metadata import entry_points

    found: dict[str, Any] = {}
    try:
        eps = entry_points(group=ENTRY_POINT_GROUP)
    except Exception:  # pragma: no cover - broken metadata of some other package
        return found
    for ep in eps:
        if ep.name in BUILTIN or ep.name == "jsonl":
            continue
        found[ep.name] = ep
    return found


def _plugin_spec(name: str) -> dict[str, Any] | None:
    ep = plugin_formats().get(name)
    if ep is None:
        return None
    try:
        obj = ep.load()
    except Exception as exc:
        raise ExchangeError(
            f"the export format '{name}' (from an installed plugin) could not be loaded: {exc}",
            "reinstall or remove the package that provides it",
        ) from None
    export = getattr(obj, "export", None)
    if export is None and callable(obj):
        export = obj
    if export is None:
        raise ExchangeError(f"the plugin format '{name}' has no export function", "report it to the plugin's authors")
    return {"export": export, "import": getattr(obj, "import_", None), "suffixes": tuple(getattr(obj, "suffixes", ()))}


def known_formats() -> list[str]:
    return sorted({"jsonl", *BUILTIN, *plugin_formats()})


def spec(fmt: str) -> dict[str, Any]:
    fmt = (fmt or "").lower()
    if fmt in BUILTIN:
        return BUILTIN[fmt]
    found = _plugin_spec(fmt)
    if found is None:
        raise ExchangeError(f"export format '{fmt}' is not known", f"use one of: {', '.join(known_formats())}")
    return found


def export(nb, fmt: str, runs, screen=None, output=None):
    """Export `runs` in format `fmt`: returns the text, or the path when `output` is given."""
    fn = _resolve(spec(fmt)["export"])
    try:
        return fn(nb, runs, screen=screen, output=output)
    except TrapbookError:
        raise
    except OSError as exc:
        raise ExchangeError(f"cannot write the {fmt} export: {exc.strerror or exc}", "choose a writable path with -o") from None


def format_of(path: Path) -> str | None:
    """The format a file or folder is in, judged by its name and first bytes."""
    name = path.name.lower()
    if path.is_dir():
        if (path / "ro-crate-metadata.json").exists():
            return "rocrate"
        return None
    for fmt, entry in BUILTIN.items():
        if any(name.endswith(s) for s in entry.get("suffixes", ())):
            return fmt
    if name.endswith(".json"):
        try:
            with path.open("rb") as fh:
                head = fh.read(4096).decode("utf-8", "replace")
        except OSError:
            return None
        # An ORD message in JSON form carries its own field names; a run file has "lines".
        stripped = head.lstrip()
        ord_keys = ('"reactions"', '"inputs"', '"outcomes"', '"reactionId"', '"datasetId"', '"dataset_id"')
        if stripped.startswith("{") and any(k in head for k in ord_keys) and '"lines"' not in head:
            return "ord"
    for fmt in plugin_formats():
        try:
            s = _plugin_spec(fmt)
        except ExchangeError:
            continue
        if s and s.get("import") and any(name.endswith(x) for x in s.get("suffixes", ())):
            return fmt
    return None


def import_other(nb, path, author=None):
    """Import a non-JSON-lines file by its recognised format (all or nothing)."""
    path = Path(path)
    if not path.exists():
        raise ExchangeError(f"no file or folder {path}", "give the path of a file to import")
    fmt = format_of(path)
    if fmt is None:
        raise ExchangeError(
            f"cannot tell the format of {path}",
            "import a .jsonl/.json run file, an ORD file (.pb, .pbtxt, .json) or an RO-Crate (.zip or folder)",
        )
    entry = spec(fmt)
    if not entry.get("import"):
        raise ExchangeError(
            f"the format '{fmt}' can be exported but not imported", "import a JSON-lines or RO-Crate export instead"
        )
    return _resolve(entry["import"])(nb, path, author=author)


__all__ = ["BUILTIN", "ENTRY_POINT_GROUP", "export", "import_other", "format_of", "known_formats", "plugin_formats", "spec"]
