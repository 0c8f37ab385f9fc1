"""A notebook made for one command (`add --create`, `import --create`) that is taken away again
when the command fails before anything was saved in it.

Without this, a failed import left an empty notebook behind, and the next command found a
notebook there that nobody meant to keep. Only what this command made is removed: a notebook
that was already there is just opened, and a new one that holds anything is kept.
"""

from __future__ import annotations

import contextlib
import shutil
import sqlite3
from collections.abc import Iterator
from pathlib import Path

from ..errors import TrapbookError
from .notebook import Notebook

#: Tables that hold something worth keeping; a notebook with a row in any of them is never removed.
_KEPT_TABLES = ("saves", "runs", "screens", "settings", "strain_cache")
_SQLITE_SIDE_FILES = ("-wal", "-shm", "-journal")


@contextlib.contextmanager
def notebook_made_for_command(path: Path) -> Iterator[Notebook]:
    """The notebook at `path`, made if there is none; removed again if the work fails while it is
    still empty, and the error then says so."""
    from ..attachments import store_dir

    path = Path(path).expanduser()
    if path.exists():  # not ours: open it (a folder or a foreign file is refused by the store)
        with Notebook.create(path) as nb:
            yield nb
        return
    new_folders = _missing_folders(path)
    files_dir_was_there = store_dir(path).exists()
    nb = Notebook.create(path)
    try:
        yield nb
    except BaseException as exc:
        empty = _holds_nothing(nb)
        nb.close()
        if not empty:
            raise
        _remove(path, new_folders, None if files_dir_was_there else store_dir(path))
        if isinstance(exc, TrapbookError):
            raise type(exc)(
                f"{exc.message} (the notebook {path}, created by this command, was removed again: nothing was saved in it)",
                exc.hint,
                field=exc.field,
                got=exc.got,
                expected=exc.expected,
            ) from None
        raise
    finally:
        nb.close()


def _missing_folders(path: Path) -> list[Path]:
    """Folders above `path` that do not exist yet (the store makes them), deepest first."""
    out = []
    folder = path.parent
    while not folder.exists():
        out.append(folder)
        folder = folder.parent
    return out


def _holds_nothing(nb: Notebook) -> bool:
    """Whether the notebook holds no save, run, screen, setting or cached result.

    A notebook that cannot be read for this question is counted as holding something: kept.
    """
    try:
        counts = [nb.conn.execute(f"SELECT EXISTS (SELECT 1 FROM {table})").fetchone()[0] for table in _KEPT_TABLES]
    except sqlite3.Error:  # cannot tell: keep the file; the command's own error is raised as it was
        return False
    return not any(counts)


def _remove(path: Path, new_folders: list[Path], files_dir: Path | None) -> None:
    """The notebook file, SQLite's files beside it, and what this command made around it."""
    for suffix in ("", *_SQLITE_SIDE_FILES):
        Path(str(path) + suffix).unlink(missing_ok=True)
    if files_dir is not None and files_dir.is_dir():
        shutil.rmtree(files_dir)
    for folder in new_folders:  # deepest first; a folder that holds anything else stays
        if folder.is_dir() and not any(folder.iterdir()):
            folder.rmdir()
