"""Opening a notebook file, taking its write lock, and saying in plain words why either failed.

Only an explicit create makes a notebook: opening a path that does not exist, an empty
file or another program's SQLite file is refused, and no folder is ever made on the way.
A notebook that cannot be written here (a read-only folder or mount, or a file written by
a newer Trapbook) is still opened for reading; its saves are refused with the reason.
"""

from __future__ import annotations

import logging
import os
import random
import shutil
import sqlite3
import time
from collections.abc import Callable
from pathlib import Path

from ..errors import NotFoundError, StoreError
from . import schema

#: How long a save waits for another writer before giving up, in all, and per attempt.
LOCK_WAIT_SECONDS = 60.0
LOCK_SLICE_MS = 5000

_log = logging.getLogger("trapbook.store")

_SQLITE_FULL = 13
_SQLITE_IOERR = 10
_SQLITE_BUSY = 5
_SQLITE_LOCKED = 6


def _code(exc: sqlite3.Error) -> int | None:
    code = getattr(exc, "sqlite_errorcode", None)
    return code & 0xFF if isinstance(code, int) else None


def is_busy(exc: sqlite3.Error) -> bool:
    return _code(exc) in (_SQLITE_BUSY, _SQLITE_LOCKED) or "database is locked" in str(exc).lower()


def access_error(path: Path, exc: sqlite3.Error) -> StoreError | None:
    """A plain-words StoreError when SQLite failed because the file or its folder is read-only for this user."""
    text = str(exc).lower()
    if "readonly" not in text and "read-only" not in text and "unable to open" not in text:
        return None
    path = Path(path)
    folder = path.parent
    if path.exists() and not os.access(path, os.W_OK):
        what = f"{path} is read-only for you"
    elif not os.access(folder, os.W_OK):
        what = f"the folder {folder} is read-only for you (SQLite keeps its journal files beside the notebook)"
    else:
        what = f"{path} cannot be written ({exc})"
    return StoreError(
        f"cannot use the notebook: {what}; nothing was changed",
        "ask for write access, or copy the notebook (with any -wal file beside it) to a folder of yours and point --db at the copy",
    )


def plain_error(path: Path, exc: sqlite3.Error) -> StoreError | None:
    """The failure in words a chemist can act on (full disk, read-only place), or None for a real bug."""
    path = Path(path)
    code = _code(exc)
    text = str(exc).lower()
    if code == _SQLITE_FULL or "disk is full" in text:
        return StoreError(
            "the disk is full; nothing was changed", f"free some space on the disk that holds {path.parent}, then try again"
        )
    if code == _SQLITE_IOERR or "disk i/o error" in text:
        free = _free_bytes(path)
        if free is not None and free < 1024 * 1024:
            return StoreError(
                "the disk is full; nothing was changed", f"free some space on the disk that holds {path.parent}, then try again"
            )
        return StoreError(
            f"the disk refused to write {path} ({exc}); nothing was changed",
            "check the disk or network share the notebook is on, then try again",
        )
    if is_busy(exc):
        return locked_error(path, None)
    return access_error(path, exc)


def _free_bytes(path: Path) -> int | None:
    try:
        return shutil.disk_usage(path.parent if path.parent.exists() else Path.cwd()).free
    except OSError:
        return None


def locked_error(path: Path, waited: float | None) -> StoreError:
    how_long = f" for {waited:.0f} s" if waited is not None else ""
    return StoreError(
        f"another program kept the notebook {path} locked{how_long}; nothing was changed",
        "another Trapbook window, script or sync tool is writing to it: let it finish (or close it) and try again",
    )


def _say_waiting(message: str) -> None:
    _log.warning(message)


def begin_immediate(conn: sqlite3.Connection, path: Path, on_wait: Callable[[str], None] | None = None) -> None:
    """Take the write lock (BEGIN IMMEDIATE), waiting for another writer with backoff.

    SQLite's own busy timeout waits one slice; between slices this says, once, who is
    waiting for what, then tries again with a growing pause, and gives up with a clear
    StoreError after LOCK_WAIT_SECONDS in all.
    """
    start = time.monotonic()
    delay, told = 0.05, False
    while True:
        try:
            conn.execute("BEGIN IMMEDIATE")
            return
        except sqlite3.OperationalError as exc:
            if not is_busy(exc):
                raise (plain_error(path, exc) or exc) from None
        waited = time.monotonic() - start
        if waited >= LOCK_WAIT_SECONDS:
            raise locked_error(path, waited)
        if not told:
            (on_wait or _say_waiting)(f"trapbook (process {os.getpid()}) is waiting: another program is writing to {path}")
            told = True
        time.sleep(min(delay * (1 + random.random()), max(0.0, LOCK_WAIT_SECONDS - waited)))
        delay = min(delay * 2, 2.0)


def _set_busy_timeout(conn: sqlite3.Connection) -> None:
    conn.execute(f"PRAGMA busy_timeout={int(min(LOCK_SLICE_MS, LOCK_WAIT_SECONDS * 1000))}")


def _use_wal(conn: sqlite3.Connection, path: Path) -> None:
    """WAL journal, set once; several processes creating one notebook at once take turns."""
    start = time.monotonic()
    while True:
        try:
            if conn.execute("PRAGMA journal_mode").fetchone()[0].lower() != "wal":
                conn.execute("PRAGMA journal_mode=WAL")
            return
        except sqlite3.OperationalError as exc:
            if not is_busy(exc) or time.monotonic() - start > LOCK_WAIT_SECONDS:
                raise
            time.sleep(0.05 + random.random() * 0.1)


def uri(path: Path, query: str) -> str:
    """A SQLite URI for `path` (percent-encoded, so '?', '#' or '%' in a folder name stay part of the path)."""
    return f"{Path(path).absolute().as_uri()}?{query}"


def writable_here(path: Path) -> bool:
    """Whether this user can write the file and the folder SQLite keeps its journal in."""
    folder = path.parent
    return os.access(folder, os.W_OK) and (not path.exists() or os.access(path, os.W_OK))


def open_read_only(path: Path) -> sqlite3.Connection:
    """A reading connection for a file that cannot be written here.

    `mode=ro` first; when even that fails (a WAL notebook in a read-only folder has nowhere
    to put its shared-memory file) the file is opened as immutable, which reads it as it
    lies on disk.
    """
    last: sqlite3.Error | None = None
    for query in ("mode=ro", "immutable=1"):
        try:
            conn = sqlite3.connect(uri(path, query), uri=True, isolation_level=None, timeout=30.0, check_same_thread=False)
            conn.execute("SELECT count(*) FROM sqlite_master").fetchone()
            return conn
        except sqlite3.DatabaseError as exc:
            last = exc
    assert last is not None
    problem = access_error(path, last)
    if problem is not None:
        raise problem from None
    raise last  # damage, not permission: the caller says which file and what to do


def check_path(path: Path, create: bool) -> None:
    """Refuse what is not a notebook before SQLite touches it (SQLite would make one)."""
    if path.is_dir():
        raise StoreError(f"{path} is a folder, not a notebook", "give the notebook file's path")
    if not path.exists():
        if not create:
            raise NotFoundError(
                f"no notebook at {path}: create one with `trapbook init {path}`", "or point --db / TRAPBOOK_DB at your notebook"
            )
        try:
            path.parent.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise StoreError(
                f"cannot create folder {path.parent}: {exc.strerror}", "choose a writable location with --db"
            ) from None
    elif path.stat().st_size == 0 and not create:
        raise StoreError(
            f"{path} is an empty file, not a notebook",
            f"create a notebook there with `trapbook init {path}`, or point --db at your notebook",
        )


def connect(path: Path, create: bool) -> tuple[sqlite3.Connection, StoreError | None]:
    """Open (or, with `create`, make) the notebook at `path`, migrated to this code's schema.

    Returns the connection and, when the file cannot be written here, the reason every save
    will be refused with (None when it can).
    """
    check_path(path, create)
    write_problem: StoreError | None = None
    conn = None
    if writable_here(path):
        try:
            # mode=rw when opening: SQLite must not make a new file if this one vanished meanwhile
            conn = sqlite3.connect(
                uri(path, "mode=rwc" if create else "mode=rw"),
                uri=True,
                isolation_level=None,
                timeout=LOCK_SLICE_MS / 1000,
                check_same_thread=False,
            )
            _set_busy_timeout(conn)
            _use_wal(conn, path)
            conn.execute("PRAGMA synchronous=FULL")
            conn.execute("PRAGMA foreign_keys=ON")
        except sqlite3.DatabaseError as exc:
            if conn is not None:
                conn.close()
                conn = None
            problem = plain_error(path, exc)
            if problem is None:
                raise StoreError(
                    f"{path} is not a Trapbook notebook ({exc})", "check the path, or restore from a backup"
                ) from None
            if create or access_error(path, exc) is None:
                raise problem from None
            write_problem = problem
    if conn is None:
        if create:
            raise access_error(path, sqlite3.OperationalError("attempt to write a readonly database")) or StoreError(
                f"cannot create {path}", "choose a writable location with --db"
            )
        try:
            conn = open_read_only(path)
        except sqlite3.DatabaseError as exc:
            raise StoreError(f"{path} is not a Trapbook notebook ({exc})", "check the path, or restore from a backup") from None
        write_problem = write_problem or access_error(path, sqlite3.OperationalError("attempt to write a readonly database"))
    try:
        write_problem = _bring_up_to_date(conn, path, create, write_problem)
    except BaseException:
        conn.close()
        raise
    return conn, write_problem


def _bring_up_to_date(conn: sqlite3.Connection, path: Path, create: bool, write_problem: StoreError | None) -> StoreError | None:
    try:
        applied = schema.applied_versions(conn)
        if applied is None:
            others = [r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type = 'table'")]
            if others:
                raise StoreError(
                    f"{path} is not a Trapbook notebook (it holds another program's tables)",
                    "check the path; Trapbook never adds its tables to another program's file",
                )
            if not create:
                raise StoreError(
                    f"{path} is an empty database, not a notebook",
                    f"create a notebook there with `trapbook init {path}`, or point --db at your notebook",
                )
        newer = newer_schema_problem(conn, path)
        if newer is not None:
            return newer
        if write_problem is None and schema.pending(conn):
            schema.migrate(conn, lambda: begin_immediate(conn, path))
        return write_problem
    except sqlite3.DatabaseError as exc:
        raise (
            plain_error(path, exc)
            or StoreError(f"{path} is not a Trapbook notebook ({exc})", "check the path, or restore from a backup")
        ) from None


def newer_schema_problem(conn: sqlite3.Connection, path: Path) -> StoreError | None:
    """Why a notebook written by a newer Trapbook must not be written by this one (None when it may)."""
    newest = max(schema.applied_versions(conn) or {0})
    if newest <= schema.SCHEMA_VERSION:
        return None
    release = schema.needed_release(conn)
    return StoreError(
        f"{path} was written by a newer Trapbook (notebook schema {newest}; this Trapbook knows up to "
        f"{schema.SCHEMA_VERSION}): it can be read here but not changed",
        f"install Trapbook {release} or later to save to it" if release else "install a newer Trapbook to save to it",
    )
