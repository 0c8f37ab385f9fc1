"""The notebook file: runs, screens and settings with an immutable, hash-chained version history.

Every save appends a version (author, UTC time, reason, SHA-256 of the content, hash of
the previous version) and an entry in the notebook's log of saves (store/chain.py) inside
one SQLite transaction, so a crash leaves either the whole save or none of it. A save
made from a stale version is refused, never merged. Runs are withdrawn, never deleted.
Opening and locking live in store/connect.py; screens, settings and the strain cache in the
mixins of store/screens.py and store/settings_cache.py.

Listing runs reads only the index rows (plain SQLite), so the records module (pydantic and
pint behind it) is imported where a run or screen is read or written, and sqlite-utils on
the first write: a Logbook is drawn without either.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import functools
import json
import os
import sqlite3
from collections.abc import Iterable, Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

from .. import attachments
from ..errors import NotFoundError, RecordError, StaleVersionError, StoreError
from ..settings import login_name
from . import chain, connect
from . import index as run_index
from .chain import version_hash
from .diff import diff_runs
from .screens import ScreenStore
from .settings_cache import SettingsCacheStore

if TYPE_CHECKING:  # pragma: no cover - typing only
    from ..records import Run

APP_NAME = "trapbook"


def now_utc() -> str:
    return _dt.datetime.now(_dt.UTC).isoformat(timespec="microseconds")


def default_author(nb=None, given: str | None = None) -> str:
    """Who a save is recorded as: `given` (--author), else the notebook's "you are" name, else the login name."""
    if nb is not None:
        from ..settings import author_for

        return author_for(nb, given)[0]
    if given:
        return given
    return login_name()


def default_path() -> Path:
    """TRAPBOOK_DB, else the per-user data directory."""
    env = os.environ.get("TRAPBOOK_DB")
    if env:
        return Path(env).expanduser()
    import platformdirs

    return Path(platformdirs.user_data_dir(APP_NAME, appauthor=False)) / "notebook.sqlite"


def listed_columns(run, withdrawn: int) -> dict:
    """The columns of a run's current row that lists and searches read without opening the
    record: copied from the run at each save, and recomputed the same way by verify."""
    return {
        "title": run.title,
        "chemist": run.chemist,
        "date": run.date.isoformat() if run.date else None,
        "status": run.status,
        "screen": run.screen,
        "withdrawn": withdrawn,
    }


@dataclass
class SaveResult:
    run_id: str
    version: int
    hash: str
    created: bool


@dataclass
class VersionInfo:
    run_id: str
    version: int
    author: str
    time: str
    reason: str
    action: str
    hash: str
    prev_hash: str | None
    changes: list[str]

    def to_dict(self) -> dict:
        return self.__dict__.copy()


class Notebook(ScreenStore, SettingsCacheStore):
    """One notebook file. Open with `Notebook.open(path)` or create with `Notebook.create(path)`.

    Screens live in store/screens.py, settings and the strain cache in store/settings_cache.py.
    """

    def __init__(self, path: Path, conn: sqlite3.Connection, write_problem: StoreError | None = None):
        self.path = path
        self.conn = conn
        #: Why saves are refused here (read-only place, newer notebook), None when they are not.
        self.write_problem = write_problem
        self._hashed_cache: bool | None = None

    @functools.cached_property
    def db(self):
        """sqlite-utils over this connection, for the writes; imported on the first one."""
        import sqlite_utils

        return sqlite_utils.Database(self.conn)

    # --- opening -------------------------------------------------------------------
    @classmethod
    def create(cls, path: str | os.PathLike) -> Notebook:
        """Make a notebook at `path` (folders included), or open the one already there."""
        p = Path(path).expanduser()
        return cls(p, *connect.connect(p, create=True))

    @classmethod
    def open(cls, path: str | os.PathLike, create: bool = False) -> Notebook:
        """Open an existing notebook; a missing path, an empty file or a foreign file is refused.

        Only `create=True` (as `trapbook init` does) makes one. A notebook that cannot be
        written here is opened for reading; `write_problem` says why saves are refused.
        """
        p = Path(path).expanduser()
        return cls(p, *connect.connect(p, create=create))

    @property
    def read_only(self) -> bool:
        return self.write_problem is not None

    def close(self) -> None:
        with contextlib.suppress(Exception):
            self.conn.close()

    def __enter__(self) -> Notebook:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    @contextlib.contextmanager
    def transaction(self) -> Iterator[sqlite3.Connection]:
        """BEGIN IMMEDIATE: one writer at a time, all or nothing.

        A full disk, a read-only place or a lock held too long becomes a StoreError that
        says so and that nothing was changed.
        """
        if self.conn.in_transaction:
            yield self.conn
            return
        if self.write_problem is not None:
            raise self.write_problem
        try:
            connect.begin_immediate(self.conn, self.path)
        except sqlite3.OperationalError as exc:
            raise (connect.plain_error(self.path, exc) or exc) from None
        try:
            yield self.conn
            self.conn.execute("COMMIT")
        except sqlite3.OperationalError as exc:
            with contextlib.suppress(sqlite3.Error):
                if self.conn.in_transaction:
                    self.conn.execute("ROLLBACK")
            problem = connect.plain_error(self.path, exc)
            if problem is None:
                raise
            raise problem from None
        except BaseException:
            with contextlib.suppress(sqlite3.Error):
                if self.conn.in_transaction:
                    self.conn.execute("ROLLBACK")
            raise

    @property
    def schema_version(self) -> int:
        return max((r[0] for r in self.conn.execute("SELECT version FROM migrations")), default=0)

    # --- ids -----------------------------------------------------------------------
    def _next_id(self, counter: str, prefix: str) -> str:
        row = self.conn.execute("SELECT value FROM counters WHERE name = ?", (counter,)).fetchone()
        n = (row[0] if row else 0) + 1
        table = "runs" if counter == "run" else "screens"
        while self.conn.execute(f"SELECT 1 FROM {table} WHERE id = ?", (f"{prefix}{n:04d}",)).fetchone():
            n += 1
        self.db["counters"].upsert({"name": counter, "value": n}, pk="name")
        return f"{prefix}{n:04d}"

    # --- runs ----------------------------------------------------------------------
    def add_run(self, run: Run | dict, author: str | None = None, reason: str = "created", keep_id: bool = False) -> SaveResult:
        """Store a new run (version 1). With keep_id, the run's own id is kept if it is free."""
        from ..records import Run, load_run

        run = load_run(run) if not isinstance(run, Run) else run
        attachments.require_stored(self, run)  # named by the id or title it arrived with
        with self.transaction():
            if keep_id and run.id:
                if self.conn.execute("SELECT 1 FROM runs WHERE id = ?", (run.id,)).fetchone():
                    raise RecordError(
                        f"run id {run.id} is already in this notebook",
                        "import into another notebook, or drop the id to get a new one",
                    )
                run_id = run.id
            else:
                run_id = self._next_id("run", "TB-")
            run = run.model_copy(update={"id": run_id})
            return self._write_version(run, default_author(self, author), reason, "create", None)

    def save_run(self, run: Run | dict, expected_version: int | None, author: str | None = None, reason: str = "") -> SaveResult:
        """Store a new version of an existing run, made from `expected_version`.

        If someone saved in between, the save is refused (StaleVersionError) and nothing
        is written: the chemist reloads, looks at what changed, and saves again. With
        `expected_version=None` the edit is taken as made from whatever version is current
        when the write lock is held (read inside the transaction, so never falsely stale).
        """
        from ..records import Run, load_run

        run = load_run(run) if not isinstance(run, Run) else run
        if not run.id:
            raise RecordError("the run has no id", "use add for a new run")
        if not reason or not reason.strip():
            raise RecordError("a reason is needed to change a stored run", "say why, e.g. --reason 'corrected furan volume'")
        with self.transaction():
            row = self.conn.execute("SELECT version, hash, withdrawn FROM runs WHERE id = ?", (run.id,)).fetchone()
            if row is None:
                raise NotFoundError(f"no run {run.id} in this notebook", "list runs with 'trapbook list'")
            if expected_version is not None and row[0] != expected_version:
                raise StaleVersionError(
                    f"run {run.id} was changed (now version {row[0]}) since you opened version {expected_version}; your save was not written",
                    "reload the run, re-apply your change and save again",
                )
            attachments.require_stored(self, run, previous=self.get_run(run.id))
            return self._write_version(run, default_author(self, author), reason.strip(), "edit", row[1], row[0] + 1)

    def withdraw_run(self, run_id: str, reason: str, author: str | None = None, restore: bool = False) -> SaveResult:
        """Mark a run withdrawn (or back), as a new version: it stays readable for ever."""
        if not reason or not reason.strip():
            raise RecordError("a reason is needed to withdraw a run", "say why with --reason")
        with self.transaction():
            row = self.conn.execute("SELECT version, hash, data, withdrawn FROM runs WHERE id = ?", (run_id,)).fetchone()
            if row is None:
                raise NotFoundError(f"no run {run_id} in this notebook", "list runs with 'trapbook list'")
            if bool(row[3]) != restore:
                # Saying it twice would only add a version that changes nothing.
                if restore:
                    raise RecordError(f"run {run_id} is not withdrawn", "nothing to bring back; see 'trapbook history RUN_ID'")
                raise RecordError(
                    f"run {run_id} is already withdrawn", "bring it back with 'trapbook withdraw RUN_ID --undo --reason ...'"
                )
            from ..records import stored_run

            run = stored_run(row[2])
            action = "restore" if restore else "withdraw"
            return self._write_version(run, default_author(self, author), reason.strip(), action, row[1], row[0] + 1)

    def _write_version(self, run: Run, author: str, reason: str, action: str, prev: str | None, version: int = 1) -> SaveResult:
        """Append the version, log the save, move the current row and rebuild the summary: one transaction."""
        from ..records import canonical_json
        from ..text_rules import clean_reason

        reason = clean_reason(reason)
        data = canonical_json(run.to_json_dict())
        t = now_utc()
        h = version_hash(run.id, version, author, t, reason, action, prev, data)
        self.db["versions"].insert(
            {
                "run_id": run.id,
                "version": version,
                "author": author,
                "time": t,
                "reason": reason,
                "action": action,
                "prev_hash": prev,
                "hash": h,
                "data": data,
            }
        )
        chain.append_save(self.conn, "run", run.id, version, h)
        withdrawn = 1 if action == "withdraw" else 0
        if action not in ("withdraw", "restore") and version > 1:
            withdrawn = self.conn.execute("SELECT withdrawn FROM runs WHERE id = ?", (run.id,)).fetchone()[0]
        row = {
            **listed_columns(run, withdrawn),
            "version": version,
            "hash": h,
            "updated": t,
            "data": data,
        }
        if version == 1:
            self.db["runs"].insert({"id": run.id, **row, "created": t})
        else:
            self.db["runs"].update(run.id, row)
        run_index.index_run(self, run)
        return SaveResult(run.id, version, h, version == 1)

    def get_run(self, run_id: str, version: int | None = None) -> Run:
        if version is None:
            row = self.conn.execute("SELECT data FROM runs WHERE id = ?", (run_id,)).fetchone()
        else:
            row = self.conn.execute("SELECT data FROM versions WHERE run_id = ? AND version = ?", (run_id, version)).fetchone()
        if row is None:
            what = f"run {run_id}" + (f" version {version}" if version is not None else "")
            hint = "list runs with 'trapbook list'"
            if version is not None and self.conn.execute("SELECT 1 FROM runs WHERE id = ?", (run_id,)).fetchone():
                hint = f"see the versions of {run_id} with 'trapbook history {run_id}'"
            raise NotFoundError(f"no {what} in this notebook", hint)
        from ..records import stored_run

        return stored_run(row[0])

    def run_meta(self, run_id: str) -> dict:
        row = self.conn.execute(
            "SELECT id, title, chemist, date, status, screen, withdrawn, version, hash, created, updated FROM runs WHERE id = ?",
            (run_id,),
        ).fetchone()
        if row is None:
            raise NotFoundError(f"no run {run_id} in this notebook", "list runs with 'trapbook list'")
        keys = ["id", "title", "chemist", "date", "status", "screen", "withdrawn", "version", "hash", "created", "updated"]
        d = dict(zip(keys, row))
        d["withdrawn"] = bool(d["withdrawn"])
        return d

    def run_ids(self, include_withdrawn: bool = True) -> list[str]:
        q = "SELECT id FROM runs" + ("" if include_withdrawn else " WHERE withdrawn = 0") + " ORDER BY id"
        return [r[0] for r in self.conn.execute(q)]

    def list_runs(self, include_withdrawn: bool = False, screen: str | None = None) -> list[dict]:
        """Rows for a run table: stored fields joined with the search index's summary columns."""
        where, args = [], []
        if not include_withdrawn:
            where.append("r.withdrawn = 0")
        if screen:
            where.append("r.screen = ?")
            args.append(screen)
        sql = (
            "SELECT r.id, r.title, r.chemist, r.date, r.status, r.screen, r.withdrawn, r.version, "
            "i.intermediate, i.trap, i.fluoride, i.solvent, i.temp_max_c, i.time_min, i.yield_pct, i.yield_kind, i.worst, i.sealed "
            "FROM runs r LEFT JOIN run_index i ON i.run_id = r.id"
            + (" WHERE " + " AND ".join(where) if where else "")
            + " ORDER BY r.id"
        )
        keys = [
            "id",
            "title",
            "chemist",
            "date",
            "status",
            "screen",
            "withdrawn",
            "version",
            "intermediate",
            "trap",
            "fluoride",
            "solvent",
            "temp_max_c",
            "time_min",
            "yield_pct",
            "yield_kind",
            "worst",
            "sealed",
        ]
        out = []
        for row in self.conn.execute(sql, args):
            d = dict(zip(keys, row))
            d["withdrawn"] = bool(d["withdrawn"])
            d["sealed"] = bool(d["sealed"]) if d["sealed"] is not None else None
            out.append(d)
        return out

    def iter_runs(self, include_withdrawn: bool = True) -> Iterator[Run]:
        from ..records import stored_run

        q = "SELECT data FROM runs" + ("" if include_withdrawn else " WHERE withdrawn = 0") + " ORDER BY id"
        for (data,) in self.conn.execute(q).fetchall():
            yield stored_run(data)

    def count_runs(self) -> int:
        return self.conn.execute("SELECT count(*) FROM runs").fetchone()[0]

    def history(self, run_id: str) -> list[VersionInfo]:
        rows = self.conn.execute(
            "SELECT version, author, time, reason, action, hash, prev_hash, data FROM versions WHERE run_id = ? ORDER BY version",
            (run_id,),
        ).fetchall()
        if not rows:
            raise NotFoundError(f"no run {run_id} in this notebook", "list runs with 'trapbook list'")
        out, prev = [], None
        for version, author, time, reason, action, h, ph, data in rows:
            cur = json.loads(data)
            changes = diff_runs(prev, cur) if prev is not None else ["created"]
            if action in ("withdraw", "restore"):
                changes = [("withdrawn" if action == "withdraw" else "restored")] + [
                    c for c in changes if c != "no field changed"
                ]
            out.append(VersionInfo(run_id, version, author, time, reason, action, h, ph, changes))
            prev = cur
        return out

    def reindex(self, run_ids: Iterable[str] | None = None) -> int:
        """Rebuild the summary rows (e.g. after strain results arrive, which change the checks)."""
        ids = list(run_ids) if run_ids is not None else self.run_ids()
        with self.transaction():
            for rid in ids:
                run_index.index_run(self, self.get_run(rid))
        return len(ids)

    # --- bulk ----------------------------------------------------------------------
    def import_runs(
        self, runs: Iterable[Run], author: str | None = None, reason: str = "imported", keep_ids: bool = True
    ) -> list[SaveResult]:
        """All or nothing: either every run is stored or none is."""
        results = []
        with self.transaction():
            for run in runs:
                keep = (
                    keep_ids and bool(run.id) and not self.conn.execute("SELECT 1 FROM runs WHERE id = ?", (run.id,)).fetchone()
                )
                results.append(self.add_run(run, author=author, reason=reason, keep_id=keep))
        return results

    def import_history(self, run_id: str, versions: list[dict]) -> SaveResult:
        """Store a run with every version it had elsewhere, authors, times and reasons as given.

        The chain is checked first (store/history_import.py); all versions are then written
        in one BEGIN IMMEDIATE transaction, all or nothing. If `run_id` is taken here, the run
        gets the next free id and its history is re-keyed (SaveResult.run_id says which).
        """
        from . import history_import

        checked = history_import.checked_history(run_id, versions)
        with self.transaction():
            taken = self.conn.execute("SELECT 1 FROM runs WHERE id = ?", (run_id,)).fetchone()
            new_id = self._next_id("run", "TB-") if taken else run_id
            if new_id != run_id:
                checked = history_import.rekeyed(checked, new_id)
            return history_import.write_history(self, new_id, checked)


__all__ = ["Notebook", "SaveResult", "VersionInfo", "default_author", "default_path", "diff_runs", "version_hash"]
