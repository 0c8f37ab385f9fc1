"""The Python API: what a Jupyter notebook or another lab tool needs, in a few calls.

    import trapbook
    nb = trapbook.open_notebook("group.sqlite")
    run = trapbook.get_run(nb, "TB-0004")
    table = trapbook.compute_amounts(run)       # mmol, mg, µL of every line
    for f in trapbook.run_checks(run, nb):      # bench checks, most severe first
        print(f.severity, f.message)
    trapbook.strain("C12=CCCC(CCC1)C2", tier="fast", nb=nb)   # cached in the notebook

The same functions are in `trapbook.api` under their short names (`api.amounts`,
`api.checks`, `api.backup`); at the top level those three carry a verb, because
`trapbook.amounts`, `trapbook.checks` and `trapbook.backup` are core modules.

Every function here is a thin call into the core module that does the work, so the
API and the command line can never disagree. Failures the caller can fix raise
`trapbook.errors.TrapbookError` (with `.message` and `.hint`).
"""

from __future__ import annotations

import importlib
import os
from collections.abc import Callable
from pathlib import Path
from typing import Any

from .errors import RecordError


def _core(name: str):
    """A core module by name: `from . import amounts` would find the lazy API attribute instead."""
    return importlib.import_module(f"trapbook.{name}")


def open_notebook(path: str | os.PathLike | None = None, create: bool = False):
    """A `Notebook` (use it as a context manager, or call `.close()`).

    `path` defaults to $TRAPBOOK_DB, then the per-user data directory; `create=True`
    makes a new notebook there if none exists.
    """
    from .store import Notebook, default_path

    return Notebook.open(Path(path).expanduser() if path else default_path(), create=create)


def load_run(data: Any):
    """A validated `Run` from a dict, JSON text or the path of a run file."""
    from .records import Run, load_run_text
    from .records import load_run as _load

    if isinstance(data, Run) or isinstance(data, dict):
        return _load(data)
    if isinstance(data, os.PathLike) or (isinstance(data, str) and not data.lstrip().startswith("{")):
        p = Path(data)
        if not p.is_file():
            raise RecordError(f"no run file {p}", "give a dict, JSON text or the path of a run file")
        return load_run_text(p.read_text(encoding="utf-8"), str(p))
    if isinstance(data, str):
        return load_run_text(data)
    raise RecordError(f"cannot read a run from a {type(data).__name__}", "give a dict, JSON text or a file path")


def add_run(nb, run: Any, author: str | None = None, reason: str = "created"):
    """Store a new run; returns a `SaveResult` (run_id, version, hash)."""
    return nb.add_run(load_run(run), author=author, reason=reason)


def save_run(nb, run: Any, expected_version: int, author: str | None = None, reason: str = ""):
    """Store a new version of a run made from `expected_version` (StaleVersionError if outdated)."""
    return nb.save_run(load_run(run), expected_version, author=author, reason=reason)


def get_run(nb, run_id: str, version: int | None = None):
    """The stored run (or one of its earlier versions)."""
    return nb.get_run(run_id, version)


def list_runs(nb, include_withdrawn: bool = False, screen: str | None = None) -> list[dict]:
    return nb.list_runs(include_withdrawn=include_withdrawn, screen=screen)


def amounts(run: Any):
    """The reagent table (`AmountTable`): mmol, equiv, mg and µL of every line."""
    _amounts = _core("amounts")

    return _amounts.compute(load_run(run))


def yields(run: Any) -> list:
    """Isolated and NMR yields, dr and ee of each product (`ProductYield`)."""
    _amounts = _core("amounts")

    return _amounts.product_yields(load_run(run))


def checks(run: Any, nb=None) -> list:
    """Bench checks of a run (`Finding` list); with `nb`, the lab's settings and cached strain apply."""
    from .findings import findings_for

    return findings_for(nb, load_run(run))


def strain(smiles: str, tier: str = "fast", nb=None, progress: Callable[[str, float], None] | None = None) -> dict:
    """Olefin strain of an intermediate; with `nb`, served from and stored in its cache (shows as a card in Jupyter)."""
    from .html_display import StrainResult
    from .strain_link import get_strain

    return StrainResult(get_strain(nb, smiles, tier, progress))


def find_runs(nb, query: str = "", **options) -> list:
    """Runs matching a query typed as in the Logbook's filter ("trap:furan temp:>100"), or `trapbook search`'s options."""
    from .search import search
    from .search_query import parse_query

    if query and options:
        raise RecordError(
            "give a query text or search options, not both", "e.g. find_runs(nb, 'trap:furan') or find_runs(nb, trap='furan')"
        )
    return search(nb, parse_query(query)) if query else search(nb, **options)


def review_screen(nb, screen: str) -> dict:
    """A screen's review: yields by condition, best run, failures (a dict that shows as a table in Jupyter)."""
    from .html_display import ScreenReview
    from .review import review_screen as _review

    return ScreenReview(_review(nb, screen))


def open_group(paths) -> Any:
    """Several members' notebooks read together, read-only (`trapbook.group.Group`; close it when done)."""
    from .group import Group

    return Group.open([paths] if isinstance(paths, (str, os.PathLike)) else paths)


def verify(nb_or_path) -> dict:
    """{"ok", "problems", "checked"}: hash chains, current rows, files and SQLite's own check."""
    integrity = _core("integrity")

    if hasattr(nb_or_path, "conn"):
        return integrity.verify(nb_or_path).to_dict()
    return integrity.verify_path(nb_or_path).to_dict()


def attach(nb, run_id: str, file: str | os.PathLike, author: str | None = None, reason: str | None = None) -> dict:
    """Copy a file into the notebook's store and record it in a new version of the run."""
    attachments = _core("attachments")

    return attachments.attach(nb, run_id, file, author=author, reason=reason)


def export(nb, fmt: str = "jsonl", screen: str | None = None, output: str | None = None):
    """Runs as jsonl, ord, rocrate (or a plugin format): the text, or the path written."""
    from .exchange import export_runs

    return export_runs(nb, fmt, screen=screen, output=output)


def import_file(nb, path: str | os.PathLike, author: str | None = None) -> dict:
    """Import a JSON-lines, ORD or RO-Crate file (format recognised), all or nothing."""
    from .exchange import import_path

    return import_path(nb, Path(path), author=author)


def backup(nb_or_path, dest: str | os.PathLike) -> dict:
    """A verified copy of the notebook and its files, safe while the notebook is open."""
    _backup = _core("backup")

    return _backup.backup(getattr(nb_or_path, "path", nb_or_path), dest)


__all__ = [
    "open_notebook",
    "load_run",
    "add_run",
    "save_run",
    "get_run",
    "list_runs",
    "amounts",
    "yields",
    "checks",
    "strain",
    "find_runs",
    "review_screen",
    "open_group",
    "verify",
    "attach",
    "export",
    "import_file",
    "backup",
]
